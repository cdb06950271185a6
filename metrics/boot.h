/* boot.h: uncertainty of the scalars: percentile bootstrap over queries,
 * paired bootstrap of a difference, and the spread over perturbation seeds.
 *
 * Resample b draws n scored queries with replacement, as whole-number
 * weights per slot, from its own generator seeded by a hash of (seed, b);
 * every scalar of pr.h is recomputed with those weights.  So a result depends
 * only on (set, resamples, seed), never on the thread count.  The interval is
 * the (1 - level)/2 and (1 + level)/2 quantiles of the resampled values,
 * linear between order statistics (the default of numpy.percentile).
 *
 *     struct boot_result r;
 *     if (boot_percentile(set, 1000, 1, 0.95, 2, &r, e)) return -1;
 *     printf("F1max %.3f [%.3f, %.3f]\n", r.point.v[PR_F1MAX], r.lo[PR_F1MAX], r.hi[PR_F1MAX]);
 *
 * Failure contract: each function returns 0, or -1 with e set and *out
 * untouched (resamples < 1, level outside (0, 1), sets that do not score
 * the same queries, out of memory, a thread that cannot start).  Nothing to
 * free: results are plain structs.  Thread-safe; threads <= 1 runs inline.
 */
#ifndef RV_BOOT_H
#define RV_BOOT_H

#include <stddef.h>
#include <stdint.h>
#include "harness/base/err.h"
#include "metrics/pr.h"

struct boot_result {
    struct pr_scalars point;        /* on the whole set */
    double lo[PR_N_METRICS], hi[PR_N_METRICS];
    int resamples;
};

struct boot_paired {
    double diff[PR_N_METRICS];      /* a - b on the whole sets */
    double lo[PR_N_METRICS], hi[PR_N_METRICS];   /* interval of a - b */
    double share_better[PR_N_METRICS];           /* share of resamples with a > b */
    int resamples;
};

struct boot_spread {
    size_t n;
    double mean, sd, min, max;      /* sd with n - 1 in the denominator; 0 when n = 1 */
};

/* Percentile interval of every scalar of s. */
int boot_percentile(const struct pr_set *s, int resamples, uint64_t seed, double level,
                    int threads, struct boot_result *out, struct err *e);

/* The same, calling tick->fn(tick->ctx, 1) after each resample from the
 * worker threads (so fn must be thread-safe), e.g. to draw a progress bar. */
struct boot_tick {
    void (*fn)(void *ctx, size_t done);
    void *ctx;
};
int boot_percentile_ticked(const struct pr_set *s, int resamples, uint64_t seed, double level,
                           int threads, const struct boot_tick *tick, struct boot_result *out,
                           struct err *e);

/* Paired bootstrap of a - b: the same resampled queries enter both sets.
 * a and b must score the same queries (same n, same query per slot). */
int boot_paired_diff(const struct pr_set *a, const struct pr_set *b, int resamples,
                     uint64_t seed, double level, int threads, struct boot_paired *out,
                     struct err *e);

/* The weights of resample b of n slots (n draws with replacement; w[k] is
 * how often slot k was drawn), the same draws every function here makes:
 * other resampled quantities (metrics/oppoint.h) reuse them.  Cannot fail. */
void boot_weights(uint64_t seed, int b, size_t n, uint32_t *w);

/* 0 when slot k holds the same query in a and b for every k (so a paired
 * resample is meaningful); -1 with e naming the first slot that differs. */
int boot_same_queries(const struct pr_set *a, const struct pr_set *b, struct err *e);

/* Mean, standard deviation, min and max of v[0..n-1] (e.g. one scalar over
 * perturbation seeds).  -1 when n is 0 or a value is not finite. */
int boot_spread_of(const double *v, size_t n, struct boot_spread *out, struct err *e);

/* Quantile q in [0, 1] of sorted[0..n-1], linear between order statistics
 * (numpy.percentile's default).  n >= 1; cannot fail. */
double boot_quantile(const double *sorted, size_t n, double q);

#endif
