/* report_build.c: the report's content as one document tree (rdoc.h), which
 * report.c renders to Markdown and HTML.  One function per section; a new
 * section is one more entry in `sections`. */
#include "reports/report_int.h"

#include <math.h>
#include <stddef.h>
#include <string.h>

#include "perturb/chain.h"
#include "reports/rdoc.h"

static const char *const kind_heading[PLOT_NKIND] = {
    "Degradation curves", "PR curves", "Top views of the trajectory", "Distance matrices",
    "Top-1 distance distributions", "Summary per condition", "Sensitivity ranking",
};

static void sec_title(struct rdoc *r, const struct report_doc *d)
{
    rdoc_heading(r, 1, d->title);
    rdoc_para(r, RDOC_CAUTION);
    rdoc_strong(r, "Caution.");
    rdoc_textf(r, " %s", report_caution);
    if (d->set->description[0]) {
        rdoc_para(r, 0);
        rdoc_strong(r, "Scenario.");
        rdoc_textf(r, " %s", d->set->description);
    }
    rdoc_toc(r);
}

static void overview_data(struct rdoc *r, const struct report_doc *d)
{
    const struct rdata_cell *c0 = &d->set->cells[0];
    rdoc_item(r);
    rdoc_text(r, "Map recording: ");
    rdoc_text(r, c0->rec_map[0] ? c0->rec_map : "(not recorded)");
    if (c0->rec_query[0]) { rdoc_text(r, "; query recording: "); rdoc_text(r, c0->rec_query); }
    rdoc_textf(r, "; protocol %s, revisit within %.3g m, wrong beyond %.3g m, %s counting.",
               protocol_mode_name(c0->proto.mode), c0->proto.r_pos_m, c0->proto.r_neg_m,
               protocol_counting_name(c0->proto.counting));
    const struct report_overview *v = &d->ov;
    if (!v->have) return;
    rdoc_item(r);
    rdoc_textf(r, "Scans: %zu map", v->map_scans);
    if (v->query_scans) rdoc_textf(r, ", %zu query", v->query_scans);
    rdoc_textf(r, "; map path %.1f m over %.1f s", v->map_len_m, v->map_dur_s);
    if (v->query_scans) rdoc_textf(r, "; query path %.1f m over %.1f s", v->query_len_m, v->query_dur_s);
    rdoc_text(r, ".");
    rdoc_item(r);
    rdoc_textf(r, "Revisits among %zu queries: %zu (same direction %zu, reverse %zu, crossing %zu)", v->queries,
               v->revisits, v->kinds[RSTAT_SAME], v->kinds[RSTAT_REVERSE], v->kinds[RSTAT_CROSSING]);
    if (v->cell_id[0]) { rdoc_text(r, ", from cell "); rdoc_text(r, v->cell_id); }
    rdoc_text(r, ".");
}

static void sec_overview(struct rdoc *r, const struct report_doc *d)
{
    const struct rdata_set *s = d->set;
    const struct rstat_table *t = d->table;
    rdoc_heading(r, 2, "At a glance");
    rdoc_list(r);
    rdoc_item(r);
    if (s->is_sweep) {
        rdoc_textf(r, "Sweep of %zu cells", s->n);
        if (s->scenario_name[0]) { rdoc_text(r, ", scenario "); rdoc_text(r, s->scenario_name); }
        rdoc_text(r, ".");
    } else {
        rdoc_text(r, "One evaluation.");
    }
    overview_data(r, d);
    rdoc_item(r);
    rdoc_textf(r, "%zu methods, %zu conditions; their settings in full under ", t->n_methods, t->n_conds);
    rdoc_link(r, "Settings", "#settings");
    rdoc_text(r, ".");
}

/* A chain with every value, defaults included; the text as given when it
 * does not parse (a result written by another version). */
void report_chain_cell(struct rdoc *r, const char *text)
{
    struct chain *ch = NULL;
    char full[2048];
    if (!text[0]) { rdoc_text(r, "none (unperturbed)"); return; }
    if (!chain_parse(text, &ch, NULL) && chain_format_full(ch, full, sizeof full) < sizeof full) rdoc_code(r, full);
    else rdoc_code(r, text);
    chain_free(ch);
}

/* Mean milliseconds per described scan over the method's finished cells,
 * and its descriptor size (NaN when no cell says). */
static void method_cost(const struct report_doc *d, size_t m, double *ms, double *bytes)
{
    double sum = 0;
    size_t n = 0;
    *bytes = NAN;
    for (size_t i = 0; i < d->set->n; i++) {
        const struct rdata_cell *c = &d->set->cells[i];
        if (!c->ok || d->table->cell_method[i] != m) continue;
        if (isfinite(c->desc_bytes)) *bytes = c->desc_bytes;
        if (c->described > 0 && isfinite(c->describe_s)) { sum += 1000 * c->describe_s / c->described; n++; }
    }
    *ms = n ? sum / (double)n : NAN;
}

static void sec_settings(struct rdoc *r, const struct report_doc *d)
{
    const struct rstat_table *t = d->table;
    rdoc_heading(r, 2, "Settings");
    rdoc_table(r, 4, "llrr");
    static const char *const mh[] = {"method", "plugin and settings", "ms per scan", "descriptor bytes"};
    for (size_t k = 0; k < 4; k++) { rdoc_cell(r, 0); rdoc_text(r, mh[k]); }
    for (size_t m = 0; m < t->n_methods; m++) {
        double ms, bytes;
        method_cost(d, m, &ms, &bytes);
        rdoc_cell(r, 0); rdoc_text(r, t->methods[m]);
        rdoc_cell(r, 0); rdoc_code(r, t->labels[m]);
        rdoc_cell(r, 0); if (isfinite(ms)) rdoc_num(r, "%.2f", ms); else rdoc_text(r, "-");
        rdoc_cell(r, 0); if (isfinite(bytes)) rdoc_num(r, "%.0f", bytes); else rdoc_text(r, "-");
    }
    rdoc_table(r, 3, "lll");
    static const char *const ch[] = {"condition", "applied to", "chain, every value (defaults included)"};
    for (size_t k = 0; k < 3; k++) { rdoc_cell(r, 0); rdoc_text(r, ch[k]); }
    for (size_t c = 0; c < t->n_conds; c++) {
        const struct rdata_cell *cc = &d->set->cells[t->cond_cell[c]];
        rdoc_cell(r, 0); rdoc_text(r, report_cond_name(t, c));
        rdoc_cell(r, 0); rdoc_text(r, cc->chain[0] && cc->on[0] ? cc->on : "-");
        rdoc_cell(r, 0); report_chain_cell(r, cc->chain);
    }
    rdoc_para(r, 0);
    rdoc_text(r, "ms per scan: the mean time to describe one scan over the method's cells (scans served from "
                 "the descriptor cache not counted); descriptor bytes: descriptor and key as 4-byte floats.");
}

const char *report_short_name(const struct rstat_table *t, const char *label)
{
    for (size_t m = 0; m < t->n_methods; m++)
        if (!strcmp(t->labels[m], label)) return t->methods[m];
    return label;
}

static void verdict_row(struct rdoc *r, const struct rstat_table *t, const struct rdata_verdict *v)
{
    rdoc_cell(r, 0); rdoc_text(r, v->text);
    rdoc_cell(r, 0); rdoc_text(r, report_short_name(t, v->method));
    rdoc_cell(r, 0); rdoc_text(r, v->cond);
    rdoc_cell(r, 0); rdoc_num(r, "%.3f [%.3f, %.3f]", v->value, v->lo, v->hi);
    rdoc_cell(r, 0); rdoc_text(r, v->target[0] ? v->target : "value"); rdoc_num(r, " %.3f", v->measured);
    rdoc_cell(r, 0); rdoc_text(r, v->cmp); rdoc_num(r, " %.3f", v->threshold);
    report_verdict_mark(r, v->pass);
}

void report_verdict_mark(struct rdoc *r, int pass)
{
    rdoc_cell(r, pass ? RDOC_PASS : RDOC_FAIL);
    rdoc_strong(r, pass ? "\u2713 PASS" : "\u2717 FAIL");
}

static void sec_verdicts(struct rdoc *r, const struct report_doc *d)
{
    static const char *const head[] = {"criterion", "method", "condition", "value [interval]", "judged",
                                       "threshold", "verdict"};
    const struct rdata_set *s = d->set;
    rdoc_heading(r, 2, "Acceptance verdicts");
    rdoc_para(r, 0);
    if (!s->n_verdicts) {
        rdoc_text(r, "No criteria results in this folder (");
        rdoc_code(r, "verdicts.json");
        rdoc_text(r, ", written by ");
        rdoc_code(r, "revisit check");
        rdoc_text(r, ").");
        return;
    }
    size_t pass = 0;
    for (size_t k = 0; k < s->n_verdicts; k++) pass += (size_t)s->verdicts[k].pass;
    rdoc_textf(r, "%zu of %zu criteria passed.", pass, s->n_verdicts);
    rdoc_table(r, 7, "lnnrrrl");
    for (size_t k = 0; k < 7; k++) { rdoc_cell(r, 0); rdoc_text(r, head[k]); }
    for (size_t k = 0; k < s->n_verdicts; k++) verdict_row(r, d->table, &s->verdicts[k]);
}

static void sec_findings(struct rdoc *r, const struct report_doc *d)
{
    rdoc_heading(r, 2, "Findings");
    if (!d->n_findings) {
        rdoc_para(r, 0);
        rdoc_text(r, "A single method on a single condition: nothing to compare.");
        return;
    }
    rdoc_list(r);
    for (size_t k = 0; k < d->n_findings; k++) { rdoc_item(r); rdoc_text(r, d->findings[k]); }
}

static void sec_tables(struct rdoc *r, const struct report_doc *d)
{
    const struct rstat_table *t = d->table;
    rdoc_heading(r, 2, "Scalars");
    rdoc_para(r, 0);
    rdoc_text(r, "Mean over seeds with the 95% bootstrap interval in brackets (the mean of the per-seed "
                 "bounds); ");
    rdoc_em(r, "sd");
    rdoc_text(r, " is the spread over seeds when there are several. All rows are in ");
    rdoc_code(r, "scalars.csv");
    rdoc_text(r, ".");
    for (int mk = 0; mk < RDATA_NMETRIC; mk++) {
        rdoc_heading(r, 3, rdata_metric_name(mk));
        char align[RDOC_COLS_MAX + 1];
        size_t cols = t->n_methods + 1 < RDOC_COLS_MAX ? t->n_methods + 1 : RDOC_COLS_MAX;
        memset(align, 'r', cols);
        align[0] = 'l';
        align[cols] = 0;
        rdoc_table(r, t->n_methods + 1, align);
        rdoc_cell(r, 0);
        rdoc_text(r, "condition");
        for (size_t m = 0; m < t->n_methods; m++) { rdoc_cell(r, 0); rdoc_text(r, t->methods[m]); }
        for (size_t c = 0; c < t->n_conds; c++) {
            rdoc_cell(r, 0);
            rdoc_text(r, report_cond_name(t, c));
            for (size_t m = 0; m < t->n_methods; m++) {
                char cell[128];
                report_cell_text(rstat_find(t, m, c), mk, cell, sizeof cell);
                rdoc_cell(r, 0);
                rdoc_num(r, "%s", cell);
            }
        }
    }
}

static void figure(struct rdoc *r, const struct plot_set *ps, const struct plot_item *it)
{
    char png[4300], rel[128];
    int n1 = snprintf(png, sizeof png, "%s/%s.png", ps->dir, it->name);
    int n2 = snprintf(rel, sizeof rel, "plots/%s", it->name);
    if (n1 < 0 || (size_t)n1 >= sizeof png || n2 < 0 || (size_t)n2 >= sizeof rel) {
        rdoc_para(r, 0);
        rdoc_textf(r, "Plot %s: its path is too long to show.", it->name);
        return;
    }
    rdoc_figure(r, it->drawn ? png : NULL, rel);
    rdoc_text(r, it->caption);
}

/* The summary chart: one row per condition, even a single mount test. */
static void sec_summary(struct rdoc *r, const struct report_doc *d)
{
    rdoc_heading(r, 2, kind_heading[PLOT_SUMMARY]);
    size_t shown = 0;
    for (size_t i = 0; i < d->plots->n; i++)
        if (d->plots->items[i].kind == PLOT_SUMMARY) { figure(r, d->plots, &d->plots->items[i]); shown++; }
    if (!shown) { rdoc_para(r, 0); rdoc_text(r, "No finished cell to summarise."); }
}

static void sec_plots(struct rdoc *r, const struct report_doc *d)
{
    const struct plot_set *ps = d->plots;
    rdoc_heading(r, 2, "Plots");
    rdoc_para(r, 0);
    rdoc_text(r, "Each plot's data file and gnuplot script lie beside it in ");
    rdoc_code(r, "plots/");
    rdoc_text(r, "; edit the script and run ");
    rdoc_code(r, "gnuplot NAME.gp");
    rdoc_text(r, " there to restyle it.");
    for (int k = 0; k < PLOT_NKIND; k++) {
        if (k == PLOT_SUMMARY) continue;  /* on the first page */
        rdoc_heading(r, 3, kind_heading[k]);
        size_t shown = 0;
        for (size_t i = 0; i < ps->n; i++) {
            const struct plot_item *it = &ps->items[i];
            if ((int)it->kind != k) continue;
            shown++;
            figure(r, ps, it);
        }
        if (!shown) { rdoc_para(r, 0); rdoc_text(r, "None for this results folder."); }
    }
}

static void sec_skipped(struct rdoc *r, const struct report_doc *d)
{
    const struct plot_set *ps = d->plots;
    size_t skipped = 0;
    for (size_t i = 0; i < ps->n; i++) skipped += !ps->items[i].drawn;
    if (skipped) {
        rdoc_heading(r, 2, "Skipped plots");
        rdoc_para(r, 0);
        rdoc_textf(r, "gnuplot was not found on PATH, so %zu plots were not drawn. Install it (Debian package ",
                   skipped);
        rdoc_code(r, "gnuplot-nox");
        rdoc_text(r, ") and run ");
        rdoc_code(r, "revisit report");
        rdoc_text(r, " again, or run ");
        rdoc_code(r, "gnuplot NAME.gp");
        rdoc_text(r, " in ");
        rdoc_code(r, "plots/");
        rdoc_text(r, " for each:");
        rdoc_list(r);
        for (size_t i = 0; i < ps->n; i++) {
            if (ps->items[i].drawn) continue;
            char gp[80];
            snprintf(gp, sizeof gp, "%s.gp", ps->items[i].name);  /* name < 64 bytes: fits */
            rdoc_item(r);
            rdoc_code(r, gp);
            rdoc_textf(r, " (%s)", plot_kind_name(ps->items[i].kind));
        }
    }
    if (!d->n_notes) return;
    rdoc_heading(r, 2, "Plots not made");
    rdoc_list(r);
    for (size_t k = 0; k < d->n_notes; k++) { rdoc_item(r); rdoc_text(r, d->notes[k]); }
}

static void sec_failed(struct rdoc *r, const struct report_doc *d)
{
    size_t nf = 0;
    for (size_t i = 0; i < d->set->n; i++) nf += !d->set->cells[i].ok;
    if (!nf) return;
    rdoc_heading(r, 2, "Failed cells");
    rdoc_para(r, 0);
    rdoc_textf(r, "%zu cells did not finish; their tables read ", nf);
    rdoc_code(r, "failed");
    rdoc_text(r, ".");
    rdoc_list(r);
    for (size_t i = 0; i < d->set->n; i++) {
        const struct rdata_cell *c = &d->set->cells[i];
        if (c->ok) continue;
        rdoc_item(r);
        rdoc_text(r, c->id);
        rdoc_text(r, ": ");
        rdoc_text(r, c->error[0] ? c->error : "no message");
    }
}

/* "LABEL: a, b, c." as one list item, or "LABEL: NONE." */
static void repro_list(struct rdoc *r, const char *label, const char *const *v, size_t n, const char *none)
{
    rdoc_item(r);
    rdoc_textf(r, "%s: ", label);
    for (size_t k = 0; k < n; k++) rdoc_textf(r, "%s%s", k ? ", " : "", v[k]);
    rdoc_textf(r, "%s.", n ? "" : none);
}

static void sec_repro(struct rdoc *r, const struct report_doc *d)
{
    const struct rdata_set *s = d->set;
    const char *v[REPORT_LIST_MAX];
    rdoc_heading(r, 2, "Reproducibility");
    rdoc_list(r);
    rdoc_item(r);
    rdoc_text(r, "Report written by revisit " RV_VERSION ".");
    size_t n = report_distinct(s, offsetof(struct rdata_cell, software), v, REPORT_LIST_MAX);
    repro_list(r, "Results written by", v, n, "(not recorded)");
    n = report_distinct(s, offsetof(struct rdata_cell, scenario_hash), v, REPORT_LIST_MAX);
    repro_list(r, "Scenario hash", v, n, "none (not a scenario run)");
    unsigned long long seeds[REPORT_LIST_MAX];
    size_t ns = report_seeds(s, seeds, REPORT_LIST_MAX);
    rdoc_item(r);
    rdoc_text(r, "Perturbation seeds: ");
    for (size_t k = 0; k < ns; k++) rdoc_textf(r, "%s%llu", k ? ", " : "", seeds[k]);
    rdoc_text(r, ".");
    if (isfinite(s->boot_seed)) {
        rdoc_item(r);
        rdoc_textf(r, "Bootstrap: %.0f resamples, seed %.0f (scenario.json).", s->boot_resamples, s->boot_seed);
    }
    rdoc_item(r);
    rdoc_text(r, "Commands (each cell's, then this report's):");
    rdoc_pre(r);
    for (size_t i = 0; i < s->n; i++) {  /* every distinct one, however many cells */
        const char *c = s->cells[i].command;
        size_t k = 0;
        while (k < i && strcmp(s->cells[k].command, c)) k++;
        if (c[0] && k == i) rdoc_line(r, c);
    }
    rdoc_line(r, d->opts->command ? d->opts->command : "revisit report");
}

typedef void (*section_fn)(struct rdoc *r, const struct report_doc *d);
static const section_fn sections[] = {
    sec_title, sec_verdicts, sec_summary, report_sec_oppoints, sec_overview, sec_settings, sec_findings,
    sec_tables, report_sec_kinds, report_sec_sens, sec_plots, sec_skipped, sec_failed, sec_repro,
};

struct rdoc *report_build(const struct report_doc *d)
{
    struct rdoc *r = rdoc_new(d->title);
    for (size_t k = 0; r && k < sizeof sections / sizeof sections[0]; k++) sections[k](r, d);
    return r;
}
