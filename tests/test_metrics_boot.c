/* test_metrics_boot.c: percentile bootstrap coverage, determinism, paired
 * differences, spread over seeds, and the refused arguments. */
#include <math.h>
#include <stdint.h>
#include <stdlib.h>

#include "metrics/boot.h"
#include "tests/check.h"

struct lcg { uint64_t s; };

static double uni(struct lcg *r)
{
    r->s = r->s * 6364136223846793005ULL + 1442695040888963407ULL;
    return (double)(r->s >> 11) / 9007199254740992.0;
}

/* n revisit queries; each top-1 is correct with probability acc. */
static struct pr_set *simulate(struct lcg *r, size_t n, double acc)
{
    struct pr_outcome *o = malloc(n * sizeof *o);
    for (size_t i = 0; i < n; i++) {
        int ok = uni(r) < acc;
        o[i] = (struct pr_outcome){uni(r), i, i, ok, (unsigned char)(ok ? GT_POS : GT_NEG), 1};
    }
    struct pr_set *s = NULL;
    pr_set_from_outcomes(o, n, 1000, PROTOCOL_STRICT, &s, NULL);
    free(o);
    return s;
}

/* Coverage of the 95% percentile interval for a proportion whose true value
 * is known: close to the nominal 95% (Efron & Tibshirani, An Introduction to
 * the Bootstrap, 1993, ch. 13, percentile intervals); the 93-97% band allows
 * for the 400-repetition Monte Carlo error (sd about 1.1 points). */
static void coverage(void)
{
    struct lcg r = {2024};
    const double acc = 0.7;
    int covered = 0, reps = 400;
    for (int k = 0; k < reps; k++) {
        struct pr_set *s = simulate(&r, 200, acc);
        struct boot_result b;
        if (s && boot_percentile(s, 1000, (uint64_t)k + 1, 0.95, 2, &b, NULL) == 0)
            covered += b.lo[PR_RECALL_1] <= acc && acc <= b.hi[PR_RECALL_1];
        pr_set_free(s);
    }
    double share = (double)covered / reps;
    fprintf(stderr, "coverage of the 95%% interval: %.4f\n", share);
    CHECK(share >= 0.93 && share <= 0.97, "95% percentile interval covers the true accuracy 93-97% of the time");
}

/* Equal, or both NaN (the PR_OP_* rows without an operating point). */
static int same_num(double x, double y)
{
    return x == y || (isnan(x) && isnan(y));
}

static int same_result(const struct boot_result *a, const struct boot_result *b)
{
    for (int m = 0; m < PR_N_METRICS; m++)
        if (!same_num(a->lo[m], b->lo[m]) || !same_num(a->hi[m], b->hi[m]) || !same_num(a->point.v[m], b->point.v[m]))
            return 0;
    return 1;
}

static void count_tick(void *ctx, size_t done)
{
    *(size_t *)ctx += done;
}

static void determinism(void)
{
    struct lcg r = {5};
    struct pr_set *s = simulate(&r, 500, 0.6);
    struct boot_result a, b, c;
    CHECK(boot_percentile(s, 300, 9, 0.95, 1, &a, NULL) == 0, "bootstrap runs on one thread");
    CHECK(boot_percentile(s, 300, 9, 0.95, 2, &b, NULL) == 0, "bootstrap runs on two threads");
    CHECK(same_result(&a, &b), "thread count does not change the interval");
    CHECK(boot_percentile(s, 300, 10, 0.95, 2, &c, NULL) == 0 && !same_result(&a, &c),
          "another seed gives another interval");
    int inside = 1;
    for (int m = 0; m < PR_N_METRICS; m++)
        inside &= pr_metric_def((enum pr_metric)m)->at_op ? isnan(a.lo[m]) && isnan(a.point.v[m]) : a.lo[m] <= a.hi[m];
    CHECK(inside && a.lo[PR_F1MAX] > 0 && a.lo[PR_F1MAX] < a.point.v[PR_F1MAX] &&
          a.point.v[PR_F1MAX] < a.hi[PR_F1MAX], "intervals are ordered and bracket F1max");
    CHECK(a.resamples == 300, "resample count recorded");
    size_t ticks = 0;
    struct boot_tick tk = {count_tick, &ticks};
    CHECK(boot_percentile_ticked(s, 300, 9, 0.95, 1, &tk, &c, NULL) == 0 && same_result(&a, &c) && ticks == 300,
          "the ticked form calls back once per resample and gives the same interval");
    pr_set_free(s);
}

static void paired(void)
{
    struct lcg r = {11};
    size_t n = 400;
    struct pr_outcome *o = malloc(n * sizeof *o), *p = malloc(n * sizeof *p);
    for (size_t i = 0; i < n; i++) {
        double d = uni(&r);
        int ok_b = uni(&r) < 0.5, ok_a = ok_b || uni(&r) < 0.3;   /* a fixes some of b's misses */
        o[i] = (struct pr_outcome){d, i, i, ok_a, (unsigned char)(ok_a ? GT_POS : GT_NEG), 1};
        p[i] = (struct pr_outcome){d, i, i, ok_b, (unsigned char)(ok_b ? GT_POS : GT_NEG), 1};
    }
    struct pr_set *a = NULL, *b = NULL;
    pr_set_from_outcomes(o, n, 1000, PROTOCOL_STRICT, &a, NULL);
    pr_set_from_outcomes(p, n, 1000, PROTOCOL_STRICT, &b, NULL);
    struct boot_paired d;
    CHECK(boot_paired_diff(a, b, 500, 3, 0.95, 2, &d, NULL) == 0, "paired bootstrap runs");
    CHECK(d.diff[PR_RECALL_1] > 0.1 && d.lo[PR_RECALL_1] > 0 && d.share_better[PR_RECALL_1] == 1,
          "a dominating method: positive difference, interval above 0, better in every resample");
    CHECK(boot_paired_diff(a, a, 200, 3, 0.95, 1, &d, NULL) == 0 && d.lo[PR_AP] == 0 && d.hi[PR_AP] == 0 &&
          d.share_better[PR_AP] == 0, "a set against itself: zero difference, never better");
    struct err e = {{0}};
    struct pr_set *c = NULL;
    pr_set_from_outcomes(o, n - 1, 1000, PROTOCOL_STRICT, &c, NULL);
    CHECK(boot_paired_diff(a, c, 10, 3, 0.95, 1, &d, &e) == -1, "sets of different sizes refused");
    CHECK_MSG(e.msg, "400 and 399 scored queries", "message gives both sizes");
    pr_set_free(c);
    o[7].query = 900;
    pr_set_from_outcomes(o, n, 1000, PROTOCOL_STRICT, &c, NULL);
    CHECK(boot_paired_diff(c, b, 10, 3, 0.95, 1, &d, &e) == -1, "sets of different queries refused");
    CHECK_MSG(e.msg, "slot 7 holds query 900 in the first set only", "message names the slot");
    CHECK(boot_percentile(a, 0, 1, 0.95, 1, &(struct boot_result){0}, &e) == -1, "zero resamples refused");
    CHECK_MSG(e.msg, "0 resamples, expected at least 1", "message names the resample count");
    CHECK(boot_percentile(a, 10, 1, 1.0, 1, &(struct boot_result){0}, &e) == -1, "level 1 refused");
    CHECK_MSG(e.msg, "level 1, expected a number between 0 and 1", "message names the level");
    pr_set_free(a); pr_set_free(b); pr_set_free(c);
    free(o); free(p);
}

static void spread(void)
{
    double v[4] = {1, 2, 3, 4}, q[4] = {1, 2, 3, 4};
    struct boot_spread s;
    struct err e = {{0}};
    CHECK(boot_spread_of(v, 4, &s, &e) == 0, "spread of four values");
    /* sample standard deviation: numpy.std([1,2,3,4], ddof=1) = sqrt(5/3) (common practice, no source) */
    CHECK_NEAR(s.sd, sqrt(5.0 / 3.0), 1e-15, "sample sd with n - 1");
    CHECK(s.mean == 2.5 && s.min == 1 && s.max == 4 && s.n == 4, "mean, min, max");
    CHECK(boot_spread_of(v, 1, &s, &e) == 0 && s.sd == 0, "one seed: sd 0");
    CHECK(boot_spread_of(v, 0, &s, &e) == -1, "no values refused");
    CHECK_MSG(e.msg, "no values, expected at least one", "message for no values");
    v[2] = NAN;
    CHECK(boot_spread_of(v, 4, &s, &e) == -1, "NaN value refused");
    CHECK_MSG(e.msg, "value 2 is not finite", "message names the value");
    /* numpy.percentile([1,2,3,4], [25, 97.5]) = 1.75, 3.925 (linear method, numpy 1.24) */
    CHECK_NEAR(boot_quantile(q, 4, 0.25), 1.75, 1e-15, "quantile 0.25 interpolates");
    CHECK_NEAR(boot_quantile(q, 4, 0.975), 3.925, 1e-12, "quantile 0.975 interpolates");
    CHECK_NEAR(boot_quantile(q, 4, 1.0), 4, 0, "quantile 1 is the maximum");
}

int main(void)
{
    determinism();
    paired();
    spread();
    coverage();
    return check_done();
}
