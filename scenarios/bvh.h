/* bvh.h: a bounding-volume hierarchy over the primitives of a world.
 *
 * Built once by binned surface-area splits; read-only afterwards, so any
 * number of threads may cast through it at once.  The primitives are
 * borrowed: they must outlive the hierarchy and stay unchanged.
 *
 *     struct bvh b;
 *     if (bvh_build(&b, prims, n, e)) return -1;   // -1: out of memory, b empty
 *     struct bvh_hit h;
 *     if (bvh_cast(&b, o, d, 80.0, 1u << epoch, &h)) ... h.t, h.n, h.prim
 *     bvh_free(&b);
 *
 * Node layout (32-byte bounds in double, then two indices):
 *
 *     nodes[k]: | lo xyz | hi xyz | first | count |
 *     count > 0: leaf holding idx[first .. first+count)
 *     count = 0: inner node with children nodes[first] and nodes[first+1]
 */
#ifndef RV_BVH_H
#define RV_BVH_H

#include <stddef.h>
#include <stdint.h>
#include "harness/base/err.h"
#include "scenarios/geom.h"

struct bvh_node {
    double lo[3], hi[3];
    uint32_t first, count;
};

struct bvh {
    struct bvh_node *nodes;
    size_t n_nodes;
    uint32_t *idx;                 /* primitive indices in leaf order */
    const struct geom_prim *prims; /* borrowed */
    size_t n_prims;
};

struct bvh_hit {
    double t;       /* range along the unit direction, metres */
    double n[3];    /* outward unit normal */
    uint32_t prim;  /* index into the primitive array */
};

/* Build over n primitives (n may be 0). 0, or -1 (out of memory) with b empty. */
int bvh_build(struct bvh *b, const struct geom_prim *prims, size_t n, struct err *e);
void bvh_free(struct bvh *b);

/* Nearest hit in (0, tmax] among primitives whose epochs share a bit with
 * epoch_mask.  1 with *h filled, or 0.  Thread-safe, cannot fail. */
int bvh_cast(const struct bvh *b, const double o[3], const double d[3], double tmax,
             uint32_t epoch_mask, struct bvh_hit *h);

/* The same answer by testing every primitive (the reference for tests and
 * the benchmark). */
int bvh_cast_brute(const struct geom_prim *prims, size_t n, const double o[3],
                   const double d[3], double tmax, uint32_t epoch_mask, struct bvh_hit *h);

#endif
