/* evalrec.h: a small synthetic recording for the eval tests and benchmark
 * (static functions, included by one test program each).
 *
 * An invented yard of vertical posts and a ground grid; the sensor, 1.8 m
 * up, drives `laps` times round a circle of 40 m radius facing along it, one
 * scan per second, each later lap offset_m further out and with the share
 * `moved` of the posts taken away, so revisits exist but are not copies. */
#ifndef RV_TESTS_EVALREC_H
#define RV_TESTS_EVALREC_H

#include <math.h>
#include <stdint.h>
#include <stdlib.h>

#include "harness/io/recording.h"

#define EVALREC_POSTS 160

static double evalrec_u(uint64_t a, uint64_t b)
{
    uint64_t z = a * 0x9e3779b97f4a7c15ull + b * 0xbf58476d1ce4e5b9ull + 0x94d049bb133111ebull;
    z = (z ^ (z >> 30)) * 0xbf58476d1ce4e5b9ull;
    z = (z ^ (z >> 27)) * 0x94d049bb133111ebull;
    z ^= z >> 31;
    return (double)(z >> 11) / 9007199254740992.0;
}

/* World points seen from (px, py) with heading yaw, into c (sensor frame). */
static int evalrec_scan(struct cloud *c, double px, double py, double yaw, int lap, double moved, uint64_t scan)
{
    double cs = cos(yaw), sn = sin(yaw);
    c->n = 0;
    for (int k = 0; k < EVALREC_POSTS; k++) {
        double cx = (evalrec_u(k, 1) - 0.5) * 180, cy = (evalrec_u(k, 2) - 0.5) * 180;
        double r = 0.3 + 1.2 * evalrec_u(k, 3), h = 1.5 + 10 * evalrec_u(k, 4);
        if (lap > 0 && evalrec_u(k, 5 + lap) < moved) continue;  /* moved between visits */
        double dx = cx - px, dy = cy - py, d = sqrt(dx * dx + dy * dy);
        if (d > 55 || d < r + 0.5) continue;
        double face = atan2(-dy, -dx);
        for (int j = 0; j < 40; j++) {
            double a = face + (evalrec_u(k, 100 + j) - 0.5) * 2.6, z = h * evalrec_u(k, 200 + j);
            double wx = cx + r * cos(a) + 0.02 * (evalrec_u(scan, 300 + j) - 0.5);
            double wy = cy + r * sin(a), ex = wx - px, ey = wy - py;
            if (cloud_push(c, (float)(cs * ex + sn * ey), (float)(-sn * ex + cs * ey), (float)(z - 1.8), 0.5f))
                return -1;
        }
    }
    for (int gx = -15; gx <= 15; gx++)
        for (int gy = -15; gy <= 15; gy++) {
            double wx = floor(px / 2) * 2 + 2 * gx, wy = floor(py / 2) * 2 + 2 * gy;
            double ex = wx - px, ey = wy - py;
            if (ex * ex + ey * ey > 900) continue;
            if (cloud_push(c, (float)(cs * ex + sn * ey), (float)(-sn * ex + cs * ey), -1.8f, 0.1f)) return -1;
        }
    return 0;
}

/* Write the recording to dir.  0 or -1. */
static int evalrec_make(const char *dir, int per_lap, int laps, double offset_m, double moved, struct err *e)
{
    struct recording_sensor sensor;
    recording_sensor_init(&sensor);
    sensor.channels = 16;
    struct recording_writer w;
    if (recording_writer_begin(&w, dir, &sensor, SCAN_RAW, e)) return -1;
    size_t n = (size_t)per_lap * laps;
    struct pose *poses = calloc(n, sizeof *poses);
    struct cloud c;
    cloud_init(&c);
    int rc = poses ? 0 : -1;
    for (size_t i = 0; !rc && i < n; i++) {
        int lap = (int)(i / per_lap);
        double a = 2 * M_PI * (double)(i % per_lap) / per_lap, R = 40 + offset_m * lap;
        double px = R * cos(a), py = R * sin(a), yaw = a + M_PI / 2;
        double p[3] = {px, py, 1.8}, q[4] = {0, 0, sin(yaw / 2), cos(yaw / 2)};
        rc = pose_from_quat(&poses[i], (double)i, p, q, e) || evalrec_scan(&c, px, py, yaw, lap, moved, i) ||
             recording_writer_scan(&w, i, &c, e);
    }
    if (!rc) rc = recording_writer_poses(&w, poses, n, e) || recording_writer_finish(&w, e);
    recording_writer_free(&w);
    recording_sensor_free(&sensor);
    cloud_free(&c);
    free(poses);
    return rc ? -1 : 0;
}

#endif
