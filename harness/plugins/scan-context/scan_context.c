/* scan_context.c: the Scan Context descriptor (G. Kim and A. Kim, "Scan
 * Context: Egocentric Spatial Descriptor for Place Recognition within 3D
 * Point Cloud Map", IROS 2018) as a revisit plugin.
 *
 * Descriptor layout: sectors x rings floats, sector-major, so one column
 * (one sector, every ring) is contiguous for the distance.  Cell (r, s), at
 * desc[s * rings + r], holds the largest height z + lift of the points
 * whose planar range falls in ring r (equal widths up to max_range) and
 * whose azimuth falls in sector s (equal widths, counter-clockwise from
 * -pi); an empty cell is 0.
 *
 *   desc: | s0: r0 r1 .. rR-1 | s1: r0 r1 .. | ... | sS-1: ... |
 *
 * Turning the scan by m sectors counter-clockwise moves column s to s + m.
 * The key (one float per ring, the mean of the ring's row) does not change
 * under a turn and serves the prefilter.  The distance is the minimum over
 * column shifts k of 1 - mean cosine similarity of column j of a and column
 * j + k of b, over the columns non-empty in both; aux receives the best k.
 * Defaults (20 rings, 60 sectors, 80 m) are the published ones, from memory;
 * the lift of 2 m is the sensor height the published code adds, from memory.
 */
#include <math.h>
#include <stdio.h>
#include <stdlib.h>

#include "harness/revisit_plugin.h"

struct sc {
    int rings, sectors;
    double max_range_m, lift_m;
};

static const struct rv_setting sc_settings[] = {
    {"rings", RV_SET_INT, 20, 1, 200, NULL, "number of range rings"},
    {"sectors", RV_SET_INT, 60, 4, 720, NULL, "number of azimuth sectors"},
    {"max_range", RV_SET_FLOAT, 80, 1, 1000, NULL, "largest planar range kept, metres"},
    {"lift", RV_SET_FLOAT, 2, -100, 100, NULL, "metres added to every height"},
};

static int sc_create(const double *v, void **inst, uint32_t *dim, uint32_t *key_dim, char *msg,
                     size_t len)
{
    struct sc *s = malloc(sizeof *s);
    if (!s) return snprintf(msg, len, "out of memory"), RV_ERR_NOMEM;
    s->rings = (int)v[0];
    s->sectors = (int)v[1];
    s->max_range_m = v[2];
    s->lift_m = v[3];
    *inst = s;
    *dim = (uint32_t)(s->rings * s->sectors);
    *key_dim = (uint32_t)s->rings;
    return RV_OK;
}

static int sc_describe(void *inst, const struct rv_scan *scan, float *desc, float *key, char *msg,
                       size_t len)
{
    (void)msg;
    (void)len;
    const struct sc *s = inst;
    size_t cells = (size_t)s->rings * (size_t)s->sectors;
    for (size_t c = 0; c < cells; c++) desc[c] = -INFINITY;
    for (size_t k = 0; k < scan->n; k++) {
        const float *p = scan->xyzi + 4 * k;
        double r = sqrt((double)p[0] * p[0] + (double)p[1] * p[1]);
        if (!(r < s->max_range_m)) continue;
        int ring = (int)(r / s->max_range_m * s->rings);
        int sec = (int)((atan2(p[1], p[0]) + M_PI) / (2 * M_PI) * s->sectors);
        if (ring >= s->rings) ring = s->rings - 1;
        if (sec >= s->sectors) sec = s->sectors - 1;
        float h = (float)(p[2] + s->lift_m);
        float *cell = &desc[(size_t)sec * s->rings + ring];
        if (h > *cell) *cell = h;
    }
    for (size_t c = 0; c < cells; c++)
        if (desc[c] == -INFINITY) desc[c] = 0;
    for (int r = 0; r < s->rings; r++) {
        double sum = 0;
        for (int c = 0; c < s->sectors; c++) sum += desc[(size_t)c * s->rings + r];
        key[r] = (float)(sum / s->sectors);
    }
    return RV_OK;
}

/* |column j|^2 for every column of an image. */
static void sc_norms(const float *img, int R, int S, double *out)
{
    for (int j = 0; j < S; j++) {
        double n = 0;
        for (int r = 0; r < R; r++) n += (double)img[(size_t)j * R + r] * img[(size_t)j * R + r];
        out[j] = n;
    }
}

static double sc_dot(const float *a, const float *b, int R)
{
    double s = 0;
    for (int r = 0; r < R; r++) s += (double)a[r] * b[r];
    return s;
}

/* Minimum over shifts k of 1 - mean cosine of column j of a and j + k of b.
 * The cosine is dot / sqrt(|a|^2 |b|^2): for equal columns that is exactly 1
 * (sqrt(x * x) == x in IEEE arithmetic), so a turned copy is at exactly 0. */
static double sc_distance(const void *inst, const float *a, const float *b, int32_t *aux)
{
    const struct sc *s = inst;
    int R = s->rings, S = s->sectors;
    double ia[720], ib[720];
    sc_norms(a, R, S, ia);
    sc_norms(b, R, S, ib);
    double best = 2;
    int32_t best_k = 0;
    for (int k = 0; k < S; k++) {
        double sum = 0;
        int used = 0;
        for (int j = 0; j < S; j++) {
            int jb = j + k < S ? j + k : j + k - S;
            if (ia[j] == 0 || ib[jb] == 0) continue;
            sum += sc_dot(a + (size_t)j * R, b + (size_t)jb * R, R) / sqrt(ia[j] * ib[jb]);
            used++;
        }
        double d = used ? 1 - sum / used : 1;
        if (d < best) {
            best = d;
            best_k = k;
        }
    }
    if (aux) *aux = best_k;
    return best < 0 ? 0 : best;
}

static void sc_destroy(void *inst) { free(inst); }

static const struct rv_method sc_method = {
    RV_ABI_VERSION, sizeof sc_method, "scan-context", "1.0",
    "ring x sector maximum-height image, ring-key prefilter, shift-searched column cosine "
    "(Kim and Kim, IROS 2018)",
    sc_settings, sizeof sc_settings / sizeof *sc_settings, RV_DIST_CUSTOM, RV_FLAG_THREAD_SAFE,
    sc_create, sc_describe, sc_destroy, sc_distance, NULL};

RV_EXPORT const struct rv_method *rv_method_entry(void) { return &sc_method; }
