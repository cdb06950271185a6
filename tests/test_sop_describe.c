/* test_sop_describe.c: sop end to end on cast scans of an invented street:
 * segment order does not matter (bit for bit), empty and all-ground scans
 * give a defined descriptor and a warning count, ablation switches act,
 * a turned sensor stays close, bad settings are refused with a message. */
#include "harness/plugins/sop/gjk.c"
#include "harness/plugins/sop/ground.c"
#include "harness/plugins/sop/segment.c"
#include "harness/plugins/sop/features.c"
#include "harness/plugins/sop/context.c"
#include "harness/plugins/sop/pool.c"
#include "harness/plugins/sop/sop.c"
#include "tests/check.h"
#include "tests/test_sop_scene.h"

#define CAP (SCENE_CHANNELS * SCENE_AZIMUTHS)

static void *make2(double key, double val, double key2, double val2, uint32_t *dim)
{
    double v[S_COUNT];
    for (int k = 0; k < S_COUNT; k++)
        v[k] = sop_settings[k].def;
    if (key >= 0)
        v[(int)key] = val;
    if (key2 >= 0)
        v[(int)key2] = val2;
    void *inst = NULL;
    uint32_t kd;
    char msg[256];
    return sop_new(v, &inst, dim, &kd, msg, sizeof msg) == RV_OK ? inst : NULL;
}

static void *make(double key, double val, uint32_t *dim)
{
    return make2(key, val, -1, 0, dim);
}

static double dist(const float *a, const float *b, uint32_t n)
{
    double s = 0;
    for (uint32_t k = 0; k < n; k++)
        s += ((double)a[k] - b[k]) * ((double)a[k] - b[k]);
    return sqrt(s);
}

/* Two consecutive scans described from segments, in given and in reversed
 * segment order: the descriptors must be equal bit for bit. */
static void test_permutation(const struct scene *w, float *pts)
{
    uint32_t dim;
    struct sop *s = make(-1, 0, &dim);
    float *d = malloc(4 * dim), *ref = malloc(4 * dim), *alt = malloc(4 * dim);
    struct sop_seg *keep[2] = {NULL, NULL};
    size_t nk[2];
    char msg[256];
    for (int f = 0; f < 2; f++) {
        struct rv_scan sc = {scene_scan(w, 2.0 * f, 0.3, 0.1, pts, CAP), pts, NULL, NULL, f, (uint32_t)f, 0};
        sop_run(s, &sc, d, NULL, msg, sizeof msg);
        nk[f] = s->set.n_seg;
        keep[f] = malloc(sizeof **keep * nk[f]);
        memcpy(keep[f], s->segs, sizeof **keep * nk[f]);
    }
    CHECK(nk[0] > 10 && nk[1] > 10, "the street scan has segments");
    sop_reset(s);
    sop_from_segments(s, keep[0], nk[0], ref, NULL, msg, sizeof msg);
    sop_from_segments(s, keep[1], nk[1], ref, NULL, msg, sizeof msg);
    for (int f = 0; f < 2; f++)
        for (size_t i = 0; i < nk[f] / 2; i++) {
            struct sop_seg t = keep[f][i];
            keep[f][i] = keep[f][nk[f] - 1 - i], keep[f][nk[f] - 1 - i] = t;
        }
    sop_reset(s);
    sop_from_segments(s, keep[0], nk[0], alt, NULL, msg, sizeof msg);
    sop_from_segments(s, keep[1], nk[1], alt, NULL, msg, sizeof msg);
    CHECK(memcmp(ref, alt, 4 * dim) == 0, "reversing the segments leaves the descriptor bit-identical");
    double nrm = 0;
    for (uint32_t k = 0; k < dim; k++)
        nrm += (double)ref[k] * ref[k];
    CHECK_NEAR(nrm, 1.0, 1e-5, "the descriptor is L2-normalised");
    /* one segment and F_b = F_a: the pooled matrix F_a F_a^T has rank 1, so
     * the power transform only scales it; after normalisation on and off agree */
    struct sop *pw = make(S_CONTEXT, SOP_CTX_NONE, &dim);
    struct sop *np = make2(S_CONTEXT, SOP_CTX_NONE, S_POWER, 0, &dim);
    sop_from_segments(pw, keep[0], 1, ref, NULL, msg, sizeof msg);
    sop_from_segments(np, keep[0], 1, alt, NULL, msg, sizeof msg);
    CHECK(dist(ref, alt, dim) < 1e-5, "rank one: power transform changes nothing after normalising");
    CHECK(dist(ref, (float[SOP_FA_MAX * SOP_FA_MAX]){0}, dim) > 0.5, "rank one: not the zero vector");
    sop_from_segments(pw, keep[0], nk[0], ref, NULL, msg, sizeof msg);
    sop_from_segments(np, keep[0], nk[0], alt, NULL, msg, sizeof msg);
    CHECK(dist(ref, alt, dim) > 1e-3, "many segments: the power transform changes the descriptor");
    sop_free(pw);
    sop_free(np);
    struct sop *a1 = make(S_ALPHA, 1.0, &dim);
    np = make(S_POWER, 0, &dim);
    sop_from_segments(a1, keep[0], nk[0], ref, NULL, msg, sizeof msg);
    sop_from_segments(np, keep[0], nk[0], alt, NULL, msg, sizeof msg);
    CHECK(dist(ref, alt, dim) < 1e-5, "alpha = 1 equals no transform");
    sop_free(np);
    sop_free(a1);
    free(keep[0]), free(keep[1]), free(d), free(ref), free(alt);
    sop_free(s);
}

static void test_empty(float *pts)
{
    uint32_t dim;
    const struct rv_method *m = rv_method_entry();
    struct sop *s = make(-1, 0, &dim);
    float *d = malloc(4 * dim);
    char msg[256] = "";
    struct rv_scan empty = {0, pts, NULL, NULL, 0, 0, 0};
    for (uint32_t k = 0; k < dim; k++)
        d[k] = 7;
    CHECK(m->describe(s, &empty, d, NULL, msg, sizeof msg) == RV_OK, "an empty scan is not an error");
    CHECK(dist(d, (float[SOP_FA_MAX * SOP_FA_MAX]){0}, dim) == 0, "an empty scan gives zeros");
    CHECK(s->empty_scans == 1, "an empty scan is counted");
    CHECK_MSG(msg, "no segments after ground removal", "the warning says why");
    size_t n = 0;
    for (int i = -20; i < 20; i++)  /* a flat floor only */
        for (int j = -20; j < 20; j++, n++)
            pts[4 * n] = (float)i, pts[4 * n + 1] = (float)j, pts[4 * n + 2] = -1.7f, pts[4 * n + 3] = 0;
    struct rv_scan flat = {n, pts, NULL, NULL, 0, 1, 0};
    CHECK(m->describe(s, &flat, d, NULL, msg, sizeof msg) == RV_OK, "an all-ground scan is not an error");
    CHECK(s->empty_scans == 2, "an all-ground scan is counted");
    uint32_t nonzero = 0;
    for (uint32_t k = 0; k < dim; k++)
        nonzero += d[k] != 0;
    CHECK(nonzero == 0, "an all-ground scan gives zeros");
    /* non-finite points are skipped by every step: same descriptor as without them */
    static float clean[4 * 3000], dirty[4 * 3003];
    size_t nc = 0, nd = 0;
    for (int i = 0; i < 3000; i++, nc++) {  /* a floor and a 2 m post */
        int post = i >= 2000;
        clean[4 * nc] = post ? 5.0f + 0.001f * (i % 10) : (float)(i % 50) - 25;
        clean[4 * nc + 1] = post ? 3.0f + 0.001f * (i % 7) : (float)(i / 50) - 20;
        clean[4 * nc + 2] = post ? -1.5f + 0.002f * (i - 2000) : -1.7f, clean[4 * nc + 3] = 0;
    }
    for (size_t k = 0; k < nc; k++) {
        if (k == 10 || k == 2500 || k == 2999)
            for (int c = 0; c < 4; c++)
                dirty[4 * nd + c] = c == (int)(k % 3) ? (k == 2500 ? INFINITY : NAN) : 1.0f, nd += c == 3;
        memcpy(dirty + 4 * nd++, clean + 4 * k, 16);
    }
    float *dc = malloc(4 * dim);
    struct rv_scan sc_clean = {nc, clean, NULL, NULL, 0, 0, 0}, sc_dirty = {nd, dirty, NULL, NULL, 0, 0, 0};
    m->reset(s);
    m->describe(s, &sc_clean, d, NULL, msg, sizeof msg);
    m->reset(s);
    m->describe(s, &sc_dirty, dc, NULL, msg, sizeof msg);
    CHECK(nd == nc + 3 && memcmp(d, dc, 4 * dim) == 0 && dist(d, (float[SOP_FA_MAX * SOP_FA_MAX]){0}, dim) > 0.5,
          "NaN and Inf points change nothing");
    free(dc);
    free(d);
    m->destroy(s);
}

static void test_scans(const struct scene *w, float *pts)
{
    uint32_t dim;
    const struct rv_method *m = rv_method_entry();
    CHECK((m->flags & RV_FLAG_SEQUENTIAL) && m->reset, "sop is sequential with a reset");
    CHECK(m->n_settings <= 32 && m->distance == RV_DIST_L2, "schema fits the host; L2 distance");
    void *s = make(-1, 0, &dim);
    CHECK(dim == 17 * 17, "default descriptor is D x D with D = 17");
    float *a = malloc(4 * dim), *b = malloc(4 * dim), *c = malloc(4 * dim);
    char msg[256];
    struct rv_scan sc = {scene_scan(w, 0, 0, 0, pts, CAP), pts, NULL, NULL, 0, 0, 0};
    m->describe(s, &sc, a, NULL, msg, sizeof msg);
    m->reset(s);
    sc.n = scene_scan(w, 0, 0, 2.1, pts, CAP);
    m->describe(s, &sc, b, NULL, msg, sizeof msg);
    for (int far = 20; far <= 60; far += 40) {
        m->reset(s);
        sc.n = scene_scan(w, far, 0, 0, pts, CAP);
        m->describe(s, &sc, c, NULL, msg, sizeof msg);
        CHECK(dist(a, b, dim) < dist(a, c, dim),
              "a sensor turned in place stays closer than a place 20 or 60 m away");
    }
    m->destroy(s);
    /* each ablation mode on the second scan of a sequence differs from the full method */
    const char *modes[4] = {"both", "context spatial differs", "context temporal differs",
                            "context none differs"};
    for (int k = 0; k < 4; k++) {
        void *t = make(S_CONTEXT, k, &dim);
        for (int f = 0; f < 2; f++) {
            sc.n = scene_scan(w, 2.0 * f, 0, 0, pts, CAP);
            m->describe(t, &sc, k ? b : a, NULL, msg, sizeof msg);
        }
        if (k)
            CHECK(dist(a, b, dim) > 1e-3, modes[k]);
        m->destroy(t);
    }
    double v[S_COUNT];
    for (int k = 0; k < S_COUNT; k++)
        v[k] = sop_settings[k].def;
    v[S_MINPTS] = 500, v[S_MAXPTS] = 100;
    void *bad = NULL;
    uint32_t kd;
    CHECK(m->create(v, &bad, &dim, &kd, msg, sizeof msg) == RV_ERR_INPUT && !bad,
          "min_points above max_points is refused");
    CHECK_MSG(msg, "expected min_points <= max_points", "the refusal names both settings");
    free(a), free(b), free(c);
}

int main(void)
{
    static struct scene w;
    static float pts[4 * CAP];
    scene_make(&w, 7);
    test_permutation(&w, pts);
    test_empty(pts);
    test_scans(&w, pts);
    return check_done();
}
