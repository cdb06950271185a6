/* features.c: per-segment shape features F_a, centroid and hull vertices.
 *
 * F_a (D = 13 + hist_bins values), every one unchanged by a rotation about
 * the vertical axis:
 *   0..6   eigenvalue features of the 3D covariance (Weinmann et al., ISPRS
 *          J. Photogramm. Remote Sens. 2015, formulas from memory) with
 *          normalised eigenvalues e1 >= e2 >= e3, e_i = l_i / (l1 + l2 + l3):
 *          linearity (e1-e2)/e1, planarity (e2-e3)/e1, scattering e3/e1,
 *          omnivariance (e1 e2 e3)^(1/3), anisotropy (e1-e3)/e1,
 *          eigenentropy -sum e_i ln e_i (divided by ln 3, its largest value),
 *          change of curvature e3/(e1+e2+e3)
 *   7, 8   horizontal spreads sqrt(12 l1), sqrt(12 l2) from the eigenvalues
 *          l1 >= l2 of the x, y covariance (the width of a uniform strip),
 *   9      vertical extent (z range), all three divided by extent_scale_m
 *   10..12 mean height above the ground plane, standard deviation of z and
 *          top height above the ground plane, divided by height_scale_m
 *   13..   vertical occupancy: the share of points in each of hist_bins
 *          equal slices of the segment's own height range
 * The eigenvalue features and the shares are unitless in [0, 1]; the two
 * scales are the settings that standardise the metric ones.
 *
 * Hull vertices: the extreme point along each of the 26 directions of the
 * 3x3x3 grid, turned to the horizontal principal axis (duplicates removed).  They are true hull vertices, so GJK on
 * them measures the distance between inner approximations of the hulls.
 * We chose this over a full 3D hull (quickhull) because LiDAR segments are
 * often flat or nearly collinear (walls, poles), where a hull builder needs
 * careful handling of degenerate faces, while the extreme-point set is
 * always defined, costs 26 dot products per point, and caps the vertex
 * count at 26 so every GJK support query is a short scan.
 */
#include <lapacke.h>
#include <math.h>
#include <string.h>
#include "harness/plugins/sop/sop.h"

int feat_dim(const struct sop_params *p)
{
    return SOP_FA_FIXED + p->hist_bins;
}

void feat_eigen(const double l[3], double f[7])
{
    double sum = l[0] + l[1] + l[2];
    if (!(sum > 0) || !(l[0] > 0)) {
        memset(f, 0, sizeof(double[7]));
        return;
    }
    double e[3];
    for (int k = 0; k < 3; k++)
        e[k] = l[k] > 0 ? l[k] / sum : 0;
    f[0] = (e[0] - e[1]) / e[0];
    f[1] = (e[1] - e[2]) / e[0];
    f[2] = e[2] / e[0];
    f[3] = cbrt(e[0] * e[1] * e[2]);
    f[4] = (e[0] - e[2]) / e[0];
    double h = 0;
    for (int k = 0; k < 3; k++)
        if (e[k] > 0)
            h -= e[k] * log(e[k]);
    f[5] = h / log(3.0);
    f[6] = e[2] / (e[0] + e[1] + e[2]);
}

/* One pass over the points for the second moments about c and the z
 * range: s[3a+b] (b >= a) = sum of d[a] d[b], d = point - c, and *zmin,
 * *zmax.  Every later use divides these sums, so the covariance, the
 * horizontal spreads and the z deviation share them (they used to take a
 * pass each, adding the same products in the same order). */
static void feat_moments(const float *xyzi, const uint32_t *idx, uint32_t cnt, const double c[3],
                         double s[9], double *zmin, double *zmax)
{
    double lo = INFINITY, hi = -INFINITY;
    memset(s, 0, sizeof(double[9]));
    for (uint32_t k = 0; k < cnt; k++) {
        const float *q = xyzi + 4 * (size_t)idx[k];
        double d[3] = {q[0] - c[0], q[1] - c[1], q[2] - c[2]}, z = q[2];
        for (int a = 0; a < 3; a++)
            for (int b = a; b < 3; b++)
                s[a * 3 + b] += d[a] * d[b];
        lo = fmin(lo, z), hi = fmax(hi, z);
    }
    *zmin = lo, *zmax = hi;
}

/* Descending eigenvalues of the covariance (s: the sums of feat_moments). */
static void feat_cov_eigen(const double sum[9], uint32_t cnt, double l[3])
{
    double s[9], w[3];
    for (int k = 0; k < 9; k++)
        s[k] = sum[k] / cnt;
    if (LAPACKE_dsyev(LAPACK_ROW_MAJOR, 'N', 'U', 3, s, 3, w) != 0)
        w[0] = w[1] = w[2] = 0;
    for (int k = 0; k < 3; k++)  /* ascending from LAPACK; round-off may dip below 0 */
        l[k] = w[2 - k] > 0 ? w[2 - k] : 0;
}

/* Horizontal spreads sqrt(12 l1) >= sqrt(12 l2) from the eigenvalues of the
 * 2x2 covariance of x, y (the width of a uniform strip with that variance);
 * axis gets the unit direction of the first principal axis.  Eigenvalues do
 * not change when the segment turns, and unlike the extremes along the axes
 * they stay smooth when the two axes swap (near-square segments).
 * s: the sums of feat_moments. */
static void feat_horizontal(const double s[9], uint32_t cnt, double ext[2], double axis[2])
{
    double sxx = s[0] / cnt, syy = s[4] / cnt, sxy = s[1] / cnt;
    double th = 0.5 * atan2(2 * sxy, sxx - syy), mid = 0.5 * (sxx + syy);
    double rad = sqrt(0.25 * (sxx - syy) * (sxx - syy) + sxy * sxy);
    axis[0] = cos(th), axis[1] = sin(th);
    ext[0] = sqrt(12 * (mid + rad));
    ext[1] = sqrt(12 * fmax(mid - rad, 0));
}

#define FEAT_BLOCK 256  /* points gathered at a time for the hull scan */

/* Running extremes along dir over one gathered block x, y, z[0..len):
 * *hi, *hi_at the largest dot product so far and its point, *lo, *lo_at
 * the largest negated one.  Strict comparisons keep the first point of a
 * tie, as one scan over all the points would. */
static void feat_extreme(const double dir[3], const double *x, const double *y, const double *z,
                         const uint32_t *idx, uint32_t len, double *hi, uint32_t *hi_at,
                         double *lo, uint32_t *lo_at)
{
    double h = *hi, l = *lo;
    uint32_t ha = *hi_at, la = *lo_at;
    for (uint32_t m = 0; m < len; m++) {  /* selects, not branches: points come in scan order, so the extremes move often */
        double v = dir[0] * x[m] + dir[1] * y[m] + dir[2] * z[m], nv = -v;
        uint32_t at = idx[m];
        ha = v > h ? at : ha, h = v > h ? v : h;
        la = nv > l ? at : la, l = nv > l ? nv : l;
    }
    *hi = h, *lo = l, *hi_at = ha, *lo_at = la;
}

/* Hull vertices and bounding radius (see the file comment).  The 26
 * directions are taken in the frame of the horizontal principal axis, so
 * the chosen vertices turn with the segment when the sensor turns.  The
 * points are gathered a block at a time and each direction scans the
 * block on its own, which keeps its running extreme in registers. */
static void feat_hull(const float *xyzi, const uint32_t *idx, uint32_t cnt, const double axis[2],
                      struct sop_seg *s)
{
    uint32_t best[SOP_HULL_DIRS] = {0};
    double bd[SOP_HULL_DIRS];
    double dir[SOP_HULL_DIRS][3];
    int nd = 0;
    for (int i = -1; i <= 1; i++)
        for (int j = -1; j <= 1; j++)
            for (int k = -1; k <= 1; k++)
                if (i || j || k) {
                    dir[nd][0] = i * axis[0] - j * axis[1];
                    dir[nd][1] = i * axis[1] + j * axis[0];
                    dir[nd][2] = k, bd[nd++] = -INFINITY;
                }
    /* direction SOP_HULL_DIRS - 1 - d is exactly -dir[d] (rounding is
     * symmetric), so its dot product is exactly -v: one product serves both */
    double x[FEAT_BLOCK], y[FEAT_BLOCK], z[FEAT_BLOCK];
    for (uint32_t m0 = 0; m0 < cnt; m0 += FEAT_BLOCK) {
        uint32_t len = cnt - m0 < FEAT_BLOCK ? cnt - m0 : FEAT_BLOCK;
        for (uint32_t m = 0; m < len; m++) {
            const float *q = xyzi + 4 * (size_t)idx[m0 + m];
            x[m] = q[0], y[m] = q[1], z[m] = q[2];
        }
        for (int d = 0; d < SOP_HULL_DIRS / 2; d++) {
            int o = SOP_HULL_DIRS - 1 - d;
            feat_extreme(dir[d], x, y, z, idx + m0, len, &bd[d], &best[d], &bd[o], &best[o]);
        }
    }
    s->nv = 0;
    s->radius = 0;
    for (int d = 0; d < SOP_HULL_DIRS; d++) {
        int dup = 0;
        for (int e = 0; e < d; e++)
            dup |= best[e] == best[d];
        if (dup)
            continue;
        const float *q = xyzi + 4 * (size_t)best[d];
        double *v = s->v + 3 * s->nv++;
        v[0] = q[0], v[1] = q[1], v[2] = q[2];
        double dx = v[0] - s->c[0], dy = v[1] - s->c[1], dz = v[2] - s->c[2];
        s->radius = fmax(s->radius, sqrt(dx * dx + dy * dy + dz * dz));
    }
}

/* Heights: mean above ground, std of z, top above ground, slice shares;
 * ss, zmin, zmax from feat_moments (s[8] and the z range). */
static void feat_heights(const struct sop_params *p, const float *xyzi, const uint32_t *idx,
                         uint32_t cnt, const double plane[3], const double c[3], double ss,
                         double zmin, double zmax, double *f)
{
    double g = plane[0] * c[0] + plane[1] * c[1] + plane[2];
    f[0] = (zmax - zmin) / p->extent_scale_m;
    f[1] = (c[2] - g) / p->height_scale_m;
    f[2] = sqrt(ss / cnt) / p->height_scale_m;
    f[3] = (zmax - g) / p->height_scale_m;
    double *hist = f + 4, span = zmax - zmin;
    for (int b = 0; b < p->hist_bins; b++)
        hist[b] = 0;
    for (uint32_t k = 0; k < cnt; k++) {
        double z = xyzi[4 * (size_t)idx[k] + 2];
        int b = span > 0 ? (int)((z - zmin) / span * p->hist_bins) : 0;
        hist[b < p->hist_bins ? b : p->hist_bins - 1] += 1.0 / cnt;
    }
}

/* F_a in double precision into f (feat_dim values); c gets the centroid and
 * axis the horizontal principal direction. */
static void feat_compute(const struct sop_params *p, const float *xyzi, const uint32_t *idx,
                         uint32_t cnt, const double plane[3], double c[3], double *f,
                         double axis[2])
{
    double l[3];
    c[0] = c[1] = c[2] = 0;
    for (uint32_t k = 0; k < cnt; k++)
        for (int a = 0; a < 3; a++)
            c[a] += xyzi[4 * (size_t)idx[k] + a];
    for (int a = 0; a < 3; a++)
        c[a] /= cnt;
    double s[9], zmin, zmax;
    feat_moments(xyzi, idx, cnt, c, s, &zmin, &zmax);
    feat_cov_eigen(s, cnt, l);
    feat_eigen(l, f);
    feat_horizontal(s, cnt, f + 7, axis);
    f[7] /= p->extent_scale_m, f[8] /= p->extent_scale_m;
    feat_heights(p, xyzi, idx, cnt, plane, c, s[8], zmin, zmax, f + 9);
}

void feat_segment(const struct sop_params *p, const float *xyzi, const uint32_t *idx,
                  uint32_t cnt, const double plane[3], struct sop_seg *out)
{
    double f[SOP_FA_MAX], axis[2];
    feat_compute(p, xyzi, idx, cnt, plane, out->c, f, axis);
    out->n = cnt;
    for (int k = 0; k < feat_dim(p); k++)
        out->fa[k] = (float)f[k];
    feat_hull(xyzi, idx, cnt, axis, out);
}
