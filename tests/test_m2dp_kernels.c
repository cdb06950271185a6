/* test_m2dp_kernels.c: the M2DP plugin's vector binning kernels (float
 * lanes, exact double fallback) against the plain double loop they
 * replaced (tests/m2dp_reference.h): the count matrix, and so the
 * signature, must be identical, for the base, the AVX2 and (where the
 * setting fits it) the folded AVX2 + FMA kernel, on
 * random clouds, on a lattice (many projections exactly on ring and sector
 * edges), and on synthetic scans from `revisit synth` (REVISIT_BIN, in the
 * working folder).  The ring edges found by bisection are checked against
 * the ring formula one double on either side. */
#include <unistd.h>

#include "harness/plugins/m2dp/m2dp.c"
#include "harness/io/recording.h"
#include "tests/check.h"
#include "tests/m2dp_reference.h"

#define SCANS 12

static unsigned rnd_state = 2016;
static int folded;  /* comparisons that ran the folded kernel */
static double rnd(void)
{
    rnd_state = rnd_state * 1103515245u + 12345u;
    return ((rnd_state >> 8) + 0.5) / 16777216.0;
}

/* Count matrices of the reference and of each kernel for one cloud and
 * setting; returns the number of kernels that differ (0 = all equal). */
static int compare(const double *set, const float *xyzi, size_t n)
{
    void *inst;
    uint32_t dim, kd;
    char msg[256];
    if (m2dp_new(set, &inst, &dim, &kd, msg, sizeof msg) != RV_OK) return 99;
    struct m2dp *m = inst;
    size_t cells = (size_t)(m->p * m->q) * (size_t)(m->l * m->t), cap = 3 * (n / m2dp_stride(m, n) + 1);
    double *ref = malloc(sizeof *ref * cells), *got = malloc(sizeof *got * cells), *q = malloc(sizeof *q * cap);
    float *qf = malloc(sizeof *qf * cap);
    uint32_t *hist = malloc(sizeof *hist * M2DP_COPIES * (size_t)(m->l * m->t));
    m2dp_bins_fn kernels[3] = {m2dp_bins_base, m2dp_bins_base, m2dp_bins_base};
#if defined(__x86_64__) || defined(__i386__)
    if (__builtin_cpu_supports("avx2")) kernels[1] = m2dp_bins_avx2;
    if (m2dp_bins_pick(m->l, m->t) == m2dp_fold_avx2) kernels[2] = m2dp_fold_avx2, folded++;
#endif
    int bad = 0;
    size_t used = m2dpref_matrix(m, xyzi, n, ref, q);
    for (int k = 0; k < 3; k++) {
        m->bins = kernels[k];
        bad += m2dp_matrix(m, xyzi, n, got, q, qf, hist) != used || memcmp(ref, got, sizeof *ref * cells) != 0;
    }
    free(ref);
    free(got);
    free(q);
    free(qf);
    free(hist);
    m2dp_free(inst);
    return bad;
}

static const double settings[][SET_COUNT] = {
    {4, 16, 8, 16, 16384}, {4, 16, 8, 16, 0}, {3, 5, 4, 6, 0}, {2, 3, 5, 7, 0}, {4, 16, 64, 256, 0}, {1, 1, 1, 2, 0},
    {3, 4, 1, 8, 0}, {2, 5, 6, 24, 0}, {4, 3, 8, 32, 0}, {2, 2, 3, 40, 0}, {2, 2, 9, 16, 0},
};
#define N_SET (sizeof settings / sizeof *settings)

static void clouds(void)
{
    enum { N = 5003 };
    static float pts[4 * N];
    int bad = 0, lattice_bad = 0;
    for (int c = 0; c < 6; c++) {
        for (size_t k = 0; k < N; k++) {
            double s[3] = {12, 5, 1.5};
            for (int a = 0; a < 3; a++) pts[4 * k + a] = (float)(c % 2 ? -s[a] * log(rnd()) : s[a] * (2 * rnd() - 1));
            pts[4 * k + 3] = 0;
        }
        for (size_t s = 0; s < N_SET; s++) bad += compare(settings[s], pts, N);
    }
    CHECK(bad == 0, "random clouds, six settings: count matrices equal the double loop's, both kernels");
    for (size_t k = 0; k < N; k++) {  /* a skewed integer lattice: projections on bin edges */
        pts[4 * k] = (float)(k % 17) + (k % 3 == 0 ? 20 : 0);
        pts[4 * k + 1] = (float)((k / 17) % 13);
        pts[4 * k + 2] = (float)(k % 5 == 0 ? (k / 221) % 7 : 0);
    }
    for (size_t s = 0; s < N_SET; s++) lattice_bad += compare(settings[s], pts, N);
    CHECK(lattice_bad == 0, "an integer lattice, six settings: count matrices equal the double loop's");
    int knot_bad = 0;
    for (int c = 0; c < 4; c++) {  /* a needle 1 km long through the centroid, 0.1 m thick */
        for (size_t k = 0; k < N; k++) {
            pts[4 * k] = (float)(20000 * (rnd() - 0.5));
            pts[4 * k + 1] = (float)(8.0 * (c + 1) * (rnd() - 0.5));
            pts[4 * k + 2] = (float)(4.0 * (c + 1) * (rnd() - 0.5) + (k % 7 == 0 ? 3 : 0));
        }
        for (size_t s = 0; s < N_SET; s++) knot_bad += compare(settings[s], pts, N);
    }
    CHECK(knot_bad == 0, "a needle (tiny projections, far points): count matrices equal the double loop's");
}

static void scans(void)
{
    const char *bin = getenv("REVISIT_BIN");
    char cmd[4200];
    struct recording rec;
    struct err e;
    int ok = snprintf(cmd, sizeof cmd, "%s synth --scenario port --scans %d --out rec --quiet >/dev/null 2>&1",
                      bin ? bin : "revisit", SCANS) < (int)sizeof cmd;
    ok = ok && !(access("rec/recording.json", R_OK) && system(cmd)) && !recording_load("rec", 0, &rec, &e);
    CHECK(ok, "revisit synth gives port scans");
    if (!ok) return;
    struct cloud c;
    cloud_init(&c);
    int bad = 0, loaded = 0;
    for (size_t i = 0; i < rec.n && i < SCANS; i++) {
        if (recording_load_scan(&rec, i, &c, NULL, &e)) continue;
        loaded++;
        for (size_t s = 0; s < 3; s++) bad += compare(settings[s], c.pts, c.n);
    }
    CHECK(loaded == SCANS && bad == 0, "synthetic scans: count matrices equal the double loop's, both kernels");
    cloud_free(&c);
    recording_free(&rec);
}

/* Edge j is the first double with ring >= j: the double below it is in
 * ring j - 1 (ring formula of the plain loop, common practice, no source). */
static void edges(void)
{
    int bad = 0;
    for (int l = 1; l <= M2DP_MAX_RINGS; l *= 2)
        for (double rmax = 0.01; rmax < 1e4; rmax *= 7.3) {
            double inv_r0 = (double)l * l / rmax, edge[M2DP_MAX_RINGS];
            m2dp_ring_edges(l, inv_r0, edge);
            for (int j = 1; j < l; j++) {
                double below = nextafter(edge[j], 0);
                bad += !((int)sqrt(sqrt(edge[j]) * inv_r0) >= j && (int)sqrt(sqrt(below) * inv_r0) < j);
            }
        }
    CHECK(bad == 0, "ring edges: the smallest squared radius of each ring, to the last double");
}

int main(void)
{
    clouds();
    scans();
    edges();
#if defined(__x86_64__) || defined(__i386__)
    if (__builtin_cpu_supports("avx2") && __builtin_cpu_supports("fma"))
        CHECK(folded > 0, "the folded kernel ran (a CPU with AVX2 and FMA, settings of 8 to 32 sectors)");
#endif
    return check_done();
}
