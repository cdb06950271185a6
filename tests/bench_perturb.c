/* bench_perturb.c: points per second per core of every stage and of the demo
 * chain, each as a ratio to memcpy of the same bytes measured in the same run
 * (the machine is shared, so only the ratio means anything).  One JSON line
 * per figure.  Target: ratio >= 0.3 for yaw, sector, dropout and range. */
#include <math.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>

#include "harness/base/progress.h"
#include "perturb/chain.h"
#include "perturb/rng.h"

#define BP_POINTS 131072   /* about one scan of a 64-channel sensor */
#define BP_ROUNDS 40

static void bp_scan(struct cloud *c)
{
    struct rng r;
    rng_seed(&r, 5, 0, 0);
    cloud_init(c);
    cloud_reserve(c, BP_POINTS);
    for (int k = 0; k < BP_POINTS; k++) {
        double az = 2 * M_PI * k / BP_POINTS * 64, el = (-25 + 40.0 * (k % 64) / 63) * M_PI / 180;
        double d = 2 + 80 * rng_uniform(&r);
        cloud_push(c, (float)(d * cos(el) * cos(az)), (float)(d * cos(el) * sin(az)),
                   (float)(d * sin(el)), (float)rng_uniform(&r));
    }
}

/* Best times of chain_apply on a fresh copy and of the memcpy that makes
 * the copy (the same bytes), alternating round by round so both see the
 * same machine load.  Returns the chain's time; *copy gets memcpy's. */
static double bp_chain(const char *text, const struct cloud *src, struct cloud *dst,
                       double *copy)
{
    struct chain *ch;
    struct err e;
    if (chain_parse(text, &ch, &e)) {
        fprintf(stderr, "%s\n", e.msg);
        return NAN;
    }
    struct chain_scratch s;
    chain_scratch_init(&s);
    double best = INFINITY;
    *copy = INFINITY;
    for (int k = 0; k < BP_ROUNDS; k++) {
        double t0 = progress_now();
        memcpy(dst->pts, src->pts, src->n * 16);
        double t1 = progress_now();
        dst->n = src->n;
        if (chain_apply(ch, dst, 1, (uint32_t)k, &s, NULL, &e)) {
            fprintf(stderr, "%s\n", e.msg);
            break;
        }
        double t2 = progress_now();
        if (t1 - t0 < *copy) *copy = t1 - t0;
        if (t2 - t1 < best) best = t2 - t1;
    }
    chain_scratch_free(&s);
    chain_free(ch);
    return best;
}

int main(void)
{
    static const struct { const char *name, *chain; int target; } cases[] = {
        {"yaw", "yaw", 1}, {"sector", "sector:width=90", 1}, {"dropout", "dropout:p=0.3", 1},
        {"range", "range:max=40", 1}, {"noise", "noise:sigma=0.03", 0},
        {"noise_outliers", "noise:sigma=0.03,outliers=0.01", 0},
        {"dropout_burst", "dropout:p=0.3,burst=2", 0}, {"channels", "channels:every=2", 0},
        {"fov", "fov:down=-10,up=10", 0}, {"tilt", "tilt:roll=1,pitch=2", 0},
        {"shift", "shift:x=0.5", 0}, {"clutter", "clutter:count=3", 0},
        {"density", "density:leaf=0.2", 0}, {"skew", "skew:speed=10,yawrate=20", 0},
        {"intensity", "intensity:scale=0.8,noise=0.05", 0},
        {"demo_chain", "yaw+sector:width=90+dropout:p=0.3+range:max=40+noise:sigma=0.03", 0},
    };
    struct cloud src, dst;
    bp_scan(&src);
    cloud_init(&dst);
    cloud_reserve(&dst, BP_POINTS + 65536);
    int fail = 0;
    for (size_t i = 0; i < sizeof cases / sizeof cases[0]; i++) {
        double tm;
        double t = bp_chain(cases[i].chain, &src, &dst, &tm);
        double ref = (double)src.n / tm;
        double pps = (double)src.n / t, ratio = tm / t;
        printf("{\"bench\":\"perturb\",\"stage\":\"%s\",\"chain\":\"%s\",\"points\":%zu,"
               "\"points_per_s\":%.4g,\"memcpy_points_per_s\":%.4g,\"ratio\":%.4f%s}\n",
               cases[i].name, cases[i].chain, src.n, pps, ref, ratio,
               cases[i].target ? ",\"target\":0.3" : "");
        if (!(t > 0)) fail = 1;
    }
    cloud_free(&src);
    cloud_free(&dst);
    return fail;
}
