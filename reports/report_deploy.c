/* report_deploy.c: the report's sections for a deployed system: the
 * thresholds carried from a tuned_on condition (operating points) and the
 * scores per kind of revisit. */
#include <math.h>
#include <stdio.h>
#include <string.h>

#include "reports/rdoc.h"
#include "reports/report_int.h"

static void op_row(struct rdoc *r, const struct rstat_table *t, const struct rdata_verdict *v)
{
    rdoc_cell(r, 0); rdoc_text(r, report_short_name(t, v->method));
    rdoc_cell(r, 0); rdoc_text(r, v->cond);
    rdoc_cell(r, 0); rdoc_text(r, v->tuned_on);
    rdoc_cell(r, 0); rdoc_text(r, v->rule);
    if (!isnan(v->op_target)) rdoc_num(r, " %g", v->op_target);
    rdoc_cell(r, 0);
    if (isnan(v->op_tau)) rdoc_text(r, "none found");
    else rdoc_num(r, "%.4f [%.4f, %.4f]", v->op_tau, v->op_tau_lo, v->op_tau_hi);
    rdoc_cell(r, 0); rdoc_text(r, v->metric);
    rdoc_cell(r, 0);
    if (isnan(v->value)) rdoc_text(r, "no threshold to score at");
    else rdoc_num(r, "%.3f [%.3f, %.3f]", v->value, v->lo, v->hi);
    report_verdict_mark(r, v->pass);
}

/* Criteria judged at a threshold carried from another condition. */
void report_sec_oppoints(struct rdoc *r, const struct report_doc *d)
{
    static const char *const head[] = {"method", "condition", "tuned on", "rule", "threshold [interval]",
                                       "score", "at the threshold [interval]", "verdict"};
    const struct rdata_set *s = d->set;
    size_t n = 0;
    for (size_t k = 0; k < s->n_verdicts; k++) n += (size_t)s->verdicts[k].has_op;
    if (!n) return;
    rdoc_heading(r, 2, "Operating points");
    rdoc_para(r, 0);
    rdoc_text(r, "A deployed system keeps the threshold it was tuned with. Each row takes the threshold chosen "
                 "on the tuned-on condition by the rule (with the 95% interval of that choice over bootstrap "
                 "resamples) and scores the condition at it, false loop closures included.");
    rdoc_table(r, 8, "llllrlrl");
    for (size_t k = 0; k < 8; k++) { rdoc_cell(r, 0); rdoc_text(r, head[k]); }
    for (size_t k = 0; k < s->n_verdicts; k++)
        if (s->verdicts[k].has_op) op_row(r, d->table, &s->verdicts[k]);
}

/* Same (method, condition, axis value) as cell b. */
static int kind_same_group(const struct rdata_cell *a, const struct rdata_cell *b)
{
    return !strcmp(a->label, b->label) && !strcmp(a->cond, b->cond) && a->has_axis == b->has_axis &&
           (!a->has_axis || a->axis_value == b->axis_value);
}

/* One row: the group of cell k (its first cell), means over its seeds. */
static void kind_row(struct rdoc *r, const struct report_doc *d, size_t k)
{
    const struct rdata_set *s = d->set;
    const struct rdata_cell *c = &s->cells[k];
    rdoc_cell(r, 0); rdoc_text(r, d->table->methods[d->table->cell_method[k]]);
    rdoc_cell(r, 0); rdoc_text(r, c->cond[0] ? c->cond : "none");
    if (c->has_axis) rdoc_num(r, " %s=%g", c->axis_key, c->axis_value);
    for (int kind = 0; kind < 3; kind++) {
        double rev = 0, r1 = 0, r100 = 0;
        size_t n = 0;
        for (size_t j = k; j < s->n; j++) {
            const struct rdata_cell *o = &s->cells[j];
            if (!o->ok || !o->has_kinds || !kind_same_group(o, c)) continue;
            n++;
            rev += o->kind_revisits[kind];
            r1 += o->kind_recall1[kind];
            r100 += o->kind_r100p[kind];
        }
        rdoc_cell(r, 0); rdoc_num(r, "%.0f", n ? rev / (double)n : 0);
        rdoc_cell(r, 0);
        if (!n || rev == 0) { rdoc_text(r, "-"); rdoc_cell(r, 0); rdoc_text(r, "-"); continue; }
        rdoc_num(r, "%.3f", r1 / (double)n);
        rdoc_cell(r, 0); rdoc_num(r, "%.3f", r100 / (double)n);
    }
}

/* Recall@1 and R@100P per kind of revisit, one row per method and condition. */
void report_sec_kinds(struct rdoc *r, const struct report_doc *d)
{
    static const char *const head[] = {"method", "condition", "same", "recall@1", "R@100P", "reverse",
                                       "recall@1", "R@100P", "crossing", "recall@1", "R@100P"};
    const struct rdata_set *s = d->set;
    size_t n = 0;
    for (size_t k = 0; k < s->n; k++) n += (size_t)(s->cells[k].ok && s->cells[k].has_kinds);
    if (!n) return;
    rdoc_heading(r, 2, "Scores per kind of revisit");
    rdoc_para(r, 0);
    rdoc_text(r, "Revisits classed by the heading difference to the pose they revisit: same direction "
                 "(within 45 degrees unless the run set otherwise), reverse (from 135 degrees), crossing "
                 "(between). The counts are revisits of each kind; recall@1 is the share whose top-1 match is "
                 "correct, R@100P the share accepted as correct at the run's one R@100P threshold. Means over "
                 "seeds.");
    rdoc_table(r, 11, "llrrrrrrrrr");
    for (size_t k = 0; k < 11; k++) { rdoc_cell(r, 0); rdoc_text(r, head[k]); }
    for (size_t k = 0; k < s->n; k++) {
        const struct rdata_cell *c = &s->cells[k];
        if (!c->ok || !c->has_kinds) continue;
        size_t j = 0;
        while (j < k && !(s->cells[j].ok && s->cells[j].has_kinds && kind_same_group(&s->cells[j], c))) j++;
        if (j == k) kind_row(r, d, k);
    }
}

/* ---- sensitivity ------------------------------------------------------- */

#define SENS_MAX 32

/* Swept conditions in the order of the first method's ranks; returns the count. */
static size_t sens_order(const struct rdata_set *s, const char **cond, const struct rdata_sens **first)
{
    size_t n = 0;
    const char *m0 = NULL;
    for (int rank = 1; rank <= SENS_MAX; rank++)
        for (size_t k = 0; k < s->n_sens; k++) {
            const struct rdata_sens *r = &s->sens[k];
            if (r->stage) continue;
            if (!m0) m0 = r->method;
            if (strcmp(r->method, m0) || r->rank != rank || n == SENS_MAX) continue;
            first[n] = r;
            cond[n++] = r->cond;
        }
    return n;
}

int report_sens_plot(struct report_doc *d, struct plot_set *ps, struct err *e)
{
    const struct rdata_set *s = d->set;
    const char *cond[SENS_MAX];
    const struct rdata_sens *first[SENS_MAX];
    size_t nc = sens_order(s, cond, first);
    if (!nc) return 0;
    char label[SENS_MAX][320];
    const char *names[SENS_MAX];
    for (size_t i = 0; i < nc; i++) {
        snprintf(label[i], sizeof label[i], "%s %g-%g %s", first[i]->parameter, first[i]->from, first[i]->to,
                 first[i]->unit);
        names[i] = label[i];
    }
    const char *methods[SENS_MAX];
    size_t nm = 0;
    for (size_t k = 0; k < s->n_sens && nm < SENS_MAX; k++) {
        size_t j = 0;
        while (j < nm && strcmp(methods[j], s->sens[k].method)) j++;
        if (j == nm && !s->sens[k].stage) methods[nm++] = s->sens[k].method;
    }
    static double x[SENS_MAX][SENS_MAX], y[SENS_MAX][SENS_MAX], lo[SENS_MAX][SENS_MAX], hi[SENS_MAX][SENS_MAX];
    struct plot_series sr[SENS_MAX];
    for (size_t m = 0; m < nm; m++) {
        size_t n = 0;
        for (size_t i = 0; i < nc; i++)
            for (size_t k = 0; k < s->n_sens; k++) {
                const struct rdata_sens *r = &s->sens[k];
                if (r->stage || strcmp(r->method, methods[m]) || strcmp(r->cond, cond[i])) continue;
                x[m][n] = (double)i;
                y[m][n] = r->loss;
                lo[m][n] = isnan(r->loss_lo) ? r->loss : r->loss_lo;
                hi[m][n] = isnan(r->loss_hi) ? r->loss : r->loss_hi;
                n++;
            }
        sr[m] = (struct plot_series){methods[m], n, x[m], y[m], lo[m], hi[m]};
    }
    return plot_sensitivity(ps, "sensitivity-range-loss", "F1max lost across each swept range (95% interval)",
                            names, nc, sr, nm, e);
}

static void sens_axis_row(struct rdoc *r, const struct rdata_sens *x)
{
    rdoc_cell(r, 0); rdoc_num(r, "%d", x->rank);
    rdoc_cell(r, 0); rdoc_text(r, x->method);
    rdoc_cell(r, 0); rdoc_text(r, x->parameter);
    rdoc_cell(r, 0); rdoc_num(r, "%g to %g %s", x->from, x->to, x->unit);
    rdoc_cell(r, 0); rdoc_num(r, "%.4f [%.4f, %.4f]", x->per_unit, x->per_unit_lo, x->per_unit_hi);
    rdoc_cell(r, 0); rdoc_num(r, "%.3f [%.3f, %.3f]", x->loss, x->loss_lo, x->loss_hi);
}

static void sens_stage_row(struct rdoc *r, const struct rdata_sens *x)
{
    rdoc_cell(r, 0); rdoc_text(r, x->compound);
    rdoc_cell(r, 0); rdoc_text(r, x->method);
    rdoc_cell(r, 0); report_chain_cell(r, x->parameter);
    rdoc_cell(r, 0); rdoc_num(r, "%.3f [%.3f, %.3f]", x->loss, x->loss_lo, x->loss_hi);
    rdoc_cell(r, 0); rdoc_num(r, "%.3f", x->compound_loss);
    rdoc_cell(r, 0); rdoc_num(r, "%.0f%%", 100 * x->share);
    rdoc_cell(r, 0); rdoc_text(r, x->rank == 1 ? "dominates" : "");
}

/* The ranking table of sensitivity.csv (the chart is in the plots). */
void report_sec_sens(struct rdoc *r, const struct report_doc *d)
{
    static const char *const ha[] = {"rank", "method", "parameter", "swept", "F1max lost per unit [interval]",
                                     "F1max lost across the range [interval]"};
    static const char *const hs[] = {"compound condition", "method", "stage alone", "F1max lost [interval]",
                                     "compound loss", "share", ""};
    const struct rdata_set *s = d->set;
    size_t na = 0, ns = 0;
    for (size_t k = 0; k < s->n_sens; k++) { na += !s->sens[k].stage; ns += (size_t)s->sens[k].stage; }
    if (!na && !ns) return;
    rdoc_heading(r, 2, "Sensitivity ranking");
    rdoc_para(r, 0);
    rdoc_text(r, "What costs the most, per method (from ");
    rdoc_code(r, "sensitivity.csv");
    rdoc_text(r, "): each swept parameter with the F1max lost per unit (minus the least-squares slope over the "
                 "swept values) and across the swept range, ranked by the latter; then each stage of a compound "
                 "condition run alone against the unperturbed condition. Intervals: 95%, one paired bootstrap over "
                 "the queries. The chart is under Plots.");
    if (na) {
        rdoc_table(r, 6, "rlllrr");
        for (size_t k = 0; k < 6; k++) { rdoc_cell(r, 0); rdoc_text(r, ha[k]); }
        for (size_t k = 0; k < s->n_sens; k++)
            if (!s->sens[k].stage) sens_axis_row(r, &s->sens[k]);
    }
    if (ns) {
        rdoc_table(r, 7, "lllrrrl");
        for (size_t k = 0; k < 7; k++) { rdoc_cell(r, 0); rdoc_text(r, hs[k]); }
        for (size_t k = 0; k < s->n_sens; k++)
            if (s->sens[k].stage) sens_stage_row(r, &s->sens[k]);
    }
}
