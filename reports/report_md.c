/* report_md.c: the Markdown report (images linked from plots/). */
#include "reports/report_int.h"

#include <math.h>
#include <stddef.h>
#include <string.h>

#include "harness/base/fileio.h"
#include "reports/esc.h"

static const char *const kind_heading[PLOT_NKIND] = {
    "Degradation curves", "PR curves", "Top views of the trajectory", "Distance matrices",
    "Top-1 distance distributions",
};

/* A fenced block that user text cannot close: the fence is longer than any
 * run of backticks inside. */
static void md_fence_open(FILE *f, const char *const *lines, size_t n, int *len)
{
    int run = 0, best = 2;
    for (size_t k = 0; k < n; k++)
        for (const char *p = lines[k]; *p; p++) {
            run = *p == '`' ? run + 1 : 0;
            if (run > best) best = run;
        }
    *len = best + 1;
    for (int k = 0; k < *len; k++) fputc('`', f);
    fputs("text\n", f);
}

static void md_overview(FILE *f, const struct report_doc *d)
{
    const struct rdata_set *s = d->set;
    const struct rdata_cell *c0 = &s->cells[0];
    fputs("## At a glance\n\n", f);
    if (s->is_sweep) {
        fprintf(f, "- Sweep of %zu cells", s->n);
        if (s->scenario_name[0]) { fputs(", scenario ", f); esc_md(f, s->scenario_name); }
        fputs(".\n", f);
    } else {
        fputs("- One evaluation.\n", f);
    }
    fputs("- Map recording: ", f);
    esc_md(f, c0->rec_map[0] ? c0->rec_map : "(not recorded)");
    if (c0->rec_query[0]) { fputs("; query recording: ", f); esc_md(f, c0->rec_query); }
    fprintf(f, "; protocol %s, revisit within %.3g m, wrong beyond %.3g m, %s counting.\n",
            c0->proto.mode == PROTOCOL_RELOC ? "reloc" : "loop", c0->proto.r_pos_m, c0->proto.r_neg_m,
            c0->proto.counting == PROTOCOL_LENIENT ? "lenient" : "strict");
    const struct report_overview *v = &d->ov;
    if (v->have) {
        fprintf(f, "- Scans: %zu map", v->map_scans);
        if (v->query_scans) fprintf(f, ", %zu query", v->query_scans);
        fprintf(f, "; map path %.1f m over %.1f s", v->map_len_m, v->map_dur_s);
        if (v->query_scans) fprintf(f, "; query path %.1f m over %.1f s", v->query_len_m, v->query_dur_s);
        fprintf(f, ".\n- Revisits among %zu queries: %zu (same direction %zu, reverse %zu, crossing %zu)", v->queries, v->revisits, v->kinds[RSTAT_SAME], v->kinds[RSTAT_REVERSE],
                v->kinds[RSTAT_CROSSING]);
        if (v->cell_id[0]) { fputs(", from cell ", f); esc_md(f, v->cell_id); }
        fputs(".\n", f);
    }
    fputs("- Methods: ", f);
    for (size_t m = 0; m < d->table->n_methods; m++) {
        if (m) fputs("; ", f);
        esc_md(f, d->table->methods[m]);
        if (strcmp(d->table->methods[m], d->table->labels[m])) {
            fputs(" = ", f);
            esc_md(f, d->table->labels[m]);
        }
    }
    fputs(".\n- Conditions: ", f);
    for (size_t c = 0; c < d->table->n_conds; c++) {
        const struct rdata_cell *cc = &s->cells[d->table->cond_cell[c]];
        if (c) fputs("; ", f);
        esc_md(f, report_cond_name(d->table, c));
        if (cc->chain[0]) { fputs(" = ", f); esc_md(f, cc->chain); }
    }
    fputs(".\n\n", f);
}

static void md_verdicts(FILE *f, const struct report_doc *d)
{
    const struct rdata_set *s = d->set;
    fputs("### Acceptance verdicts\n\n", f);
    if (!s->n_verdicts) {
        fputs("No criteria results in this folder (`verdicts.json`, written by `revisit check`).\n\n", f);
        return;
    }
    size_t pass = 0;
    for (size_t k = 0; k < s->n_verdicts; k++) pass += (size_t)s->verdicts[k].pass;
    fprintf(f, "%zu of %zu criteria passed.\n\n| criterion | method | condition | value [interval] | "
               "judged | threshold | verdict |\n|---|---|---|---|---|---|---|\n", pass, s->n_verdicts);
    for (size_t k = 0; k < s->n_verdicts; k++) {
        const struct rdata_verdict *v = &s->verdicts[k];
        fputs("| ", f); esc_md(f, v->text);
        fputs(" | ", f); esc_md(f, v->method);
        fputs(" | ", f); esc_md(f, v->cond);
        fprintf(f, " | %.3f [%.3f, %.3f] | ", v->value, v->lo, v->hi);
        esc_md(f, v->target[0] ? v->target : "value");
        fprintf(f, " %.3f | ", v->measured);
        esc_md(f, v->cmp);
        fprintf(f, " %.3f | **%s** |\n", v->threshold, v->pass ? "pass" : "FAIL");
    }
    fputc('\n', f);
}

static void md_tables(FILE *f, const struct report_doc *d)
{
    const struct rstat_table *t = d->table;
    fputs("## Scalars\n\nMean over seeds with the 95% bootstrap interval in brackets (the mean of the "
          "per-seed bounds); `sd` is the spread over seeds when there are several. All rows are in "
          "`scalars.csv`.\n\n", f);
    for (int mk = 0; mk < RDATA_NMETRIC; mk++) {
        fprintf(f, "### %s\n\n| condition |", rdata_metric_name(mk));
        for (size_t m = 0; m < t->n_methods; m++) { fputc(' ', f); esc_md(f, t->methods[m]); fputs(" |", f); }
        fputs("\n|---|", f);
        for (size_t m = 0; m < t->n_methods; m++) fputs("---|", f);
        fputc('\n', f);
        for (size_t c = 0; c < t->n_conds; c++) {
            fputs("| ", f);
            esc_md(f, report_cond_name(t, c));
            fputs(" |", f);
            for (size_t m = 0; m < t->n_methods; m++) {
                char cell[128];
                report_cell_text(rstat_find(t, m, c), mk, cell, sizeof cell);
                fprintf(f, " %s |", cell);
            }
            fputc('\n', f);
        }
        fputc('\n', f);
    }
}

static void md_plots(FILE *f, const struct report_doc *d)
{
    const struct plot_set *ps = d->plots;
    fputs("## Plots\n\nEach plot's data file and gnuplot script lie beside it in `plots/`; edit the "
          "script and run `gnuplot NAME.gp` there to restyle it.\n\n", f);
    for (int k = 0; k < PLOT_NKIND; k++) {
        fprintf(f, "### %s\n\n", kind_heading[k]);
        size_t shown = 0;
        for (size_t i = 0; i < ps->n; i++) {
            const struct plot_item *it = &ps->items[i];
            if ((int)it->kind != k) continue;
            shown++;
            if (it->drawn) {
                fputs("![", f); esc_md(f, it->caption);
                fprintf(f, "](plots/%s.png)\n\n", it->name);
            }
            esc_md(f, it->caption);
            fprintf(f, " ([SVG](plots/%s.svg), [script](plots/%s.gp), [data](plots/%s.dat))%s\n\n", it->name,
                    it->name, it->name, it->drawn ? "" : " - not drawn, see below");
        }
        if (!shown) fputs("None for this results folder.\n\n", f);
    }
}

static void md_skipped(FILE *f, const struct report_doc *d)
{
    const struct plot_set *ps = d->plots;
    size_t skipped = 0;
    for (size_t i = 0; i < ps->n; i++) skipped += !ps->items[i].drawn;
    if (skipped) {
        fprintf(f, "## Skipped plots\n\ngnuplot was not found on PATH, so %zu plots were not drawn. "
                   "Install it (Debian package `gnuplot-nox`) and run `revisit report` again, or run "
                   "`gnuplot NAME.gp` in `plots/` for each:\n\n", skipped);
        for (size_t i = 0; i < ps->n; i++)
            if (!ps->items[i].drawn)
                fprintf(f, "- `%s.gp` (%s)\n", ps->items[i].name, plot_kind_name(ps->items[i].kind));
        fputc('\n', f);
    }
    if (d->n_notes) {
        fputs("## Plots not made\n\n", f);
        for (size_t k = 0; k < d->n_notes; k++) { fputs("- ", f); esc_md(f, d->notes[k]); fputc('\n', f); }
        fputc('\n', f);
    }
}

static void md_repro(FILE *f, const struct report_doc *d)
{
    const struct rdata_set *s = d->set;
    const char *v[REPORT_LIST_MAX];
    fputs("## Reproducibility\n\n- Report written by revisit " RV_VERSION "; results by: ", f);
    size_t n = report_distinct(s, offsetof(struct rdata_cell, software), v, REPORT_LIST_MAX);
    for (size_t k = 0; k < n; k++) { if (k) fputs(", ", f); esc_md(f, v[k]); }
    fputs(n ? ".\n- Scenario hash: " : "(not recorded).\n- Scenario hash: ", f);
    n = report_distinct(s, offsetof(struct rdata_cell, scenario_hash), v, REPORT_LIST_MAX);
    for (size_t k = 0; k < n; k++) { if (k) fputs(", ", f); esc_md(f, v[k]); }
    fputs(n ? ".\n- Perturbation seeds: " : "none (not a scenario run).\n- Perturbation seeds: ", f);
    unsigned long long seeds[REPORT_LIST_MAX];
    size_t ns = report_seeds(s, seeds, REPORT_LIST_MAX);
    for (size_t k = 0; k < ns; k++) fprintf(f, "%s%llu", k ? ", " : "", seeds[k]);
    if (isfinite(s->boot_seed))
        fprintf(f, ".\n- Bootstrap: %.0f resamples, seed %.0f (scenario.json)", s->boot_resamples, s->boot_seed);
    fputs(".\n- Commands (the results, then this report):\n\n", f);
    n = report_distinct(s, offsetof(struct rdata_cell, command), v, REPORT_LIST_MAX - 1);
    v[n++] = d->opts->command ? d->opts->command : "revisit report";
    int fence;
    md_fence_open(f, v, n, &fence);
    for (size_t k = 0; k < n; k++) fprintf(f, "%s\n", v[k]);
    for (int k = 0; k < fence; k++) fputc('`', f);
    fputs("\n\n", f);
}

static void md_failed(FILE *f, const struct report_doc *d)
{
    size_t nf = 0;
    for (size_t i = 0; i < d->set->n; i++) nf += !d->set->cells[i].ok;
    if (!nf) return;
    fprintf(f, "## Failed cells\n\n%zu cells did not finish; their tables read `failed`.\n\n", nf);
    for (size_t i = 0; i < d->set->n; i++) {
        const struct rdata_cell *c = &d->set->cells[i];
        if (c->ok) continue;
        fputs("- ", f); esc_md(f, c->id); fputs(": ", f); esc_md(f, c->error[0] ? c->error : "no message");
        fputc('\n', f);
    }
    fputc('\n', f);
}

int report_md_write(const struct report_doc *d, const char *path, struct err *e)
{
    struct afile a;
    if (afile_open(&a, path, e)) return -1;
    FILE *f = a.f;
    fputs("# ", f);
    esc_md(f, d->title);
    fprintf(f, "\n\n> **Caution.** %s\n\n", report_caution);
    md_overview(f, d);
    md_verdicts(f, d);
    fputs("### Findings\n\n", f);
    for (size_t k = 0; k < d->n_findings; k++) { fputs("- ", f); esc_md(f, d->findings[k]); fputc('\n', f); }
    if (!d->n_findings) fputs("A single method on a single condition: nothing to compare.\n", f);
    fputc('\n', f);
    md_tables(f, d);
    md_plots(f, d);
    md_skipped(f, d);
    md_failed(f, d);
    md_repro(f, d);
    if (ferror(f)) { afile_abort(&a); return err_at(e, path, 0, "write failed"); }
    return afile_commit(&a, e);
}
