/* pr.c: outcomes from retrieval lists, the exact PR curve, the scalars.
 *
 * Everything walks the outcomes once in d1 order (see pr_walk), with an
 * optional weight per slot, so the bootstrap computes each resample with
 * exactly the code that computes the point estimate.
 */
#include "metrics/pr.h"

#include <math.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>

#include "harness/base/err.h"

static const struct pr_metric_def pr_table[PR_N_METRICS] = {
    [PR_F1MAX] = {"f1max", "F1max", PR_HIGHER_BETTER, "largest F1 score over all distance thresholds"},
    [PR_R100P] = {"r100p", "R@100P", PR_HIGHER_BETTER, "largest recall with no false positive accepted"},
    [PR_P_R0] = {"p_r0", "P@R0", PR_HIGHER_BETTER, "precision at the lowest non-zero recall"},
    [PR_EP] = {"ep", "EP", PR_HIGHER_BETTER, "extended precision, (P@R0 + R@100P) / 2"},
    [PR_AP] = {"ap", "AP", PR_HIGHER_BETTER, "average precision, the area under the PR curve"},
    [PR_RECALL_1] = {"recall_at_1", "recall@1", PR_HIGHER_BETTER, "share of revisits with a correct first candidate"},
    [PR_RECALL_5] = {"recall_at_5", "recall@5", PR_HIGHER_BETTER, "share of revisits with a correct candidate among the first 5"},
    [PR_RECALL_10] = {"recall_at_10", "recall@10", PR_HIGHER_BETTER, "share of revisits with a correct candidate among the first 10"},
    [PR_RECALL_25] = {"recall_at_25", "recall@25", PR_HIGHER_BETTER, "share of revisits with a correct candidate among the first 25"},
    [PR_RECALL_1PCT] = {"recall_at_1pct", "recall@1%", PR_HIGHER_BETTER,
                        "the same among the first 1% of the map scans (at least 1)"},
    [PR_OP_PRECISION] = {"op_precision", "P@op", PR_HIGHER_BETTER,
                         "precision at the operating threshold carried from another condition", 1},
    [PR_OP_RECALL] = {"op_recall", "R@op", PR_HIGHER_BETTER, "recall at the operating threshold", 1},
    [PR_OP_F1] = {"op_f1", "F1@op", PR_HIGHER_BETTER, "F1 score at the operating threshold", 1},
    [PR_OP_FP] = {"op_false_positives", "FP@op", PR_LOWER_BETTER,
                  "false positives (false loop closures) accepted at the operating threshold", 1},
    [PR_OP_FP_PER_KM] = {"op_false_positives_per_km", "FP/km@op", PR_LOWER_BETTER,
                         "the same per km driven", 1},
    [PR_OP_FP_PER_HOUR] = {"op_false_positives_per_hour", "FP/h@op", PR_LOWER_BETTER,
                           "the same per hour driven", 1},
};

const struct pr_metric_def *pr_metric_def(enum pr_metric m)
{
    return (unsigned)m < PR_N_METRICS ? &pr_table[m] : NULL;
}

const char *pr_metric_name(enum pr_metric m)
{
    return (unsigned)m < PR_N_METRICS ? pr_table[m].key : "?";
}

int pr_metric_find(const char *key)
{
    for (int m = 0; key && m < PR_N_METRICS; m++)
        if (!strcmp(pr_table[m].key, key)) return m;
    return -1;
}

/* ---- outcome sets -------------------------------------------------------- */

static int pr_cmp(const void *a, const void *b)
{
    const struct pr_outcome *x = a, *y = b;
    if (x->d1 < y->d1) return -1;
    if (x->d1 > y->d1) return 1;
    return (x->query > y->query) - (x->query < y->query);
}

/* Check one row and fill its outcome (when used).  0 or -1 with e set. */
static int pr_row(const struct gt *g, const struct pr_lists *l, size_t i,
                  struct pr_outcome *o, size_t *excluded, struct err *e)
{
    double prev = -INFINITY;
    int rank = 0;
    o->d1 = INFINITY;
    o->cls = GT_NEG;
    o->first_pos = 0;
    o->query = i;
    o->revisit = (unsigned char)g->q[i].revisit;
    for (size_t k = l->off[i]; k < l->off[i + 1]; k++) {
        long j = l->c[k].idx;
        double d = l->c[k].dist;
        if (j < 0 || (size_t)j >= g->n_map)
            return err_set(e, "query %zu: candidate %ld is out of range, expected a map index from 0 to %zu",
                            i, j, g->n_map ? g->n_map - 1 : 0);
        if (gt_is_future(g, i, (size_t)j))
            return (size_t)j == i
                ? err_set(e, "query %zu lists itself, expected earlier scans only in loop mode", i)
                : err_set(e, "query %zu lists scan %ld, a later scan; loop mode expects earlier scans only", i, j);
        if (!isfinite(d))
            return err_set(e, "query %zu: candidate %ld has a non-finite distance, expected a finite number", i, j);
        if (d < prev)
            return err_set(e, "query %zu: distance %g after %g, expected candidates best first (increasing distance)",
                            i, d, prev);
        prev = d;
        if (!gt_is_candidate(g, i, (size_t)j)) { (*excluded)++; continue; }
        if (rank >= g->p.top_k) continue;   /* checked, but beyond the kept top-K */
        enum gt_class c = gt_pair(g, i, (size_t)j);
        if (++rank == 1) { o->d1 = d; o->cls = (unsigned char)c; }
        if (c == GT_POS && !o->first_pos) o->first_pos = rank;
    }
    return 0;
}

static struct pr_set *pr_set_alloc(size_t n)
{
    struct pr_set *s = calloc(1, sizeof *s);
    if (!s) return NULL;
    s->o = malloc((n ? n : 1) * sizeof *s->o);
    if (!s->o) { free(s); return NULL; }
    s->n = n;
    s->op_tau = NAN;
    return s;
}

int pr_set_build(const struct gt *g, const struct pr_lists *l, struct pr_set **out,
                 struct err *e)
{
    if (l->n_query != g->n_query)
        return err_set(e, "results have %zu query rows, expected %zu (one per query scan)",
                        l->n_query, g->n_query);
    struct pr_set *s = pr_set_alloc(g->n_used);
    if (!s) return err_set(e, "out of memory for %zu query outcomes", g->n_used);
    s->n_map = g->n_map;
    s->counting = g->p.counting;
    size_t slot = 0;
    for (size_t i = 0; i < g->n_query; i++) {
        struct pr_outcome tmp, *o = g->q[i].used ? &s->o[slot] : &tmp;
        if (pr_row(g, l, i, o, &s->n_excluded, e)) { pr_set_free(s); return -1; }
        if (g->q[i].used) o->slot = slot++;
    }
    qsort(s->o, s->n, sizeof *s->o, pr_cmp);
    *out = s;
    return 0;
}

int pr_set_from_outcomes(const struct pr_outcome *o, size_t n, size_t n_map,
                         enum protocol_counting counting, struct pr_set **out,
                         struct err *e)
{
    for (size_t k = 0; k < n; k++)
        if (isnan(o[k].d1)) return err_set(e, "query %zu has a NaN top-1 distance, expected a number", o[k].query);
    struct pr_set *s = pr_set_alloc(n);
    if (!s) return err_set(e, "out of memory for %zu query outcomes", n);
    if (n) memcpy(s->o, o, n * sizeof *o);
    s->n_map = n_map;
    s->counting = counting;
    qsort(s->o, s->n, sizeof *s->o, pr_cmp);
    *out = s;
    return 0;
}

void pr_set_free(struct pr_set *s)
{
    if (!s) return;
    free(s->o);
    free(s);
}

/* ---- the walk ------------------------------------------------------------ */

static double pr_weight(const struct pr_set *s, const uint32_t *w, size_t k)
{
    return w ? (double)w[s->o[k].slot] : 1.0;
}

static double pr_revisits(const struct pr_set *s, const uint32_t *w)
{
    double r = 0;
    for (size_t k = 0; k < s->n; k++)
        if (s->o[k].revisit) r += pr_weight(s, w, k);
    return r;
}

/* One point per distinct finite d1 that carries weight, ascending. */
static void pr_walk(const struct pr_set *s, const uint32_t *w, double revisits,
                    pr_visit fn, void *ctx)
{
    double tp = 0, fp = 0, acc_rev = 0, block = 0;
    for (size_t k = 0; k < s->n && isfinite(s->o[k].d1); k++) {
        const struct pr_outcome *o = &s->o[k];
        double wk = pr_weight(s, w, k);
        block += wk;
        if (o->cls == GT_POS) tp += wk;
        else if (o->cls == GT_NEG) fp += wk;
        if (o->revisit) acc_rev += wk;
        if (k + 1 < s->n && s->o[k + 1].d1 == o->d1) continue;
        if (block == 0) continue;
        block = 0;
        struct pr_point pt = {o->d1, tp, fp, 0, 1, 0};
        pt.fn = s->counting == PROTOCOL_STRICT ? revisits - tp : revisits - acc_rev;
        if (tp + fp > 0) pt.precision = tp / (tp + fp);
        if (tp + pt.fn > 0) pt.recall = tp / (tp + pt.fn);
        fn(ctx, &pt);
    }
}

void pr_points(const struct pr_set *s, const uint32_t *w, pr_visit fn, void *ctx)
{
    pr_walk(s, w, pr_revisits(s, w), fn, ctx);
}

/* ---- scalars ------------------------------------------------------------- */

struct pr_acc {
    struct pr_scalars *out;
    double prev_recall;
    int seen_r0, fp_clean;
};

static void pr_visit_scalars(void *ctx, const struct pr_point *pt)
{
    struct pr_acc *a = ctx;
    struct pr_scalars *o = a->out;
    double p = pt->precision, r = pt->recall;
    double f1 = p + r > 0 ? 2 * p * r / (p + r) : 0;
    if (f1 > o->v[PR_F1MAX]) { o->v[PR_F1MAX] = f1; o->f1max_threshold = pt->tau; }
    if (a->fp_clean && pt->fp == 0) { o->v[PR_R100P] = r; o->r100p_threshold = pt->tau; }
    else a->fp_clean = 0;
    if (!a->seen_r0 && r > 0) { o->v[PR_P_R0] = p; a->seen_r0 = 1; }
    o->v[PR_AP] += (r - a->prev_recall) * p;
    a->prev_recall = r;
}

/* Weighted revisit count, and recall@K for the five K, in one pass. */
static double pr_recall_at(const struct pr_set *s, const uint32_t *w, struct pr_scalars *out)
{
    long k1pct = lround((double)s->n_map / 100.0);
    const long ks[5] = {1, 5, 10, 25, k1pct < 1 ? 1 : k1pct};
    double hit[5] = {0}, revisits = 0;
    for (size_t k = 0; k < s->n; k++) {
        if (!s->o[k].revisit) continue;
        double wk = pr_weight(s, w, k);
        revisits += wk;
        int fp = s->o[k].first_pos;
        if (!fp) continue;
        for (int m = 0; m < 5; m++)
            if (fp <= ks[m]) hit[m] += wk;
    }
    for (int m = 0; m < 5; m++)
        out->v[PR_RECALL_1 + m] = revisits > 0 ? hit[m] / revisits : 0;
    return revisits;
}

/* The last point with tau <= a->tau (a->seen 0: none). */
struct pr_at {
    double tau;
    struct pr_point last;
    int seen;
};

static void pr_visit_at(void *ctx, const struct pr_point *pt)
{
    struct pr_at *a = ctx;
    if (pt->tau <= a->tau) { a->last = *pt; a->seen = 1; }
}

/* The PR_OP_* metrics at s->op_tau (NaN without it). */
static void pr_op_scores(const struct pr_set *s, const uint32_t *w, double revisits, struct pr_scalars *out)
{
    double *v = out->v;
    if (isnan(s->op_tau)) {
        for (int m = PR_OP_PRECISION; m <= PR_OP_FP_PER_HOUR; m++) v[m] = NAN;
        return;
    }
    struct pr_at a = {s->op_tau, {0, 0, 0, 0, 1, 0}, 0};
    pr_walk(s, w, revisits, pr_visit_at, &a);
    double p = a.last.precision, r = a.last.recall;
    v[PR_OP_PRECISION] = p;
    v[PR_OP_RECALL] = r;
    v[PR_OP_F1] = p + r > 0 ? 2 * p * r / (p + r) : 0;
    v[PR_OP_FP] = a.last.fp;
    v[PR_OP_FP_PER_KM] = s->km > 0 ? a.last.fp / s->km : NAN;
    v[PR_OP_FP_PER_HOUR] = s->hours > 0 ? a.last.fp / s->hours : NAN;
}

void pr_scalars_compute(const struct pr_set *s, const uint32_t *w, struct pr_scalars *out)
{
    memset(out, 0, sizeof *out);
    out->f1max_threshold = NAN;
    out->r100p_threshold = NAN;
    double revisits = pr_recall_at(s, w, out);
    struct pr_acc a = {out, 0, 0, 1};
    pr_walk(s, w, revisits, pr_visit_scalars, &a);
    out->v[PR_EP] = (out->v[PR_P_R0] + out->v[PR_R100P]) / 2;
    pr_op_scores(s, w, revisits, out);
}

/* ---- curve --------------------------------------------------------------- */

static void pr_visit_curve(void *ctx, const struct pr_point *pt)
{
    struct pr_curve *c = ctx;
    size_t k = c->n++;
    c->threshold[k] = pt->tau;
    c->precision[k] = pt->precision;
    c->recall[k] = pt->recall;
    c->tp[k] = pt->tp;
    c->fp[k] = pt->fp;
    c->fn[k] = pt->fn;
}

int pr_curve_build(const struct pr_set *s, struct pr_curve **out, struct err *e)
{
    struct pr_curve *c = calloc(1, sizeof *c);
    size_t cap = s->n ? s->n : 1;
    double *buf = c ? malloc(6 * cap * sizeof *buf) : NULL;
    if (!buf) {
        free(c);
        return err_set(e, "out of memory for a curve of %zu points", s->n);
    }
    c->threshold = buf;
    c->precision = buf + cap;
    c->recall = buf + 2 * cap;
    c->tp = buf + 3 * cap;
    c->fp = buf + 4 * cap;
    c->fn = buf + 5 * cap;
    pr_walk(s, NULL, pr_revisits(s, NULL), pr_visit_curve, c);
    *out = c;
    return 0;
}

void pr_curve_free(struct pr_curve *c)
{
    if (!c) return;
    free(c->threshold);
    free(c);
}
