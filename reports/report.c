/* report.c: gather tables and plots for a results folder, then write them. */
#include "reports/report_int.h"

#include <math.h>
#include <stdarg.h>
#include <stdlib.h>
#include <string.h>

#include "harness/base/fileio.h"
#include "harness/base/numfmt.h"
#include "harness/base/progress.h"
#include "perturb/chain.h"
#include "reports/rdoc.h"

void report_opts_defaults(struct report_opts *o)
{
    memset(o, 0, sizeof *o);
    o->md = o->html = 1;
}

int report_formats(const char *list, struct report_opts *o, struct err *e)
{
    o->md = o->html = 0;
    const char *p = list;
    while (1) {
        size_t len = strcspn(p, ",");
        if (len == 2 && !strncmp(p, "md", 2)) o->md = 1;
        else if (len == 4 && !strncmp(p, "html", 4)) o->html = 1;
        else
            return err_set(e, "revisit report: option '--format' got '%.*s', expected md, html or md,html",
                           (int)len, p);
        if (!p[len]) break;
        p += len + 1;
    }
    return 0;
}

void report_note(struct report_doc *d, const char *fmt, ...)
{
    if (d->n_notes >= REPORT_NOTES_MAX) return;
    va_list ap;
    va_start(ap, fmt);
    vsnprintf(d->notes[d->n_notes++], sizeof d->notes[0], fmt, ap);
    va_end(ap);
}

long report_ok_cell(const struct rdata_set *s, const struct rstat_table *t, size_t m, size_t c)
{
    for (size_t i = 0; i < s->n; i++)
        if (s->cells[i].ok && t->cell_method[i] == m && t->cell_cond[i] == c) return (long)i;
    return -1;
}

/* "sector width (deg)": a swept axis with the unit the stage table gives its
 * key; "dropout p" when the key has none or the stage is not known. */
static void report_axis_label(char *out, size_t n, const char *stage, const char *key)
{
    const struct chain_stage_info *in = chain_stage_find(stage);
    const char *unit = "";
    for (size_t k = 0; in && k < in->n_params; k++)
        if (!strcmp(in->params[k].key, key) && in->params[k].unit) unit = in->params[k].unit;
    int w = snprintf(out, n, "%s %s%s%s%s", stage, key, *unit ? " (" : "", unit, *unit ? ")" : "");
    if (w < 0 || (size_t)w >= n) snprintf(out, n, "%s", key);   /* stage names are short: not reached */
}

/* Degradation curves: one plot per swept axis and per metric. */
static int plots_degradation(struct report_doc *d, struct plot_set *ps, struct progress *pg, struct err *e)
{
    const struct rdata_set *s = d->set;
    const struct rstat_table *t = d->table;
    static const int metrics[2] = {RDATA_F1MAX, RDATA_R100P};
    size_t n = t->n_conds, n_axes = 0;
    double *buf = malloc((4 * n + 1) * sizeof *buf * (t->n_methods + 1));
    struct plot_series *sr = malloc((t->n_methods + 1) * sizeof *sr);
    int rc = (!buf || !sr) ? err_set(e, "out of memory for degradation curves") : 0;
    for (size_t c0 = 0; !rc && c0 < n; c0++) {
        const struct rdata_cell *a = &s->cells[t->cond_cell[c0]];
        if (!a->has_axis) continue;
        int seen = 0;  /* axis already drawn from an earlier condition */
        for (size_t c1 = 0; c1 < c0 && !seen; c1++) {
            const struct rdata_cell *b = &s->cells[t->cond_cell[c1]];
            seen = b->has_axis && !strcmp(a->axis_stage, b->axis_stage) && !strcmp(a->axis_key, b->axis_key);
        }
        if (seen) continue;
        for (int mk = 0; !rc && mk < 2; mk++) {
            size_t ns = 0;
            for (size_t m = 0; m < t->n_methods; m++) {
                double *x = buf + (4 * n + 1) * m, *y = x + n, *lo = y + n, *hi = lo + n;
                size_t k = 0;
                for (size_t c = c0; c < n; c++) {
                    const struct rdata_cell *b = &s->cells[t->cond_cell[c]];
                    const struct rstat_group *g = rstat_find(t, m, c);
                    if (!b->has_axis || strcmp(a->axis_stage, b->axis_stage) || strcmp(a->axis_key, b->axis_key) ||
                        !g || !g->n_seeds || isnan(g->mean[metrics[mk]]))
                        continue;
                    x[k] = b->axis_value; y[k] = g->mean[metrics[mk]];
                    lo[k] = g->lo[metrics[mk]]; hi[k] = g->hi[metrics[mk]];
                    k++;
                }
                if (k) sr[ns++] = (struct plot_series){t->methods[m], k, x, y, lo, hi};
            }
            if (!ns) continue;
            char name[64], title[512], xl[200];
            char what[200];
            snprintf(what, sizeof what, "%s %s %s", a->axis_stage, a->axis_key, rdata_metric_key(metrics[mk]));
            report_plot_name(name, sizeof name, "degradation", n_axes, what);
            snprintf(title, sizeof title, "%s against %s %s (mean over seeds, band: 95%% interval)",
                     rdata_metric_name(metrics[mk]), a->axis_stage, a->axis_key);
            report_axis_label(xl, sizeof xl, a->axis_stage, a->axis_key);
            rc = plot_degradation(ps, name, title, xl, rdata_metric_name(metrics[mk]), sr, ns, e);
            progress_add(pg, 1);
        }
        n_axes++;
    }
    free(buf);
    free(sr);
    return rc;
}

/* Method m's curve on condition c as a series named name, or n = 0. */
static struct plot_series pr_series(const struct report_doc *d, size_t m, size_t c, const char *name)
{
    long i = report_ok_cell(d->set, d->table, m, c);
    const struct rdata_cell *cl = i < 0 ? NULL : &d->set->cells[i];
    if (!cl || !cl->curve_n) return (struct plot_series){name, 0, NULL, NULL, NULL, NULL};
    return (struct plot_series){name, cl->curve_n, cl->curve_r, cl->curve_p, NULL, NULL};
}

#define REPORT_OP_LABEL 1400   /* a method's short name, the tuned-on name, the rule */

/* 1 when the verdict's condition (or, tuned, its tuned-on condition) is condition c. */
static int verdict_on(const struct report_doc *d, const struct rdata_verdict *v, size_t c, int tuned)
{
    const struct rdata_cell *cl = &d->set->cells[d->table->cond_cell[c]];
    if (tuned) return !cl->has_axis && !strcmp(cl->cond, v->tuned_on);
    return strlen(cl->cond) == v->cond_len && !strncmp(cl->cond, v->cond, v->cond_len) &&
           cl->has_axis == v->has_axis && (!v->has_axis || cl->axis_value == v->axis_value);
}

/* Where the operating points of condition c go. */
struct pr_ops {
    struct report_doc *d;
    size_t c, ns, n, max;
    const struct plot_series *sr;
    const size_t *sm;
    struct plot_oppoint *ops;
    char (*label)[REPORT_OP_LABEL];
};

/* The threshold tau of a rule chosen on condition `tuned` on series j's
 * curve, at the point of the largest curve threshold not above it (what a
 * deployed system accepts), labelled; a point already there is kept once. */
static void pr_op_add(struct pr_ops *o, size_t j, double tau, const char *tuned, const char *rule, double target)
{
    const struct rstat_table *t = o->d->table;
    const struct rdata_cell *cl = &o->d->set->cells[report_ok_cell(o->d->set, t, o->sm[j], o->c)];  /* sr[j]'s */
    size_t at = 0;
    if (o->n == o->max || !isfinite(tau)) return;
    for (size_t i = 0; i < cl->curve_n; i++)  /* the curve's thresholds ascend (metrics/pr.h) */
        if (cl->curve_t[i] <= tau) at = i + 1;
    char *l = o->label[o->n];
    char tg[40] = "";
    if (isfinite(target)) snprintf(tg, sizeof tg, " %g", target);
    if (err_cut(snprintf(l, REPORT_OP_LABEL, "%s at %.4g (tuned on %s, %s%s)", t->methods[o->sm[j]], tau, tuned, rule,
                         tg), REPORT_OP_LABEL))
        memcpy(l + REPORT_OP_LABEL - 4, "...", 4);
    for (size_t q = 0; q < o->n; q++)
        if (!strcmp(o->label[q], l)) return;
    if (!at) {
        report_note(o->d, "PR curves of %s: the operating point %s is not marked, no query is accepted at it",
                    report_cond_name(t, o->c), l);
        return;
    }
    o->ops[o->n] = (struct plot_oppoint){j, o->sr[j].x[at - 1], o->sr[j].y[at - 1], l};
    o->n++;
}

/* The condition name of the cell with this id (a result's tuned_on), else the id. */
static const char *cell_cond(const struct rdata_set *s, const char *id)
{
    for (size_t i = 0; i < s->n; i++)
        if (!strcmp(s->cells[i].id, id)) return s->cells[i].cond[0] ? s->cells[i].cond : "none";
    return id;
}

/* The operating points on condition c's curves: each cell's own (result.json
 * "operating_point") and each carried threshold of a verdict on c or tuned
 * on c.  Returns the count. */
static size_t pr_oppoints(struct pr_ops *o)
{
    const struct rstat_table *t = o->d->table;
    o->n = 0;
    for (size_t j = 0; j < o->ns; j++) {
        const struct rdata_cell *cl = &o->d->set->cells[report_ok_cell(o->d->set, t, o->sm[j], o->c)];
        if (cl->has_op) pr_op_add(o, j, cl->op_tau, cell_cond(o->d->set, cl->op_tuned_on), cl->op_rule, cl->op_target);
    }
    for (size_t k = 0; k < o->d->set->n_verdicts; k++) {
        const struct rdata_verdict *v = &o->d->set->verdicts[k];
        if (!v->has_op || !(verdict_on(o->d, v, o->c, 0) || verdict_on(o->d, v, o->c, 1))) continue;
        size_t j = 0;
        while (j < o->ns && strcmp(t->labels[o->sm[j]], v->method) && strcmp(t->methods[o->sm[j]], v->method)) j++;
        if (j < o->ns) pr_op_add(o, j, v->op_tau, v->tuned_on, v->rule, v->op_target);
    }
    return o->n;
}

static int plots_pr(struct report_doc *d, struct plot_set *ps, struct progress *pg, struct err *e)
{
    const struct rstat_table *t = d->table;
    size_t max_ops = d->set->n_verdicts + t->n_methods + 1;
    struct plot_series *sr = malloc((2 * t->n_methods + 1) * sizeof *sr), *bh = sr + t->n_methods;
    char (*refname)[320] = malloc((t->n_methods + 1) * sizeof *refname);
    size_t *sm = malloc((t->n_methods + 1) * sizeof *sm);
    struct plot_oppoint *ops = malloc(max_ops * sizeof *ops);
    char (*oplabel)[REPORT_OP_LABEL] = malloc(max_ops * sizeof *oplabel);
    int rc = sr && refname && sm && ops && oplabel ? 0 : err_set(e, "out of memory for PR curves");
    for (size_t c = 0; !rc && c < t->n_conds; c++) {
        size_t ns = 0;
        for (size_t m = 0; m < t->n_methods; m++) {
            struct plot_series cur = pr_series(d, m, c, t->methods[m]);
            if (!cur.n) continue;
            snprintf(refname[ns], sizeof refname[0], "%s on %s (reference)", t->methods[m],
                     report_cond_name(t, t->ref_cond[m]));
            bh[ns] = t->ref_cond[m] == c ? (struct plot_series){NULL, 0, NULL, NULL, NULL, NULL}
                                         : pr_series(d, m, t->ref_cond[m], refname[ns]);
            sm[ns] = m;
            sr[ns++] = cur;
        }
        if (!ns) { report_note(d, "PR curves for condition %s: no cell holds a curve", report_cond_name(t, c)); continue; }
        struct pr_ops po = {d, c, ns, 0, max_ops, sr, sm, ops, oplabel};
        size_t n_ops = pr_oppoints(&po);
        char name[64], title[600];
        report_plot_name(name, sizeof name, "pr", c, report_cond_name(t, c));
        snprintf(title, sizeof title, "PR curves, condition %s (first seed; dotted: the reference condition%s)",
                 report_cond_name(t, c), n_ops ? "; squares: operating points" : "");
        rc = plot_pr(ps, name, title, sr, ns, bh, ops, n_ops, e);
        progress_add(pg, 1);
    }
    free(sr);
    free(refname);
    free(sm);
    free(ops);
    free(oplabel);
    return rc;
}

/* RFC 4180 quoting: a field with a comma, quote or line break is quoted and
 * its quotes doubled. */
static void csv_field(FILE *f, const char *s)
{
    if (!strpbrk(s, ",\"\r\n")) { fputs(s, f); return; }
    fputc('"', f);
    for (; *s; s++) {
        if (*s == '"') fputc('"', f);
        fputc(*s, f);
    }
    fputc('"', f);
}

static int write_scalars(const struct report_doc *d, const char *path, struct err *e)
{
    const struct rstat_table *t = d->table;
    struct afile a;
    if (afile_open(&a, path, e)) return -1;
    fputs("method,condition,chain,axis,axis_value,seeds,failed,metric,mean,lo,hi,sd\n", a.f);
    for (size_t k = 0; k < t->n_groups; k++) {
        const struct rstat_group *g = &t->groups[k];
        const struct rdata_cell *c = &d->set->cells[t->cond_cell[g->cond]];
        for (int mk = 0; mk < RDATA_NMETRIC; mk++) {
            char nb[4][NUMFMT_LEN];
            csv_field(a.f, t->labels[g->method]);
            fputc(',', a.f);
            csv_field(a.f, c->cond);  /* the axis value has its own column */
            fputc(',', a.f);
            csv_field(a.f, c->chain);
            fputc(',', a.f);
            if (c->has_axis) {
                char ax[200];
                snprintf(ax, sizeof ax, "%s:%s", c->axis_stage, c->axis_key);
                csv_field(a.f, ax);
                fprintf(a.f, ",%s", numfmt(nb[0], c->axis_value));
            } else {
                fputc(',', a.f);
            }
            fprintf(a.f, ",%zu,%zu,%s,%s,%s,%s,%s\n", g->n_seeds, g->n_failed, rdata_metric_key(mk),
                    numfmt(nb[0], g->mean[mk]), numfmt(nb[1], g->lo[mk]), numfmt(nb[2], g->hi[mk]),
                    numfmt(nb[3], g->sd[mk]));
        }
    }
    if (ferror(a.f)) { afile_abort(&a); return err_at(e, path, 0, "write failed"); }
    return afile_commit(&a, e);
}

static void doc_title(struct report_doc *d, const struct report_opts *o)
{
    int n;
    if (o->title) n = snprintf(d->title, sizeof d->title, "%s", o->title);
    else if (d->set->scenario_name[0])
        n = snprintf(d->title, sizeof d->title, "Robustness report: %s", d->set->scenario_name);
    else
        n = snprintf(d->title, sizeof d->title, "Robustness report: %s", d->set->cells[0].label);
    if (err_cut(n, sizeof d->title)) memcpy(d->title + sizeof d->title - 4, "...", 4);  /* a title cut shows it */
}

static int draw_all(struct report_doc *d, struct plot_set *ps, int quiet, struct err *e)
{
    struct progress pg;
    progress_start(&pg, "plots", 2 * d->table->n_conds + d->table->n_conds + 3 * d->table->n_methods + 1, quiet);
    int rc = report_summary_plot(d, ps, &pg, e);
    if (!rc) rc = plots_degradation(d, ps, &pg, e);
    if (!rc) rc = plots_pr(d, ps, &pg, e);
    if (!rc) rc = report_cell_plots(d, ps, &pg, e);
    if (!rc) rc = report_sens_plot(d, ps, e);
    struct err later;   /* a failure before the wait is the one told */
    if (plot_set_wait(ps, rc ? &later : e)) rc = -1;
    progress_end(&pg);
    return rc;
}

/* Render the document with one of the rdoc writers into out/name, atomically. */
static int render(const struct rdoc *doc, int (*write)(const struct rdoc *, FILE *, struct err *), const char *out,
                  const char *name, struct err *e)
{
    char path[4200];
    fileio_join(path, sizeof path, out, name);
    struct afile a;
    if (afile_open(&a, path, e)) return -1;
    if (write(doc, a.f, e)) { afile_abort(&a); return -1; }
    if (ferror(a.f)) { afile_abort(&a); return err_at(e, path, 0, "write failed"); }
    return afile_commit(&a, e);
}

static int write_docs(struct report_doc *d, const char *out, struct err *e)
{
    char path[4200];
    fileio_join(path, sizeof path, out, "scalars.csv");
    if (write_scalars(d, path, e)) return -1;
    struct rdoc *doc = report_build(d);
    if (!doc) return err_set(e, "out of memory for the report");
    int rc = d->opts->md ? render(doc, rdoc_md_write, out, "report.md", e) : 0;
    if (!rc && d->opts->html) rc = render(doc, rdoc_html_write, out, "report.html", e);
    rdoc_free(doc);
    return rc;
}

int report_run(const struct report_opts *o, struct report_result *r, struct err *e)
{
    memset(r, 0, sizeof *r);
    struct rdata_set s;
    struct rstat_table t;
    if (rdata_load(o->in_dir, &s, e)) return -1;
    if (rstat_table_build(&s, &t, e)) { rdata_free(&s); return -1; }
    if (o->out_dir) snprintf(r->out_dir, sizeof r->out_dir, "%s", o->out_dir);
    else fileio_join(r->out_dir, sizeof r->out_dir, o->in_dir, "report");
    char plots[4200];
    fileio_join(plots, sizeof plots, r->out_dir, "plots");
    struct plot_set ps;
    plot_set_init(&ps, plots);
    struct report_doc *d = calloc(1, sizeof *d);
    int rc = d ? fileio_mkdirs(plots, e) : err_set(e, "out of memory for the report");
    if (!rc) {
        d->opts = o;
        d->set = &s;
        d->table = &t;
        d->plots = &ps;
        doc_title(d, o);
        rc = draw_all(d, &ps, o->quiet, e);
    }
    if (!rc) {
        report_findings(d);
        rc = write_docs(d, r->out_dir, e);
    }
    r->cells = s.n;
    r->plots = ps.n;
    for (size_t k = 0; k < ps.n; k++) r->drawn += (size_t)ps.items[k].drawn;
    r->have_gnuplot = ps.gnuplot[0] != 0;
    free(d);
    plot_set_free(&ps);
    rstat_table_free(&t);
    rdata_free(&s);
    return rc;
}
