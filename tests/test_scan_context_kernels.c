/* test_scan_context_kernels.c: the Scan Context plugin's fast kernels
 * against the plain ones they replaced (tests/sc_reference.h).
 *
 *   distance  correlation kernel vs. the scalar loop: within 1e-12 and the
 *             same best shift, on random images and on every pair of real
 *             scans; the AVX2 and the base kernel bit for bit equal, one
 *             pair at a time or one query against many; a copy turned by
 *             whole sectors at distance exactly 0; the float pass within
 *             the bound that picks the shifts the double pass computes
 *   image     boundary comparisons vs. atan2 binning: identical images and
 *             keys on synthetic scans; points on and beside boundaries land
 *             where sc_image.c's rule says; the AVX2 and the base image
 *             kernel equal to an image built point by point from the walk
 *             over every boundary, on scans, boundaries, ring edges, axes
 * Real scans come from `revisit synth` (REVISIT_BIN) in the working folder. */
#include <stdio.h>
#include <stdlib.h>
#include <unistd.h>

#include "harness/plugins/scan-context/scan_context.c"
#include "harness/plugins/scan-context/sc_distance.c"
#include "harness/plugins/scan-context/sc_image.c"
#include "harness/io/recording.h"
#include "tests/check.h"
#include "tests/sc_reference.h"

#define SCANS 24
#define TOL 1e-12

static unsigned rnd_state = 12345;
static double rnd(void)
{
    rnd_state = rnd_state * 1103515245u + 12345u;
    return (rnd_state >> 8) / 16777216.0;
}

static struct sc *make_at(int R, int S, double max_r)
{
    double v[4] = {R, S, max_r, 2};
    void *inst;
    uint32_t dim, kd;
    char msg[64];
    return sc_create(v, &inst, &dim, &kd, msg, sizeof msg) == RV_OK ? inst : NULL;
}

static struct sc *make(int R, int S) { return make_at(R, S, 80); }

/* Points at and one float unit around every ring edge r = k max / R (for
 * ranges where R / max is not exact in binary): the images equal those of
 * the division as written. */
static void ring_edges(void)
{
    static const double ranges[] = {70, 75, 80, 123.4};
    enum { R = 200, S = 30, N = 3 * R * 7 + 2 * R };
    static float pts[4 * N], a[R * S], b[R * S];
    int bad = 0;
    for (size_t t = 0; t < sizeof ranges / sizeof *ranges; t++) {
        struct sc *s = make_at(R, S, ranges[t]);
        size_t n = 0;
        for (int k = 1; k <= R; k++)
            for (int j = 0; j < 7; j++) {
                double az = -M_PI + 2 * M_PI * (j + 0.5) / 7, r = ranges[t] * k / R;
                float x = (float)(r * cos(az)), y = (float)(r * sin(az));
                for (int d = -1; d <= 1; d++) {
                    float xs = d ? nextafterf(x, d * INFINITY) : x;
                    pts[4 * n] = xs, pts[4 * n + 1] = y, pts[4 * n + 2] = (float)(n % 11), pts[4 * n + 3] = 0;
                    n++;
                }
            }
        for (int k = 1; k <= R; k++)  /* on the x axis: r is the float (-x: y = -0, as atan2 has it) */
            for (int side = -1; side <= 1; side += 2) {
                pts[4 * n] = (float)(side * ranges[t] * k / R), pts[4 * n + 1] = side < 0 ? -0.0f : 0.0f;
                pts[4 * n + 2] = (float)k, pts[4 * n + 3] = 0;
                n++;
            }
        float ka[R], kb[R];
        sc_image(s, pts, n, a, ka);
        scref_image(R, S, ranges[t], 2, pts, n, b, kb);
        bad += memcmp(a, b, sizeof a) != 0;
        free(s);
    }
    CHECK(bad == 0, "points at and beside every ring edge: the rings of the division as written");
}

/* Compare the kernels on one pair; returns 1 when all agree.  The shift
 * must be the reference's, unless the two are tied (within TOL) in the
 * reference itself; *ties counts those. */
static int agree(int R, int S, const float *a, const float *b, double *worst, int *ties)
{
    int32_t k0 = -1, k1 = -2, k2 = -3;
    double d0 = scref_distance(R, S, a, b, &k0), d1 = sc_pair_base(R, S, a, b, &k1), d2 = d1;
    if (__builtin_cpu_supports("avx2") && __builtin_cpu_supports("fma")) d2 = sc_pair_avx2(R, S, a, b, &k2);
    else k2 = k1;
    if (fabs(d0 - d1) > *worst) *worst = fabs(d0 - d1);
    int shift_ok = k0 == k1;
    if (!shift_ok) {
        (*ties)++;
        shift_ok = fabs(scref_distance_at(R, S, a, b, NULL, k1) - d0) <= TOL;
    }
    return fabs(d0 - d1) <= TOL && shift_ok && d1 == d2 && k1 == k2;
}

/* The float pass (kernel `which`: 0 base, 1 AVX2) against the double pass
 * at every shift of one pair: the largest difference, in units of the
 * bound SC_ERR / 2 that sc_distance.c states (must stay below 1). */
static double float_pass_err(int which, int R, int S, const float *a, const float *b)
{
    struct sc_prep p;
    struct sc_cand c;
    float *buf = malloc(sc_floats(R, S) * sizeof *buf);
    double worst = 0;
    if (!buf) return INFINITY;
    if (which) {
        sc_prepare_avx2(&p, R, S, a, buf);
        sc_cells(&p, &c);
        sc_gather_avx2(&p, &c, b);
        sc_pass_avx2(&p, &c);
    } else {
        sc_prepare_base(&p, R, S, a, buf);
        sc_cells(&p, &c);
        sc_gather_base(&p, &c, b);
        sc_pass_base(&p, &c);
    }
    for (int k = 0; k < S; k++) {
        double df = c.cnt[k] > 0 ? 1 - c.sum[k] / c.cnt[k] : 1;
        double d = which ? sc_shift_avx2(&p, b, c.nb, c.ib, k) : sc_shift_base(&p, b, c.nb, c.ib, k);
        worst = fmax(worst, fabs(df - d) / (SC_ERR(R) / 2));
    }
    free(buf);
    return worst;
}

/* One query against many candidates: the same numbers and shifts as one
 * pair at a time, for both kernels. */
static int many_agrees(int R, int S, const float *a, const float *const *b, int n)
{
    double out[64], out2[64];
    int32_t k[64], k2[64];
    int ok = n <= 64, avx = __builtin_cpu_supports("avx2") && __builtin_cpu_supports("fma") &&
                            __builtin_cpu_supports("bmi2");
    if (!ok) return 0;
    sc_many_base(R, S, a, b, (size_t)n, out, k);
    if (avx) sc_many_avx2(R, S, a, b, (size_t)n, out2, k2);
    for (int t = 0; t < n; t++) {
        int32_t kp = -1;
        ok &= sc_pair_base(R, S, a, b[t], &kp) == out[t] && kp == k[t];
        if (avx) ok &= out2[t] == out[t] && k2[t] == k[t];
    }
    return ok;
}

/* Turn an image by m sectors: column j moves to j + m. */
static void turn_image(const float *in, float *out, int R, int S, int m)
{
    for (int j = 0; j < S; j++)
        for (int r = 0; r < R; r++) out[((j + m) % S) * R + r] = in[j * R + r];
}

/* Random images: heights in [-1, 5), some empty columns and cells. */
static void random_pairs(void)
{
    static const int shapes[][2] = {{20, 60}, {1, 4}, {7, 13}, {200, 9}, {3, 720}, {20, 61}};
    static float a[200 * 720], b[200 * 720];
    for (size_t s = 0; s < sizeof shapes / sizeof *shapes; s++) {
        int R = shapes[s][0], S = shapes[s][1], bad = 0, ties = 0, turned_bad = 0, many_bad = 0;
        double worst = 0, pass_err = 0;
        for (int pair = 0; pair < 40; pair++) {
            for (int c = 0; c < R * S; c++) {
                a[c] = rnd() < 0.3 ? 0 : (float)(6 * rnd() - 1);
                b[c] = rnd() < 0.3 ? 0 : (float)(6 * rnd() - 1);
            }
            for (int j = 0; j < S; j += 5)
                for (int r = 0; r < R; r++) a[j * R + r] = 0, b[((j * 3) % S) * R + r] = 0;
            bad += !agree(R, S, a, b, &worst, &ties);
            pass_err = fmax(pass_err, float_pass_err(0, R, S, a, b));
            if (__builtin_cpu_supports("avx2") && __builtin_cpu_supports("fma"))
                pass_err = fmax(pass_err, float_pass_err(1, R, S, a, b));
            const float *both[3] = {b, a, b};
            many_bad += !many_agrees(R, S, a, both, 3);
            int m = (int)(rnd() * S) % S;
            int32_t k1 = -1, k2 = -1;
            turn_image(a, b, R, S, m);
            double d1 = sc_pair_base(R, S, a, b, &k1), d2 = d1;
            if (__builtin_cpu_supports("avx2") && __builtin_cpu_supports("fma")) d2 = sc_pair_avx2(R, S, a, b, &k2);
            else k2 = k1;
            int filled = 0;
            for (int c = 0; c < R * S; c++) filled |= a[c] != 0;
            turned_bad += filled ? !(d1 == 0 && d2 == 0 && (k1 == m || R == 1) && k2 == k1) : !(d1 == 1 && d2 == 1);
        }
        CHECK(turned_bad == 0, "random images turned by whole sectors: distance exactly 0 and the turn as shift "
                                "(an empty image: 1)");
        char msg[200];
        snprintf(msg, sizeof msg, "%d x %d random images: within %g of the scalar loop (worst %.2g), same shift "
                 "(%d exact ties), AVX2 = base", R, S, TOL, worst, ties);
        CHECK(bad == 0, msg);
        snprintf(msg, sizeof msg, "%d x %d random images: the float pass within its stated bound at every shift "
                 "(worst %.3g of it)", R, S, pass_err);
        CHECK(pass_err < 1, msg);
        snprintf(msg, sizeof msg, "%d x %d random images: one query against many = one pair at a time", R, S);
        CHECK(many_bad == 0, msg);
    }
    for (int c = 0; c < 20 * 60; c++) a[c] = 0;
    b[5] = 1;
    int32_t k = -1;
    CHECK(sc_pair_base(20, 60, a, b, &k) == 1.0 && k == 0, "no shared column: distance 1, shift 0");
}

static int load_scans(struct recording *rec, struct cloud *c)
{
    const char *bin = getenv("REVISIT_BIN");
    char cmd[4200];
    if (snprintf(cmd, sizeof cmd, "%s synth --scenario port --scans %d --out rec --quiet >/dev/null 2>&1",
                 bin ? bin : "revisit", SCANS) >= (int)sizeof cmd)
        return -1;
    struct err e;
    if (access("rec/recording.json", R_OK) && system(cmd)) return -1;
    if (recording_load("rec", 0, rec, &e)) return -1;
    for (size_t i = 0; i < rec->n && i < SCANS; i++)
        if (cloud_init(&c[i]), recording_load_scan(rec, i, &c[i], NULL, &e)) return -1;
    return rec->n >= SCANS ? 0 : -1;
}

/* Exact side of boundary k: products of a double and a float are exact
 * in binary128 (53 + 24 < 113 bits), and the sign of a rounded difference
 * is the sign of the difference (IEEE 754 rounding, common practice, no
 * source). */
static int oracle_after(const struct sc *s, int k, float x, float y)
{
    __float128 d = (__float128)s->bx[k] * y - (__float128)s->by[k] * x;
    return d >= 0;
}

/* The exact sector of a point by the binary128 oracle. */
static int oracle_sector(const struct sc *s, float x, float y)
{
    for (int k = 0; k < s->sectors; k++)
        if (oracle_after(s, k, x, y) && !oracle_after(s, k + 1, x, y)) return k;
    return -1;
}

/* Copy of scan c without the points within 1e-10 sectors (atan2) of a
 * boundary into out; those must get their exact sector.  Returns how many
 * were left out, or -1 when one of them is in the wrong sector. */
static long off_boundary(const struct sc *s, const struct cloud *c, float *out, size_t *n_out)
{
    long near = 0, wrong = 0;
    *n_out = 0;
    for (size_t k = 0; k < c->n; k++) {
        const float *p = c->pts + 4 * k;
        double f = (atan2(p[1], p[0]) + M_PI) / (2 * M_PI) * s->sectors;
        if (fabs(f - floor(f + 0.5)) < 1e-10 && !(p[0] == 0 && p[1] == 0)) {
            near++;
            wrong += sc_sector_of(s, p[0], p[1]) != oracle_sector(s, p[0], p[1]);
        } else {
            memcpy(out + 4 * *n_out, p, 16);
            ++*n_out;
        }
    }
    return wrong ? -1 : near;
}

/* The image of n points built one point at a time from the walk over
 * every boundary (sc_sector_walk; the origin: sector S / 2) and the ring
 * rule of sc_image.c. */
static void walk_image(const struct sc *s, const float *pts, size_t n, float *img, float *key)
{
    sc_open(s, img);
    for (size_t k = 0; k < n; k++) {
        const float *p = pts + 4 * k;
        double r = sqrt((double)p[0] * p[0] + (double)p[1] * p[1]);
        if (!(r < s->max_range_m)) continue;
        int sec = p[0] == 0 && p[1] == 0 ? s->sectors / 2 : sc_sector_walk(s, p[0], p[1]);
        sc_raise(s, img, sec, sc_ring(s, r), p);
    }
    sc_close(s, img, key);
}

/* Both image kernels against walk_image on pts; 1 when all three agree. */
static int images_agree(const struct sc *s, const float *pts, size_t n)
{
    size_t cells = (size_t)s->rings * s->sectors;
    float *w = malloc(3 * cells * sizeof *w), kw[SC_MAX_RINGS], kb[SC_MAX_RINGS], ka[SC_MAX_RINGS];
    if (!w) return 0;
    walk_image(s, pts, n, w, kw);
    sc_image_base(s, pts, n, w + cells, kb);
    int ok = !memcmp(w, w + cells, cells * sizeof *w) && !memcmp(kw, kb, (size_t)s->rings * sizeof *kw);
    if (__builtin_cpu_supports("avx2")) {
        sc_image_avx2(s, pts, n, w + 2 * cells, ka);
        ok &= !memcmp(w, w + 2 * cells, cells * sizeof *w) && !memcmp(kw, ka, (size_t)s->rings * sizeof *kw);
    }
    free(w);
    return ok;
}

static void real_scans(void)
{
    static struct cloud c[SCANS];
    static float img[SCANS][1200], ref[1200], mine[1200], turned[1200];
    struct recording rec;
    CHECK(load_scans(&rec, c) == 0, "revisit synth gives 24 port scans");
    struct sc *s = make(20, 60);
    int same = 1, bad = 0, exact = 1, kern = 1;
    size_t pts = 0;
    long near = 0;
    for (int i = 0; i < SCANS; i++) {
        float key[20], rkey[20];
        sc_image(s, c[i].pts, c[i].n, img[i], key);
        kern &= images_agree(s, c[i].pts, c[i].n);
        float *kept = malloc(16 * (c[i].n + 1));
        size_t nk;
        long nb = kept ? off_boundary(s, &c[i], kept, &nk) : -1;
        near = nb < 0 || near < 0 ? -1 : near + nb;
        if (kept) {
            sc_image(s, kept, nk, mine, key);
            scref_image(20, 60, 80, 2, kept, nk, ref, rkey);
            same &= !memcmp(mine, ref, sizeof ref) && !memcmp(key, rkey, sizeof key);
        }
        free(kept);
        pts += c[i].n;
    }
    char msg[200];
    snprintf(msg, sizeof msg, "%d synthetic scans (%zu points): the %ld points within 1e-10 sectors of a boundary "
             "get their exact sector", SCANS, pts, near);
    CHECK(near >= 0, msg);
    snprintf(msg, sizeof msg, "%d synthetic scans without those points: images and keys equal the atan2 binning",
             SCANS);
    CHECK(same, msg);
    CHECK(kern, "24 synthetic scans, every point: both image kernels equal the walk over every boundary");
    double worst = 0;
    int ties = 0;
    for (int i = 0; i < SCANS; i++)
        for (int j = 0; j < SCANS; j++) bad += !agree(20, 60, img[i], img[j], &worst, &ties);
    snprintf(msg, sizeof msg, "every pair of real scans: within %g of the scalar loop (worst %.2g), same shift",
             TOL, worst);
    CHECK(bad == 0 && ties == 0, msg);
    double pass_err = 0;
    int many_ok = 1;
    const float *cands[SCANS];
    for (int j = 0; j < SCANS; j++) cands[j] = img[j];
    for (int i = 0; i < SCANS; i++) {
        for (int j = 0; j < SCANS; j++) {
            pass_err = fmax(pass_err, float_pass_err(0, 20, 60, img[i], img[j]));
            if (__builtin_cpu_supports("avx2") && __builtin_cpu_supports("fma"))
                pass_err = fmax(pass_err, float_pass_err(1, 20, 60, img[i], img[j]));
        }
        many_ok &= many_agrees(20, 60, img[i], cands, SCANS);
    }
    snprintf(msg, sizeof msg, "every pair of real scans: the float pass within its stated bound (worst %.3g of it)",
             pass_err);
    CHECK(pass_err < 1, msg);
    CHECK(many_ok, "real scans: each against all 24 at once = one pair at a time, both kernels");
    for (int i = 0; i < SCANS; i++) {
        int m = (7 * i + 1) % 60;
        int32_t k1 = -1, k2 = -1;
        turn_image(img[i], turned, 20, 60, m);
        double d = sc_pair_base(20, 60, img[i], turned, &k1), d2 = 0;
        if (__builtin_cpu_supports("avx2") && __builtin_cpu_supports("fma")) d2 = sc_pair_avx2(20, 60, img[i], turned, &k2);
        else k2 = k1;
        exact &= d == 0 && d2 == 0 && k1 == m && k2 == m;
    }
    CHECK(exact, "real images turned by whole sectors: distance exactly 0, shift recovered, both kernels");
    free(s);
    for (int i = 0; i < SCANS; i++) cloud_free(&c[i]);
    recording_free(&rec);
}

/* Float points nearest to a boundary, and their neighbours one unit in the
 * last place away: the exact rule against the binary128 oracle. */
static int near_boundary(const struct sc *s, int k)
{
    int S = s->sectors, bad = 0;
    for (double r = 0.37; r < 80; r *= 1.7) {
        float x0 = (float)(r * s->bx[k]), y0 = (float)(r * s->by[k]);
        for (int dx = -1; dx <= 1; dx++)
            for (int dy = -1; dy <= 1; dy++) {
                float x = x0, y = y0;
                for (int m = 0; m < (dx < 0 ? -dx : dx); m++) x = nextafterf(x, dx < 0 ? -INFINITY : INFINITY);
                for (int m = 0; m < (dy < 0 ? -dy : dy); m++) y = nextafterf(y, dy < 0 ? -INFINITY : INFINITY);
                if (x == 0 && y == 0) continue;
                int want = oracle_after(s, k, x, y) ? k % S : (k + S - 1) % S;
                bad += sc_sector_of(s, x, y) != want;
            }
    }
    return bad;
}

/* Points on and beside boundaries go where sc_image.c's rule says; away
 * from boundaries, to the sector atan2 names (C99 atan2, common practice,
 * no source). */
static void boundaries(void)
{
    static const int counts[] = {4, 6, 7, 60, 61, 360, 720};
    for (size_t t = 0; t < sizeof counts / sizeof *counts; t++) {
        int S = counts[t], near = 0, beside = 0, grid = 0;
        struct sc *s = make(20, S);
        for (int k = 0; k < S; k++) {
            near += near_boundary(s, k);
            double a = -M_PI + 2 * M_PI * k / S;
            for (int side = -1; side <= 1; side += 2) {
                double b = a + side * 1e-5;
                int want = side < 0 ? (k + S - 1) % S : k;
                beside += sc_sector_of(s, (float)(30 * cos(b)), (float)(30 * sin(b))) == want;
            }
        }
        char msg[160];
        snprintf(msg, sizeof msg, "%d sectors: float points at and one unit beside each boundary on the exact side "
                 "(%d wrong), points 1e-5 rad beside (%d of %d)", S, near, beside, 2 * S);
        CHECK(near == 0 && beside == 2 * S, msg);
        for (int g = 0; g < 100000; g++) {
            float x = (float)(100 * rnd() - 50), y = (float)(100 * rnd() - 50);
            double f = (atan2(y, x) + M_PI) / (2 * M_PI) * S;
            if (fabs(f - floor(f + 0.5)) < 1e-9) grid++;  /* within rounding of a boundary */
            else grid += sc_sector_of(s, x, y) == ((int)f >= S ? S - 1 : (int)f);
        }
        snprintf(msg, sizeof msg, "%d sectors: 100000 random points away from boundaries get the atan2 sector", S);
        CHECK(grid == 100000, msg);
        CHECK(sc_sector_of(s, -5, 0.0f) == 0 && sc_sector_of(s, -5, -0.0f) == 0, "the -x axis is in sector 0");
        CHECK(sc_sector_of(s, 0, 0) == S / 2 && sc_sector_of(s, 3, 0) == S / 2,
              "the origin and the +x axis: the sector of azimuth 0");
        if (S % 4 == 0)
            CHECK(sc_sector_of(s, 0, 2) == 3 * S / 4 && sc_sector_of(s, 0, -2) == S / 4,
                  "the y axis starts the sectors of azimuth +-pi/2");
        free(s);
    }
}

/* Points at, and one and two float units beside, every boundary and ring
 * edge, on both axes and at the origin, with random ones between, for
 * several shapes: both kernels equal the walk. */
static void image_kernels(void)
{
    static const int shapes[][2] = {{20, 60}, {20, 61}, {7, 4}, {200, 720}, {3, 7}};
    static const double ranges[] = {80, 75, 123.4, 10, 70};
    enum { MAXN = 400000 };
    float *pts = malloc(4 * sizeof *pts * MAXN);
    if (!pts) {
        CHECK(0, "memory for the image test points");
        return;
    }
    for (size_t t = 0; t < sizeof shapes / sizeof *shapes; t++) {
        struct sc *s = make_at(shapes[t][0], shapes[t][1], ranges[t]);
        size_t n = 0;
        for (int k = 0; k < s->sectors && n + 200 < MAXN; k++)
            for (double r = 0.37; r < 1.2 * s->max_range_m; r *= 1.9) {
                float x0 = (float)(r * s->bx[k]), y0 = (float)(r * s->by[k]);
                for (int d = -2; d <= 2; d++) {
                    float x = x0, y = y0;
                    for (int m = 0; m < (d < 0 ? -d : d); m++) x = nextafterf(x, d < 0 ? -INFINITY : INFINITY);
                    float q[3][2] = {{x, y0}, {x0, x}, {x, y}};
                    for (int v = 0; v < 3; v++) {
                        pts[4 * n] = q[v][0], pts[4 * n + 1] = v == 2 ? y : q[v][1];
                        pts[4 * n + 2] = (float)(rnd() * 6 - 1), pts[4 * n + 3] = 0;
                        n++;
                    }
                }
            }
        for (int k = 0; k <= s->rings && n + 64 < MAXN; k++)  /* ring edges, in six directions */
            for (int j = 0; j < 6; j++)
                for (int d = -1; d <= 1; d++) {
                    double az = 2 * M_PI * (j + 0.3) / 6, r = s->max_range_m * k / s->rings;
                    float x = (float)(r * cos(az)), y = (float)(r * sin(az));
                    pts[4 * n] = d ? nextafterf(x, d * INFINITY) : x, pts[4 * n + 1] = y;
                    pts[4 * n + 2] = (float)k, pts[4 * n + 3] = 0;
                    n++;
                }
        static const float axes[][2] = {{0, 0}, {-0.0f, 0}, {0, -0.0f}, {5, 0}, {-5, 0}, {-5, -0.0f}, {0, 5}, {0, -5}};
        for (size_t a = 0; a < sizeof axes / sizeof *axes; a++) {
            pts[4 * n] = axes[a][0], pts[4 * n + 1] = axes[a][1], pts[4 * n + 2] = (float)a, pts[4 * n + 3] = 0;
            n++;
        }
        while (n < 60000) {
            pts[4 * n] = (float)(250 * rnd() - 125), pts[4 * n + 1] = (float)(250 * rnd() - 125);
            pts[4 * n + 2] = (float)(rnd() * 8 - 2), pts[4 * n + 3] = 0;
            n++;
        }
        char msg[160];
        snprintf(msg, sizeof msg, "%d x %d, %g m: %zu points at and beside boundaries, ring edges, axes, origin: "
                 "both image kernels equal the walk", s->rings, s->sectors, s->max_range_m, n);
        int tails = 1;
        for (size_t m = 1; m < 8; m++) tails &= images_agree(s, pts + 4 * m, n - m);  /* other tails mod 4 */
        CHECK(images_agree(s, pts, n) && tails, msg);
        free(s);
    }
    free(pts);
}

int main(void)
{
    random_pairs();
    ring_edges();
    real_scans();
    boundaries();
    image_kernels();
    return check_done();
}
