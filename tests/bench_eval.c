/* bench_eval.c: describe throughput per built-in method, retrieval speed
 * against a bare sgemm, and the wall time of one eval on a synthetic port
 * recording.  One JSON line per figure; each carries a ratio to a reference
 * measured in the same run (machines are shared):
 *   point pass     one read of every point of every scan (describe figures)
 *   sgemm          one cblas_sgemm of the same shape as the retrieval
 *                  on all cores (target: retrieval reaches >= 0.7 of its GFLOP/s),
 *                  and on one thread for the CPU-time ratio (process CPU
 *                  seconds of both, which a loaded machine distorts less)
 *   scan load      reading every scan of the recording once (eval figure) */
#include <cblas.h>
#include <math.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>
#include <time.h>
#include <unistd.h>

#include "harness/base/blas.h"
#include "harness/run/eval.h"
#include "harness/run/plugin_host.h"
#include "harness/base/progress.h"
#include "harness/io/recording.h"
#include "harness/run/retrieval.h"

#define BE_SCANS 120

struct be_scans {
    struct cloud *c;
    size_t n, points;
};

static int be_load(const struct recording *r, struct be_scans *s, double *secs, struct err *e)
{
    s->n = r->n < BE_SCANS ? r->n : BE_SCANS;
    s->c = calloc(s->n, sizeof *s->c);
    s->points = 0;
    double t0 = progress_now();
    for (size_t i = 0; i < s->n; i++) {
        cloud_init(&s->c[i]);
        if (recording_load_scan(r, i, &s->c[i], NULL, e)) return -1;
        s->points += s->c[i].n;
    }
    *secs = progress_now() - t0;
    return 0;
}

static double be_point_pass(const struct be_scans *s)
{
    double best = INFINITY, sink = 0;
    for (int round = 0; round < 5; round++) {
        double t0 = progress_now();
        for (size_t i = 0; i < s->n; i++)
            for (size_t k = 0; k < s->c[i].n; k++) sink += s->c[i].pts[4 * k] * s->c[i].pts[4 * k + 2];
        best = fmin(best, progress_now() - t0);
    }
    return best + (sink == 1234.5 ? 1e-9 : 0);
}

static void be_describe(const char *method, const struct be_scans *s, double ref)
{
    struct plugin p;
    struct err e;
    if (plugin_open(&p, method, NULL, &e)) {
        printf("{\"bench\":\"describe\",\"method\":\"%s\",\"error\":\"not loaded\"}\n", method);
        return;
    }
    float *d = malloc(p.dim * sizeof *d), *k = malloc((p.key_dim + 1) * sizeof *k);
    double t0 = progress_now();
    int bad = 0;
    for (size_t i = 0; i < s->n && !bad; i++) {
        struct rv_scan sc = {s->c[i].n, s->c[i].pts, s->c[i].ring, s->c[i].time, 0, (uint32_t)i, 0};
        bad = plugin_describe(&p, &sc, d, k, &e);
    }
    double t = progress_now() - t0;
    printf("{\"bench\":\"describe\",\"method\":\"%s\",\"scans\":%zu,\"points_per_scan\":%zu,"
           "\"scans_per_s\":%.1f,\"ratio_to_point_pass\":%.1f%s}\n",
           method, s->n, s->points / s->n, s->n / t, t / ref, bad ? ",\"error\":\"describe failed\"" : "");
    free(d);
    free(k);
    plugin_close(&p);
}

/* Process CPU seconds (every thread). */
static double be_cpu_now(void)
{
    struct timespec t;
    clock_gettime(CLOCK_PROCESS_CPUTIME_ID, &t);
    return (double)t.tv_sec + 1e-9 * (double)t.tv_nsec;
}

static void be_sgemm(const float *q, const float *m, float *c, size_t n, uint32_t dim)
{
    cblas_sgemm(CblasRowMajor, CblasNoTrans, CblasTrans, (int)n, (int)n, (int)dim, 1.0f, q, (int)dim, m, (int)dim,
                0.0f, c, (int)n);
}

static void be_retrieval(void)
{
    const size_t n = 4000;
    const uint32_t dim = 256;
    float *m = malloc(n * dim * sizeof *m), *q = malloc(n * dim * sizeof *q), *c = malloc(n * n * sizeof *c);
    unsigned s = 1;
    for (size_t i = 0; i < n * dim; i++) {
        s = s * 1103515245u + 12345u;
        m[i] = (float)((s >> 8) / 16777216.0 - 0.5);
        s = s * 1103515245u + 12345u;
        q[i] = (float)((s >> 8) / 16777216.0 - 0.5);
    }
    double ts = INFINITY, tr = INFINITY, cs = INFINITY, cr = INFINITY;
    struct retrieval_mat mm = {m, n, dim}, qm = {q, n, dim};
    struct retrieval_rule rule = {0, NULL, 0, -1, NULL};
    struct err e;
    int threads = blas_threads();
    for (int round = 0; round < 5; round++) {
        double t0 = progress_now();
        be_sgemm(q, m, c, n, dim);
        ts = fmin(ts, progress_now() - t0);
        blas_set_threads(1);
        t0 = be_cpu_now();
        be_sgemm(q, m, c, n, dim);
        cs = fmin(cs, be_cpu_now() - t0);
        blas_set_threads(threads);
        struct retrieval_out r;
        t0 = progress_now();
        double c0 = be_cpu_now();
        if (retrieval_dense(&mm, &qm, RV_DIST_L2, &rule, 25, 0, &r, &e)) break;
        tr = fmin(tr, progress_now() - t0);
        cr = fmin(cr, be_cpu_now() - c0);
        retrieval_out_free(&r);
    }
    double flop = 2.0 * n * n * dim;
    printf("{\"bench\":\"retrieval\",\"map\":%zu,\"queries\":%zu,\"dim\":%u,\"top_k\":25,\"gflops\":%.2f,"
           "\"sgemm_gflops\":%.2f,\"ratio_to_sgemm\":%.2f,\"cpu_ratio_to_sgemm\":%.2f,\"target\":0.7}\n",
           n, n, dim, flop / tr * 1e-9, flop / ts * 1e-9, ts / tr, cs / cr);
    free(m);
    free(q);
    free(c);
}

static void be_eval(double load_s)
{
    struct eval_spec s;
    struct eval_summary sum;
    struct err e;
    eval_spec_defaults(&s);
    s.map_rec = "rec";
    s.method = "scan-context";
    s.out_dir = "out";
    s.quiet = 1;
    double t0 = progress_now();
    int rc = eval_run(&s, &sum, &e);
    double t = progress_now() - t0;
    printf("{\"bench\":\"eval\",\"method\":\"scan-context\",\"scans\":%zu,\"bootstrap\":1000,\"wall_s\":%.2f,"
           "\"describe_s\":%.2f,\"retrieval_s\":%.2f,\"metrics_s\":%.2f,\"ratio_to_scan_load\":%.1f%s}\n",
           sum.queries, t, sum.describe_s, sum.retrieval_s, sum.metrics_s, t / load_s,
           rc ? ",\"error\":\"eval failed\"" : "");
}

int main(void)
{
    const char *bin = getenv("REVISIT_BIN");
    char cmd[4200];
    snprintf(cmd, sizeof cmd, "%s synth --scenario port --scans %d --out rec --quiet >/dev/null",
             bin ? bin : "revisit", BE_SCANS);
    if (access("rec/recording.json", R_OK) && system(cmd)) return fprintf(stderr, "bench_eval: %s failed\n", cmd), 1;
    struct recording r;
    struct err e;
    struct be_scans s;
    double load_s;
    if (recording_load("rec", 0, &r, &e) || be_load(&r, &s, &load_s, &e))
        return fprintf(stderr, "bench_eval: %s\n", e.msg), 1;
    double ref = be_point_pass(&s);
    static const char *const methods[] = {"scan-context", "range-height", "m2dp", "sop"};
    for (size_t k = 0; k < sizeof methods / sizeof *methods; k++) be_describe(methods[k], &s, ref);
    be_retrieval();
    be_eval(load_s);
    for (size_t i = 0; i < s.n; i++) cloud_free(&s.c[i]);
    free(s.c);
    recording_free(&r);
    return 0;
}
