/* geom.h: the solid primitives of a synthetic world and their ray tests.
 *
 * A primitive is a yaw-rotated box, an upright cylinder or an upright
 * ellipsoid (a sphere when both radii agree).  Rays are o + t d with d of
 * unit length, so t is a range in metres.  All functions are pure and
 * thread-safe; none can fail.
 *
 *     struct geom_prim p = geom_box(0, 0, 1, 2, 1, 1, 0);   // centre, half sizes, yaw
 *     double t, n[3];
 *     if (geom_ray_prim(&p, o, d, 0, 100, &t, n)) ...        // hit at range t
 */
#ifndef RV_GEOM_H
#define RV_GEOM_H

#include <stdint.h>

enum geom_kind { GEOM_BOX = 0, GEOM_CYL = 1, GEOM_ELLIPSOID = 2 };

#define GEOM_ALWAYS 0xffffffffu  /* present in every epoch */

struct geom_prim {
    double c[3];     /* centre, metres */
    double h[3];     /* box: half sizes in its own frame; cyl: radius, radius, half height;
                        ellipsoid: radius, radius, vertical radius */
    double cs, sn;   /* box yaw as cos, sin (box frame x = world (cs, sn)) */
    float refl;      /* surface reflectivity in [0, 1] */
    uint8_t kind;    /* enum geom_kind */
    uint32_t epochs; /* bit k set: present in epoch k (scene change) */
};

/* Constructors (reflectivity 0.5, present always). */
struct geom_prim geom_box(double cx, double cy, double cz, double hx, double hy,
                          double hz, double yaw_rad);
struct geom_prim geom_cyl(double cx, double cy, double z0, double z1, double r);
struct geom_prim geom_ellipsoid(double cx, double cy, double cz, double r, double rz);

/* Axis-aligned bounds of a primitive. */
void geom_bounds(const struct geom_prim *p, double lo[3], double hi[3]);

/* Slab test of the ray against an axis-aligned box [lo, hi] with inv = 1/d
 * per axis (IEEE infinities for zero components).  On a hit inside
 * [tmin, tmax] returns 1 and the entry and exit ranges (entry clipped to
 * tmin); otherwise 0. */
int geom_ray_aabb(const double o[3], const double inv[3], const double lo[3],
                  const double hi[3], double tmin, double tmax, double *t0, double *t1);

/* Nearest hit of the ray with the primitive's surface in (tmin, tmax]:
 * returns 1 with *t and the outward unit normal n, or 0. */
int geom_ray_prim(const struct geom_prim *p, const double o[3], const double d[3],
                  double tmin, double tmax, double *t, double n[3]);

#endif
