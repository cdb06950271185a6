/* bench_metrics.c: speed of ground truth and of the bootstrap, each as a
 * ratio to a plain reference measured in the same run.
 *   gt_100k_*:  k-d tree ground truth for 100,000 poses (loop, 30 s) against
 *               the all-pairs computation on 10,000 poses, scaled by 100
 *               (it is quadratic), in CPU seconds.  Target: ratio >= 100.
 *               "laps": four laps of one loop, every place passed four
 *               times (75% revisits); "grid": a drive through a street grid.
 *   boot_100k:  curve + 1,000 bootstrap resamples of 100,000 queries on 2
 *               threads against resampling by copying and re-sorting the
 *               outcomes (20 resamples, scaled by 50), both in CPU seconds;
 *               wall seconds too.  Target: < 5 s wall on 2 free cores.
 */
#include <math.h>
#include <stdint.h>
#include <stdio.h>
#include <stdlib.h>

#include <time.h>

#include "harness/base/progress.h"
#include "metrics/boot.h"
#include "metrics/gt.h"

struct lcg { uint64_t s; };

static double uni(struct lcg *r)
{
    r->s = r->s * 6364136223846793005ULL + 1442695040888963407ULL;
    return (double)(r->s >> 11) / 9007199254740992.0;
}

/* A route around a 2 km x 1 km district, four laps, 1 scan per 0.1 s. */
static void route(size_t n, double *xyz, double *t)
{
    struct lcg r = {3};
    for (size_t i = 0; i < n; i++) {
        double a = 8.0 * M_PI * (double)i / (double)n;
        xyz[3 * i] = 1000 * cos(a) + 3 * uni(&r);
        xyz[3 * i + 1] = 500 * sin(a) + 3 * uni(&r);
        xyz[3 * i + 2] = uni(&r);
        t[i] = 0.1 * (double)i;
    }
}

/* CPU seconds of this thread: the machine is shared, so single-threaded
 * figures use CPU time, which other jobs disturb far less than wall time. */
static double cpu_now(void)
{
    struct timespec ts;
    clock_gettime(CLOCK_THREAD_CPUTIME_ID, &ts);
    return (double)ts.tv_sec + 1e-9 * (double)ts.tv_nsec;
}

/* A drive through a 4 km x 4 km street grid (100 m blocks), 1 m per scan,
 * a random turn at each crossing: revisits are occasional, as in a survey. */
static void grid_route(size_t n, double *xyz, double *t)
{
    struct lcg r = {9};
    double x = 2000, y = 2000;
    int dir = 0;
    const int dx[4] = {1, 0, -1, 0}, dy[4] = {0, 1, 0, -1};
    for (size_t i = 0; i < n; i++) {
        if (i % 100 == 0) {
            dir = (dir + (int)(uni(&r) * 3) + 3) % 4;   /* left, straight or right */
            if ((x < 100 && dx[dir] < 0) || (x > 3900 && dx[dir] > 0) ||
                (y < 100 && dy[dir] < 0) || (y > 3900 && dy[dir] > 0))
                dir = (dir + 2) % 4;
        }
        x += dx[dir];
        y += dy[dir];
        xyz[3 * i] = x + 0.3 * (uni(&r) - 0.5);
        xyz[3 * i + 1] = y + 0.3 * (uni(&r) - 0.5);
        xyz[3 * i + 2] = 0.1 * uni(&r);
        t[i] = 0.1 * (double)i;
    }
}

static size_t all_pairs(const double *xyz, const double *t, size_t n, double r_pos, double excl)
{
    size_t revisits = 0;
    for (size_t i = 0; i < n; i++) {
        double best = INFINITY;
        size_t within = 0;
        for (size_t j = 0; j < i && t[j] <= t[i] - excl; j++) {
            double dx = xyz[3 * i] - xyz[3 * j], dy = xyz[3 * i + 1] - xyz[3 * j + 1], dz = xyz[3 * i + 2] - xyz[3 * j + 2];
            double d = sqrt(dx * dx + dy * dy + dz * dz);
            if (d < best) best = d;
            within += d <= r_pos;
        }
        revisits += within > 0;
    }
    return revisits;
}

static void bench_gt(const char *name, void (*make)(size_t, double *, double *))
{
    size_t n = 100000, n_ref = 10000;
    double *xyz = malloc(3 * n * sizeof *xyz), *t = malloc(n * sizeof *t);
    make(n, xyz, t);
    struct protocol p;
    protocol_defaults(&p);
    struct gt_poses map = {xyz, t, n};
    struct gt *g = NULL;
    double t0 = cpu_now();
    if (gt_build(&p, &map, NULL, NULL, 0, &g, NULL)) { printf("{\"bench\":\"%s\",\"error\":\"build\"}\n", name); return; }
    double t_tree = cpu_now() - t0;
    double *xr = malloc(3 * n_ref * sizeof *xr), *tr = malloc(n_ref * sizeof *tr);
    make(n_ref, xr, tr);
    t0 = cpu_now();
    size_t rv = all_pairs(xr, tr, n_ref, p.r_pos_m, p.exclusion_s);
    double t_ref = (cpu_now() - t0) * 100.0;
    printf("{\"bench\":\"%s\",\"poses\":%zu,\"cpu_seconds\":%.4f,\"reference\":\"all pairs on %zu poses x 100\","
           "\"reference_cpu_seconds\":%.3f,\"ratio\":%.1f,\"revisits\":%zu,\"reference_revisits\":%zu}\n",
           name, n, t_tree, n_ref, t_ref, t_ref / t_tree, g->n_revisits, rv);
    gt_free(g);
    free(xyz); free(t); free(xr); free(tr);
}

static struct pr_outcome *outcomes(size_t n)
{
    struct lcg r = {17};
    struct pr_outcome *o = malloc(n * sizeof *o);
    for (size_t i = 0; i < n; i++) {
        int rev = uni(&r) < 0.4, ok = rev && uni(&r) < 0.7;
        double d = ok ? 0.5 * uni(&r) : 0.2 + 0.8 * uni(&r);
        o[i] = (struct pr_outcome){d, i, i, ok ? 1 : 0, (unsigned char)(ok ? GT_POS : GT_NEG), (unsigned char)rev};
    }
    return o;
}

static void bench_boot(void)
{
    size_t n = 100000;
    int reps = 1000, ref_reps = 20;
    struct pr_outcome *o = outcomes(n), *tmp = malloc(n * sizeof *tmp);
    struct pr_set *s = NULL;
    struct pr_curve *c = NULL;
    struct boot_result b;
    struct timespec c0, c1;
    clock_gettime(CLOCK_PROCESS_CPUTIME_ID, &c0);
    double t0 = progress_now();
    pr_set_from_outcomes(o, n, n, PROTOCOL_STRICT, &s, NULL);
    pr_curve_build(s, &c, NULL);
    int rc = boot_percentile(s, reps, 1, 0.95, 2, &b, NULL);
    double t_ours = progress_now() - t0;
    clock_gettime(CLOCK_PROCESS_CPUTIME_ID, &c1);
    double cpu = (double)(c1.tv_sec - c0.tv_sec) + 1e-9 * (double)(c1.tv_nsec - c0.tv_nsec);
    struct lcg r = {5};
    double sink = 0;
    t0 = cpu_now();
    for (int k = 0; k < ref_reps; k++) {
        for (size_t i = 0; i < n; i++) tmp[i] = o[(size_t)(uni(&r) * (double)n)];
        struct pr_set *rs = NULL;
        struct pr_scalars v;
        pr_set_from_outcomes(tmp, n, n, PROTOCOL_STRICT, &rs, NULL);
        pr_scalars_compute(rs, NULL, &v);
        sink += v.v[PR_F1MAX];
        pr_set_free(rs);
    }
    double t_ref = (cpu_now() - t0) * (double)reps / ref_reps;
    printf("{\"bench\":\"metrics_boot_100k\",\"queries\":%zu,\"resamples\":%d,\"threads\":2,\"seconds\":%.3f,\"cpu_seconds\":%.3f,"
           "\"target_seconds\":5,\"reference\":\"copy and re-sort per resample, %d resamples scaled\","
           "\"reference_cpu_seconds\":%.3f,\"ratio_cpu\":%.2f,\"f1max\":%.4f,\"ok\":%s}\n",
           n, reps, t_ours, cpu, ref_reps, t_ref, t_ref / cpu, b.point.v[PR_F1MAX] + 0 * sink,
           rc == 0 ? "true" : "false");
    pr_curve_free(c);
    pr_set_free(s);
    free(o); free(tmp);
}

int main(void)
{
    bench_gt("metrics_gt_100k_laps", route);
    bench_gt("metrics_gt_100k_grid", grid_route);
    bench_boot();
    return 0;
}
