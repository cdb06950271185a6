/* boot.c: percentile and paired bootstrap over queries, spread over seeds.
 *
 * vals layout: vals[(b * nsets + k) * PR_N_METRICS + m] is metric m of set k
 * in resample b.  Thread w computes resamples w, w + T, w + 2T, ...; each
 * resample writes only its own rows, so the result ignores the thread count.
 */
#include "metrics/boot.h"

#include <math.h>
#include <pthread.h>
#include <stdint.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>

#include "harness/base/err.h"

#define BOOT_MAX_THREADS 64

/* splitmix64 step (Steele, Lea & Flood, OOPSLA 2014): state advance + mix. */
static uint64_t boot_next(uint64_t *s)
{
    uint64_t z = (*s += 0x9e3779b97f4a7c15ULL);
    z = (z ^ (z >> 30)) * 0xbf58476d1ce4e5b9ULL;
    z = (z ^ (z >> 27)) * 0x94d049bb133111ebULL;
    return z ^ (z >> 31);
}

void boot_weights(uint64_t seed, int b, size_t n, uint32_t *w)
{
    uint64_t s = seed ^ 0x6a09e667f3bcc909ULL;
    s = boot_next(&s) ^ ((uint64_t)b * 0xd1b54a32d192ed03ULL);
    memset(w, 0, n * sizeof *w);
    for (size_t k = 0; k < n; k++) {
        double u = (double)(boot_next(&s) >> 11) * (1.0 / 9007199254740992.0);
        size_t i = (size_t)(u * (double)n);
        w[i < n ? i : n - 1]++;
    }
}

struct boot_job {
    const struct pr_set *sets[2];
    int nsets, resamples, threads, worker;
    uint64_t seed;
    double *vals;
    const struct boot_tick *tick;
    int failed;
};

static void *boot_worker(void *arg)
{
    struct boot_job *j = arg;
    size_t n = j->sets[0]->n;
    uint32_t *w = malloc((n ? n : 1) * sizeof *w);
    if (!w) { j->failed = 1; return NULL; }
    for (int b = j->worker; b < j->resamples; b += j->threads) {
        boot_weights(j->seed, b, n, w);
        for (int k = 0; k < j->nsets; k++) {
            struct pr_scalars sc;
            pr_scalars_compute(j->sets[k], w, &sc);
            memcpy(j->vals + ((size_t)b * (size_t)j->nsets + (size_t)k) * PR_N_METRICS,
                   sc.v, sizeof sc.v);
        }
        if (j->tick && j->tick->fn) j->tick->fn(j->tick->ctx, 1);
    }
    free(w);
    return NULL;
}

/* Run every resample into vals.  0 or -1 with e set. */
static int boot_run(const struct pr_set *a, const struct pr_set *b, int resamples,
                    uint64_t seed, int threads, const struct boot_tick *tick, double *vals,
                    struct err *e)
{
    if (threads < 1) threads = 1;
    if (threads > BOOT_MAX_THREADS) threads = BOOT_MAX_THREADS;
    if (threads > resamples) threads = resamples;
    struct boot_job jobs[BOOT_MAX_THREADS];
    pthread_t tid[BOOT_MAX_THREADS];
    int started = 0, failed = 0;
    for (int t = 0; t < threads; t++) {
        jobs[t] = (struct boot_job){{a, b}, b ? 2 : 1, resamples, threads, t, seed, vals, tick, 0};
        if (t == 0) continue;   /* worker 0 runs on this thread */
        if (pthread_create(&tid[t], NULL, boot_worker, &jobs[t])) { failed = 1; break; }
        started = t;
    }
    if (!failed) boot_worker(&jobs[0]);
    for (int t = 1; t <= started; t++) pthread_join(tid[t], NULL);
    for (int t = 0; t < threads; t++) failed |= jobs[t].failed;
    if (failed) return err_set(e, "bootstrap: out of memory or cannot start %d threads", threads);
    return 0;
}

static int boot_cmp(const void *x, const void *y)
{
    double a = *(const double *)x, b = *(const double *)y;
    return (a > b) - (a < b);
}

double boot_quantile(const double *sorted, size_t n, double q)
{
    double h = q * (double)(n - 1);
    size_t i = (size_t)floor(h);
    if (i + 1 >= n) return sorted[n - 1];
    return sorted[i] + (h - (double)i) * (sorted[i + 1] - sorted[i]);
}

/* Interval of column (k, m), or of set 0 minus set 1 when diff is set. */
static void boot_interval(const double *vals, int nsets, int resamples, int m, int diff,
                          double level, double *col, double *lo, double *hi, double *better)
{
    size_t stride = (size_t)nsets * PR_N_METRICS;
    int wins = 0;
    size_t n = 0;   /* resamples where the metric is defined (PR_OP_* rates may be NaN) */
    for (int b = 0; b < resamples; b++) {
        const double *row = vals + (size_t)b * stride;
        double x = diff ? row[m] - row[PR_N_METRICS + m] : row[m];
        if (diff && row[m] > row[PR_N_METRICS + m]) wins++;
        if (!isnan(x)) col[n++] = x;
    }
    if (better) *better = (double)wins / resamples;
    if (!n) { *lo = *hi = NAN; return; }
    qsort(col, n, sizeof *col, boot_cmp);
    *lo = boot_quantile(col, n, (1 - level) / 2);
    *hi = boot_quantile(col, n, (1 + level) / 2);
}

static int boot_args(int resamples, double level, struct err *e)
{
    if (resamples < 1) return err_set(e, "bootstrap: %d resamples, expected at least 1", resamples);
    if (!(level > 0 && level < 1)) return err_set(e, "bootstrap: level %g, expected a number between 0 and 1", level);
    return 0;
}

int boot_percentile(const struct pr_set *s, int resamples, uint64_t seed, double level,
                    int threads, struct boot_result *out, struct err *e)
{
    return boot_percentile_ticked(s, resamples, seed, level, threads, NULL, out, e);
}

int boot_percentile_ticked(const struct pr_set *s, int resamples, uint64_t seed, double level,
                           int threads, const struct boot_tick *tick, struct boot_result *out,
                           struct err *e)
{
    if (boot_args(resamples, level, e)) return -1;
    double *vals = malloc((size_t)resamples * PR_N_METRICS * sizeof *vals);
    double *col = malloc((size_t)resamples * sizeof *col);
    if (!vals || !col) {
        free(vals); free(col);
        return err_set(e, "bootstrap: out of memory for %d resamples", resamples);
    }
    /* Resample over sorted positions instead of query slots: the same
     * distribution (a relabelling of the queries), but the weights are then
     * read in order, which is much kinder to the cache. */
    struct pr_set seq = *s;
    seq.o = malloc((s->n ? s->n : 1) * sizeof *seq.o);
    if (!seq.o) { free(vals); free(col); return err_set(e, "bootstrap: out of memory for %zu queries", s->n); }
    for (size_t k = 0; k < s->n; k++) { seq.o[k] = s->o[k]; seq.o[k].slot = k; }
    int rc = boot_run(&seq, NULL, resamples, seed, threads, tick, vals, e);
    free(seq.o);
    if (rc) { free(vals); free(col); return -1; }
    struct boot_result r;
    pr_scalars_compute(s, NULL, &r.point);
    r.resamples = resamples;
    for (int m = 0; m < PR_N_METRICS; m++)
        boot_interval(vals, 1, resamples, m, 0, level, col, &r.lo[m], &r.hi[m], NULL);
    free(vals);
    free(col);
    *out = r;
    return 0;
}

int boot_same_queries(const struct pr_set *a, const struct pr_set *b, struct err *e)
{
    if (a->n != b->n)
        return err_set(e, "paired bootstrap: %zu and %zu scored queries, expected the same queries", a->n, b->n);
    size_t n = a->n, *q = malloc((n ? n : 1) * sizeof *q);
    if (!q) return err_set(e, "paired bootstrap: out of memory for %zu queries", n);
    for (size_t k = 0; k < n; k++) q[k] = SIZE_MAX;
    for (size_t k = 0; k < n; k++)
        if (b->o[k].slot < n) q[b->o[k].slot] = b->o[k].query;
    for (size_t k = 0; k < n; k++) {
        const struct pr_outcome *x = &a->o[k];
        if (x->slot >= n || q[x->slot] != x->query) {
            err_set(e, "paired bootstrap: slot %zu holds query %zu in the first set only, "
                     "expected both sets to score the same queries", x->slot, x->query);
            free(q);
            return -1;
        }
    }
    free(q);
    return 0;
}

int boot_paired_diff(const struct pr_set *a, const struct pr_set *b, int resamples,
                     uint64_t seed, double level, int threads, struct boot_paired *out,
                     struct err *e)
{
    if (boot_args(resamples, level, e)) return -1;
    if (boot_same_queries(a, b, e)) return -1;
    double *vals = malloc((size_t)resamples * 2 * PR_N_METRICS * sizeof *vals);
    double *col = malloc((size_t)resamples * sizeof *col);
    if (!vals || !col) {
        free(vals); free(col);
        return err_set(e, "bootstrap: out of memory for %d resamples", resamples);
    }
    if (boot_run(a, b, resamples, seed, threads, NULL, vals, e)) { free(vals); free(col); return -1; }
    struct boot_paired r;
    struct pr_scalars pa, pb;
    pr_scalars_compute(a, NULL, &pa);
    pr_scalars_compute(b, NULL, &pb);
    r.resamples = resamples;
    for (int m = 0; m < PR_N_METRICS; m++) {
        r.diff[m] = pa.v[m] - pb.v[m];
        boot_interval(vals, 2, resamples, m, 1, level, col, &r.lo[m], &r.hi[m], &r.share_better[m]);
    }
    free(vals);
    free(col);
    *out = r;
    return 0;
}

int boot_spread_of(const double *v, size_t n, struct boot_spread *out, struct err *e)
{
    if (n == 0) return err_set(e, "spread over seeds: no values, expected at least one");
    double sum = 0, lo = INFINITY, hi = -INFINITY;
    for (size_t i = 0; i < n; i++) {
        if (!isfinite(v[i])) return err_set(e, "spread over seeds: value %zu is not finite", i);
        sum += v[i];
        if (v[i] < lo) lo = v[i];
        if (v[i] > hi) hi = v[i];
    }
    double mean = sum / (double)n, ss = 0;
    for (size_t i = 0; i < n; i++) ss += (v[i] - mean) * (v[i] - mean);
    out->n = n;
    out->mean = mean;
    out->sd = n > 1 ? sqrt(ss / (double)(n - 1)) : 0;
    out->min = lo;
    out->max = hi;
    return 0;
}
