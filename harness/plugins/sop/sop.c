/* sop.c: segment second-order pooling as a plugin: settings, the method
 * table, and describe (ground -> segments -> F_a -> context -> pooling).
 * See sop.h for the data flow and each step's file for its details.
 *
 * Sequential: the temporal context needs the previous scans of the same
 * sequence in order, so the method carries RV_FLAG_SEQUENTIAL and forgets
 * them on reset.  Not thread-safe (one instance keeps its scratch buffers).
 *
 * A scan with no segment left after ground removal gets the zero descriptor
 * (distance 1 to every normalised one), the instance counts it in
 * `empty_scans`, and describe still returns RV_OK with a note in msg.
 */
#include <stdio.h>
#include <stdlib.h>
#include <string.h>
#include <time.h>
#include "harness/revisit_plugin.h"
#include "harness/plugins/sop/sop.h"

enum {
    S_GCELL, S_GHEIGHT, S_GRANGE, S_SLOPE, S_RANSAC, S_VOXEL, S_MINPTS, S_MAXPTS, S_MAXEXT,
    S_EXTSCALE, S_HSCALE, S_BINS, S_KSP, S_TEMP, S_KTEMP, S_HIST, S_MW, S_MSCALE, S_MMAX,
    S_FSCALE, S_SHIFT, S_SHIFTMIN, S_SELF, S_ALPHA, S_POWER, S_CONTEXT, S_COUNT
};

static const struct rv_setting sop_settings[S_COUNT] = {
    {"ground_cell_m", RV_SET_FLOAT, 2.0, 0.1, 20, NULL, "grid cell for the ground candidates (lowest point per cell)"},
    {"ground_height_m", RV_SET_FLOAT, 0.3, 0.01, 5, NULL, "points less than this above the ground plane are ground"},
    {"ground_range_m", RV_SET_FLOAT, 40, 1, 500, NULL, "ground candidates within this horizontal range"},
    {"max_slope_deg", RV_SET_FLOAT, 15, 0, 89, NULL, "steepest ground plane accepted"},
    {"ransac_iters", RV_SET_INT, 50, 1, 10000, NULL, "plane hypotheses tried on the ground candidates"},
    {"voxel_m", RV_SET_FLOAT, 0.8, 0.05, 10, NULL, "clustering tolerance: voxels of half this size join when their centroids are this close"},
    {"min_points", RV_SET_INT, 80, 1, 1000000, NULL, "smallest segment kept, in points"},
    {"max_points", RV_SET_INT, 20000, 1, 10000000, NULL, "largest segment kept, in points"},
    {"max_extent_m", RV_SET_FLOAT, 30, 0.1, 1000, NULL, "segments with a larger horizontal size sqrt(12 (l1 + l2)) are dropped"},
    {"extent_scale_m", RV_SET_FLOAT, 10, 0.01, 1000, NULL, "extents are divided by this"},
    {"height_scale_m", RV_SET_FLOAT, 5, 0.01, 1000, NULL, "heights are divided by this"},
    {"hist_bins", RV_SET_INT, 4, 1, SOP_HIST_MAX, NULL, "slices of the vertical occupancy histogram"},
    {"k_spatial", RV_SET_INT, 4, 1, 64, NULL, "neighbours by hull distance in the spatial context"},
    {"context_temp_m", RV_SET_FLOAT, 1.0, 0.01, 100, NULL, "softmax temperature of the hull distances"},
    {"k_temporal", RV_SET_INT, 5, 1, 64, NULL, "candidates by centroid and by feature in the previous scan"},
    {"history", RV_SET_INT, 3, 1, 50, NULL, "previous scans pooled in the temporal context"},
    {"match_weight", RV_SET_FLOAT, 0.5, 0, 1, NULL, "weight of the centroid distance in the match cost"},
    {"match_scale_m", RV_SET_FLOAT, 2, 0.01, 100, NULL, "centroid distances are divided by this in the match cost"},
    {"match_max_m", RV_SET_FLOAT, 4, 0, 1000, NULL, "no correspondence beyond this centroid distance"},
    {"feature_scale", RV_SET_FLOAT, 1, 0.001, 100, NULL, "feature distances are divided by this in the match cost"},
    {"ego_shift", RV_SET_BOOL, 1, 0, 1, NULL, "estimate the scene shift between scans before matching"},
    {"shift_min_pairs", RV_SET_INT, 3, 1, 1000, NULL, "mutual feature matches needed to estimate the shift"},
    {"temporal_self", RV_SET_BOOL, 1, 0, 1, NULL,
     "the temporal context pools the segment itself too (false: earlier scans only, zero without a match)"},
    {"alpha", RV_SET_FLOAT, 0.5, 0.01, 4, NULL, "power applied to the singular values of the pooled matrix"},
    {"power", RV_SET_BOOL, 1, 0, 1, NULL, "apply the power-Euclidean transform (false: ablation)"},
    {"context", RV_SET_CHOICE, 0, 0, 3, "both|spatial|temporal|none",
     "context pooled with F_a: both, one of them, or none (F_b = F_a)"},
};

/* Step timers for the benchmark, seconds. */
enum { SOP_T_GROUND, SOP_T_SEGMENT, SOP_T_FEATURES, SOP_T_CONTEXT, SOP_T_POOL, SOP_T_COUNT };

struct sop {
    struct sop_params p;
    int dim;                 /* D, features per segment */
    uint8_t *ground;
    size_t cap_pts;
    struct seg_set set;
    struct sop_seg *segs;
    double *spatial, *temporal, *fb;  /* n_seg x D each */
    size_t cap_seg;
    double *pooled;          /* D x D */
    struct ctx_history hist;
    unsigned long empty_scans;
};

static void sop_free(void *inst)
{
    struct sop *s = inst;
    if (!s)
        return;
    free(s->ground);
    seg_set_release(&s->set);
    free(s->segs);
    free(s->spatial);
    free(s->temporal);
    free(s->fb);
    free(s->pooled);
    ctx_history_release(&s->hist);
    free(s);
}

static void sop_params_from(const double *v, struct sop_params *p)
{
    p->ground_cell_m = v[S_GCELL], p->ground_height_m = v[S_GHEIGHT];
    p->ground_range_m = v[S_GRANGE], p->max_slope_deg = v[S_SLOPE];
    p->ransac_iters = (int)v[S_RANSAC], p->voxel_m = v[S_VOXEL];
    p->min_points = (int)v[S_MINPTS], p->max_points = (int)v[S_MAXPTS];
    p->max_extent_m = v[S_MAXEXT], p->extent_scale_m = v[S_EXTSCALE];
    p->height_scale_m = v[S_HSCALE], p->hist_bins = (int)v[S_BINS];
    p->k_spatial = (int)v[S_KSP], p->context_temp_m = v[S_TEMP];
    p->k_temporal = (int)v[S_KTEMP], p->history = (int)v[S_HIST];
    p->match_weight = v[S_MW], p->match_scale_m = v[S_MSCALE];
    p->match_max_m = v[S_MMAX], p->feature_scale = v[S_FSCALE];
    p->ego_shift = v[S_SHIFT] != 0, p->shift_min_pairs = (int)v[S_SHIFTMIN];
    p->temporal_self = v[S_SELF] != 0;
    p->alpha = v[S_ALPHA], p->power = v[S_POWER] != 0;
    p->context = (enum sop_context)(int)v[S_CONTEXT];
}

static int sop_new(const double *v, void **inst, uint32_t *dim, uint32_t *key_dim, char *msg,
                   size_t msg_len)
{
    struct sop *s = calloc(1, sizeof *s);
    if (!s)
        return snprintf(msg, msg_len, "out of memory"), RV_ERR_NOMEM;
    sop_params_from(v, &s->p);
    if (s->p.min_points > s->p.max_points) {
        snprintf(msg, msg_len, "min_points %d is above max_points %d, expected min_points <= max_points",
                 s->p.min_points, s->p.max_points);
        free(s);
        return RV_ERR_INPUT;
    }
    s->dim = feat_dim(&s->p);
    s->pooled = malloc(sizeof *s->pooled * (size_t)s->dim * s->dim);
    if (!s->pooled || ctx_history_init(&s->hist, s->p.history)) {
        sop_free(s);
        return snprintf(msg, msg_len, "out of memory"), RV_ERR_NOMEM;
    }
    *inst = s;
    *dim = (uint32_t)(s->dim * s->dim);
    *key_dim = 0;
    return RV_OK;
}

static void sop_reset(void *inst)
{
    struct sop *s = inst;
    ctx_history_clear(&s->hist);
}

static double sop_clock(void)
{
    struct timespec ts;
    clock_gettime(CLOCK_MONOTONIC, &ts);
    return (double)ts.tv_sec + 1e-9 * (double)ts.tv_nsec;
}

/* Room for n_seg segments' context rows.  0 or -1 (memory; old buffers kept). */
static int sop_reserve_segs(struct sop *s, size_t n_seg)
{
    if (n_seg <= s->cap_seg)
        return 0;
    size_t row = sizeof(double) * (size_t)s->dim * n_seg;
    struct sop_seg *g = realloc(s->segs, sizeof *g * n_seg);
    if (g)
        s->segs = g;
    double *a = realloc(s->spatial, row);
    if (a)
        s->spatial = a;
    double *b = realloc(s->temporal, row);
    if (b)
        s->temporal = b;
    double *c = realloc(s->fb, row);
    if (c)
        s->fb = c;
    if (!g || !a || !b || !c)
        return -1;
    s->cap_seg = n_seg;
    return 0;
}

/* Context, F_b, pooling, transform and normalisation for n segments
 * (seg may be s->segs).  times, when not NULL, gains the context and pool
 * seconds.  Returns an rv_status. */
static int sop_from_segments(struct sop *s, const struct sop_seg *seg, size_t n, float *desc,
                             double *times, char *msg, size_t msg_len)
{
    const struct sop_params *p = &s->p;
    size_t d = (size_t)s->dim;
    if (sop_reserve_segs(s, n ? n : 1))
        return snprintf(msg, msg_len, "out of memory"), RV_ERR_NOMEM;
    double t0 = times ? sop_clock() : 0;
    int sp = p->context == SOP_CTX_BOTH || p->context == SOP_CTX_SPATIAL;
    int tp = p->context == SOP_CTX_BOTH || p->context == SOP_CTX_TEMPORAL;
    if ((sp && ctx_spatial(p, seg, n, s->dim, s->spatial))
        || (tp && ctx_temporal(p, seg, n, s->dim, &s->hist, s->temporal)))
        return snprintf(msg, msg_len, "out of memory"), RV_ERR_NOMEM;
    for (size_t i = 0; i < n; i++)
        for (size_t a = 0; a < d; a++) {
            size_t k = i * d + a;
            s->fb[k] = sp && tp ? 0.5 * (s->spatial[k] + s->temporal[k])
                     : sp ? s->spatial[k] : tp ? s->temporal[k] : seg[i].fa[a];
        }
    double t1 = times ? sop_clock() : 0;
    pool_second_order(seg, s->fb, n, s->dim, s->pooled);
    if (p->power && n && pool_power(s->pooled, s->dim, p->alpha))
        return snprintf(msg, msg_len, "singular value decomposition of the pooled matrix failed"),
               RV_ERR_INTERNAL;
    pool_normalise(s->pooled, s->dim, desc);
    if (times) {
        times[SOP_T_CONTEXT] += t1 - t0;
        times[SOP_T_POOL] += sop_clock() - t1;
    }
    return RV_OK;
}

/* The whole method on one scan; times (SOP_T_COUNT seconds, added to) may be NULL. */
static int sop_run(struct sop *s, const struct rv_scan *scan, float *desc, double *times,
                   char *msg, size_t msg_len)
{
    double plane[3], t[4];
    if (scan->n > s->cap_pts) {
        uint8_t *g = realloc(s->ground, scan->n);
        if (!g)
            return snprintf(msg, msg_len, "out of memory"), RV_ERR_NOMEM;
        s->ground = g, s->cap_pts = scan->n;
    }
    t[0] = times ? sop_clock() : 0;
    if (ground_remove(&s->p, scan->xyzi, scan->n, plane, s->ground) < 0)
        return snprintf(msg, msg_len, "out of memory"), RV_ERR_NOMEM;
    t[1] = times ? sop_clock() : 0;
    if (seg_cluster(&s->p, scan->xyzi, scan->n, s->ground, &s->set))
        return snprintf(msg, msg_len, "out of memory"), RV_ERR_NOMEM;
    t[2] = times ? sop_clock() : 0;
    size_t n = s->set.n_seg;
    if (sop_reserve_segs(s, n ? n : 1))
        return snprintf(msg, msg_len, "out of memory"), RV_ERR_NOMEM;
    for (size_t i = 0; i < n; i++)
        feat_segment(&s->p, scan->xyzi, s->set.idx + s->set.start[i],
                     s->set.start[i + 1] - s->set.start[i], plane, &s->segs[i]);
    t[3] = times ? sop_clock() : 0;
    if (times)
        for (int k = 0; k < 3; k++)
            times[SOP_T_GROUND + k] += t[k + 1] - t[k];
    int rc = sop_from_segments(s, s->segs, n, desc, times, msg, msg_len);
    if (rc == RV_OK && n == 0) {
        s->empty_scans++;
        snprintf(msg, msg_len, "no segments after ground removal on scan %u (%lu such scans)",
                 scan->index, s->empty_scans);
    }
    return rc;
}

static int sop_describe(void *inst, const struct rv_scan *scan, float *desc, float *key,
                        char *msg, size_t msg_len)
{
    (void)key;
    return sop_run(inst, scan, desc, NULL, msg, msg_len);
}

static const struct rv_method sop_method = {
    RV_ABI_VERSION, sizeof sop_method, "sop", "1.0",
    "segment second-order pooling: hull-distance (GJK) and temporal context, "
    "max-pooled outer products (Carreira et al. 2012), power-Euclidean transform "
    "(Dryden et al. 2009)",
    sop_settings, S_COUNT, RV_DIST_L2, RV_FLAG_SEQUENTIAL,
    sop_new, sop_describe, sop_free, NULL, sop_reset};

RV_EXPORT const struct rv_method *rv_method_entry(void)
{
    return &sop_method;
}
