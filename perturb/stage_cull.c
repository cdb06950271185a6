/* stage_cull.c: stages that remove points by geometry: sector, range, fov.
 *
 * Azimuth is atan2(y, x) in [0, 360), elevation atan2(z, hypot(x, y)).
 * Removal keeps the order of the points that stay.
 */
#include "perturb/stage.h"

#include <string.h>

/* ---- sector -------------------------------------------------------------- */

enum { SEC_WIDTH, SEC_AT, SEC_COUNT, SEC_DRAW };
static const struct chain_param_info sector_params[] = {
    {"width", CHAIN_NUM, "deg", 90, 0, 360, 0, 0, NULL, "a number of degrees from 0 to 360",
     "angular width of each blocked sector"},
    {"at", CHAIN_NUM, "deg", 0, 0, 360, 1, 1, NULL, "a number of degrees from 0 to 360",
     "azimuth of the first sector's centre; random: uniform, each sector drawn alone"},
    {"count", CHAIN_NUM, "", 1, 1, 8, 0, 0, NULL, "a whole number from 1 to 8",
     "number of sectors; with a fixed `at` they are spread evenly round the circle"},
    STAGE_DRAW_PARAM,
};

static int whole_check(const struct stage *st, int k, const char **why)
{
    if (st->v[k] != floor(st->v[k])) {
        *why = "must be a whole number";
        return k;
    }
    return -1;
}

static int sector_check(const struct stage *st, const char **why)
{
    return whole_check(st, SEC_COUNT, why);
}

/* A sector [c - w/2, c + w/2) as two half-plane tests: with edge directions
 * a (start) and b (end), a point p is inside when cross(a, p) >= 0 and
 * cross(p, b) > 0 for w <= 180, and when either holds for w > 180 (the
 * complement of a narrower wedge).  No atan2 per point. */
struct wedge {
    float ax, ay, bx, by;
    int wide;
};

static struct wedge wedge_make(double centre_deg, double width_deg)
{
    double a = (centre_deg - width_deg / 2) * (M_PI / 180.0);
    double b = (centre_deg + width_deg / 2) * (M_PI / 180.0);
    struct wedge w = {(float)cos(a), (float)sin(a), (float)cos(b), (float)sin(b), width_deg > 180};
    return w;
}

static inline int wedge_inside(const struct wedge *w, const float *p)
{
    int in_a = w->ax * p[1] - w->ay * p[0] >= 0;
    int in_b = p[0] * w->by - p[1] * w->bx > 0;
    return w->wide ? (in_a | in_b) : (in_a & in_b);
}

static inline int wedges_inside(const struct wedge *w, int n, const float *p)
{
    int in = 0;
    for (int q = 0; q < n; q++) in |= wedge_inside(&w[q], p);
    return in;
}

static int sector_apply(const struct stage *st, struct cloud *c, struct rng *r,
                        struct chain_scratch *s, struct err *e)
{
    (void)s; (void)e;
    int n = (int)st->v[SEC_COUNT];
    double width = st->v[SEC_WIDTH];
    if (width <= 0) return 0;
    if (width >= 360) {
        c->n = 0;
        return 0;
    }
    struct wedge w[8];
    double first = stage_value(st, SEC_AT, r, 0, 360);
    for (int q = 0; q < n; q++) {
        double centre = q == 0 ? first
                        : (st->random >> SEC_AT & 1) ? 360.0 * rng_uniform(r)
                                                    : first + 360.0 * q / n;
        w[q] = wedge_make(centre, width);
    }
    if (n == 1) {
        const struct wedge w0 = w[0];
        STAGE_CULL(c, !wedge_inside(&w0, p));
    } else {
        STAGE_CULL(c, !wedges_inside(w, n, p));
    }
    return 0;
}

/* Width 0 blocks nothing: sector_apply returns before any point. */
static int sector_identity(const struct stage *st)
{
    return st->v[SEC_WIDTH] <= 0;
}

const struct stage_def stage_sector = {
    {"sector", "remove every point whose azimuth lies in a blocked sector (a bracket, a truck)",
     4, sector_params},
    sector_check, sector_apply, sector_identity};

/* ---- range --------------------------------------------------------------- */

enum { RANGE_MIN, RANGE_MAX };
static const struct chain_param_info range_params[] = {
    {"min", CHAIN_NUM, "m", 0, 0, 1e6, 0, 0, NULL, "metres from 0 to 1000000",
     "remove points nearer than this"},
    {"max", CHAIN_NUM, "m", 40, 0, 1e6, 0, 0, NULL, "metres from 0 to 1000000",
     "remove points farther than this"},
};

static int range_check(const struct stage *st, const char **why)
{
    if (st->v[RANGE_MIN] > st->v[RANGE_MAX]) {
        *why = "must not exceed 'max'";
        return RANGE_MIN;
    }
    return -1;
}

/* Squared range in float, summed as (x*x + y*y) + z*z, against the float
 * squares of the bounds: every IEEE 754 float computation, so a test doing
 * the same float32 operations sees exactly the same membership.  A NaN
 * coordinate fails both comparisons and is removed. */
static inline int range_keep(const float *p, float lo2, float hi2)
{
    float r2 = (p[0] * p[0] + p[1] * p[1]) + p[2] * p[2];
    return (r2 >= lo2) & (r2 <= hi2);
}

static int range_apply(const struct stage *st, struct cloud *c, struct rng *r,
                       struct chain_scratch *s, struct err *e)
{
    (void)r; (void)s; (void)e;
    float lo = (float)st->v[RANGE_MIN], hi = (float)st->v[RANGE_MAX];
    float lo2 = lo * lo, hi2 = hi * hi;
    STAGE_CULL(c, range_keep(p, lo2, hi2));
    return 0;
}

const struct stage_def stage_range = {
    {"range", "remove points beyond a maximum range and nearer than a minimum (rain, a short-range sensor)",
     2, range_params},
    range_check, range_apply, NULL};

/* ---- fov ----------------------------------------------------------------- */

enum { FOV_DOWN, FOV_UP };
static const struct chain_param_info fov_params[] = {
    {"down", CHAIN_NUM, "deg", -15, -90, 90, 0, 0, NULL, "a number of degrees from -90 to 90",
     "lowest elevation kept"},
    {"up", CHAIN_NUM, "deg", 15, -90, 90, 0, 0, NULL, "a number of degrees from -90 to 90",
     "highest elevation kept"},
};

static int fov_check(const struct stage *st, const char **why)
{
    if (st->v[FOV_DOWN] > st->v[FOV_UP]) {
        *why = "must not exceed 'up'";
        return FOV_DOWN;
    }
    return -1;
}

static inline int fov_keep(const float *p, double lo, double hi)
{
    double el = stage_elevation_deg(p);
    return el >= lo && el <= hi;
}

static int fov_apply(const struct stage *st, struct cloud *c, struct rng *r,
                     struct chain_scratch *s, struct err *e)
{
    (void)r; (void)s; (void)e;
    double lo = st->v[FOV_DOWN], hi = st->v[FOV_UP];
    STAGE_CULL(c, fov_keep(p, lo, hi));
    return 0;
}

const struct stage_def stage_fov = {
    {"fov", "crop the vertical field of view to [down, up] degrees", 2, fov_params},
    fov_check, fov_apply, NULL};
