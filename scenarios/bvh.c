/* bvh.c: binned surface-area build and front-to-back traversal. */
#include "scenarios/bvh.h"

#include <math.h>
#include <stdlib.h>
#include <string.h>

#define BVH_BINS 16
#define BVH_LEAF 4
#define BVH_STACK 64

struct bvh_build_ctx {
    struct bvh *b;
    double (*lo)[3], (*hi)[3], (*ce)[3];  /* per primitive bounds and centroid */
    size_t cap;
};

static double bvh_area(const double lo[3], const double hi[3])
{
    double x = hi[0] - lo[0], y = hi[1] - lo[1], z = hi[2] - lo[2];
    if (x < 0 || y < 0 || z < 0) return 0;
    return x * y + y * z + z * x;
}

static void bvh_grow(double lo[3], double hi[3], const double plo[3], const double phi[3])
{
    for (int k = 0; k < 3; k++) {
        if (plo[k] < lo[k]) lo[k] = plo[k];
        if (phi[k] > hi[k]) hi[k] = phi[k];
    }
}

static void bvh_empty(double lo[3], double hi[3])
{
    for (int k = 0; k < 3; k++) { lo[k] = INFINITY; hi[k] = -INFINITY; }
}

/* Best split of idx[first..first+count) by binned SAH: axis and bin, or -1. */
static int bvh_split(const struct bvh_build_ctx *c, const struct bvh_node *nd, int *axis_out,
                     double *pos_out)
{
    const uint32_t *idx = c->b->idx + nd->first;
    double best = INFINITY;
    int found = -1;
    for (int ax = 0; ax < 3; ax++) {
        double cmin = INFINITY, cmax = -INFINITY;
        for (uint32_t k = 0; k < nd->count; k++) {
            double v = c->ce[idx[k]][ax];
            if (v < cmin) cmin = v;
            if (v > cmax) cmax = v;
        }
        if (!(cmax > cmin)) continue;
        double blo[BVH_BINS][3], bhi[BVH_BINS][3];
        uint32_t bn[BVH_BINS] = {0};
        for (int k = 0; k < BVH_BINS; k++) bvh_empty(blo[k], bhi[k]);
        double scale = BVH_BINS / (cmax - cmin);
        for (uint32_t k = 0; k < nd->count; k++) {
            int bin = (int)((c->ce[idx[k]][ax] - cmin) * scale);
            if (bin >= BVH_BINS) bin = BVH_BINS - 1;
            bn[bin]++;
            bvh_grow(blo[bin], bhi[bin], c->lo[idx[k]], c->hi[idx[k]]);
        }
        double rlo[3], rhi[3], rarea[BVH_BINS];
        uint32_t rcount[BVH_BINS], rn = 0;
        bvh_empty(rlo, rhi);
        for (int k = BVH_BINS - 1; k > 0; k--) {
            bvh_grow(rlo, rhi, blo[k], bhi[k]);
            rn += bn[k];
            rarea[k] = bvh_area(rlo, rhi);
            rcount[k] = rn;
        }
        double llo[3], lhi[3];
        uint32_t ln = 0;
        bvh_empty(llo, lhi);
        for (int k = 0; k < BVH_BINS - 1; k++) {
            bvh_grow(llo, lhi, blo[k], bhi[k]);
            ln += bn[k];
            if (!ln || !rcount[k + 1]) continue;
            double cost = ln * bvh_area(llo, lhi) + rcount[k + 1] * rarea[k + 1];
            if (cost < best) {
                best = cost; found = 0; *axis_out = ax;
                *pos_out = cmin + (k + 1) / scale;
            }
        }
    }
    if (found < 0) return -1;
    /* Splitting must beat testing every primitive of the node. */
    if (best >= nd->count * bvh_area(nd->lo, nd->hi)) return -1;
    return 0;
}

static int bvh_node_build(struct bvh_build_ctx *c, size_t at, int depth)
{
    struct bvh *b = c->b;
    struct bvh_node *nd = &b->nodes[at];
    bvh_empty(nd->lo, nd->hi);
    for (uint32_t k = 0; k < nd->count; k++)
        bvh_grow(nd->lo, nd->hi, c->lo[b->idx[nd->first + k]], c->hi[b->idx[nd->first + k]]);
    int axis;
    double pos;
    if (nd->count <= BVH_LEAF || depth >= BVH_STACK - 4 || bvh_split(c, nd, &axis, &pos))
        return 0;
    uint32_t i = nd->first, j = nd->first + nd->count;
    while (i < j) {
        if (c->ce[b->idx[i]][axis] < pos) i++;
        else { uint32_t s = b->idx[i]; b->idx[i] = b->idx[--j]; b->idx[j] = s; }
    }
    uint32_t nl = i - nd->first;
    if (nl == 0 || nl == nd->count) return 0;
    size_t l = b->n_nodes;
    b->n_nodes += 2;
    struct bvh_node *left = &b->nodes[l], *right = &b->nodes[l + 1];
    left->first = nd->first; left->count = nl;
    right->first = i; right->count = nd->count - nl;
    nd->first = (uint32_t)l;
    nd->count = 0;
    if (bvh_node_build(c, l, depth + 1)) return -1;
    return bvh_node_build(c, l + 1, depth + 1);
}

int bvh_build(struct bvh *b, const struct geom_prim *prims, size_t n, struct err *e)
{
    memset(b, 0, sizeof *b);
    struct bvh_build_ctx c = {b, NULL, NULL, NULL, 2 * n + 1};
    b->prims = prims;
    b->n_prims = n;
    b->nodes = calloc(c.cap, sizeof *b->nodes);
    b->idx = malloc((n ? n : 1) * sizeof *b->idx);
    c.lo = malloc((n ? n : 1) * sizeof *c.lo);
    c.hi = malloc((n ? n : 1) * sizeof *c.hi);
    c.ce = malloc((n ? n : 1) * sizeof *c.ce);
    int rc = 0;
    if (!b->nodes || !b->idx || !c.lo || !c.hi || !c.ce) {
        rc = err_set(e, "bvh: out of memory for %zu primitives", n);
        bvh_free(b);
        goto done;
    }
    for (size_t k = 0; k < n; k++) {
        b->idx[k] = (uint32_t)k;
        geom_bounds(&prims[k], c.lo[k], c.hi[k]);
        for (int a = 0; a < 3; a++) c.ce[k][a] = 0.5 * (c.lo[k][a] + c.hi[k][a]);
    }
    b->n_nodes = 1;
    b->nodes[0].first = 0;
    b->nodes[0].count = (uint32_t)n;
    bvh_node_build(&c, 0, 0);
done:
    free(c.lo);
    free(c.hi);
    free(c.ce);
    return rc;
}

void bvh_free(struct bvh *b)
{
    if (!b) return;
    free(b->nodes);
    free(b->idx);
    memset(b, 0, sizeof *b);
}

static int bvh_test(const struct geom_prim *p, uint32_t k, const double o[3], const double d[3],
                    double *tmax, uint32_t mask, struct bvh_hit *h)
{
    double t, n[3];
    if (!(p->epochs & mask) || !geom_ray_prim(p, o, d, 0, *tmax, &t, n)) return 0;
    *tmax = t;
    h->t = t;
    memcpy(h->n, n, sizeof n);
    h->prim = k;
    return 1;
}

int bvh_cast(const struct bvh *b, const double o[3], const double d[3], double tmax,
             uint32_t epoch_mask, struct bvh_hit *h)
{
    if (!b->n_prims) return 0;
    double inv[3] = {1 / d[0], 1 / d[1], 1 / d[2]}, t0, t1;
    uint32_t stack[BVH_STACK];
    double enter[BVH_STACK];
    int top = 0, hit = 0;
    const struct bvh_node *nodes = b->nodes;
    if (!geom_ray_aabb(o, inv, nodes[0].lo, nodes[0].hi, 0, tmax, &t0, &t1)) return 0;
    stack[top] = 0;
    enter[top++] = t0;
    while (top) {
        top--;
        if (enter[top] > tmax) continue;   /* a nearer hit was found meanwhile */
        const struct bvh_node *nd = &nodes[stack[top]];
        if (nd->count) {
            for (uint32_t k = 0; k < nd->count; k++) {
                uint32_t pi = b->idx[nd->first + k];
                hit |= bvh_test(&b->prims[pi], pi, o, d, &tmax, epoch_mask, h);
            }
            continue;
        }
        double ta, tb, u;
        int ha = geom_ray_aabb(o, inv, nodes[nd->first].lo, nodes[nd->first].hi, 0, tmax, &ta, &u);
        int hb = geom_ray_aabb(o, inv, nodes[nd->first + 1].lo, nodes[nd->first + 1].hi, 0, tmax,
                               &tb, &u);
        /* Push the farther child first so the nearer one is searched first
         * and shortens tmax for the other. */
        if (ha && hb) {
            int near_a = ta <= tb;
            stack[top] = nd->first + (near_a ? 1 : 0);
            enter[top++] = near_a ? tb : ta;
            stack[top] = nd->first + (near_a ? 0 : 1);
            enter[top++] = near_a ? ta : tb;
        } else if (ha) {
            stack[top] = nd->first;
            enter[top++] = ta;
        } else if (hb) {
            stack[top] = nd->first + 1;
            enter[top++] = tb;
        }
    }
    return hit;
}

int bvh_cast_brute(const struct geom_prim *prims, size_t n, const double o[3],
                   const double d[3], double tmax, uint32_t epoch_mask, struct bvh_hit *h)
{
    int hit = 0;
    for (size_t k = 0; k < n; k++)
        hit |= bvh_test(&prims[k], (uint32_t)k, o, d, &tmax, epoch_mask, h);
    return hit;
}
