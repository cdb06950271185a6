/* geom.c: ray tests for boxes (slab method), upright cylinders and ellipsoids. */
#include "scenarios/geom.h"

#include <math.h>

struct geom_prim geom_box(double cx, double cy, double cz, double hx, double hy,
                          double hz, double yaw_rad)
{
    struct geom_prim p = {{cx, cy, cz}, {hx, hy, hz}, cos(yaw_rad), sin(yaw_rad),
                          0.5f, GEOM_BOX, GEOM_ALWAYS};
    return p;
}

struct geom_prim geom_cyl(double cx, double cy, double z0, double z1, double r)
{
    struct geom_prim p = {{cx, cy, 0.5 * (z0 + z1)}, {r, r, 0.5 * (z1 - z0)}, 1, 0,
                          0.5f, GEOM_CYL, GEOM_ALWAYS};
    return p;
}

struct geom_prim geom_ellipsoid(double cx, double cy, double cz, double r, double rz)
{
    struct geom_prim p = {{cx, cy, cz}, {r, r, rz}, 1, 0, 0.5f, GEOM_ELLIPSOID, GEOM_ALWAYS};
    return p;
}

void geom_bounds(const struct geom_prim *p, double lo[3], double hi[3])
{
    double ex = p->h[0], ey = p->h[1];
    if (p->kind == GEOM_BOX) {
        ex = fabs(p->cs) * p->h[0] + fabs(p->sn) * p->h[1];
        ey = fabs(p->sn) * p->h[0] + fabs(p->cs) * p->h[1];
    }
    lo[0] = p->c[0] - ex; hi[0] = p->c[0] + ex;
    lo[1] = p->c[1] - ey; hi[1] = p->c[1] + ey;
    lo[2] = p->c[2] - p->h[2]; hi[2] = p->c[2] + p->h[2];
}

int geom_ray_aabb(const double o[3], const double inv[3], const double lo[3],
                  const double hi[3], double tmin, double tmax, double *t0, double *t1)
{
    /* Per axis the ray is inside the slab between the two plane crossings;
     * the box is the overlap of the three intervals.  Using 1/d keeps the
     * sign right for d = -0 and makes parallel rays give +-inf. */
    for (int k = 0; k < 3; k++) {
        double a = (lo[k] - o[k]) * inv[k], b = (hi[k] - o[k]) * inv[k];
        if (a > b) { double s = a; a = b; b = s; }
        if (a > tmin) tmin = a;
        if (b < tmax) tmax = b;
        if (tmin > tmax) return 0;
    }
    *t0 = tmin;
    *t1 = tmax;
    return 1;
}

/* Box in its own frame: slab test keeping the axis of entry for the normal. */
static int geom_box_hit(const struct geom_prim *p, const double o[3], const double d[3],
                        double tmin, double tmax, double *t, double n[3])
{
    double px = o[0] - p->c[0], py = o[1] - p->c[1];
    double lo[3] = {p->cs * px + p->sn * py, -p->sn * px + p->cs * py, o[2] - p->c[2]};
    double ld[3] = {p->cs * d[0] + p->sn * d[1], -p->sn * d[0] + p->cs * d[1], d[2]};
    double tn = -INFINITY, tf = INFINITY;
    int an = 0, af = 0;
    for (int k = 0; k < 3; k++) {
        double inv = 1.0 / ld[k];
        double a = (-p->h[k] - lo[k]) * inv, b = (p->h[k] - lo[k]) * inv;
        if (a > b) { double s = a; a = b; b = s; }
        if (a > tn) { tn = a; an = k; }
        if (b < tf) { tf = b; af = k; }
    }
    if (tn > tf) return 0;
    int axis;
    if (tn > tmin && tn <= tmax) { *t = tn; axis = an; }
    else if (tn <= tmin && tf > tmin && tf <= tmax) { *t = tf; axis = af; }
    else return 0;
    double ln[3] = {0, 0, 0};
    ln[axis] = ld[axis] > 0 ? -1 : 1;
    if (*t == tf && tn <= tmin) ln[axis] = -ln[axis];
    n[0] = p->cs * ln[0] - p->sn * ln[1];
    n[1] = p->sn * ln[0] + p->cs * ln[1];
    n[2] = ln[2];
    return 1;
}

/* Keep the smaller valid root of a quadratic-derived candidate. */
static void geom_take(double cand, double tmin, double *best)
{
    if (cand > tmin && cand < *best) *best = cand;
}

static int geom_cyl_hit(const struct geom_prim *p, const double o[3], const double d[3],
                        double tmin, double tmax, double *t, double n[3])
{
    double px = o[0] - p->c[0], py = o[1] - p->c[1], pz = o[2] - p->c[2];
    double r = p->h[0], hh = p->h[2], best = INFINITY;
    int side = 0;
    double a = d[0] * d[0] + d[1] * d[1];
    if (a > 0) {
        double b = px * d[0] + py * d[1], c = px * px + py * py - r * r;
        double disc = b * b - a * c;
        if (disc >= 0) {
            double s = sqrt(disc);
            for (int k = 0; k < 2; k++) {
                double root = (-b + (k ? s : -s)) / a;
                double z = pz + root * d[2];
                if (z >= -hh && z <= hh && root > tmin && root < best) { best = root; side = 1; }
            }
        }
    }
    if (d[2] != 0) {
        for (int k = 0; k < 2; k++) {
            double root = ((k ? hh : -hh) - pz) / d[2];
            double x = px + root * d[0], y = py + root * d[1];
            double old = best;
            if (x * x + y * y <= r * r) geom_take(root, tmin, &best);
            if (best != old) side = 0;
        }
    }
    if (!(best <= tmax)) return 0;
    *t = best;
    if (side) {
        double x = px + best * d[0], y = py + best * d[1], l = hypot(x, y);
        n[0] = x / l; n[1] = y / l; n[2] = 0;
    } else {
        n[0] = 0; n[1] = 0; n[2] = pz + best * d[2] > 0 ? 1 : -1;
    }
    return 1;
}

static int geom_ellipsoid_hit(const struct geom_prim *p, const double o[3], const double d[3],
                              double tmin, double tmax, double *t, double n[3])
{
    double s[3] = {1 / p->h[0], 1 / p->h[1], 1 / p->h[2]};
    double q[3], e[3];
    for (int k = 0; k < 3; k++) { q[k] = (o[k] - p->c[k]) * s[k]; e[k] = d[k] * s[k]; }
    double a = e[0] * e[0] + e[1] * e[1] + e[2] * e[2];
    double b = q[0] * e[0] + q[1] * e[1] + q[2] * e[2];
    double c = q[0] * q[0] + q[1] * q[1] + q[2] * q[2] - 1;
    double disc = b * b - a * c;
    if (disc < 0) return 0;
    double r = sqrt(disc), best = INFINITY;
    geom_take((-b - r) / a, tmin, &best);
    geom_take((-b + r) / a, tmin, &best);
    if (!(best <= tmax)) return 0;
    *t = best;
    double l = 0;
    for (int k = 0; k < 3; k++) {
        n[k] = (q[k] + best * e[k]) * s[k];
        l += n[k] * n[k];
    }
    l = sqrt(l);
    for (int k = 0; k < 3; k++) n[k] /= l;
    return 1;
}

int geom_ray_prim(const struct geom_prim *p, const double o[3], const double d[3],
                  double tmin, double tmax, double *t, double n[3])
{
    switch (p->kind) {
    case GEOM_BOX: return geom_box_hit(p, o, d, tmin, tmax, t, n);
    case GEOM_CYL: return geom_cyl_hit(p, o, d, tmin, tmax, t, n);
    case GEOM_ELLIPSOID: return geom_ellipsoid_hit(p, o, d, tmin, tmax, t, n);
    }
    return 0;
}
