/* retrieval.h: the top-K candidates of every query under the protocol.
 *
 * Descriptor matrices are row-major float32, one scan per row:
 *
 *     v:  | d(0,0) ... d(0,dim-1) | d(1,0) ... | ...    (n rows of dim floats)
 *
 * Dense retrieval (L2 or cosine) splits the queries into blocks of 256, one
 * pool task each; a task multiplies its block by 1,024 map rows at a time
 * with a single-threaded OpenBLAS sgemm (the pool's threads replace
 * OpenBLAS's own) and screens each score, while the block is in cache,
 * against a bounded collector per query, so memory is O(threads x block +
 * n_query x K), never n_query x n_map: a map of 100,000 scans needs no
 * N x N matrix.  The collector keeps the K + K/4 + 8 best by the float
 * score; of those, the ones that can still reach the best K (a rounding
 * bound on the float scores) are recomputed in double and the best K
 * kept, so reported distances carry no cancellation error from
 * |q|^2 + |m|^2 - 2 q.m and equal retrieval_pair's bit for bit.  Entries
 * so small that their squares underflow float (below about 1e-20) give
 * equal scores, which the collector breaks by the lower index.
 *
 * Custom distances: with keys, the top-C candidates by key L2 (the dense
 * path) are re-ranked by the distance function; without keys, every
 * candidate is.  Either way the K best are kept.
 *
 * Candidates (the same rule as metrics/gt.h): in loop mode query i and map
 * scan j index one recording and j is a candidate when j < i and
 * t_j <= t_i - exclusion_s, or j <= i - exclusion_scans with an index
 * window; in reloc mode every map scan is.  Ranking is by distance, ties by
 * the lower index.  Cosine distance is 1 - cos; a zero vector is at 1 from
 * everything.
 *
 *     struct retrieval_out r;
 *     if (retrieval_dense(&map, &query, RV_DIST_L2, &rule, 25, 0, &r, e)) return -1;
 *     r.idx[i * r.k + n], r.dist[...] for n < r.count[i];  retrieval_out_free(&r);
 */
#ifndef RV_RETRIEVAL_H
#define RV_RETRIEVAL_H

#include <stddef.h>
#include <stdint.h>
#include "harness/base/err.h"
#include "harness/base/progress.h"
#include "harness/revisit_plugin.h"

struct retrieval_mat {
    const float *v;   /* n x dim, row-major */
    size_t n;
    uint32_t dim;
};

struct retrieval_rule {
    int loop;              /* 1: loop mode */
    const double *t;       /* loop with a time exclusion: one stamp per scan */
    double exclusion_s;
    long exclusion_scans;  /* >= 0: index window instead of time */
    struct progress *prog; /* advanced by the queries done; NULL: none */
};

struct retrieval_out {
    size_t n_query;
    int k;
    int32_t *idx;     /* n_query x k map indices, best first; -1 past count */
    double *dist;     /* n_query x k distances */
    int *count;       /* candidates kept per query (<= k) */
};

/* Distance of one pair, computed in double (the reference of the dense path). */
double retrieval_pair(const float *a, const float *b, uint32_t dim, enum rv_distance kind);

/* 1 when map scan j is a candidate of query i. */
int retrieval_is_candidate(const struct retrieval_rule *r, size_t i, size_t j);

/* L2 / cosine top-K on jobs threads (<= 0: all cores), OpenBLAS set to one
 * thread meanwhile (and restored).  0 or -1 (bad sizes, out of memory); out
 * is then empty. */
int retrieval_dense(const struct retrieval_mat *map, const struct retrieval_mat *query,
                    enum rv_distance kind, const struct retrieval_rule *rule, int k, int jobs,
                    struct retrieval_out *out, struct err *e);

/* Custom distance: fn(ctx, a, b, n, out, e) gives out[t] = d(a, b[t]) >= 0
 * for the n candidates of one query at once (0, or -1 with e set); keys may
 * be NULL (no prefilter).  top_c >= k candidates survive the key prefilter.
 * jobs threads (<= 0: all cores) share the queries.  0 or -1; a distance
 * that is negative or NaN is an error naming the method `name`, the query
 * and the map scan (retrieval_distance_ok); +inf ranks last. */
typedef int (*retrieval_fn)(const void *ctx, const float *a, const float *const *b, size_t n, double *out,
                            struct err *e);
int retrieval_custom(const struct retrieval_mat *map, const struct retrieval_mat *query,
                     const struct retrieval_mat *map_key, const struct retrieval_mat *query_key,
                     retrieval_fn fn, const void *ctx, const char *name, const struct retrieval_rule *rule,
                     int k, int top_c, int jobs, struct retrieval_out *out, struct err *e);

/* 0 when d is a distance a custom method may return (>= 0, +inf allowed);
 * else -1 with e reading "method 'NAME': distance of query 12 to map scan 7
 * is -0.5, expected a number >= 0". */
int retrieval_distance_ok(const char *name, double d, size_t query, size_t map, struct err *e);

/* Free the arrays; accepts an emptied struct. */
void retrieval_out_free(struct retrieval_out *o);

#endif
