/* stage_geom.c: rigid and motion stages: yaw, tilt, shift, skew.
 *
 * Conventions (sensor frame, x forward, y left, z up, angles in degrees,
 * positive counter-clockwise seen from the axis tip):
 *   yaw    p' = Rz(deg) p
 *   tilt   p' = Ry(pitch) Rx(roll) p          (roll first, then pitch)
 *   shift  p' = p - (x, y, z)                  (the sensor moved by x, y, z)
 *   skew   p' = Rz(-psi(t)) (p - s(t))         (see stage_skew below)
 */
#include "perturb/stage.h"

/* ---- yaw ----------------------------------------------------------------- */

enum { YAW_DEG, YAW_DRAW };
static const struct chain_param_info yaw_params[] = {
    {"deg", CHAIN_NUM, "deg", 0, -360, 360, 1, 1, NULL, "a number of degrees from -360 to 360",
     "turn about the vertical axis; random: uniform in [0, 360)"},
    STAGE_DRAW_PARAM,
};

/* Rotate (x, y) of every point by (cs, sn); float arithmetic keeps it fast. */
static void rotate_xy(struct cloud *c, float cs, float sn)
{
    float *p = c->pts;
    for (size_t k = 0; k < c->n; k++, p += 4) {
        float x = p[0], y = p[1];
        p[0] = cs * x - sn * y;
        p[1] = sn * x + cs * y;
    }
}

static int yaw_apply(const struct stage *st, struct cloud *c, struct rng *r,
                     struct chain_scratch *s, struct err *e)
{
    (void)s; (void)e;
    double a = stage_value(st, YAW_DEG, r, 0, 360) * (M_PI / 180.0);
    rotate_xy(c, (float)cos(a), (float)sin(a));
    return 0;
}

const struct stage_def stage_yaw = {
    {"yaw", "turn the scan about the sensor's vertical axis (the vehicle faces another way)",
     2, yaw_params},
    NULL, yaw_apply, NULL};

/* ---- tilt ---------------------------------------------------------------- */

enum { TILT_ROLL, TILT_PITCH };
static const struct chain_param_info tilt_params[] = {
    {"roll", CHAIN_NUM, "deg", 0, -90, 90, 0, 0, NULL, "a number of degrees from -90 to 90",
     "rotation about the forward (x) axis, applied first"},
    {"pitch", CHAIN_NUM, "deg", 2, -90, 90, 0, 0, NULL, "a number of degrees from -90 to 90",
     "rotation about the left (y) axis, applied second"},
};

/* Apply the 3x3 row-major matrix m to every point. */
static void rotate_3d(struct cloud *c, const double *m)
{
    float *p = c->pts;
    for (size_t k = 0; k < c->n; k++, p += 4) {
        double x = p[0], y = p[1], z = p[2];
        p[0] = (float)(m[0] * x + m[1] * y + m[2] * z);
        p[1] = (float)(m[3] * x + m[4] * y + m[5] * z);
        p[2] = (float)(m[6] * x + m[7] * y + m[8] * z);
    }
}

static int tilt_apply(const struct stage *st, struct cloud *c, struct rng *r,
                      struct chain_scratch *s, struct err *e)
{
    (void)r; (void)s; (void)e;
    double a = st->v[TILT_ROLL] * (M_PI / 180.0), b = st->v[TILT_PITCH] * (M_PI / 180.0);
    double ca = cos(a), sa = sin(a), cb = cos(b), sb = sin(b);
    /* Ry(b) * Rx(a) written out. */
    const double m[9] = {cb, sb * sa, sb * ca,
                         0, ca, -sa,
                         -sb, cb * sa, cb * ca};
    rotate_3d(c, m);
    return 0;
}

const struct stage_def stage_tilt = {
    {"tilt", "rotate the scan by roll and pitch about the sensor origin (a mount that is not level)",
     2, tilt_params},
    NULL, tilt_apply, NULL};

/* ---- shift --------------------------------------------------------------- */

enum { SHIFT_X, SHIFT_Y, SHIFT_Z };
static const struct chain_param_info shift_params[] = {
    {"x", CHAIN_NUM, "m", 0.5, -100, 100, 0, 0, NULL, "metres from -100 to 100",
     "forward move of the sensor in its own frame"},
    {"y", CHAIN_NUM, "m", 0, -100, 100, 0, 0, NULL, "metres from -100 to 100",
     "leftward move of the sensor"},
    {"z", CHAIN_NUM, "m", 0, -100, 100, 0, 0, NULL, "metres from -100 to 100",
     "upward move of the sensor"},
};

static int shift_apply(const struct stage *st, struct cloud *c, struct rng *r,
                       struct chain_scratch *s, struct err *e)
{
    (void)r; (void)s; (void)e;
    float dx = (float)st->v[SHIFT_X], dy = (float)st->v[SHIFT_Y], dz = (float)st->v[SHIFT_Z];
    float *p = c->pts;
    for (size_t k = 0; k < c->n; k++, p += 4) {
        p[0] -= dx;
        p[1] -= dy;
        p[2] -= dz;
    }
    return 0;
}

const struct stage_def stage_shift = {
    {"shift", "move the sensor origin by x, y, z in its own frame (a mount elsewhere on the vehicle)",
     3, shift_params},
    NULL, shift_apply, NULL};

/* ---- skew ---------------------------------------------------------------- */

enum { SKEW_SPEED, SKEW_YAWRATE, SKEW_PERIOD, SKEW_START };
static const struct chain_param_info skew_params[] = {
    {"speed", CHAIN_NUM, "m/s", 10, -100, 100, 0, 0, NULL, "metres per second from -100 to 100",
     "forward speed during the sweep"},
    {"yawrate", CHAIN_NUM, "deg/s", 0, -360, 360, 0, 0, NULL,
     "degrees per second from -360 to 360", "turn rate during the sweep"},
    {"period", CHAIN_NUM, "s", 0.1, 0.001, 10, 0, 0, NULL, "seconds from 0.001 to 10",
     "sweep duration, used when the scan has no per-point time"},
    {"start", CHAIN_NUM, "deg", 180, 0, 360, 0, 0, NULL, "a number of degrees from 0 to 360",
     "azimuth where the sweep starts (it turns towards larger azimuths), without per-point time"},
};

/* Time of point k in seconds from sweep start. */
static double skew_time(const struct stage *st, const struct cloud *c, size_t k)
{
    if (c->time) return c->time[k];
    double a = stage_azimuth_deg(c->pts + 4 * k) - st->v[SKEW_START];
    if (a < 0) a += 360.0;
    return st->v[SKEW_PERIOD] * a / 360.0;
}

/* The scan was deskewed into the sensor pose at sweep start.  At time t the
 * sensor has turned by psi = w t and travelled along the arc
 * s(t) = (v/w sin psi, v/w (1 - cos psi), 0)  (straight (v t, 0, 0) for w = 0),
 * so the raw point it measured is Rz(-psi) (p - s(t)). */
static int skew_apply(const struct stage *st, struct cloud *c, struct rng *r,
                      struct chain_scratch *s, struct err *e)
{
    (void)r; (void)s; (void)e;
    double v = st->v[SKEW_SPEED], w = st->v[SKEW_YAWRATE] * (M_PI / 180.0);
    for (size_t k = 0; k < c->n; k++) {
        float *p = c->pts + 4 * k;
        double t = skew_time(st, c, k), psi = w * t, sx, sy;
        if (fabs(psi) < 1e-9) {
            sx = v * t;
            sy = 0;
        } else {
            sx = v / w * sin(psi);
            sy = v / w * (1 - cos(psi));
        }
        double x = p[0] - sx, y = p[1] - sy, cs = cos(psi), sn = sin(psi);
        p[0] = (float)(cs * x + sn * y);
        p[1] = (float)(-sn * x + cs * y);
    }
    return 0;
}

const struct stage_def stage_skew = {
    {"skew", "undo the deskew of a sweep: distort by a forward speed and turn rate over the sweep",
     4, skew_params},
    NULL, skew_apply, NULL};
