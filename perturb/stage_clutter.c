/* stage_clutter.c: near-field occluders that shadow the scene.
 *
 * `count` boxes (cubes of edge `size`, centre height `height`, each turned to
 * face the sensor) stand at bearings and ranges drawn per the stage's draw=.
 * A spherical image of the sensor's view (bins of `res` degrees in azimuth and
 * elevation) marks which boxes may cover each bin.  A point is removed when
 * its own ray, from the sensor origin, enters a box marked in its bin before
 * reaching the point (an exact ray-box test, so the shadow is geometric).  Then
 * every bin centre within the scan's elevation span whose ray hits a box adds
 * one return at the nearest hit: the occluders' own points.
 */
#include "perturb/stage.h"

#include <string.h>

enum { CL_COUNT, CL_SIZE, CL_NEAR, CL_FAR, CL_HEIGHT, CL_AT, CL_RES, CL_DRAW };
static const struct chain_param_info clutter_params[] = {
    {"count", CHAIN_NUM, "", 2, 1, 16, 0, 0, NULL, "a whole number from 1 to 16",
     "number of boxes"},
    {"size", CHAIN_NUM, "m", 0.4, 0.05, 10, 0, 0, NULL, "metres from 0.05 to 10",
     "edge length of each box"},
    {"near", CHAIN_NUM, "m", 1, 0.1, 100, 0, 0, NULL, "metres from 0.1 to 100",
     "least horizontal distance of a box centre"},
    {"far", CHAIN_NUM, "m", 3, 0.1, 100, 0, 0, NULL, "metres from 0.1 to 100",
     "greatest horizontal distance of a box centre (uniform between near and far)"},
    {"height", CHAIN_NUM, "m", 0, -10, 10, 0, 0, NULL, "metres from -10 to 10",
     "height of the box centres in the sensor frame"},
    {"at", CHAIN_NUM, "deg", 0, 0, 360, 1, 1, NULL, "a number of degrees from 0 to 360",
     "bearing of the first box; random: each box drawn alone; fixed: spread evenly"},
    {"res", CHAIN_NUM, "deg", 0.4, 0.1, 5, 0, 0, NULL, "degrees from 0.1 to 5",
     "bin size of the view image and spacing of the occluders' returns"},
    STAGE_DRAW_PARAM,
};

#define CL_MAX 16

struct box {
    double cx, cy, cz, cs, sn, half;   /* centre, facing (cos, sin of bearing), half edge */
};

static int clutter_check(const struct stage *st, const char **why)
{
    if (st->v[CL_COUNT] != floor(st->v[CL_COUNT])) {
        *why = "must be a whole number";
        return CL_COUNT;
    }
    if (st->v[CL_NEAR] > st->v[CL_FAR]) {
        *why = "must not exceed 'far'";
        return CL_NEAR;
    }
    if (st->v[CL_NEAR] <= st->v[CL_SIZE] * M_SQRT1_2) {
        *why = "must exceed size / sqrt(2), so the sensor stays outside the boxes";
        return CL_NEAR;
    }
    return -1;
}

/* Entry distance along the unit-free ray t*(dx,dy,dz), t in (0, inf), into
 * box b: returns t_enter (> 0) or -1 when the ray misses. Slab method in the
 * box frame (Kay & Kajiya, SIGGRAPH 1986). */
static double box_enter(const struct box *b, double dx, double dy, double dz)
{
    /* ray origin in the box frame is -centre rotated; direction rotated */
    double ox = -(b->cs * b->cx + b->sn * b->cy), oy = -(-b->sn * b->cx + b->cs * b->cy);
    double oz = -b->cz;
    double o[3] = {ox, oy, oz};
    double d[3] = {b->cs * dx + b->sn * dy, -b->sn * dx + b->cs * dy, dz};
    double t0 = 0, t1 = INFINITY;
    for (int a = 0; a < 3; a++) {
        if (d[a] == 0) {
            if (o[a] < -b->half || o[a] > b->half) return -1;
            continue;
        }
        double u = (-b->half - o[a]) / d[a], v = (b->half - o[a]) / d[a];
        if (u > v) { double w = u; u = v; v = w; }
        if (u > t0) t0 = u;
        if (v < t1) t1 = v;
        if (t0 > t1) return -1;
    }
    return t0 > 0 ? t0 : -1;
}

static void boxes_draw(const struct stage *st, struct rng *r, struct box *b, int n)
{
    double first = stage_value(st, CL_AT, r, 0, 360);
    for (int q = 0; q < n; q++) {
        double bear = q == 0 ? first
                      : (st->random >> CL_AT & 1) ? 360.0 * rng_uniform(r)
                                                 : first + 360.0 * q / n;
        double d = st->v[CL_NEAR] + (st->v[CL_FAR] - st->v[CL_NEAR]) * rng_uniform(r);
        double a = bear * (M_PI / 180.0);
        b[q] = (struct box){d * cos(a), d * sin(a), st->v[CL_HEIGHT], cos(a), sin(a),
                            st->v[CL_SIZE] / 2};
    }
}

/* The bins a box may cover: azimuth bins a0 .. a0+na-1 (mod naz), elevation
 * bins e0 .. e1, padded by one bin against rounding. */
struct rect {
    long a0, na, e0, e1;
};

struct view {
    long naz, nel;
    double res, res_az;   /* res_az = 360 / naz exactly, so bins wrap cleanly */
    uint16_t *mask;   /* naz * nel, elevation-major: mask[e * naz + a] */
};

static struct rect box_rect(const struct box *b, const struct view *v)
{
    double d = hypot(b->cx, b->cy), hd = b->half * M_SQRT2;
    double span = asin(hd / d) * (180.0 / M_PI);
    double bear = atan2(b->cy, b->cx) * (180.0 / M_PI);
    double zlo = b->cz - b->half, zhi = b->cz + b->half;
    double el_hi = atan2(zhi, zhi > 0 ? d - hd : d + hd) * (180.0 / M_PI);
    double el_lo = atan2(zlo, zlo < 0 ? d - hd : d + hd) * (180.0 / M_PI);
    struct rect r;
    r.a0 = (long)floor((bear - span) / v->res_az) - 1;
    r.na = (long)floor((bear + span) / v->res_az) + 1 - r.a0 + 1;
    if (r.na > v->naz) r.na = v->naz;
    r.e0 = (long)floor((el_lo + 90.0) / v->res) - 1;
    r.e1 = (long)floor((el_hi + 90.0) / v->res) + 1;
    if (r.e0 < 0) r.e0 = 0;
    if (r.e1 > v->nel - 1) r.e1 = v->nel - 1;
    return r;
}

static long wrap(long a, long n)
{
    a %= n;
    return a < 0 ? a + n : a;
}

static void view_mark(struct view *v, const struct rect *r, int q)
{
    for (long e = r->e0; e <= r->e1; e++)
        for (long k = 0; k < r->na; k++) v->mask[e * v->naz + wrap(r->a0 + k, v->naz)] |= (uint16_t)(1u << q);
}

static unsigned view_at(const struct view *v, const float *p)
{
    if (!isfinite(p[0]) || !isfinite(p[1]) || !isfinite(p[2])) return 0;
    long a = wrap((long)floor(stage_azimuth_deg(p) / v->res_az), v->naz);
    long e = (long)floor((stage_elevation_deg(p) + 90.0) / v->res);
    if (e < 0) e = 0;
    if (e > v->nel - 1) e = v->nel - 1;
    return v->mask[e * v->naz + a];
}

/* Nearest entry into the boxes of mask along direction d; -1 when none. */
static double view_hit(const struct box *b, unsigned mask, double dx, double dy, double dz)
{
    double best = -1;
    for (int q = 0; mask; q++, mask >>= 1) {
        if (!(mask & 1)) continue;
        double t = box_enter(&b[q], dx, dy, dz);
        if (t > 0 && (best < 0 || t < best)) best = t;
    }
    return best;
}

static void clutter_shadow(struct cloud *c, const struct view *v, const struct box *b)
{
    size_t j = 0;
    for (size_t k = 0; k < c->n; k++) {
        const float *p = c->pts + 4 * k;
        unsigned m = view_at(v, p);
        double t = m ? view_hit(b, m, p[0], p[1], p[2]) : -1;
        if (!(t > 0 && t < 1)) cloud_move(c, j++, k);
    }
    c->n = j;
}

/* The occluders' own returns: one per bin centre inside [el_lo, el_hi]. */
static int clutter_returns(struct cloud *c, const struct view *v, const struct box *b, int n,
                           const struct rect *rc, double el_lo, double el_hi, float inten)
{
    for (int q = 0; q < n; q++)
        for (long e = rc[q].e0; e <= rc[q].e1; e++) {
            double el = (e + 0.5) * v->res - 90.0;
            if (el < el_lo || el > el_hi) continue;
            for (long k = 0; k < rc[q].na; k++) {
                long a = wrap(rc[q].a0 + k, v->naz);
                unsigned m = v->mask[e * v->naz + a];
                if (m & ((1u << q) - 1)) continue;     /* a lower box owns this bin */
                double az = (a + 0.5) * v->res_az * (M_PI / 180.0), er = el * (M_PI / 180.0);
                double dx = cos(er) * cos(az), dy = cos(er) * sin(az), dz = sin(er);
                double t = view_hit(b, m, dx, dy, dz);
                if (t > 0 && cloud_push(c, (float)(t * dx), (float)(t * dy), (float)(t * dz), inten))
                    return -1;
            }
        }
    return 0;
}

static int clutter_apply(const struct stage *st, struct cloud *c, struct rng *r,
                         struct chain_scratch *s, struct err *e)
{
    int n = (int)st->v[CL_COUNT];
    struct box b[CL_MAX];
    struct rect rc[CL_MAX];
    boxes_draw(st, r, b, n);
    if (!c->n) return 0;
    struct view v;
    v.naz = (long)ceil(360.0 / st->v[CL_RES]);
    v.nel = (long)ceil(180.0 / st->v[CL_RES]) + 1;
    v.res = st->v[CL_RES];
    v.res_az = 360.0 / (double)v.naz;
    v.mask = stage_buf(s, (size_t)(v.naz * v.nel) * sizeof *v.mask);
    if (!v.mask) return err_set(e, "out of memory for a %ld x %ld view image", v.naz, v.nel);
    memset(v.mask, 0, (size_t)(v.naz * v.nel) * sizeof *v.mask);
    for (int q = 0; q < n; q++) {
        rc[q] = box_rect(&b[q], &v);
        view_mark(&v, &rc[q], q);
    }
    double el_lo = 90, el_hi = -90, isum = 0;
    for (size_t k = 0; k < c->n; k++) {
        double el = stage_elevation_deg(c->pts + 4 * k);
        if (el < el_lo) el_lo = el;
        if (el > el_hi) el_hi = el;
        if (isfinite(c->pts[4 * k + 3])) isum += c->pts[4 * k + 3];
    }
    float inten = (float)(isum / (double)c->n);
    clutter_shadow(c, &v, b);
    if (clutter_returns(c, &v, b, n, rc, el_lo, el_hi, inten))
        return err_set(e, "out of memory adding occluder returns");
    return 0;
}

const struct stage_def stage_clutter = {
    {"clutter", "place near-field boxes that shadow the scene and add their own returns", 8,
     clutter_params},
    clutter_check, clutter_apply, NULL};
