/* bench_synth.c: ray casting speed of the synthetic generator and the wall
 * time of the demo recording.  One JSON line per figure, each with a ratio
 * to a reference measured in the same run (machines are shared):
 *   brute force   every primitive tested for every ray, on the same port
 *                 district and the same rays (target: hierarchy >= 20 x)
 *   cast only     the demo's rays cast on the same threads without writing
 *                 (the demo's wall time over it is the cost of the files) */
#include <math.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>

#include "harness/base/pool.h"
#include "harness/base/progress.h"
#include "scenarios/district.h"
#include "scenarios/lidar.h"
#include "scenarios/route.h"
#include "scenarios/synconf.h"

#define BS_RAYS 200000

/* Rays of spin32 sweeps from points along the route. */
static void bs_rays(const struct synconf *c, const struct route *r, const struct world *w,
                    double (*o)[3], double (*d)[3])
{
    const struct lidar *L = &c->sensor;
    int cols = lidar_columns(L);
    for (int k = 0; k < BS_RAYS; k++) {
        int sweep = k / (cols * L->channels), q = k % (cols * L->channels);
        struct route_state s;
        route_at(r, r->duration_s * (0.05 + 0.9 * sweep / 8.0), &s);
        double p[3] = {s.x, s.y, world_ground_z(w, s.x, s.y)}, R[9];
        lidar_sensor_pose(L, p, s.yaw, R, o[k]);
        double el = L->elev_deg[q % L->channels] * M_PI / 180, az = 2 * M_PI * (q / L->channels) / cols;
        double ds[3] = {cos(el) * cos(az), cos(el) * sin(az), sin(el)};
        for (int i = 0; i < 3; i++) d[k][i] = R[3 * i] * ds[0] + R[3 * i + 1] * ds[1] + R[3 * i + 2] * ds[2];
    }
}

static double bs_cast(const struct world *w, double (*o)[3], double (*d)[3], int n, int brute,
                      size_t *hits)
{
    double t0 = progress_now();
    *hits = 0;
    for (int k = 0; k < n; k++) {
        struct bvh_hit bh;
        if (brute) *hits += bvh_cast_brute(w->prims, w->n_prims, o[k], d[k], 80, 1, &bh);
        else *hits += bvh_cast(&w->bvh, o[k], d[k], 80, 1, &bh);
    }
    return progress_now() - t0;
}

struct bs_demo {
    const struct synconf *c;
    const struct world *w;
    const struct route *r;
    struct cloud *clouds;
};

static int bs_scan(void *ctx, size_t i, int worker, struct err *e)
{
    const struct bs_demo *b = ctx;
    struct route_state s0, s1;
    route_at(b->r, i / b->c->rate_hz, &s0);
    route_at(b->r, i / b->c->rate_hz + 0.1, &s1);
    struct lidar_motion m = {{s0.x, s0.y, world_ground_z(b->w, s0.x, s0.y)}, s0.yaw,
                             {s1.x, s1.y, world_ground_z(b->w, s1.x, s1.y)}, s1.yaw};
    return lidar_scan(&b->c->sensor, b->w, &m, s0.leg, i / b->c->rate_hz, b->c->seed, i,
                      &b->clouds[worker], NULL, e);
}

static int bs_demo_wall(const struct synconf *c, const struct world *w, const struct route *r)
{
    const char *bin = getenv("REVISIT_BIN");
    if (!bin || !*bin) { fprintf(stderr, "bench_synth: REVISIT_BIN not set, demo figure skipped\n"); return 0; }
    char cmd[8192];
    snprintf(cmd, sizeof cmd, "'%s' synth --scenario port --out bench_port --quiet > /dev/null && rm -rf bench_port", bin);
    double t0 = progress_now();
    int rc = system(cmd);
    double wall = progress_now() - t0;
    if (rc) { printf("{\"bench\":\"synth_demo\",\"error\":\"synth exit %d\"}\n", rc); return -1; }
    size_t n = (size_t)floor((r->duration_s - 0.1) * c->rate_hz) + 1;
    int threads = pool_threads(0);
    struct bs_demo b = {c, w, r, calloc((size_t)threads, sizeof(struct cloud))};
    struct err e;
    t0 = progress_now();
    int prc = pool_run(n, 0, bs_scan, &b, &e);
    double cast = progress_now() - t0;
    for (int k = 0; k < threads; k++) cloud_free(&b.clouds[k]);
    free(b.clouds);
    if (prc) { fprintf(stderr, "bench_synth: %s\n", e.msg); return -1; }
    printf("{\"bench\":\"synth_demo\",\"scenario\":\"port\",\"scans\":%zu,\"channels\":%d,\"threads\":%d,"
           "\"wall_s\":%.2f,\"target_s\":60,\"cast_only_s\":%.2f,\"ratio_to_cast_only\":%.2f}\n",
           n, c->sensor.channels, threads, wall, cast, wall / cast);
    return 0;
}

int main(void)
{
    struct synconf c;
    struct err e;
    struct world w;
    struct district d;
    struct route r;
    world_init(&w);
    if (synconf_load("port", NULL, &c, &e)) { fprintf(stderr, "bench_synth: %s\n", e.msg); return 1; }
    struct district_params wp = c.world;
    wp.seed = c.seed;
    if (district_build(&d, &w, &wp, &e) || world_finish(&w, &e) || route_build(&r, &d, &c.route, &e)) {
        fprintf(stderr, "bench_synth: %s\n", e.msg);
        return 1;
    }
    double (*o)[3] = malloc(BS_RAYS * sizeof *o), (*dir)[3] = malloc(BS_RAYS * sizeof *dir);
    bs_rays(&c, &r, &w, o, dir);
    int nb = BS_RAYS / 10;
    size_t h1, h2, h3;
    double tb = bs_cast(&w, o, dir, BS_RAYS, 0, &h1);
    double tf = bs_cast(&w, o, dir, nb, 1, &h2);
    bs_cast(&w, o, dir, nb, 0, &h3);
    double rb = BS_RAYS / tb, rf = nb / tf;
    printf("{\"bench\":\"synth_rays\",\"scenario\":\"port\",\"primitives\":%zu,\"rays\":%d,"
           "\"rays_per_s_hierarchy\":%.0f,\"rays_per_s_brute\":%.0f,\"ratio\":%.1f,\"target_ratio\":20,"
           "\"same_hits\":%s}\n",
           w.n_prims, BS_RAYS, rb, rf, rb / rf, h2 == h3 ? "true" : "false");
    int rc = bs_demo_wall(&c, &w, &r);
    free(o);
    free(dir);
    route_free(&r);
    district_free(&d);
    world_free(&w);
    return rc ? 1 : 0;
}
