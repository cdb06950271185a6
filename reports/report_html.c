/* report_html.c: the HTML report, one self-contained file (images inlined). */
#include "reports/report_int.h"

#include <math.h>
#include <stddef.h>
#include <stdlib.h>
#include <string.h>

#include "harness/base/fileio.h"
#include "reports/esc.h"

#define HTML_IMAGE_MAX ((size_t)64 << 20)

static const char *const kind_heading[PLOT_NKIND] = {
    "Degradation curves", "PR curves", "Top views of the trajectory", "Distance matrices",
    "Top-1 distance distributions",
};

/* Our own plain layout: one readable column, ruled tables, the palette's
 * indigo for headings; nothing depends on colour. */
static const char css[] =
    "body{font-family:sans-serif;max-width:1100px;margin:2em auto;padding:0 1em;color:#1a1a1a;line-height:1.45}"
    "h1,h2,h3{color:#1b1f4b}h2{border-bottom:2px solid #1b1f4b;padding-bottom:.2em;margin-top:2em}"
    ".caution{border:2px solid #a34a0c;padding:.6em 1em;background:#fff7ef}"
    "table{border-collapse:collapse;margin:.5em 0 1.5em}td,th{border:1px solid #999;padding:.25em .6em;"
    "text-align:left;font-variant-numeric:tabular-nums}th{background:#eef1f6}"
    ".pass{font-weight:bold}.fail{font-weight:bold;text-decoration:underline}"
    "figure{margin:1em 0 2em}figure img{max-width:100%;border:1px solid #ccc}"
    "figcaption{font-size:.92em}pre{background:#f4f4f4;padding:.6em;overflow-x:auto;white-space:pre-wrap}";

static void base64(FILE *f, const unsigned char *b, size_t n)
{
    static const char t[] = "ABCDEFGHIJKLMNOPQRSTUVWXYZabcdefghijklmnopqrstuvwxyz0123456789+/";
    for (size_t i = 0; i < n; i += 3) {
        unsigned v = (unsigned)b[i] << 16 | (i + 1 < n ? (unsigned)b[i + 1] << 8 : 0) | (i + 2 < n ? b[i + 2] : 0);
        fputc(t[v >> 18 & 63], f);
        fputc(t[v >> 12 & 63], f);
        fputc(i + 1 < n ? t[v >> 6 & 63] : '=', f);
        fputc(i + 2 < n ? t[v & 63] : '=', f);
    }
}

static void html_list(FILE *f, const char *label, const char *const *v, size_t n, const char *none)
{
    fprintf(f, "<li>%s: ", label);
    for (size_t k = 0; k < n; k++) { if (k) fputs(", ", f); esc_html(f, v[k]); }
    if (!n) fputs(none, f);
    fputs("</li>\n", f);
}

static void html_overview(FILE *f, const struct report_doc *d)
{
    const struct rdata_set *s = d->set;
    const struct rdata_cell *c0 = &s->cells[0];
    fputs("<h2>At a glance</h2>\n<ul>\n", f);
    if (s->is_sweep) {
        fprintf(f, "<li>Sweep of %zu cells", s->n);
        if (s->scenario_name[0]) { fputs(", scenario ", f); esc_html(f, s->scenario_name); }
        fputs(".</li>\n", f);
    } else {
        fputs("<li>One evaluation.</li>\n", f);
    }
    fputs("<li>Map recording: ", f);
    esc_html(f, c0->rec_map[0] ? c0->rec_map : "(not recorded)");
    if (c0->rec_query[0]) { fputs("; query recording: ", f); esc_html(f, c0->rec_query); }
    fprintf(f, "; protocol %s, revisit within %.3g m, wrong beyond %.3g m, %s counting.</li>\n",
            c0->proto.mode == PROTOCOL_RELOC ? "reloc" : "loop", c0->proto.r_pos_m, c0->proto.r_neg_m,
            c0->proto.counting == PROTOCOL_LENIENT ? "lenient" : "strict");
    const struct report_overview *v = &d->ov;
    if (v->have) {
        fprintf(f, "<li>Scans: %zu map", v->map_scans);
        if (v->query_scans) fprintf(f, ", %zu query", v->query_scans);
        fprintf(f, "; map path %.1f m over %.1f s", v->map_len_m, v->map_dur_s);
        if (v->query_scans) fprintf(f, "; query path %.1f m over %.1f s", v->query_len_m, v->query_dur_s);
        fprintf(f, ".</li>\n<li>Revisits among %zu queries: %zu (same direction %zu, reverse %zu, crossing "
                   "%zu)", v->queries, v->revisits, v->kinds[RSTAT_SAME], v->kinds[RSTAT_REVERSE],
                v->kinds[RSTAT_CROSSING]);
        if (v->cell_id[0]) { fputs(", from cell ", f); esc_html(f, v->cell_id); }
        fputs(".</li>\n", f);
    }
    fputs("<li>Methods: ", f);
    for (size_t m = 0; m < d->table->n_methods; m++) {
        if (m) fputs("; ", f);
        esc_html(f, d->table->methods[m]);
        if (strcmp(d->table->methods[m], d->table->labels[m])) {
            fputs(" = <code>", f);
            esc_html(f, d->table->labels[m]);
            fputs("</code>", f);
        }
    }
    fputs(".</li>\n", f);
    fputs("<li>Conditions: ", f);
    for (size_t c = 0; c < d->table->n_conds; c++) {
        const struct rdata_cell *cc = &s->cells[d->table->cond_cell[c]];
        if (c) fputs("; ", f);
        esc_html(f, report_cond_name(d->table, c));
        if (cc->chain[0]) { fputs(" = <code>", f); esc_html(f, cc->chain); fputs("</code>", f); }
    }
    fputs(".</li>\n</ul>\n", f);
}

static void html_verdicts(FILE *f, const struct report_doc *d)
{
    const struct rdata_set *s = d->set;
    fputs("<h3>Acceptance verdicts</h3>\n", f);
    if (!s->n_verdicts) {
        fputs("<p>No criteria results in this folder (<code>verdicts.json</code>, written by "
              "<code>revisit check</code>).</p>\n", f);
        return;
    }
    size_t pass = 0;
    for (size_t k = 0; k < s->n_verdicts; k++) pass += (size_t)s->verdicts[k].pass;
    fprintf(f, "<p>%zu of %zu criteria passed.</p>\n<table><tr><th>criterion</th><th>method</th>"
               "<th>condition</th><th>value [interval]</th><th>judged</th><th>threshold</th><th>verdict</th></tr>\n",
            pass, s->n_verdicts);
    for (size_t k = 0; k < s->n_verdicts; k++) {
        const struct rdata_verdict *v = &s->verdicts[k];
        fputs("<tr><td>", f); esc_html(f, v->text);
        fputs("</td><td>", f); esc_html(f, v->method);
        fputs("</td><td>", f); esc_html(f, v->cond);
        fprintf(f, "</td><td>%.3f [%.3f, %.3f]</td><td>", v->value, v->lo, v->hi);
        esc_html(f, v->target[0] ? v->target : "value");
        fprintf(f, " %.3f</td><td>", v->measured);
        esc_html(f, v->cmp);
        fprintf(f, " %.3f</td><td class=\"%s\">%s</td></tr>\n", v->threshold, v->pass ? "pass" : "fail",
                v->pass ? "pass" : "FAIL");
    }
    fputs("</table>\n", f);
}

static void html_tables(FILE *f, const struct report_doc *d)
{
    const struct rstat_table *t = d->table;
    fputs("<h2>Scalars</h2>\n<p>Mean over seeds with the 95% bootstrap interval in brackets (the mean of "
          "the per-seed bounds); <em>sd</em> is the spread over seeds when there are several. All rows "
          "are in <code>scalars.csv</code>.</p>\n", f);
    for (int mk = 0; mk < RDATA_NMETRIC; mk++) {
        fprintf(f, "<h3>%s</h3>\n<table><tr><th>condition</th>", rdata_metric_name(mk));
        for (size_t m = 0; m < t->n_methods; m++) { fputs("<th>", f); esc_html(f, t->methods[m]); fputs("</th>", f); }
        fputs("</tr>\n", f);
        for (size_t c = 0; c < t->n_conds; c++) {
            fputs("<tr><td>", f);
            esc_html(f, report_cond_name(t, c));
            fputs("</td>", f);
            for (size_t m = 0; m < t->n_methods; m++) {
                char cell[128];
                report_cell_text(rstat_find(t, m, c), mk, cell, sizeof cell);
                fprintf(f, "<td>%s</td>", cell);
            }
            fputs("</tr>\n", f);
        }
        fputs("</table>\n", f);
    }
}

static int html_figure(FILE *f, const struct plot_set *ps, const struct plot_item *it, struct err *e)
{
    fputs("<figure>", f);
    if (it->drawn) {
        char path[4300], *buf;
        size_t len;
        snprintf(path, sizeof path, "%s/%s.png", ps->dir, it->name);
        if (fileio_read(path, HTML_IMAGE_MAX, &buf, &len, e)) return -1;
        fputs("<img alt=\"", f);
        esc_html(f, it->caption);
        fputs("\" src=\"data:image/png;base64,", f);
        base64(f, (const unsigned char *)buf, len);
        fputs("\">", f);
        free(buf);
    }
    fputs("<figcaption>", f);
    esc_html(f, it->caption);
    fprintf(f, " (files in plots/: %s.svg, %s.gp, %s.dat)%s</figcaption></figure>\n", it->name, it->name,
            it->name, it->drawn ? "" : " - not drawn, see below");
    return 0;
}

static int html_plots(FILE *f, const struct report_doc *d, struct err *e)
{
    const struct plot_set *ps = d->plots;
    fputs("<h2>Plots</h2>\n<p>Each plot's data file and gnuplot script lie beside it in <code>plots/</code>; "
          "edit the script and run <code>gnuplot NAME.gp</code> there to restyle it.</p>\n", f);
    for (int k = 0; k < PLOT_NKIND; k++) {
        fprintf(f, "<h3>%s</h3>\n", kind_heading[k]);
        size_t shown = 0;
        for (size_t i = 0; i < ps->n; i++)
            if ((int)ps->items[i].kind == k) {
                shown++;
                if (html_figure(f, ps, &ps->items[i], e)) return -1;
            }
        if (!shown) fputs("<p>None for this results folder.</p>\n", f);
    }
    return 0;
}

static void html_skipped(FILE *f, const struct report_doc *d)
{
    const struct plot_set *ps = d->plots;
    size_t skipped = 0;
    for (size_t i = 0; i < ps->n; i++) skipped += !ps->items[i].drawn;
    if (skipped) {
        fprintf(f, "<h2>Skipped plots</h2>\n<p>gnuplot was not found on PATH, so %zu plots were not drawn. "
                   "Install it (Debian package <code>gnuplot-nox</code>) and run <code>revisit report</code> "
                   "again, or run <code>gnuplot NAME.gp</code> in <code>plots/</code> for each:</p>\n<ul>\n",
                skipped);
        for (size_t i = 0; i < ps->n; i++)
            if (!ps->items[i].drawn)
                fprintf(f, "<li><code>%s.gp</code> (%s)</li>\n", ps->items[i].name, plot_kind_name(ps->items[i].kind));
        fputs("</ul>\n", f);
    }
    if (d->n_notes) {
        fputs("<h2>Plots not made</h2>\n<ul>\n", f);
        for (size_t k = 0; k < d->n_notes; k++) { fputs("<li>", f); esc_html(f, d->notes[k]); fputs("</li>\n", f); }
        fputs("</ul>\n", f);
    }
}

static void html_repro(FILE *f, const struct report_doc *d)
{
    const struct rdata_set *s = d->set;
    const char *v[REPORT_LIST_MAX];
    fputs("<h2>Reproducibility</h2>\n<ul>\n<li>Report written by revisit " RV_VERSION ".</li>\n", f);
    size_t n = report_distinct(s, offsetof(struct rdata_cell, software), v, REPORT_LIST_MAX);
    html_list(f, "Results written by", v, n, "(not recorded)");
    n = report_distinct(s, offsetof(struct rdata_cell, scenario_hash), v, REPORT_LIST_MAX);
    html_list(f, "Scenario hash", v, n, "none (not a scenario run)");
    unsigned long long seeds[REPORT_LIST_MAX];
    size_t ns = report_seeds(s, seeds, REPORT_LIST_MAX);
    fputs("<li>Perturbation seeds: ", f);
    for (size_t k = 0; k < ns; k++) fprintf(f, "%s%llu", k ? ", " : "", seeds[k]);
    if (isfinite(s->boot_seed))
        fprintf(f, "</li>\n<li>Bootstrap: %.0f resamples, seed %.0f (scenario.json)", s->boot_resamples, s->boot_seed);
    fputs("</li>\n<li>Commands (the results, then this report):</li>\n</ul>\n<pre>", f);
    n = report_distinct(s, offsetof(struct rdata_cell, command), v, REPORT_LIST_MAX - 1);
    v[n++] = d->opts->command ? d->opts->command : "revisit report";
    for (size_t k = 0; k < n; k++) { esc_html(f, v[k]); fputc('\n', f); }
    fputs("</pre>\n", f);
}

static void html_failed(FILE *f, const struct report_doc *d)
{
    size_t nf = 0;
    for (size_t i = 0; i < d->set->n; i++) nf += !d->set->cells[i].ok;
    if (!nf) return;
    fprintf(f, "<h2>Failed cells</h2>\n<p>%zu cells did not finish; their tables read failed.</p>\n<ul>\n", nf);
    for (size_t i = 0; i < d->set->n; i++) {
        const struct rdata_cell *c = &d->set->cells[i];
        if (c->ok) continue;
        fputs("<li>", f); esc_html(f, c->id); fputs(": ", f);
        esc_html(f, c->error[0] ? c->error : "no message");
        fputs("</li>\n", f);
    }
    fputs("</ul>\n", f);
}

int report_html_write(const struct report_doc *d, const char *path, struct err *e)
{
    struct afile a;
    if (afile_open(&a, path, e)) return -1;
    FILE *f = a.f;
    fputs("<!DOCTYPE html>\n<html lang=\"en\"><head><meta charset=\"utf-8\">\n<title>", f);
    esc_html(f, d->title);
    fprintf(f, "</title>\n<style>%s</style></head><body>\n<h1>", css);
    esc_html(f, d->title);
    fprintf(f, "</h1>\n<p class=\"caution\"><strong>Caution.</strong> %s</p>\n", report_caution);
    html_overview(f, d);
    html_verdicts(f, d);
    fputs("<h3>Findings</h3>\n<ul>\n", f);
    for (size_t k = 0; k < d->n_findings; k++) { fputs("<li>", f); esc_html(f, d->findings[k]); fputs("</li>\n", f); }
    if (!d->n_findings) fputs("<li>A single method on a single condition: nothing to compare.</li>\n", f);
    fputs("</ul>\n", f);
    html_tables(f, d);
    if (html_plots(f, d, e)) { afile_abort(&a); return -1; }
    html_skipped(f, d);
    html_failed(f, d);
    html_repro(f, d);
    fputs("</body></html>\n", f);
    if (ferror(f)) { afile_abort(&a); return err_at(e, path, 0, "write failed"); }
    return afile_commit(&a, e);
}
