/* stage_density.c: voxel-grid downsampling.
 *
 * Space is cut into cubes of edge `leaf` aligned with the sensor origin
 * (voxel (i, j, k) holds floor(x / leaf) = i, ...).  Each occupied voxel
 * becomes one point at the mean of its points' x, y, z and intensity; it
 * keeps the ring and time of its first point (lowest input index).  Output
 * points come in voxel order (i, then j, then k, ascending).
 */
#include "perturb/stage.h"

#include <stdlib.h>
#include <string.h>

enum { DEN_LEAF };
static const struct chain_param_info density_params[] = {
    {"leaf", CHAIN_NUM, "m", 0.2, 0.01, 100, 0, 0, NULL, "metres from 0.01 to 100",
     "edge length of the voxels"},
};

#define DEN_BITS 21
#define DEN_HALF (1L << (DEN_BITS - 1))

struct vkey {
    uint64_t key;
    uint32_t idx;
};

static int vkey_cmp(const void *a, const void *b)
{
    const struct vkey *x = a, *y = b;
    if (x->key != y->key) return x->key < y->key ? -1 : 1;
    return x->idx < y->idx ? -1 : x->idx > y->idx;
}

/* 21 bits per axis, offset so negative indices sort below positive ones. */
static int voxel_key(const float *p, double leaf, uint64_t *key)
{
    uint64_t k = 0;
    for (int a = 0; a < 3; a++) {
        double f = floor(p[a] / leaf);
        if (!(f >= -DEN_HALF && f < DEN_HALF)) return -1;   /* also NaN */
        k = k << DEN_BITS | (uint64_t)((long)f + DEN_HALF);
    }
    *key = k;
    return 0;
}

/* Mean of keys[from, to) into point j of dst. */
static void voxel_emit(const struct cloud *c, const struct vkey *v, size_t from, size_t to,
                       struct cloud *dst, size_t j)
{
    double sum[4] = {0, 0, 0, 0};
    for (size_t m = from; m < to; m++)
        for (int a = 0; a < 4; a++) sum[a] += c->pts[4 * v[m].idx + a];
    for (int a = 0; a < 4; a++) dst->pts[4 * j + a] = (float)(sum[a] / (double)(to - from));
    if (c->ring) dst->ring[j] = c->ring[v[from].idx];
    if (c->time) dst->time[j] = c->time[v[from].idx];
}

static int density_apply(const struct stage *st, struct cloud *c, struct rng *r,
                         struct chain_scratch *s, struct err *e)
{
    (void)r;
    double leaf = st->v[DEN_LEAF];
    if (c->n < 2) return 0;
    struct vkey *v = stage_buf(s, c->n * sizeof *v);
    struct cloud *t = &s->tmp;
    if (!v || cloud_reserve(t, c->n) || (c->ring && cloud_enable_ring(t)) ||
        (c->time && cloud_enable_time(t)))
        return err_set(e, "out of memory for voxels of %zu points", c->n);
    for (size_t k = 0; k < c->n; k++) {
        const float *p = c->pts + 4 * k;
        if (!isfinite(p[0]) || !isfinite(p[1]) || !isfinite(p[2]))
            return err_set(e, "point %zu has a non-finite coordinate, expected finite ones", k);
        if (voxel_key(p, leaf, &v[k].key))
            return err_set(e, "point %zu at (%g, %g, %g) is beyond %ld voxels of %g m, expected "
                           "a larger leaf", k, c->pts[4 * k], c->pts[4 * k + 1], c->pts[4 * k + 2],
                           DEN_HALF, leaf);
        v[k].idx = (uint32_t)k;
    }
    qsort(v, c->n, sizeof *v, vkey_cmp);
    size_t j = 0, from = 0;
    for (size_t m = 1; m <= c->n; m++)
        if (m == c->n || v[m].key != v[from].key) {
            voxel_emit(c, v, from, m, t, j++);
            from = m;
        }
    memcpy(c->pts, t->pts, j * 4 * sizeof *c->pts);
    if (c->ring) memcpy(c->ring, t->ring, j * sizeof *c->ring);
    if (c->time) memcpy(c->time, t->time, j * sizeof *c->time);
    c->n = j;
    return 0;
}

const struct stage_def stage_density = {
    {"density", "thin the scan on a voxel grid: one mean point per occupied voxel", 1,
     density_params},
    NULL, density_apply, NULL};
