/* world.h: a synthetic world -- solid primitives, sloped ground, moving
 * vehicles -- and the cast of one ray into it.
 *
 * A world is filled (world_add, world_set_ground, world_add_mover) and then
 * frozen by world_finish, which builds the ray hierarchy; afterwards it is
 * read-only and any number of threads may cast into it at once.
 *
 *     struct world w; world_init(&w);
 *     world_set_ground(&w, 0, 0, 0, lo, hi);          // z = 0 over [lo, hi]
 *     if (world_add(&w, geom_box(10, 0, 2, .1, 5, 2, 0), e)) ...
 *     if (world_finish(&w, e)) ...
 *     struct world_hit h;
 *     if (world_cast(&w, o, d, 80, epoch, movers, n_movers, &h)) ... h.t
 *     world_free(&w);
 *
 * Scene change: each primitive carries a bit mask of the epochs (route legs)
 * in which it exists; moving vehicles are boxes placed per scan time by
 * world_movers_at.  Ground is the plane z = g0 + gx x + gy y inside the
 * rectangle [lo, hi] (outside it, water: no return); a new world has none.
 */
#ifndef RV_WORLD_H
#define RV_WORLD_H

#include <stddef.h>
#include <stdint.h>
#include "harness/base/err.h"
#include "scenarios/bvh.h"
#include "scenarios/geom.h"

#define WORLD_GROUND_PRIM 0xffffffffu  /* world_hit.prim of a ground return */
#define WORLD_MOVER_PRIM 0xfffffffeu   /* world_hit.prim of a moving vehicle */

struct world_mover {
    double a[2], b[2];   /* it drives from a to b, then starts again at a */
    double speed_mps, phase_m, offset_m;  /* offset to the right of a->b */
    double half[3];      /* half length, width, height */
    float refl;
};

struct world {
    struct geom_prim *prims;
    size_t n_prims, cap;
    struct bvh bvh;
    int frozen;
    double ground[3];          /* g0, gx, gy */
    double ground_lo[2], ground_hi[2];
    float ground_refl;
    struct world_mover *movers;
    size_t n_movers, cap_movers;
};

struct world_hit {
    double t, n[3];
    uint32_t prim;
    float refl;
};

void world_init(struct world *w);
void world_free(struct world *w);
/* Append (before world_finish). 0, or -1 out of memory / world frozen. */
int world_add(struct world *w, struct geom_prim p, struct err *e);
int world_add_mover(struct world *w, const struct world_mover *m, struct err *e);
void world_set_ground(struct world *w, double g0, double gx, double gy, const double lo[2],
                      const double hi[2]);
/* Build the hierarchy. 0 or -1 (out of memory). */
int world_finish(struct world *w, struct err *e);

/* Height of the ground plane at (x, y) (defined everywhere). */
double world_ground_z(const struct world *w, double x, double y);

/* The moving vehicles at time t_s as boxes, those whose centre lies within
 * radius_m of (cx, cy) and that do not contain the point (cx, cy, cz) (a
 * vehicle never stands inside the sensor).  Writes at most max; returns the
 * count written. */
size_t world_movers_at(const struct world *w, double t_s, double cx, double cy, double cz,
                       double radius_m, struct geom_prim *out, size_t max);

/* Nearest return in (0, tmax]: ground, primitives present in epoch (0..31),
 * and the given extra boxes.  1 with *h, or 0.  Thread-safe once frozen. */
int world_cast(const struct world *w, const double o[3], const double d[3], double tmax,
               int epoch, const struct geom_prim *extra, size_t n_extra, struct world_hit *h);

#endif
