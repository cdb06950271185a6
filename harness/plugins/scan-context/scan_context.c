/* scan_context.c: the Scan Context descriptor (G. Kim and A. Kim, "Scan
 * Context: Egocentric Spatial Descriptor for Place Recognition within 3D
 * Point Cloud Map", IROS 2018) as a revisit plugin.
 *
 * Descriptor layout (see sc.h): sectors x rings floats, sector-major.
 * Cell (r, s) holds the largest height z + lift of the points in ring r
 * (equal widths up to max_range) and sector s (equal widths,
 * counter-clockwise from -pi; sc_image.c states the rule for points on a
 * boundary); an empty cell is 0.
 *
 * Turning the scan by m sectors counter-clockwise moves column s to s + m.
 * The key (one float per ring, the mean of the ring's row) does not change
 * under a turn and serves the prefilter.  The distance is the minimum over
 * column shifts k of 1 - mean cosine similarity of column j of a and column
 * j + k of b, over the columns non-empty in both; aux receives the best k
 * (sc_distance.c); distance_batch prepares a query once for all its
 * candidates.  Defaults (20 rings, 60 sectors, 80 m) are the published
 * ones, from memory; the lift of 2 m is the sensor height the published
 * code adds, from memory.
 */
#include <math.h>
#include <stdio.h>
#include <stdlib.h>

#include "harness/revisit_plugin.h"
#include "harness/plugins/scan-context/sc.h"

static const struct rv_setting sc_settings[] = {
    {"rings", RV_SET_INT, 20, 1, SC_MAX_RINGS, NULL, "number of range rings"},
    {"sectors", RV_SET_INT, 60, 4, SC_MAX_SECTORS, NULL, "number of azimuth sectors"},
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
    s->pair = sc_pair_pick();
    s->many = sc_many_pick();
    s->image = sc_image_pick();
    sc_sector_init(s);
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
    sc_image(inst, scan->xyzi, scan->n, desc, key);
    return RV_OK;
}

static double sc_distance(const void *inst, const float *a, const float *b, int32_t *aux)
{
    const struct sc *s = inst;
    return s->pair(s->rings, s->sectors, a, b, aux);
}

static int sc_distance_batch(const void *inst, const float *a, const float *const *b, size_t n, double *out,
                             int32_t *aux, char *msg, size_t len)
{
    (void)msg;
    (void)len;
    const struct sc *s = inst;
    s->many(s->rings, s->sectors, a, b, n, out, aux);
    return RV_OK;
}

static void sc_destroy(void *inst) { free(inst); }

static const struct rv_method sc_method = {
    RV_ABI_VERSION, sizeof sc_method, "scan-context", "1.2",
    "ring x sector maximum-height image, ring-key prefilter, shift-searched column cosine "
    "(Kim and Kim, IROS 2018)",
    sc_settings, sizeof sc_settings / sizeof *sc_settings, RV_DIST_CUSTOM, RV_FLAG_THREAD_SAFE,
    sc_create, sc_describe, sc_destroy, sc_distance, NULL, sc_distance_batch};

RV_EXPORT const struct rv_method *rv_method_entry(void) { return &sc_method; }
