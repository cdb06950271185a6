/* bench_methods.c: describe speed of the M2DP and sop plugins on a cast
 * 32-channel scan, M2DP on synthetic port scans (`revisit synth`, in the
 * working folder) against the plain double binning loop it replaced
 * (tests/m2dp_reference.h), sop's time per step, and GJK hull-pair
 * throughput.
 * One JSON line per figure on stdout; every time is the best of several
 * rounds of thread CPU time, and each figure carries a ratio to a reference
 * measured in the same run:
 *   point pass   centroid and covariance of the scan, one read of every point
 *   support pair the two support-point scans that one GJK iteration needs
 * OpenBLAS is held to one thread, so figures are per core. */
#include <time.h>
#include "harness/plugins/sop/gjk.c"
#include "harness/plugins/sop/ground.c"
#include "harness/plugins/sop/segment.c"
#include "harness/plugins/sop/features.c"
#include "harness/plugins/sop/context.c"
#include "harness/plugins/sop/pool.c"
#include "harness/plugins/sop/sop.c"
#define rv_method_entry m2dp_entry
#include "harness/plugins/m2dp/m2dp.c"
#undef rv_method_entry
#include "harness/io/recording.h"
#include "tests/m2dp_reference.h"
#include "tests/test_sop_scene.h"
#include <unistd.h>

void openblas_set_num_threads(int);

#define CAP (SCENE_CHANNELS * SCENE_AZIMUTHS)
#define ROUNDS 7

static double cpu_now(void)
{
    struct timespec ts;
    clock_gettime(CLOCK_THREAD_CPUTIME_ID, &ts);
    return (double)ts.tv_sec + 1e-9 * (double)ts.tv_nsec;
}

/* Reference: one pass over the points (centroid and covariance). */
static double point_pass(const float *xyzi, size_t n, double *sink)
{
    double best = INFINITY;
    for (int r = 0; r < ROUNDS; r++) {
        double t0 = cpu_now(), s[9] = {0};
        for (size_t k = 0; k < n; k++)
            for (int a = 0; a < 3; a++)
                for (int b = 0; b < 3; b++)
                    s[a * 3 + b] += (double)xyzi[4 * k + a] * xyzi[4 * k + b];
        best = fmin(best, cpu_now() - t0);
        *sink += s[0] + s[4] + s[8];
    }
    return best;
}

static void bench_m2dp(const float *pts, size_t n, double ref)
{
    double v[SET_COUNT];
    for (int k = 0; k < SET_COUNT; k++)
        v[k] = m2dp_settings[k].def;
    for (int all = 0; all < 2; all++) {
        v[SET_MAXPTS] = all ? 0 : m2dp_settings[SET_MAXPTS].def;
        void *inst;
        uint32_t dim, kd;
        char msg[256];
        m2dp_new(v, &inst, &dim, &kd, msg, sizeof msg);
        float *d = malloc(sizeof *d * dim);
        struct rv_scan sc = {n, pts, NULL, NULL, 0, 0, 0};
        double best = INFINITY;
        for (int r = 0; r < ROUNDS; r++) {
            double t0 = cpu_now();
            m2dp_describe(inst, &sc, d, NULL, msg, sizeof msg);
            best = fmin(best, cpu_now() - t0);
        }
        printf("{\"bench\":\"m2dp_describe\",\"points\":%zu,\"max_points\":%.0f,\"ms\":%.3f,"
               "\"target_ms\":5,\"ratio_to_point_pass\":%.1f}\n",
               n, v[SET_MAXPTS], best * 1e3, best / ref);
        free(d);
        m2dp_free(inst);
    }
}

/* M2DP on port scans: the describe time per scan with the defaults, and
 * the count-matrix time of the kernel against the plain loop.  dense:
 * scans of about 27k points, from the 32-channel sensor with a 0.3 degree
 * azimuth step (a copy of scenarios/sensors/spin32.json made here) instead
 * of its 0.4 degrees (about 21k points). */
static void bench_m2dp_port(int dense)
{
    enum { SCANS = 8 };
    const char *bin = getenv("REVISIT_BIN"), *root = getenv("REVISIT_ROOT"), *out = dense ? "rec27k" : "rec";
    char cmd[8400], sensor[4200] = "";
    struct recording rec;
    struct err e;
    int bad = 0;
    if (dense) {
        bad = snprintf(cmd, sizeof cmd, "sed 's/\"azimuth_step_deg\": 0.4,/\"azimuth_step_deg\": 0.3,/' "
                       "'%s/scenarios/sensors/spin32.json' > dense32.json", root ? root : ".") >= (int)sizeof cmd
              || system(cmd);
        snprintf(sensor, sizeof sensor, " --sensor dense32.json");
    }
    if (bad || snprintf(cmd, sizeof cmd, "%s synth --scenario port --scans %d%s --out %s --quiet >/dev/null",
                        bin ? bin : "revisit", SCANS, sensor, out) >= (int)sizeof cmd
        || system(cmd) || recording_load(out, 0, &rec, &e)) {
        printf("{\"bench\":\"m2dp_port\",\"error\":\"no synthetic recording\"}\n");
        return;
    }
    double v[SET_COUNT];
    for (int k = 0; k < SET_COUNT; k++)
        v[k] = m2dp_settings[k].def;
    void *inst;
    uint32_t dim, kd;
    char msg[256];
    m2dp_new(v, &inst, &dim, &kd, msg, sizeof msg);
    struct m2dp *m = inst;
    struct cloud c;
    cloud_init(&c);
    size_t cells = (size_t)(m->p * m->q) * (size_t)(m->l * m->t), points = 0;
    double *a = malloc(sizeof *a * cells), *q = NULL, t_desc = 0, t_new = 0, t_old = 0;
    float *qf = NULL, d[192];
    uint32_t *hist = malloc(sizeof *hist * M2DP_COPIES * (size_t)(m->l * m->t));
    for (size_t i = 0; i < rec.n && i < SCANS && !recording_load_scan(&rec, i, &c, NULL, &e); i++) {
        size_t cap = 3 * (c.n / m2dp_stride(m, c.n) + 1);
        q = realloc(q, sizeof *q * cap);
        qf = realloc(qf, sizeof *qf * cap);
        struct rv_scan sc = {c.n, c.pts, NULL, NULL, 0, (uint32_t)i, 0};
        double bd = INFINITY, bn = INFINITY, bo = INFINITY;
        for (int r = 0; r < ROUNDS; r++) {
            double t0 = cpu_now();
            m2dp_describe(inst, &sc, d, NULL, msg, sizeof msg);
            bd = fmin(bd, cpu_now() - t0);
            t0 = cpu_now();
            m2dp_matrix(m, c.pts, c.n, a, q, qf, hist);
            bn = fmin(bn, cpu_now() - t0);
            t0 = cpu_now();
            m2dpref_matrix(m, c.pts, c.n, a, q);
            bo = fmin(bo, cpu_now() - t0);
        }
        t_desc += bd, t_new += bn, t_old += bo, points += c.n;
    }
    const char *kernel = m->bins == m2dp_bins_base ? "base" : m->bins == m2dp_bins_avx2 ? "avx2" : "fold-avx2-fma";
    printf("{\"bench\":\"m2dp_port\",\"scans\":%d,\"points_per_scan\":%zu,\"kernel\":\"%s\",\"ms\":%.3f,"
           "\"target_ms\":5,\"bins_ms\":%.3f,\"plain_bins_ms\":%.3f,\"bins_speedup_vs_plain\":%.2f}\n",
           SCANS, points / SCANS, kernel, t_desc * 1e3 / SCANS, t_new * 1e3 / SCANS, t_old * 1e3 / SCANS,
           t_old / t_new);
    free(a), free(q), free(qf), free(hist);
    cloud_free(&c);
    recording_free(&rec);
    m2dp_free(inst);
}

static void bench_sop(const struct scene *w, float *pts, double ref, size_t n0)
{
    double v[S_COUNT];
    for (int k = 0; k < S_COUNT; k++)
        v[k] = sop_settings[k].def;
    void *inst;
    uint32_t dim, kd;
    char msg[256];
    sop_new(v, &inst, &dim, &kd, msg, sizeof msg);
    struct sop *s = inst;
    float *d = malloc(sizeof *d * dim);
    double best = INFINITY, steps[SOP_T_COUNT] = {0}, sum = 0;
    size_t npts = 0;
    for (int r = 0; r < ROUNDS; r++) {  /* a moving sensor, so the temporal context works */
        struct rv_scan sc = {scene_scan(w, 1.5 * r, 0.2, 0.1, pts, CAP), pts, NULL, NULL, 0, (uint32_t)r, 0};
        double t[SOP_T_COUNT] = {0}, t0 = cpu_now();
        sop_run(s, &sc, d, t, msg, sizeof msg);
        double el = cpu_now() - t0;
        if (el < best) {
            best = el, npts = sc.n;
            memcpy(steps, t, sizeof t);
        }
    }
    for (int k = 0; k < SOP_T_COUNT; k++)
        sum += steps[k];
    printf("{\"bench\":\"sop_describe\",\"points\":%zu,\"segments\":%zu,\"ms\":%.3f,\"target_ms\":40,"
           "\"ratio_to_point_pass\":%.1f,\"share_ground\":%.3f,\"share_segment\":%.3f,"
           "\"share_features\":%.3f,\"share_context\":%.3f,\"share_pool\":%.3f}\n",
           npts, s->set.n_seg, best * 1e3, best / ref * (double)n0 / (double)npts,
           steps[0] / sum, steps[1] / sum, steps[2] / sum, steps[3] / sum, steps[4] / sum);
    free(d);
    sop_free(s);
}

/* GJK on pairs of 30-vertex hulls (points on ellipsoids, all of them hull
 * vertices), a quarter of the pairs overlapping. */
static void bench_gjk(void)
{
    enum { HULLS = 512, NV = 30, PAIRS = 20000 };
    static double v[HULLS][3 * NV];
    unsigned s = 99;
    for (int h = 0; h < HULLS; h++) {
        double c[3], ax[3];
        for (int a = 0; a < 3; a++)
            c[a] = 40 * scene_rand(&s) - 20, ax[a] = 0.3 + 3 * scene_rand(&s);
        for (int k = 0; k < NV; k++) {
            double z = 2 * scene_rand(&s) - 1, ph = 2 * M_PI * scene_rand(&s), r = sqrt(1 - z * z);
            v[h][3 * k] = c[0] + ax[0] * r * cos(ph);
            v[h][3 * k + 1] = c[1] + ax[1] * r * sin(ph);
            v[h][3 * k + 2] = c[2] + ax[2] * z;
        }
    }
    double best = INFINITY, best_ref = INFINITY, sink = 0;
    for (int r = 0; r < ROUNDS; r++) {
        double t0 = cpu_now();
        for (int p = 0; p < PAIRS; p++)
            sink += gjk_distance(v[p % HULLS], NV, v[(p * 7 + 1) % HULLS], NV);
        best = fmin(best, cpu_now() - t0);
        t0 = cpu_now();
        for (int p = 0; p < PAIRS; p++) {
            double d[3] = {p % 3 - 1.0, p % 5 - 2.0, 0.5};
            const double *a = gjk_support(v[p % HULLS], NV, d);
            d[0] = -d[0], d[1] = -d[1], d[2] = -d[2];
            sink += a[0] + gjk_support(v[(p * 7 + 1) % HULLS], NV, d)[1];
        }
        best_ref = fmin(best_ref, cpu_now() - t0);
    }
    printf("{\"bench\":\"gjk_pairs\",\"vertices\":%d,\"pairs_per_s\":%.0f,\"target_pairs_per_s\":1000000,"
           "\"ratio_to_support_pair\":%.1f}\n", NV, PAIRS / best, best / best_ref);
    if (sink == 12345.678)
        fprintf(stderr, "unlikely\n");
}

int main(void)
{
    static struct scene w;
    static float pts[4 * CAP];
    double sink = 0;
    openblas_set_num_threads(1);
    scene_make(&w, 7);
    size_t n = scene_scan(&w, 0, 0.2, 0.1, pts, CAP);
    double ref = point_pass(pts, n, &sink);
    printf("{\"bench\":\"point_pass\",\"points\":%zu,\"ms\":%.3f}\n", n, ref * 1e3);
    bench_m2dp(pts, n, ref);
    bench_m2dp_port(0);
    bench_m2dp_port(1);
    bench_sop(&w, pts, ref, n);
    bench_gjk();
    return sink == 0.5 ? 1 : 0;
}
