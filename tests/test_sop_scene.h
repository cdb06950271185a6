/* test_sop_scene.h: a small street of boxes and poles, and a 32-channel
 * spinning sensor cast against it, for the sop tests and the benchmark.
 * Invented scene; every number here is demo geometry, not a check value.
 *
 *     struct scene w; scene_make(&w, 7);
 *     size_t n = scene_scan(&w, x, y, yaw, xyzi, cap);   // points in the sensor frame
 */
#ifndef RV_TEST_SOP_SCENE_H
#define RV_TEST_SOP_SCENE_H

#include <math.h>
#include <stddef.h>

#define SCENE_BOXES 40
#define SCENE_POLES 30
#define SCENE_CHANNELS 32
#define SCENE_AZIMUTHS 1800
#define SCENE_SENSOR_H 1.7
#define SCENE_RANGE 80.0

struct scene {
    double box[SCENE_BOXES][6];   /* xmin ymin zmin xmax ymax zmax, ground at z = 0 */
    double pole[SCENE_POLES][4];  /* x y radius height */
};

static double scene_rand(unsigned *s)
{
    *s = *s * 1103515245u + 12345u;
    return ((*s >> 8) & 0xffffff) / 16777216.0;
}

/* Buildings in two rows along a street on the x axis, parked boxes, poles. */
static void scene_make(struct scene *w, unsigned seed)
{
    unsigned s = seed;
    for (int b = 0; b < SCENE_BOXES; b++) {
        double *q = w->box[b];
        if (b < 24) {  /* buildings */
            double x = -120 + 10.0 * (b % 12) * 2 + scene_rand(&s) * 4, side = b < 12 ? 1 : -1;
            double depth = 6 + 8 * scene_rand(&s), y0 = side * (9 + 3 * scene_rand(&s));
            q[0] = x, q[3] = x + 8 + 8 * scene_rand(&s);
            q[1] = side > 0 ? y0 : y0 - depth, q[4] = side > 0 ? y0 + depth : y0;
            q[2] = 0, q[5] = 4 + 14 * scene_rand(&s);
        } else {       /* parked vehicles */
            double x = -100 + 200 * scene_rand(&s), y = (b % 2 ? 1 : -1) * (5.5 + scene_rand(&s));
            q[0] = x, q[3] = x + 4.2, q[1] = y - 0.9, q[4] = y + 0.9, q[2] = 0.2, q[5] = 1.6;
        }
    }
    for (int p = 0; p < SCENE_POLES; p++) {
        w->pole[p][0] = -110 + 220 * scene_rand(&s);
        w->pole[p][1] = (p % 2 ? 1 : -1) * (7.5 + 0.5 * scene_rand(&s));
        w->pole[p][2] = p % 3 ? 0.15 : 0.4;
        w->pole[p][3] = p % 3 ? 6 : 3.5;
    }
}

/* Ray o + t d against an axis-aligned box: entry t or INFINITY. */
static double scene_hit_box(const double *q, const double o[3], const double d[3])
{
    double t0 = 0, t1 = INFINITY;
    for (int a = 0; a < 3; a++) {
        if (fabs(d[a]) < 1e-12) {
            if (o[a] < q[a] || o[a] > q[a + 3])
                return INFINITY;
            continue;
        }
        double ta = (q[a] - o[a]) / d[a], tb = (q[a + 3] - o[a]) / d[a];
        if (ta > tb) {
            double t = ta;
            ta = tb, tb = t;
        }
        t0 = ta > t0 ? ta : t0, t1 = tb < t1 ? tb : t1;
        if (t0 > t1)
            return INFINITY;
    }
    return t0 > 0 ? t0 : INFINITY;
}

/* Ray against a vertical cylinder standing on the ground. */
static double scene_hit_pole(const double *p, const double o[3], const double d[3])
{
    double ox = o[0] - p[0], oy = o[1] - p[1], a = d[0] * d[0] + d[1] * d[1];
    double b = 2 * (ox * d[0] + oy * d[1]), c = ox * ox + oy * oy - p[2] * p[2];
    double disc = b * b - 4 * a * c;
    if (a < 1e-12 || disc < 0)
        return INFINITY;
    double t = (-b - sqrt(disc)) / (2 * a), z = o[2] + t * d[2];
    return t > 0 && z >= 0 && z <= p[3] ? t : INFINITY;
}

/* Cast every beam from a sensor at (x, y, SENSOR_H) facing yaw; points go to
 * xyzi in the sensor frame (4 floats each, intensity = channel / 32).
 * Returns the point count (at most cap). */
static size_t scene_scan(const struct scene *w, double x, double y, double yaw, float *xyzi,
                         size_t cap)
{
    size_t n = 0;
    const double o[3] = {x, y, SCENE_SENSOR_H};
    for (int ch = 0; ch < SCENE_CHANNELS; ch++) {
        double el = (-25.0 + 40.0 * ch / (SCENE_CHANNELS - 1)) * M_PI / 180;
        for (int az = 0; az < SCENE_AZIMUTHS && n < cap; az++) {
            double a = 2 * M_PI * az / SCENE_AZIMUTHS;  /* sensor-frame azimuth */
            double d[3] = {cos(el) * cos(a + yaw), cos(el) * sin(a + yaw), sin(el)};
            double t = d[2] < 0 ? -o[2] / d[2] : INFINITY;
            for (int b = 0; b < SCENE_BOXES; b++) {
                double tb = scene_hit_box(w->box[b], o, d);
                t = tb < t ? tb : t;
            }
            for (int p = 0; p < SCENE_POLES; p++) {
                double tp = scene_hit_pole(w->pole[p], o, d);
                t = tp < t ? tp : t;
            }
            if (!(t < SCENE_RANGE))
                continue;
            double r = t * cos(el);
            xyzi[4 * n] = (float)(r * cos(a));
            xyzi[4 * n + 1] = (float)(r * sin(a));
            xyzi[4 * n + 2] = (float)(t * sin(el));
            xyzi[4 * n + 3] = (float)ch / SCENE_CHANNELS;
            n++;
        }
    }
    return n;
}

#endif
