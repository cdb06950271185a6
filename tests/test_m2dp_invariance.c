/* test_m2dp_invariance.c: the M2DP signature does not change when the scan
 * is moved or turned, its sign rules hold, and degenerate scans give zeros. */
#include "harness/plugins/m2dp/m2dp.c"
#include "tests/check.h"

/* A skewed, anisotropic cloud: exponential tails make every third moment
 * non-zero, unequal scales keep the principal axes apart. */
static void make_cloud(float *xyzi, size_t n, unsigned seed)
{
    unsigned s = seed;
    for (size_t k = 0; k < n; k++) {
        double g[3];
        for (int a = 0; a < 3; a++) {
            s = s * 1103515245u + 12345u;
            double u = ((s >> 8) + 0.5) / 16777216.0;
            g[a] = -log(u);
        }
        xyzi[4 * k] = (float)(12.0 * g[0]);
        xyzi[4 * k + 1] = (float)(5.0 * g[1]);
        xyzi[4 * k + 2] = (float)(1.5 * g[2]);
        xyzi[4 * k + 3] = 0;
    }
}

/* Rotate by angle about unit axis (Rodrigues), then shift. */
static void move_cloud(const float *in, float *out, size_t n, const double axis[3],
                       double ang, const double shift[3])
{
    double c = cos(ang), s = sin(ang), x = axis[0], y = axis[1], z = axis[2];
    double r[3][3] = {{c + x * x * (1 - c), x * y * (1 - c) - z * s, x * z * (1 - c) + y * s},
                      {y * x * (1 - c) + z * s, c + y * y * (1 - c), y * z * (1 - c) - x * s},
                      {z * x * (1 - c) - y * s, z * y * (1 - c) + x * s, c + z * z * (1 - c)}};
    for (size_t k = 0; k < n; k++) {
        for (int a = 0; a < 3; a++)
            out[4 * k + a] = (float)(r[a][0] * in[4 * k] + r[a][1] * in[4 * k + 1]
                                     + r[a][2] * in[4 * k + 2] + shift[a]);
        out[4 * k + 3] = in[4 * k + 3];
    }
}

static double l2(const float *a, const float *b, size_t n)
{
    double s = 0;
    for (size_t k = 0; k < n; k++)
        s += ((double)a[k] - b[k]) * ((double)a[k] - b[k]);
    return sqrt(s);
}

int main(void)
{
    const struct rv_method *t = rv_method_entry();
    double def[SET_COUNT];
    for (int k = 0; k < SET_COUNT; k++)
        def[k] = t->settings[k].def;
    void *inst;
    uint32_t dim, kd;
    char msg[256] = "";
    CHECK(t->create(def, &inst, &dim, &kd, msg, sizeof msg) == RV_OK, "create with defaults");
    /* 4 x 16 planes and 8 x 16 bins give 64 + 128 = 192 values
     * (He, Wang & Zhang, IROS 2016, sec. III; from memory) */
    CHECK(dim == 192 && kd == 0, "default signature has 192 values, no key");

    enum { N = 6000 };
    static float a[4 * N], b[4 * N], da[192], db[192], dc[192];
    make_cloud(a, N, 7);
    struct rv_scan sa = {N, a, NULL, NULL, 0, 0, 0}, sb = sa;
    sb.xyzi = b;
    CHECK(t->describe(inst, &sa, da, NULL, msg, sizeof msg) == RV_OK, "describe a cloud");
    double norm_u = 0, norm_v = 0, sum_v = 0, min_v = 1;
    for (int k = 0; k < 64; k++)
        norm_u += da[k] * da[k];
    for (int k = 64; k < 192; k++) {
        norm_v += da[k] * da[k];
        sum_v += da[k];
        if (da[k] < min_v)
            min_v = da[k];
    }
    CHECK_NEAR(norm_u, 1.0, 1e-5, "u1 is a unit vector");
    CHECK_NEAR(norm_v, 1.0, 1e-5, "v1 is a unit vector");
    CHECK(sum_v > 0 && min_v > -1e-6, "sign rule: v1 of a count matrix has no negative part");

    const double shift[3] = {31.5, -12.25, 4.0}, none[3] = {0, 0, 0};
    const double axes[4][3] = {{0, 0, 1}, {1, 0, 0}, {0, 1, 0}, {0.48, -0.6, 0.64}};
    const double angles[4] = {2.3, 1.1, -0.7, 2.9};
    move_cloud(a, b, N, axes[0], 0, shift);
    t->describe(inst, &sb, db, NULL, msg, sizeof msg);
    CHECK(l2(da, db, dim) < 2e-3, "translation leaves the signature unchanged");
    for (int r = 0; r < 4; r++) {
        move_cloud(a, b, N, axes[r], angles[r], r == 3 ? shift : none);
        t->describe(inst, &sb, db, NULL, msg, sizeof msg);
        CHECK(l2(da, db, dim) < 2e-3, "rotation about an axis leaves the signature unchanged");
    }
    make_cloud(b, N, 99);
    for (size_t k = 0; k < N; k++)  /* a differently shaped cloud */
        b[4 * k + 1] *= 2.2f;
    t->describe(inst, &sb, dc, NULL, msg, sizeof msg);
    CHECK(l2(da, dc, dim) > 0.05, "a different cloud gives a different signature");

    memcpy(b, a, sizeof a);  /* NaN and Inf points are left out */
    b[4 * 17] = NAN, b[4 * 900 + 2] = INFINITY, b[4 * 4000 + 1] = -INFINITY;
    float dn[192];
    t->describe(inst, &sb, dn, NULL, msg, sizeof msg);
    for (size_t k = 0, m = 0; k < N; k++)  /* the same cloud without those three */
        if (k != 17 && k != 900 && k != 4000)
            memcpy(b + 4 * m++, a + 4 * k, 16);
    sb.n = N - 3;
    t->describe(inst, &sb, db, NULL, msg, sizeof msg);
    CHECK(memcmp(dn, db, sizeof dn) == 0, "non-finite points are left out, not spread over the signature");
    sb.n = N;

    struct rv_scan empty = {0, a, NULL, NULL, 0, 0, 0};
    for (int k = 0; k < 192; k++)
        db[k] = 5;
    CHECK(t->describe(inst, &empty, db, NULL, msg, sizeof msg) == RV_OK, "empty scan is fine");
    CHECK(l2(db, (float[192]){0}, dim) == 0, "empty scan gives the zero signature");
    for (size_t k = 0; k < 50; k++)
        for (int c = 0; c < 4; c++)
            b[4 * k + c] = 1.0f;
    sb.n = 50;
    CHECK(t->describe(inst, &sb, db, NULL, msg, sizeof msg) == RV_OK, "one repeated point is fine");
    CHECK(l2(db, (float[192]){0}, dim) == 0, "a cloud with no extent gives zeros");
    t->destroy(inst);

    def[SET_AZ] = 2, def[SET_EL] = 3, def[SET_RINGS] = 5, def[SET_SECTORS] = 7;
    CHECK(t->create(def, &inst, &dim, &kd, msg, sizeof msg) == RV_OK && dim == 6 + 35,
          "signature length follows the settings");
    t->destroy(inst);
    def[SET_AZ] = 4, def[SET_EL] = 16, def[SET_RINGS] = 8, def[SET_SECTORS] = 16;
    def[SET_MAXPTS] = 1000;
    t->create(def, &inst, &dim, &kd, msg, sizeof msg);
    t->describe(inst, &sa, db, NULL, msg, sizeof msg);
    CHECK(l2(da, db, dim) > 0 && l2(da, db, dim) < 0.2, "max_points thins the scan");
    t->destroy(inst);
    t->destroy(NULL);

    /* the sector search equals floor(atan2 / step) (C99 atan2, common
     * practice, no source), also right beside every boundary */
    for (int sectors = 2; sectors <= 256; sectors *= 4) {
        def[SET_SECTORS] = sectors;
        t->create(def, &inst, &dim, &kd, msg, sizeof msg);
        const struct m2dp *mm = inst;
        int bad = 0;
        for (int k = 0; k < 200000; k++) {
            double ang = k < 100000 ? 2 * M2DP_PI * k / 100000.0 + 1e-9 * (k % 7 - 3)
                                    : 2 * M2DP_PI * (k % sectors) / sectors + 1e-7 * (k % 5 - 2);
            double step = 2 * M2DP_PI / sectors, off = fmod(ang, step);
            if (off < 1e-12 || step - off < 1e-12)
                continue;  /* on a boundary: atan2 and any search may round either way */
            double u = cos(ang) * (1 + k % 3), v = sin(ang) * (1 + k % 3);
            double ref = atan2(v, u);
            if (ref < 0)
                ref += 2 * M2DP_PI;
            int want = (int)floor(ref / (2 * M2DP_PI / sectors));
            if (want >= sectors)
                want = sectors - 1;
            bad += m2dp_sector(mm, u, v) != want;
        }
        CHECK(bad == 0, "sector search agrees with atan2 everywhere");
        t->destroy(inst);
    }
    return check_done();
}
