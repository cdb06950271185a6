/* range_height.c: a range-height histogram, the teaching example for plugin
 * authors (walkthrough in DEVELOPERS.md "Writing a plugin").
 *
 * Every point inside max_range (planar) and [z_min, z_max) falls in one bin
 * of a range_bins x height_bins grid (range-major); the descriptor is the
 * share of those points in each bin, so it sums to 1 (all zeros when no
 * point is inside).  Planar range ignores azimuth, so turning the scan
 * changes nothing.  Compared by L2.  harness/external/range_height.py
 * computes the same numbers bit for bit.
 */
#include <math.h>
#include <stdio.h>
#include <stdlib.h>

#include "harness/revisit_plugin.h"

struct rh {
    int range_bins, height_bins;
    double max_range_m, z_min_m, z_max_m;
};

static const struct rv_setting rh_settings[] = {
    {"range_bins", RV_SET_INT, 16, 1, 256, NULL, "bins over planar range"},
    {"height_bins", RV_SET_INT, 8, 1, 256, NULL, "bins over height"},
    {"max_range", RV_SET_FLOAT, 60, 0.1, 1000, NULL, "largest planar range kept, metres"},
    {"z_min", RV_SET_FLOAT, -3, -100, 100, NULL, "lowest height kept, metres"},
    {"z_max", RV_SET_FLOAT, 5, -100, 100, NULL, "height limit (exclusive), metres"},
};

static int rh_create(const double *v, void **inst, uint32_t *dim, uint32_t *key_dim, char *msg,
                     size_t len)
{
    if (!(v[4] > v[3])) return snprintf(msg, len, "z_max must be above z_min"), RV_ERR_INPUT;
    struct rh *h = malloc(sizeof *h);
    if (!h) return snprintf(msg, len, "out of memory"), RV_ERR_NOMEM;
    h->range_bins = (int)v[0];
    h->height_bins = (int)v[1];
    h->max_range_m = v[2];
    h->z_min_m = v[3];
    h->z_max_m = v[4];
    *inst = h;
    *dim = (uint32_t)(h->range_bins * h->height_bins);
    *key_dim = 0;
    return RV_OK;
}

static int rh_describe(void *inst, const struct rv_scan *scan, float *desc, float *key, char *msg,
                       size_t len)
{
    (void)key;
    const struct rh *h = inst;
    size_t bins = (size_t)h->range_bins * (size_t)h->height_bins, kept = 0;
    size_t *count = calloc(bins, sizeof *count);
    if (!count) return snprintf(msg, len, "out of memory"), RV_ERR_NOMEM;
    for (size_t k = 0; k < scan->n; k++) {
        double x = scan->xyzi[4 * k], y = scan->xyzi[4 * k + 1], z = scan->xyzi[4 * k + 2];
        double r = sqrt(x * x + y * y);
        if (!(r < h->max_range_m) || !(z >= h->z_min_m && z < h->z_max_m)) continue;
        int br = (int)(r / h->max_range_m * h->range_bins);
        int bz = (int)((z - h->z_min_m) / (h->z_max_m - h->z_min_m) * h->height_bins);
        if (br >= h->range_bins) br = h->range_bins - 1;
        if (bz >= h->height_bins) bz = h->height_bins - 1;
        count[(size_t)br * h->height_bins + bz]++;
        kept++;
    }
    for (size_t b = 0; b < bins; b++) desc[b] = kept ? (float)((double)count[b] / (double)kept) : 0.0f;
    free(count);
    return RV_OK;
}

static void rh_destroy(void *inst) { free(inst); }

static const struct rv_method rh_method = {
    RV_ABI_VERSION, sizeof rh_method, "range-height", "1.0",
    "histogram of points over planar range and height (teaching example)",
    rh_settings, sizeof rh_settings / sizeof *rh_settings, RV_DIST_L2, RV_FLAG_THREAD_SAFE,
    rh_create, rh_describe, rh_destroy, NULL, NULL};

RV_EXPORT const struct rv_method *rv_method_entry(void) { return &rh_method; }
