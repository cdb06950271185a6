/* sop.h: internal interface of the segment second-order pooling plugin.
 * Nothing here is exported from sop.so; the tests include the .c files.
 *
 * Data flow for one scan (one file per step):
 *   ground.c    plane fit to grid-cell minima (RANSAC), ground mask
 *   segment.c   voxel-grid connected components of the other points
 *   features.c  per segment: F_a, centroid, hull vertices
 *   gjk.c       distance between two convex hulls (GJK)
 *   context.c   spatial context (k nearest hulls) and temporal context
 *               (correspondences in the previous scans)
 *   pool.c      max over segments of F_a F_b^T, power-Euclidean transform,
 *               flatten, L2-normalise
 *   sop.c       settings, the plugin table, describe
 *
 * Segment record (one per segment of the current scan):
 *   n, c[3]   point count and centroid (sensor frame)
 *   radius    bounding-sphere radius of the hull about c
 *   v[3*nv]   hull vertices x y z, nv <= SOP_HULL_DIRS
 *   fa[D]     shape features, D = SOP_FA_FIXED + hist_bins
 */
#ifndef RV_SOP_H
#define RV_SOP_H

#include <stddef.h>
#include <stdint.h>

#define SOP_HULL_DIRS 26    /* extreme points along the 26 grid directions */
#define SOP_FA_FIXED 13     /* features before the vertical histogram */
#define SOP_HIST_MAX 8
#define SOP_FA_MAX (SOP_FA_FIXED + SOP_HIST_MAX)

enum sop_context { SOP_CTX_BOTH = 0, SOP_CTX_SPATIAL, SOP_CTX_TEMPORAL, SOP_CTX_NONE };

struct sop_params {
    double ground_cell_m, ground_height_m, ground_range_m, max_slope_deg;
    int ransac_iters;
    double voxel_m;
    int min_points, max_points;
    double max_extent_m, extent_scale_m, height_scale_m;
    int hist_bins;
    int k_spatial;
    double context_temp_m;
    int k_temporal, history;
    double match_weight, match_scale_m, match_max_m, feature_scale;
    int ego_shift, shift_min_pairs, temporal_self;
    double alpha;
    int power;
    enum sop_context context;
};

struct sop_seg {
    uint32_t n;
    double c[3];
    double radius;
    int nv;
    double v[3 * SOP_HULL_DIRS];
    float fa[SOP_FA_MAX];
};

/* ground.c: fit z = plane[0] x + plane[1] y + plane[2] and set ground[k] = 1
 * for points less than ground_height_m above it.  Returns the number of
 * ground points, or -1 when out of memory. */
long ground_remove(const struct sop_params *p, const float *xyzi, size_t n, double plane[3],
                   uint8_t *ground);

/* segment.c: segments as point-index lists (CSR layout). */
struct seg_set {
    size_t n_seg;
    uint32_t *start;   /* n_seg + 1 offsets into idx */
    uint32_t *idx;     /* point indices grouped by segment */
    size_t cap_pts, cap_seg;
};
/* Group the points with ground[k] == 0 into voxel-connected segments that
 * pass the size limits.  0, or -1 when out of memory (set left valid). */
int seg_cluster(const struct sop_params *p, const float *xyzi, size_t n,
                const uint8_t *ground, struct seg_set *out);
void seg_set_release(struct seg_set *s);

/* features.c */
int feat_dim(const struct sop_params *p);
/* Fill every field of *out from the points idx[0..cnt) (cnt >= 1). */
void feat_segment(const struct sop_params *p, const float *xyzi, const uint32_t *idx,
                  uint32_t cnt, const double plane[3], struct sop_seg *out);
/* The eigenvalue features from descending eigenvalues l[0] >= l[1] >= l[2]:
 * linearity, planarity, scattering, omnivariance, anisotropy, eigenentropy
 * (divided by ln 3), change of curvature. */
void feat_eigen(const double l[3], double f[7]);

/* gjk.c: distance between the convex hulls of a[0..na) and b[0..nb)
 * (x y z triples); 0 when they intersect or touch. */
double gjk_distance(const double *a, int na, const double *b, int nb);

/* context.c: spatial and temporal context (see context.c for the rules). */
/* out[i*D..] = softmax(-d/temp)-weighted sum of F_a of the k nearest
 * segments by hull distance; zeros for a lone segment.  0 or -1 (memory). */
int ctx_spatial(const struct sop_params *p, const struct sop_seg *s, size_t n, int dim,
                double *out);

/* One earlier scan as the temporal context keeps it. */
struct ctx_frame {
    size_t n;
    double *c;       /* 3 n centroids */
    float *fa;       /* D n features */
    int32_t *link;   /* match in the frame before, -1 when none */
    uint32_t *track; /* consecutive scans this segment has been matched */
};
struct ctx_history {
    int len, cap, head;      /* frames[head] is the latest */
    struct ctx_frame *frames;
};
int ctx_history_init(struct ctx_history *h, int cap);
void ctx_history_release(struct ctx_history *h);
void ctx_history_clear(struct ctx_history *h);
/* Temporal context of the current segments against the history, then push
 * the current scan into it.  out as for ctx_spatial.  0 or -1 (memory). */
int ctx_temporal(const struct sop_params *p, const struct sop_seg *s, size_t n, int dim,
                 struct ctx_history *h, double *out);

/* pool.c */
/* pooled[a*D+b] = max over segments of fa[i][a] * fb[i][b]; zeros when n = 0. */
void pool_second_order(const struct sop_seg *s, const double *fb, size_t n, int dim,
                       double *pooled);
/* The power-Euclidean transform in place: mat = U diag(s^alpha) V^T for
 * mat = U diag(s) V^T (dim x dim, row-major).  0 or -1 (memory, LAPACKE). */
int pool_power(double *mat, int dim, double alpha);
/* Flatten and L2-normalise into desc (dim*dim floats); zeros stay zeros. */
void pool_normalise(const double *mat, int dim, float *desc);

#endif
