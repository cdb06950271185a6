/* test_metrics_pr.c: outcomes, the exact curve and every scalar on cases
 * worked out by hand below, in strict and lenient counting, plus the checks
 * pr_set_build makes on retrieval lists. */
#include <math.h>
#include <stdlib.h>

#include "metrics/pr.h"
#include "tests/check.h"

#define EXACT 1e-15

/* The 10-query case.  R = revisit, top-1 class P (within r_pos) / N (beyond
 * r_neg), first = rank of the first correct candidate in the list.
 *
 *   q  d1   top1 R  first        tau  acc  TP FP | strict FN P    R    | lenient FN R
 *   0  0.1  P    1  1            0.1  0    1  0  | 6       1    1/7  | 6   1/7
 *   1  0.2  P    1  1            0.2  0-1  2  0  | 5       1    2/7  | 5   2/7
 *   2  0.3  N    0  0            0.3  0-3  3  1  | 4       3/4  3/7  | 4   3/7
 *   3  0.3  P    1  1            0.4  0-4  3  2  | 4       3/5  3/7  | 3   1/2
 *   4  0.4  N    1  3            0.5  0-5  4  2  | 3       2/3  4/7  | 2   2/3
 *   5  0.5  P    1  1            0.6  0-6  4  3  | 3       4/7  4/7  | 2   2/3
 *   6  0.6  N    0  0            0.7  0-7  4  4  | 3       1/2  4/7  | 1   4/5
 *   7  0.7  N    1  12           0.8  0-8  4  5  | 3       4/9  4/7  | 1   4/5
 *   8  0.8  N    0  0
 *   9  -    -    1  0   (no candidate: never accepted)
 *
 * F1 = 2PR/(P+R) (van Rijsbergen, Information Retrieval, 2nd ed. 1979, ch. 7,
 * E = 1 - F with beta = 1).  Strict F1 per row: 1/4, 4/9, 6/11, 1/2, 8/13,
 * 4/7, 8/15, 1/2 -> F1max 8/13 at 0.5.  Lenient: 1/4, 4/9, 6/11, 6/11, 2/3,
 * 8/13, 8/13, 4/7 -> F1max 2/3 at 0.5.
 * R@100P: FP = 0 up to tau 0.2 -> 2/7 (both).  P_R0 = 1 (tau 0.1).
 * EP = (P_R0 + R@100P)/2 = 9/14 (Ferrarini et al., IEEE RA-L 2020, eq. of
 * extended precision, from memory).
 * AP = sum (R_k - R_k-1) P_k: strict (1/7)(1 + 1 + 3/4 + 2/3) = 41/84;
 * lenient 1/7 + 1/7 + 3/28 + 3/70 + 1/9 + 1/15 = 773/1260.
 * recall@K over the 7 revisits: @1 4/7 (q0 1 3 5), @5 and @10 5/7 (+q4),
 * @25 6/7 (+q7); @1% with 1500 map scans is K = 15: 6/7.
 */
static const struct { double d1; int cls, rev, first; } table10[10] = {
    {0.1, GT_POS, 1, 1}, {0.2, GT_POS, 1, 1}, {0.3, GT_NEG, 0, 0}, {0.3, GT_POS, 1, 1},
    {0.4, GT_NEG, 1, 3}, {0.5, GT_POS, 1, 1}, {0.6, GT_NEG, 0, 0}, {0.7, GT_NEG, 1, 12},
    {0.8, GT_NEG, 0, 0}, {INFINITY, GT_NEG, 1, 0},
};

static struct pr_set *set10(enum protocol_counting counting)
{
    struct pr_outcome o[10];
    for (size_t i = 0; i < 10; i++) {
        /* given in reverse, so the set has to sort them */
        size_t k = 9 - i;
        o[k] = (struct pr_outcome){table10[i].d1, i, i, table10[i].first,
                                   (unsigned char)table10[i].cls, (unsigned char)table10[i].rev};
    }
    struct pr_set *s = NULL;
    struct err e = {{0}};
    if (pr_set_from_outcomes(o, 10, 1500, counting, &s, &e)) return NULL;
    return s;
}

static void table_case(void)
{
    static const double P[8] = {1, 1, 3. / 4, 3. / 5, 2. / 3, 4. / 7, 1. / 2, 4. / 9};
    static const double Rs[8] = {1. / 7, 2. / 7, 3. / 7, 3. / 7, 4. / 7, 4. / 7, 4. / 7, 4. / 7};
    static const double Rl[8] = {1. / 7, 2. / 7, 3. / 7, 1. / 2, 2. / 3, 2. / 3, 4. / 5, 4. / 5};
    static const double TP[8] = {1, 2, 3, 3, 4, 4, 4, 4}, FP[8] = {0, 0, 1, 2, 2, 3, 4, 5};
    static const double FNs[8] = {6, 5, 4, 4, 3, 3, 3, 3}, FNl[8] = {6, 5, 4, 3, 2, 2, 1, 1};
    for (int lenient = 0; lenient < 2; lenient++) {
        struct pr_set *s = set10(lenient ? PROTOCOL_LENIENT : PROTOCOL_STRICT);
        struct pr_curve *c = NULL;
        CHECK(s && pr_curve_build(s, &c, NULL) == 0, "10-query curve builds");
        if (!c) { pr_set_free(s); continue; }
        CHECK(c->n == 8, "one point per distinct top-1 distance (tie at 0.3 merged, none skipped)");
        int bad = 0;
        for (size_t k = 0; k < 8 && k < c->n; k++) {
            bad += fabs(c->threshold[k] - 0.1 * (double)(k + 1)) > 1e-12;
            bad += fabs(c->precision[k] - P[k]) > EXACT;
            bad += fabs(c->recall[k] - (lenient ? Rl[k] : Rs[k])) > EXACT;
            bad += c->tp[k] != TP[k] || c->fp[k] != FP[k] || c->fn[k] != (lenient ? FNl[k] : FNs[k]);
        }
        CHECK(bad == 0, lenient ? "lenient table: TP FP FN P R at every threshold"
                                : "strict table: TP FP FN P R at every threshold");
        struct pr_scalars v;
        pr_scalars_compute(s, NULL, &v);
        /* van Rijsbergen 1979 F-measure, beta = 1; values worked above */
        CHECK_NEAR(v.v[PR_F1MAX], lenient ? 2. / 3 : 8. / 13, EXACT, "F1max of the table");
        CHECK_NEAR(v.f1max_threshold, 0.5, 0, "F1max threshold");
        CHECK_NEAR(v.v[PR_R100P], 2. / 7, EXACT, "R@100P: recall of the last FP-free point");
        CHECK_NEAR(v.r100p_threshold, 0.2, 0, "R@100P threshold");
        CHECK_NEAR(v.v[PR_P_R0], 1, 0, "P_R0: precision at the lowest non-zero recall");
        /* Ferrarini et al., IEEE RA-L 2020: EP = (P_R0 + R_P100) / 2 (from memory) */
        CHECK_NEAR(v.v[PR_EP], 9. / 14, EXACT, "EP of the table");
        CHECK_NEAR(v.v[PR_AP], lenient ? 773. / 1260 : 41. / 84, 1e-15, "AP as the step sum");
        CHECK_NEAR(v.v[PR_RECALL_1], 4. / 7, EXACT, "recall@1");
        CHECK_NEAR(v.v[PR_RECALL_5], 5. / 7, EXACT, "recall@5");
        CHECK_NEAR(v.v[PR_RECALL_10], 5. / 7, EXACT, "recall@10");
        CHECK_NEAR(v.v[PR_RECALL_25], 6. / 7, EXACT, "recall@25");
        CHECK_NEAR(v.v[PR_RECALL_1PCT], 6. / 7, EXACT, "recall@1% of 1500 map scans (K = 15)");
        pr_curve_free(c);
        pr_set_free(s);
    }
}

/* EP where P_R0 and R@100P differ: the first accepted match is wrong.
 *   q0 0.1 N (not a revisit), q1 0.2 P, q2 0.3 P, q3 revisit with no candidate.
 *   tau 0.1: TP 0 FP 1 -> P 0, R 0;  0.2: P 1/2, R 1/3;  0.3: P 2/3, R 2/3.
 *   P_R0 = 1/2, R@100P = 0 (no FP-free point), EP = 1/4 (Ferrarini et al. 2020). */
static void ep_case(void)
{
    struct pr_outcome o[4] = {
        {0.1, 0, 0, 0, GT_NEG, 0}, {0.2, 1, 1, 1, GT_POS, 1},
        {0.3, 2, 2, 1, GT_POS, 1}, {INFINITY, 3, 3, 0, GT_NEG, 1},
    };
    struct pr_set *s = NULL;
    CHECK(pr_set_from_outcomes(o, 4, 10, PROTOCOL_STRICT, &s, NULL) == 0, "EP case builds");
    if (!s) return;
    struct pr_scalars v;
    pr_scalars_compute(s, NULL, &v);
    CHECK_NEAR(v.v[PR_P_R0], 0.5, 0, "P_R0 skips the zero-recall point");
    CHECK_NEAR(v.v[PR_R100P], 0, 0, "R@100P is 0 when the first point has an FP");
    CHECK(isnan(v.r100p_threshold), "R@100P threshold is NaN when no point is FP-free");
    CHECK_NEAR(v.v[PR_EP], 0.25, 0, "EP = (P_R0 + R@100P) / 2 with the two different");
    /* F1: 0, 2(1/2)(1/3)/(5/6) = 2/5, 2(2/3)(2/3)/(4/3) = 2/3 */
    CHECK_NEAR(v.v[PR_F1MAX], 2. / 3, EXACT, "F1max of the EP case");
    /* Weights: doubling q0 and dropping q2 changes P at 0.2 to 1/3. */
    uint32_t w[4] = {2, 1, 0, 1};
    pr_scalars_compute(s, w, &v);
    CHECK_NEAR(v.v[PR_P_R0], 1. / 3, EXACT, "weights count a slot several times");
    CHECK_NEAR(v.v[PR_RECALL_1], 0.5, EXACT, "weights enter recall@K");
    pr_set_free(s);
}

/* Degenerate inputs keep defined values. */
static void degenerate(void)
{
    struct pr_outcome o[3] = {
        {0.5, 0, 0, 0, GT_NEG, 0}, {0.5, 1, 1, 0, GT_BAND, 0}, {0.5, 2, 2, 0, GT_NEG, 0},
    };
    struct pr_set *s = NULL;
    struct pr_curve *c = NULL;
    struct pr_scalars v;
    pr_set_from_outcomes(o, 3, 10, PROTOCOL_STRICT, &s, NULL);
    CHECK(s && pr_curve_build(s, &c, NULL) == 0 && c->n == 1, "all distances equal: one point");
    pr_scalars_compute(s, NULL, &v);
    CHECK(v.v[PR_F1MAX] == 0 && v.v[PR_AP] == 0 && v.v[PR_RECALL_1] == 0 && isnan(v.f1max_threshold),
          "no revisits: every recall-based scalar is 0");
    CHECK(c && c->recall[0] == 0 && c->precision[0] == 0, "no revisits: recall 0, precision from FP");
    pr_curve_free(c);
    pr_set_free(s);
    /* Only a band match accepted: TP + FP = 0 gives precision 1. */
    struct pr_outcome b[2] = {{0.2, 0, 0, 0, GT_BAND, 1}, {INFINITY, 1, 1, 0, GT_NEG, 0}};
    pr_set_from_outcomes(b, 2, 10, PROTOCOL_LENIENT, &s, NULL);
    c = NULL;
    CHECK(s && pr_curve_build(s, &c, NULL) == 0 && c->n == 1 && c->precision[0] == 1,
          "only band matches accepted: precision defined as 1");
    pr_scalars_compute(s, NULL, &v);
    CHECK(v.v[PR_R100P] == 0 && v.r100p_threshold == 0.2 && v.v[PR_P_R0] == 0,
          "band only: R@100P 0 at that threshold, no non-zero recall");
    pr_curve_free(c);
    pr_set_free(s);
    /* No candidate anywhere: empty curve. */
    struct pr_outcome z[1] = {{INFINITY, 0, 0, 0, GT_NEG, 1}};
    pr_set_from_outcomes(z, 1, 0, PROTOCOL_STRICT, &s, NULL);
    c = NULL;
    CHECK(s && pr_curve_build(s, &c, NULL) == 0 && c->n == 0, "no accepted query: empty curve");
    pr_scalars_compute(s, NULL, &v);
    CHECK(v.v[PR_EP] == 0 && v.v[PR_RECALL_1PCT] == 0, "no accepted query: scalars 0");
    pr_curve_free(c);
    pr_set_free(s);
    struct pr_outcome n[1] = {{NAN, 4, 0, 0, GT_NEG, 1}};
    struct err e = {{0}};
    CHECK(pr_set_from_outcomes(n, 1, 0, PROTOCOL_STRICT, &s, &e) == -1, "NaN top-1 refused");
    CHECK_MSG(e.msg, "query 4 has a NaN top-1 distance", "message names the query");
    CHECK(pr_metric_name(PR_RECALL_1PCT)[0] == 'r' && !strcmp(pr_metric_name(PR_EP), "ep"),
          "metric keys follow result.json");
}

/* Lists through the ground truth: exclusion drop, band, ranks, bad rows.
 * Loop, 30 s: scans at t 0 10 20 40 50, x 0 100 200 1 104 (y = z = 0);
 * r_pos 3, r_neg 5.  Query 3's candidates are scans 0, 1; query 4's 0, 1, 2. */
static void lists_case(void)
{
    double xyz[15] = {0, 0, 0, 100, 0, 0, 200, 0, 0, 1, 0, 0, 104, 0, 0};
    double t[5] = {0, 10, 20, 40, 50};
    struct gt_poses map = {xyz, t, 5};
    struct protocol p;
    protocol_defaults(&p);
    p.r_neg_m = 5;
    struct gt *g = NULL;
    struct err e = {{0}};
    CHECK(gt_build(&p, &map, NULL, NULL, 0, &g, &e) == 0, "lists case ground truth");
    if (!g) return;
    size_t off[6] = {0, 0, 0, 0, 3, 4};
    struct pr_cand c[8] = {{2, 0.1}, {1, 0.2}, {0, 0.3}, {1, 0.25}};
    struct pr_lists l = {5, off, c};
    struct pr_set *s = NULL;
    CHECK(pr_set_build(g, &l, &s, &e) == 0, "valid lists build");
    if (s) {
        CHECK(s->n_excluded == 1, "a candidate inside the exclusion window is dropped and counted");
        const struct pr_outcome *o3 = &s->o[0], *o4 = &s->o[1];   /* d1 0.2, then 0.25 */
        CHECK(o4->query == 4 && o4->d1 == 0.25 && o4->cls == GT_BAND, "query 4: top-1 at 4 m is in the band");
        CHECK(o3->query == 3 && o3->d1 == 0.2 && o3->cls == GT_NEG && o3->first_pos == 2,
              "query 3: top-1 wrong, first correct at rank 2 after the drop");
        CHECK(s->n == 5 && s->o[4].d1 == INFINITY, "queries without a row are never accepted");
        pr_set_free(s);
    }
    /* top_k 1: query 3's correct candidate at rank 2 no longer counts */
    struct gt *g1 = NULL;
    p.top_k = 1;
    if (gt_build(&p, &map, NULL, NULL, 0, &g1, &e) == 0 && pr_set_build(g1, &l, &s, &e) == 0) {
        CHECK(s->o[0].query == 3 && s->o[0].first_pos == 0 && s->o[0].d1 == 0.2,
              "only the protocol's top-K candidates are ranked");
        pr_set_free(s);
    } else {
        CHECK(0, "top_k 1 case builds");
    }
    gt_free(g1);
    struct { long idx; double d; const char *frag; } bad[] = {
        {3, 0.1, "query 3 lists itself"},
        {4, 0.1, "query 3 lists scan 4, a later scan"},
        {7, 0.1, "query 3: candidate 7 is out of range, expected a map index from 0 to 4"},
        {-1, 0.1, "candidate -1 is out of range"},
        {0, NAN, "query 3: candidate 0 has a non-finite distance"},
        {0, 0.05, "query 3: distance 0.05 after 0.1, expected candidates best first"},
    };
    for (size_t k = 0; k < sizeof bad / sizeof bad[0]; k++) {
        struct pr_cand cb[2] = {{1, 0.1}, {bad[k].idx, bad[k].d}};
        size_t ob[6] = {0, 0, 0, 0, 2, 2};
        struct pr_lists lb = {5, ob, cb};
        s = NULL;
        CHECK(pr_set_build(g, &lb, &s, &e) == -1 && !s, "a bad row is refused");
        CHECK_MSG(e.msg, bad[k].frag, bad[k].frag);
    }
    struct pr_lists short_l = {4, off, c};
    CHECK(pr_set_build(g, &short_l, &s, &e) == -1, "row count must match the queries");
    CHECK_MSG(e.msg, "results have 4 query rows, expected 5", "message gives both counts");
    gt_free(g);
}

int main(void)
{
    table_case();
    ep_case();
    degenerate();
    lists_case();
    return check_done();
}
