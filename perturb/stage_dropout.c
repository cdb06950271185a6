/* stage_dropout.c: random loss of returns, point by point or in azimuth bursts.
 *
 * Point mode (burst=0): each point is removed with probability p, from one
 * 32-bit half of a generator output per point.
 *
 * Burst mode (burst=L degrees): the circle of azimuths is cut into an
 * alternating renewal process of dropped blocks, lengths exponential with
 * mean L, and kept gaps, exponential with mean L (1 - p) / p, so the dropped
 * share is p on average.  It starts at a uniform azimuth in a state drawn
 * with probability p (a dirty window, a wet patch).  Points whose azimuth
 * falls in a dropped block are removed.
 */
#include "perturb/stage.h"

#include <string.h>

enum { DROP_P, DROP_BURST, DROP_DRAW };
static const struct chain_param_info dropout_params[] = {
    {"p", CHAIN_NUM, "", 0.3, 0, 1, 0, 0, NULL, "a probability from 0 to 1",
     "share of points removed (on average)"},
    {"burst", CHAIN_NUM, "deg", 0, 0, 360, 0, 0, NULL, "0 or degrees from 0.01 to 360",
     "0: independent points; else mean azimuth length of removed blocks"},
    STAGE_DRAW_PARAM,
};

#define DROP_MAX_BLOCKS (1u << 20)

static int dropout_check(const struct stage *st, const char **why)
{
    if (st->v[DROP_BURST] > 0 && st->v[DROP_BURST] < 0.01) {
        *why = "must be 0 or at least 0.01 degrees";
        return DROP_BURST;
    }
    return -1;
}

#define DROP_CHUNK 256

/* Points k0 .. k0+m-1 kept when u[q] >= cut, written from index *j on. */
static void drop_chunk(struct cloud *c, size_t k0, size_t m, const uint32_t *u, uint32_t cut,
                       size_t *j)
{
    float *pts = c->pts;
    size_t w = *j;
    const float *src = pts + 4 * k0;
    if (!c->ring && !c->time) {
        for (size_t q = 0; q < m; q++) {
            float v[4];
            memcpy(v, src + 4 * q, sizeof v);
            memcpy(pts + 4 * w, v, sizeof v);
            w += u[q] >= cut;
        }
    } else {
        for (size_t q = 0; q < m; q++) {
            float v[4];
            memcpy(v, src + 4 * q, sizeof v);
            memcpy(pts + 4 * w, v, sizeof v);
            if (c->ring) c->ring[w] = c->ring[k0 + q];
            if (c->time) c->time[w] = c->time[k0 + q];
            w += u[q] >= cut;
        }
    }
    *j = w;
}

/* Keep a point when its 32-bit uniform is >= p * 2^32; the uniforms come two
 * per generator output (high half first), drawn a chunk at a time. */
static void drop_points(struct cloud *c, double p, struct rng *r)
{
    uint32_t cut = (uint32_t)(p * 4294967296.0), u[DROP_CHUNK];
    size_t j = 0;
    for (size_t k0 = 0; k0 < c->n; k0 += DROP_CHUNK) {
        size_t m = c->n - k0 < DROP_CHUNK ? c->n - k0 : DROP_CHUNK;
        for (size_t q = 0; q < m; q += 2) {
            uint64_t x = rng_next(r);
            u[q] = (uint32_t)(x >> 32);
            u[q + 1] = (uint32_t)x;
        }
        drop_chunk(c, k0, m, u, cut, &j);
    }
    c->n = j;
}

/* Change points of the renewal process as offsets in [0, 360] from the start
 * azimuth: edge[0] = 0 < edge[1] < ... < edge[m] = 360.  Block b spans
 * [edge[b], edge[b+1]) and is dropped when *first ^ (b & 1).  Returns m. */
static size_t drop_blocks(double p, double mean, struct rng *r, double *edge, size_t cap,
                          int *first)
{
    double gap_mean = mean * (1 - p) / p;
    *first = rng_uniform(r) < p;
    size_t m = 0;
    double at = 0;
    edge[0] = 0;
    int dropped = *first;
    while (at < 360.0 && m + 1 < cap) {
        at += rng_exp(r, dropped ? mean : gap_mean);
        edge[++m] = at < 360.0 ? at : 360.0;
        dropped = !dropped;
    }
    edge[m] = 360.0;
    return m;
}

/* Index of the block holding offset x: the largest b with edge[b] <= x. */
static size_t drop_find(const double *edge, size_t m, double x)
{
    size_t lo = 0, hi = m;   /* edge[lo] <= x < edge[hi] */
    while (hi - lo > 1) {
        size_t mid = (lo + hi) / 2;
        if (edge[mid] <= x) lo = mid;
        else hi = mid;
    }
    return lo;
}

static int drop_bursts(struct cloud *c, double p, double mean, struct rng *r,
                       struct chain_scratch *s, struct err *e)
{
    /* room for 8 times the mean number of edges (a cycle is mean / p long);
     * running out is beyond any practical tail and leaves the rest as is */
    double want = 8.0 * 2.0 * 360.0 * p / mean + 64;
    size_t cap = want < DROP_MAX_BLOCKS ? (size_t)want : DROP_MAX_BLOCKS;
    double *edge = stage_buf(s, (cap + 1) * sizeof *edge);
    if (!edge) return err_set(e, "out of memory for %zu dropout blocks", cap);
    double start = 360.0 * rng_uniform(r);
    int first;
    size_t m = drop_blocks(p, mean, r, edge, cap, &first);
    size_t j = 0;
    for (size_t k = 0; k < c->n; k++) {
        double x = stage_azimuth_deg(c->pts + 4 * k) - start;
        if (x < 0) x += 360.0;
        size_t b = drop_find(edge, m, x);
        int dropped = first ^ (int)(b & 1);
        if (!dropped) cloud_move(c, j++, k);
    }
    c->n = j;
    return 0;
}

static int dropout_apply(const struct stage *st, struct cloud *c, struct rng *r,
                         struct chain_scratch *s, struct err *e)
{
    double p = st->v[DROP_P], burst = st->v[DROP_BURST];
    if (p <= 0) return 0;
    if (p >= 1) {
        c->n = 0;
        return 0;
    }
    if (burst > 0) return drop_bursts(c, p, burst, r, s, e);
    drop_points(c, p, r);
    return 0;
}

/* p = 0 removes nothing: dropout_apply returns before any point. */
static int dropout_identity(const struct stage *st)
{
    return st->v[DROP_P] <= 0 && !(st->random >> DROP_P & 1);
}

const struct stage_def stage_dropout = {
    {"dropout", "remove returns at random, one by one or in azimuth bursts (a dirty window)",
     3, dropout_params},
    dropout_check, dropout_apply, dropout_identity};
