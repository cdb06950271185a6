/* bench_scan_context.c: the Scan Context plugin's image and distance
 * kernels on synthetic port scans (`revisit synth`, in the working folder),
 * each against the plain kernel it replaced (tests/sc_reference.h),
 * measured in the same run.  One JSON line per figure; every time is the
 * best of several rounds of thread CPU time:
 *   scan_context_describe  ms per scan; ratio to the atan2 binning
 *   scan_context_distance  us per pair, one query against all the images
 *                          at once (as retrieval calls it) and one pair at a
 *                          time; ratio to the scalar loop, for the kernel
 *                          this CPU runs and for the base one */
#include <stdio.h>
#include <stdlib.h>
#include <time.h>
#include <unistd.h>

#include "harness/plugins/scan-context/scan_context.c"
#include "harness/plugins/scan-context/sc_distance.c"
#include "harness/plugins/scan-context/sc_image.c"
#include "harness/io/recording.h"
#include "tests/sc_reference.h"

#define SCANS 40
#define ROUNDS 5

static double cpu_now(void)
{
    struct timespec ts;
    clock_gettime(CLOCK_THREAD_CPUTIME_ID, &ts);
    return (double)ts.tv_sec + 1e-9 * (double)ts.tv_nsec;
}

static int load(struct cloud *c, size_t *points)
{
    const char *bin = getenv("REVISIT_BIN");
    char cmd[4200];
    if (snprintf(cmd, sizeof cmd, "%s synth --scenario port --scans %d --out rec --quiet >/dev/null",
                 bin ? bin : "revisit", SCANS) >= (int)sizeof cmd)
        return -1;
    struct recording rec;
    struct err e;
    if ((access("rec/recording.json", R_OK) && system(cmd)) || recording_load("rec", 0, &rec, &e)) return -1;
    int rc = rec.n >= SCANS ? 0 : -1;
    *points = 0;
    for (size_t i = 0; i < SCANS && !rc; i++) {
        cloud_init(&c[i]);
        rc = recording_load_scan(&rec, i, &c[i], NULL, &e);
        *points += c[i].n;
    }
    recording_free(&rec);
    return rc;
}

static void bench_describe(const struct sc *s, const struct cloud *c, size_t points, float (*img)[1200])
{
    float key[20];
    double best = INFINITY, best_ref = INFINITY;
    for (int r = 0; r < ROUNDS; r++) {
        double t0 = cpu_now();
        for (int i = 0; i < SCANS; i++) scref_image(20, 60, 80, 2, c[i].pts, c[i].n, img[i], key);
        best_ref = fmin(best_ref, cpu_now() - t0);
        t0 = cpu_now();
        for (int i = 0; i < SCANS; i++) sc_image(s, c[i].pts, c[i].n, img[i], key);
        best = fmin(best, cpu_now() - t0);
    }
    printf("{\"bench\":\"scan_context_describe\",\"scans\":%d,\"points_per_scan\":%zu,\"ms\":%.3f,"
           "\"target_ms\":0.3,\"atan2_ms\":%.3f,\"speedup_vs_atan2\":%.2f}\n",
           SCANS, points / SCANS, best * 1e3 / SCANS, best_ref * 1e3 / SCANS, best_ref / best);
}

/* Seconds for every ordered pair of the images with kernel f, once. */
static double time_pairs(sc_pair_fn f, float (*img)[1200], double *sink)
{
    double t0 = cpu_now();
    for (int i = 0; i < SCANS; i++)
        for (int j = 0; j < SCANS; j++) *sink += f(20, 60, img[i], img[j], NULL);
    return cpu_now() - t0;
}

/* The same, each image against all at once with kernel f. */
static double time_many(sc_many_fn f, float (*img)[1200], double *sink)
{
    const float *all[SCANS];
    double out[SCANS];
    for (int j = 0; j < SCANS; j++) all[j] = img[j];
    double t0 = cpu_now();
    for (int i = 0; i < SCANS; i++) {
        f(20, 60, img[i], all, SCANS, out, NULL);
        *sink += out[i];
    }
    return cpu_now() - t0;
}

static void bench_distance(const struct sc *s, float (*img)[1200])
{
    double sink = 0, pairs = (double)SCANS * SCANS, ref = INFINITY, fast = INFINITY, base = INFINITY,
           one = INFINITY;
    for (int r = 0; r < ROUNDS; r++) {  /* interleaved, so that all see the same load */
        ref = fmin(ref, time_pairs(scref_distance, img, &sink));
        fast = fmin(fast, time_many(s->many, img, &sink));
        one = fmin(one, time_pairs(s->pair, img, &sink));
        base = fmin(base, time_many(sc_many_base, img, &sink));
    }
    printf("{\"bench\":\"scan_context_distance\",\"pairs\":%.0f,\"kernel\":\"%s\",\"us_per_pair\":%.2f,"
           "\"target_us\":2,\"one_pair_at_a_time_us\":%.2f,\"scalar_us_per_pair\":%.2f,\"speedup_vs_scalar\":%.1f,"
           "\"base_us_per_pair\":%.2f,\"base_speedup_vs_scalar\":%.1f}\n",
           pairs, s->pair == sc_pair_base ? "base" : "avx2", fast / pairs * 1e6, one / pairs * 1e6,
           ref / pairs * 1e6, ref / fast, base / pairs * 1e6, ref / base);
    if (sink == 0.5) fprintf(stderr, "unlikely\n");
}

int main(void)
{
    static struct cloud c[SCANS];
    static float img[SCANS][1200];
    size_t points;
    if (load(c, &points)) return fprintf(stderr, "bench_scan_context: no synthetic recording\n"), 1;
    double v[4] = {20, 60, 80, 2};
    void *inst;
    uint32_t dim, kd;
    char msg[64];
    if (sc_create(v, &inst, &dim, &kd, msg, sizeof msg) != RV_OK) return 1;
    bench_describe(inst, c, points, img);
    bench_distance(inst, img);
    sc_destroy(inst);
    for (int i = 0; i < SCANS; i++) cloud_free(&c[i]);
    return 0;
}
