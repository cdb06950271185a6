/* test_scan_context_shift.c: Scan Context distances under turns.
 *
 * By the published definition (Kim and Kim, "Scan Context", IROS 2018,
 * Sec. III-B: the distance is the minimum over column shifts of the mean
 * column cosine distance), a scan and its copy turned by a whole number of
 * sectors are at distance exactly 0, and the best shift is the turn. */
#include <math.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>

#include "harness/run/plugin_host.h"
#include "tests/check.h"

#define N 4000

/* Points spread over 70 m and 6 m of height, none within 1e-3 of a
 * sector or ring edge, so float rounding of a turn moves none across. */
static size_t make_scan(float *pts, unsigned seed, int sectors, int rings, double max_r)
{
    unsigned s = seed * 2654435761u + 7;
    size_t n = 0;
    while (n < N) {
        double u[3];
        for (int k = 0; k < 3; k++) {
            s = s * 1103515245u + 12345u;
            u[k] = (s >> 8) / 16777216.0;
        }
        double r = 1 + u[0] * 69, a = (u[1] - 0.5) * 2 * M_PI, z = u[2] * 6 - 2;
        double fs = (a + M_PI) / (2 * M_PI) * sectors, fr = r / max_r * rings;
        if (fabs(fs - floor(fs + 0.5)) < 1e-3 || fabs(fr - floor(fr + 0.5)) < 1e-3) continue;
        pts[4 * n] = (float)(r * cos(a));
        pts[4 * n + 1] = (float)(r * sin(a));
        pts[4 * n + 2] = (float)z;
        pts[4 * n + 3] = 0;
        n++;
    }
    return n;
}

static void turn(const float *in, float *out, size_t n, double rad)
{
    double c = cos(rad), s = sin(rad);
    for (size_t k = 0; k < n; k++) {
        double x = in[4 * k], y = in[4 * k + 1];
        out[4 * k] = (float)(c * x - s * y);
        out[4 * k + 1] = (float)(s * x + c * y);
        out[4 * k + 2] = in[4 * k + 2];
        out[4 * k + 3] = in[4 * k + 3];
    }
}

int main(void)
{
    struct plugin p;
    struct err e = {{0}};
    if (plugin_open(&p, "scan-context", NULL, &e)) {
        fprintf(stderr, "%s\n", e.msg);
        CHECK(0, "scan-context loads from REVISIT_PLUGIN_PATH");
        return check_done();
    }
    CHECK(p.dim == 1200 && p.key_dim == 20 && p.distance == RV_DIST_CUSTOM,
          "published defaults (from memory): 20 rings x 60 sectors, ring key of 20, custom distance");
    static float a[4 * N], b[4 * N], other[4 * N];
    float *da = malloc(1200 * sizeof *da), *db = malloc(1200 * sizeof *db), *dc = malloc(1200 * sizeof *dc);
    float ka[20], kb[20], kc[20];
    size_t n = make_scan(a, 1, 60, 20, 80);
    struct rv_scan sa = {n, a, NULL, NULL, 0, 0, 0};
    CHECK(plugin_describe(&p, &sa, da, ka, &e) == 0, "describe a scan");
    static const int turns[] = {1, 7, 30, 59, -13};
    for (size_t t = 0; t < sizeof turns / sizeof *turns; t++) {
        turn(a, b, n, turns[t] * 2 * M_PI / 60);
        struct rv_scan sb = {n, b, NULL, NULL, 0, 1, 0};
        CHECK(plugin_describe(&p, &sb, db, kb, &e) == 0, "describe the turned copy");
        int32_t shift = -1;
        double d = plugin_distance(&p, da, db, &shift);
        char msg[128];
        snprintf(msg, sizeof msg, "turn by %d sectors: distance exactly 0", turns[t]);
        CHECK(d == 0.0, msg);
        snprintf(msg, sizeof msg, "turn by %d sectors: recovered shift %d", turns[t], (int)shift);
        CHECK(shift == ((turns[t] % 60) + 60) % 60, msg);
        CHECK(!memcmp(ka, kb, sizeof ka), "the ring key does not change under a turn");
    }
    /* half a sector: not exact any more, but the nearest shift still wins */
    turn(a, b, n, 10.5 * 2 * M_PI / 60);
    struct rv_scan sb = {n, b, NULL, NULL, 0, 1, 0};
    plugin_describe(&p, &sb, db, kb, &e);
    int32_t shift = -1;
    double dh = plugin_distance(&p, da, db, &shift);
    CHECK(dh > 0 && (shift == 10 || shift == 11), "a turn of 10.5 sectors: distance > 0, shift 10 or 11");
    size_t m = make_scan(other, 99, 60, 20, 80);
    struct rv_scan sc = {m, other, NULL, NULL, 0, 2, 0};
    plugin_describe(&p, &sc, dc, kc, &e);
    double dother = plugin_distance(&p, da, dc, NULL);
    CHECK(dother > dh, "another place is farther than the half-sector turn");
    struct rv_scan empty = {0, a, NULL, NULL, 0, 3, 0};
    CHECK(plugin_describe(&p, &empty, dc, kc, &e) == 0, "an empty scan still gives a descriptor");
    CHECK(plugin_distance(&p, da, dc, NULL) == 1.0, "an empty scan is at distance 1 (no shared column)");
    plugin_close(&p);
    CHECK(plugin_open(&p, "scan-context:rings=10,sectors=36", NULL, &e) == 0 && p.dim == 360,
          "settings change the image size");
    plugin_close(&p);
    free(da);
    free(db);
    free(dc);
    return check_done();
}
