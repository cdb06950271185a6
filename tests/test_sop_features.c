/* test_sop_features.c: sop's steps one by one: eigenvalue features worked by
 * hand, F_a unchanged by a turn about z, ground plane, segments, spatial and
 * temporal context, pooling and the power transform. */
#include "harness/plugins/sop/gjk.c"
#include "harness/plugins/sop/ground.c"
#include "harness/plugins/sop/segment.c"
#include "harness/plugins/sop/features.c"
#include "harness/plugins/sop/context.c"
#include "harness/plugins/sop/pool.c"
#include "harness/plugins/sop/sop.c"
#include "tests/check.h"

static struct sop *make(const double *over_key_val, int n_over)
{
    double v[S_COUNT];
    for (int k = 0; k < S_COUNT; k++)
        v[k] = sop_settings[k].def;
    for (int k = 0; k < n_over; k++)
        v[(int)over_key_val[2 * k]] = over_key_val[2 * k + 1];
    void *inst = NULL;
    uint32_t dim, kd;
    char msg[256];
    return sop_new(v, &inst, &dim, &kd, msg, sizeof msg) == RV_OK ? inst : NULL;
}

static unsigned rng_state = 12345;
static double urand(void)
{
    rng_state = rng_state * 1103515245u + 12345u;
    return ((rng_state >> 8) & 0xffffff) / 16777216.0;
}

/* A box of points [x0, x0+sx] x [y0, y0+sy] x [z0, z0+sz]. */
static size_t put_box(float *xyzi, size_t n, double x0, double y0, double z0, double sx,
                      double sy, double sz, size_t cnt)
{
    for (size_t k = 0; k < cnt; k++) {
        float *q = xyzi + 4 * (n + k);
        q[0] = (float)(x0 + sx * urand()), q[1] = (float)(y0 + sy * urand());
        q[2] = (float)(z0 + sz * urand()), q[3] = 0;
    }
    return n + cnt;
}

static void test_eigen(void)
{
    double f[7];
    /* a line: one non-zero eigenvalue -> linearity 1, anisotropy 1, entropy 0
     * (Weinmann et al., ISPRS J. 2015, feature definitions; worked by hand) */
    feat_eigen((double[]){4, 0, 0}, f);
    CHECK(f[0] == 1 && f[1] == 0 && f[2] == 0 && f[4] == 1 && f[5] == 0, "a line is linear");
    /* a disc: e = (1/2, 1/2, 0) -> planarity 1, entropy ln 2 / ln 3 */
    feat_eigen((double[]){2, 2, 0}, f);
    CHECK_NEAR(f[1], 1.0, 1e-15, "a disc is planar");
    CHECK_NEAR(f[5], log(2.0) / log(3.0), 1e-15, "a disc has entropy ln 2 (over ln 3)");
    /* a ball: e = 1/3 each -> scattering 1, omnivariance 1/3, entropy 1, curvature 1/3 */
    feat_eigen((double[]){5, 5, 5}, f);
    CHECK_NEAR(f[2], 1.0, 1e-15, "a ball scatters");
    CHECK_NEAR(f[3], 1.0 / 3, 1e-15, "a ball's omnivariance is 1/3");
    CHECK_NEAR(f[5], 1.0, 1e-15, "a ball has the largest entropy");
    CHECK_NEAR(f[6], 1.0 / 3, 1e-15, "a ball's change of curvature is 1/3");
    feat_eigen((double[]){0, 0, 0}, f);
    CHECK(f[0] == 0 && f[3] == 0 && f[5] == 0, "a single point gives zeros, not NaN");
}

static void test_rotation(void)
{
    struct sop *s = make(NULL, 0);
    enum { N = 700 };
    static float a[4 * N], b[4 * N];
    uint32_t idx[N];
    size_t n = put_box(a, 0, 3, 4, -1.5, 4.0, 1.2, 2.5, 400);
    n = put_box(a, n, 5, 4.5, 0.5, 0.4, 0.4, 3.0, N - 400);  /* an L shape */
    double yaw = 1.234, plane[3] = {0, 0, -1.7};
    for (size_t k = 0; k < n; k++) {
        idx[k] = (uint32_t)k;
        b[4 * k] = (float)(cos(yaw) * a[4 * k] - sin(yaw) * a[4 * k + 1]);
        b[4 * k + 1] = (float)(sin(yaw) * a[4 * k] + cos(yaw) * a[4 * k + 1]);
        b[4 * k + 2] = a[4 * k + 2], b[4 * k + 3] = 0;
    }
    struct sop_seg sa, sb;
    feat_segment(&s->p, a, idx, N, plane, &sa);
    feat_segment(&s->p, b, idx, N, plane, &sb);
    double worst = 0;
    for (int k = 0; k < s->dim; k++)
        worst = fmax(worst, fabs(sa.fa[k] - sb.fa[k]));
    CHECK(worst < 2e-5, "a turn about z leaves every feature of F_a unchanged");
    CHECK_NEAR(sa.fa[9], 5.0 / 10, 0.01, "vertical extent -1.5 to 3.5 m over extent_scale 10");
    double hsum = 0;
    for (int k = 13; k < s->dim; k++)
        hsum += sa.fa[k];
    CHECK_NEAR(hsum, 1.0, 1e-6, "the vertical histogram shares sum to 1");
    CHECK(sa.nv >= 4 && sa.nv <= SOP_HULL_DIRS, "hull has between 4 and 26 vertices");
    sop_free(s);
}

/* A tilted ground z = 0.05 x - 0.02 y - 1.7 with two boxes standing on it. */
static void test_ground_and_segments(void)
{
    struct sop *s = make(NULL, 0);
    enum { N = 9000 };
    static float a[4 * N];
    static uint8_t g[N];
    size_t n = 0;
    for (; n < 6000; n++) {
        double x = -30 + 60 * urand(), y = -30 + 60 * urand();
        a[4 * n] = (float)x, a[4 * n + 1] = (float)y;
        a[4 * n + 2] = (float)(0.05 * x - 0.02 * y - 1.7 + 0.02 * (urand() - 0.5)), a[4 * n + 3] = 0;
    }
    n = put_box(a, n, 10, 5, -0.5, 1, 2.5, 3, 1500); /* ground there is at -1.3 */
    n = put_box(a, n, -8, -6, -0.8, 1, 4, 2, 1500);  /* ground there is at -2.0 */
    double plane[3];
    long ng = ground_remove(&s->p, a, n, plane, g);
    /* the plane the points were drawn from (invented scene, exact by construction) */
    CHECK_NEAR(plane[0], 0.05, 2e-3, "ground slope along x recovered");
    CHECK_NEAR(plane[1], -0.02, 2e-3, "ground slope along y recovered");
    CHECK_NEAR(plane[2], -1.7, 0.02, "ground height recovered");
    CHECK(ng >= 6000 && ng < 6100, "ground points are the plane's points");
    struct seg_set set = {0};
    CHECK(seg_cluster(&s->p, a, n, g, &set) == 0, "clustering runs");
    CHECK(set.n_seg == 2, "two boxes give two segments");
    CHECK(set.n_seg == 2 && set.start[1] - set.start[0] > 1300 && set.start[2] - set.start[1] > 1300,
          "each segment holds its box's points");
    sop_free(s);
    /* min_points above a box's size drops it; max_extent below its width drops it */
    double over[] = {S_MINPTS, 1501};
    s = make(over, 1);
    ground_remove(&s->p, a, n, plane, g);
    seg_cluster(&s->p, a, n, g, &set);
    size_t with_min = set.n_seg;
    sop_free(s);
    double over2[] = {S_MAXEXT, 3.5};
    s = make(over2, 1);
    ground_remove(&s->p, a, n, plane, g);
    seg_cluster(&s->p, a, n, g, &set);
    CHECK(set.n_seg == 1, "max_extent_m drops the 1 x 4 m box, keeps the 1 x 2.5 m one");
    CHECK(with_min == 0, "min_points above 1500 drops both 1500-point boxes");
    sop_free(s);
    seg_set_release(&set);
}

/* Hand-made segments: fa[0] = its id + 1, others 0; hull = one point. */
static void seg_point(struct sop_seg *g, double x, double y, double z, float tag, int dim)
{
    memset(g, 0, sizeof *g);
    g->n = 10, g->c[0] = x, g->c[1] = y, g->c[2] = z, g->nv = 1;
    g->v[0] = x, g->v[1] = y, g->v[2] = z;
    for (int k = 0; k < dim; k++)
        g->fa[k] = k == 0 ? tag : 0.5f * (float)(k % 3);
}

static void test_context(void)
{
    double over[] = {S_KSP, 1};
    struct sop *s = make(over, 1);
    int d = s->dim;
    struct sop_seg g[3];
    seg_point(&g[0], 0, 0, 0, 1, d);
    seg_point(&g[1], 1, 0, 0, 2, d);
    seg_point(&g[2], 5, 0, 0, 3, d);
    double out[3 * SOP_FA_MAX];
    ctx_spatial(&s->p, g, 3, d, out);
    CHECK(out[0] == 2 && out[d] == 1 && out[2 * d] == 2, "k = 1: context is the nearest segment's F_a");
    sop_free(s);
    double over2[] = {S_KSP, 2, S_TEMP, 1.0, S_SELF, 0};  /* earlier scans only */
    s = make(over2, 3);
    ctx_spatial(&s->p, g, 3, d, out);
    /* softmax(-d) of d = 1 and 5: weights 1 / (1 + e^-4) and e^-4 / (1 + e^-4) */
    double w = 1 / (1 + exp(-4.0));
    CHECK_NEAR(out[0], 2 * w + 3 * (1 - w), 1e-12, "softmax(-distance) weights of two neighbours");
    ctx_spatial(&s->p, g, 1, d, out);
    CHECK(out[0] == 0 && out[1] == 0, "a lone segment has zero spatial context");

    /* temporal: first scan has no history; the same scan again matches itself */
    double t0[3 * SOP_FA_MAX], t1[3 * SOP_FA_MAX], t2[3 * SOP_FA_MAX];
    ctx_temporal(&s->p, g, 3, d, &s->hist, t0);
    CHECK(t0[0] == 0 && t0[d] == 0, "no previous scan: zero temporal context");
    ctx_temporal(&s->p, g, 3, d, &s->hist, t1);
    CHECK(t1[0] == 1 && t1[d] == 2 && t1[2 * d] == 3, "an unchanged scan matches each segment to itself");
    struct sop_seg moved[3];
    memcpy(moved, g, sizeof g);
    moved[0].c[0] += 0.3, moved[1].c[0] += 0.3;
    moved[2].c[0] += 50;  /* gone beyond match_max_m */
    ctx_temporal(&s->p, moved, 3, d, &s->hist, t2);
    CHECK(t2[0] == 1 && t2[d] == 2, "moved segments keep their correspondence");
    CHECK(t2[2 * d] == 0 && t2[2 * d + 1] == 0, "a segment with no match keeps zero temporal context");
    CHECK(s->hist.frames[s->hist.head].track[0] == 2, "track counts consecutive matches");
    sop_reset(s);
    ctx_temporal(&s->p, g, 3, d, &s->hist, t0);
    CHECK(t0[0] == 0, "reset forgets the previous scans");
    sop_free(s);

    /* the whole scene moves 4.5 m (the sensor drove on): with the shift
     * estimate every segment finds itself; without it the centroid gate
     * (4 m) pairs segment 1 with segment 2's old place */
    for (int shift_on = 1; shift_on >= 0; shift_on--) {
        double ov[] = {S_SHIFT, shift_on, S_SELF, 0};
        s = make(ov, 2);
        ctx_temporal(&s->p, g, 3, d, &s->hist, t0);
        memcpy(moved, g, sizeof g);
        for (int i = 0; i < 3; i++)
            moved[i].c[0] += 4.5;
        ctx_temporal(&s->p, moved, 3, d, &s->hist, t1);
        int self = t1[0] == 1 && t1[d] == 2 && t1[2 * d] == 3;
        CHECK(shift_on ? self : !self, shift_on ? "ego shift: segments match themselves after 4.5 m"
                                                : "no ego shift: the 4.5 m move breaks the matches");
        sop_free(s);
    }

    /* temporal_self: the segment is pooled with its track, weight 1 + track
     * each: first scan -> its own F_a; second, matched -> (2 F_a + 1 F_a') / 3 */
    s = make(NULL, 0);
    ctx_temporal(&s->p, g, 3, d, &s->hist, t0);
    CHECK(t0[0] == 1 && t0[d] == 2 && t0[1] == g[0].fa[1], "temporal_self: no history gives F_a itself");
    struct sop_seg tweak[3];
    memcpy(tweak, g, sizeof g);
    tweak[0].fa[1] += 0.3f;
    ctx_temporal(&s->p, tweak, 3, d, &s->hist, t1);
    CHECK_NEAR(t1[1], (2 * (double)tweak[0].fa[1] + g[0].fa[1]) / 3, 1e-6,
               "temporal_self: track-weighted mean of the segment and its match");
    sop_free(s);
}

static void test_pool(void)
{
    struct sop *s = make(NULL, 0);
    int d = s->dim;
    struct sop_seg g[2];
    double fb[2 * SOP_FA_MAX], m[SOP_FA_MAX * SOP_FA_MAX];
    seg_point(&g[0], 0, 0, 0, 1, d);
    seg_point(&g[1], 0, 0, 0, -2, d);
    for (int k = 0; k < d; k++)
        fb[k] = 1.0, fb[d + k] = k == 0 ? -1.0 : 0.25;
    pool_second_order(g, fb, 2, d, m);
    /* entry (0,0): max(1 * 1, -2 * -1) = 2; entry (0,1): max(1 * 1, -2 * 0.25) = 1 */
    CHECK(m[0] == 2 && m[1] == 1, "element-wise max of the outer products");
    pool_second_order(g, fb, 0, d, m);
    CHECK(m[0] == 0 && m[d * d - 1] == 0, "no segment pools to zeros");
    sop_free(s);
}

int main(void)
{
    test_eigen();
    test_rotation();
    test_ground_and_segments();
    test_context();
    test_pool();
    return check_done();
}
