/* pr.h: per-query outcomes, the exact precision-recall curve and its scalars.
 *
 * Input is, per query, its retrieved candidates best first (map index and
 * descriptor distance D), in one flat array with row offsets:
 *     row i = c[off[i] .. off[i+1])          (off has n_query + 1 entries)
 * pr_set_build checks them against the ground truth and keeps one outcome per
 * scored query: the top-1 distance d1, the class of the top-1 pair, whether
 * the query is a revisit and the rank of its first correct candidate.
 *
 * For a threshold tau a query is accepted when d1 <= tau.  TP: accepted and
 * top-1 within r_pos; FP: accepted and top-1 beyond r_neg; FN strict: a
 * revisit that is not a TP; FN lenient: a revisit that is not accepted.
 * The curve has one point per distinct d1, ascending.  Worked case, one
 * revisit query whose top-1 is wrong (d1 = 0.2), tau = 0.5:
 *     strict : TP 0  FP 1  FN 1   (the wrong match also misses the revisit)
 *     lenient: TP 0  FP 1  FN 0   (accepted, so it is not also a miss)
 *
 * Defined results for degenerate input (never a division by zero):
 *   TP + FP = 0 at a point (only band matches accepted): precision 1;
 *   no revisits: recall 0 everywhere, so F1max, R@100P, AP, recall@K are 0;
 *   no accepted query (no candidates at all): an empty curve, every scalar 0;
 *   F1max 0: its threshold is NaN; no point with FP = 0: R@100P 0, threshold NaN;
 *   no point with recall > 0: P_R0 0;  all d1 equal: a curve of one point.
 * recall@K counts only what the lists hold: K beyond the list length sees the
 * whole list.  recall@1% uses K = max(1, round(n_map / 100)).
 *
 * At an operating point (op_tau set, e.g. a threshold tuned on another
 * condition, metrics/oppoint.h) the PR_OP_* metrics score the set at that
 * threshold alone: the last curve point with tau <= op_tau gives precision,
 * recall, F1 and the false positives (a count, per km and per hour when km
 * and hours are known); nothing accepted: precision 1, recall 0, FP 0.
 * Without op_tau they are NaN (null in result.json).
 *
 * Ownership: _build/_from_outcomes return a set the caller frees with
 * pr_set_free; pr_curve_build returns a curve freed with pr_curve_free (both
 * accept NULL).  Sets and curves are read-only afterwards and thread-safe.
 */
#ifndef RV_PR_H
#define RV_PR_H

#include <stddef.h>
#include <stdint.h>
#include "harness/base/err.h"
#include "metrics/gt.h"

struct pr_cand {
    long idx;        /* map scan index */
    double dist;     /* descriptor distance D, finite */
};

struct pr_lists {
    size_t n_query;          /* rows; must equal the ground truth's query count */
    const size_t *off;       /* n_query + 1 offsets into c */
    const struct pr_cand *c;
};

struct pr_outcome {
    double d1;               /* top-1 distance; INFINITY when no candidate (never accepted) */
    size_t query;            /* query index */
    size_t slot;             /* position among the scored queries, in query order */
    int first_pos;           /* 1-based rank of the first candidate within r_pos, 0 if none */
    unsigned char cls;       /* enum gt_class of the top-1 pair (GT_NEG when none) */
    unsigned char revisit;   /* 1: the ground truth says revisit */
};

struct pr_set {
    size_t n;                /* scored queries */
    struct pr_outcome *o;    /* sorted by d1 ascending, ties by query index */
    size_t n_map;            /* map size, for recall@1% */
    enum protocol_counting counting;
    size_t n_excluded;       /* listed candidates dropped as inside the exclusion window */
    double op_tau;           /* operating threshold carried from another set (oppoint.h);
                              * NaN (as built): none, and the PR_OP_* metrics are NaN */
    double km, hours;        /* driven while the set was recorded, for PR_OP_FP_PER_KM and
                              * PR_OP_FP_PER_HOUR (0 as built: unknown, those are NaN) */
};

enum pr_metric {
    PR_F1MAX, PR_R100P, PR_P_R0, PR_EP, PR_AP,
    PR_RECALL_1, PR_RECALL_5, PR_RECALL_10, PR_RECALL_25, PR_RECALL_1PCT,
    /* at the set's op_tau, in the order of oppoint.h's scores */
    PR_OP_PRECISION, PR_OP_RECALL, PR_OP_F1, PR_OP_FP, PR_OP_FP_PER_KM, PR_OP_FP_PER_HOUR,
    PR_N_METRICS
};

struct pr_scalars {
    double v[PR_N_METRICS];
    double f1max_threshold;  /* smallest tau reaching F1max, NaN when F1max is 0 */
    double r100p_threshold;  /* largest tau with FP = 0, NaN when none */
};

struct pr_curve {
    size_t n;
    double *threshold, *precision, *recall;   /* n each, threshold ascending */
    double *tp, *fp, *fn;                     /* counts (weighted sums are whole numbers) */
};

/* Build outcomes from retrieval lists.  Candidates inside the loop exclusion
 * window are dropped and counted in n_excluded; only the first protocol
 * top_k remaining candidates are ranked (the rest are still checked).  Returns 0, or -1 with e set
 * and *out untouched: row count differs from the ground truth; "query Q:
 * candidate J is out of range", "query Q lists itself", "query Q lists scan
 * J, a later scan" (loop mode), a non-finite distance, distances not in
 * increasing order; out of memory. */
int pr_set_build(const struct gt *g, const struct pr_lists *l, struct pr_set **out,
                 struct err *e);

/* Build a set from ready outcomes (copied, then sorted; slot and query are
 * kept as given).  Returns 0, or -1 on a NaN d1 or out of memory. */
int pr_set_from_outcomes(const struct pr_outcome *o, size_t n, size_t n_map,
                         enum protocol_counting counting, struct pr_set **out,
                         struct err *e);

void pr_set_free(struct pr_set *s);

/* Every scalar.  w (NULL = 1 each) gives a whole-number weight per slot, as a
 * bootstrap resample does.  Cannot fail; O(n). */
void pr_scalars_compute(const struct pr_set *s, const uint32_t *w, struct pr_scalars *out);

/* One point of the curve as the walk sees it (counts are weighted sums). */
struct pr_point {
    double tau, tp, fp, fn, precision, recall;
};
typedef void (*pr_visit)(void *ctx, const struct pr_point *pt);

/* Visit one point per distinct finite d1 that carries weight, in ascending
 * d1: the walk every scalar and the curve come from.  w as above.  Cannot
 * fail; O(n). */
void pr_points(const struct pr_set *s, const uint32_t *w, pr_visit fn, void *ctx);

/* The exact curve.  Returns 0, or -1 on out of memory. */
int pr_curve_build(const struct pr_set *s, struct pr_curve **out, struct err *e);
void pr_curve_free(struct pr_curve *c);

/* The one table of metrics, in enum order: what criteria accept, what the
 * summary tables and result.json hold, what the report labels.  A new
 * metric is a row here, its enum value and its computation. */
enum pr_better { PR_HIGHER_BETTER = 1, PR_LOWER_BETTER = -1 };

struct pr_metric_def {
    const char *key;           /* result.json key, criteria name: "f1max" */
    const char *label;         /* for tables and plots: "F1max" */
    enum pr_better better;     /* which way is better */
    const char *description;   /* one line */
    int at_op;                 /* 1: defined only at an operating point (pr_set.op_tau), else NaN */
};

/* Row m of the table; NULL when m is out of range. */
const struct pr_metric_def *pr_metric_def(enum pr_metric m);

/* "f1max", "r100p", "p_r0", "ep", "ap", "recall_at_1", ... "recall_at_1pct":
 * the keys of result.json ("?" out of range). */
const char *pr_metric_name(enum pr_metric m);

/* The metric with this key, or -1 when none has it. */
int pr_metric_find(const char *key);

#endif
