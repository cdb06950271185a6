/* m2dp.c: the M2DP descriptor as a plugin (He, Wang & Zhang, "M2DP: a novel
 * 3D point cloud descriptor and its application in loop closure detection",
 * IROS 2016).  Built only against the public plugin header.
 *
 * Steps for one scan (the paper's description, constants from memory):
 *   1. centre the points on their centroid;
 *   2. principal axes: x' = first, y' = second principal direction, z' = x' × y';
 *   3. for p azimuths θ_i = iπ/p and q elevations φ_j = jπ/(2q), project the
 *      points onto the plane with normal m = (cos φ cos θ, cos φ sin θ, sin φ);
 *      the plane's 2D x axis is the projection of x' onto it (of y' when x' is
 *      the normal itself), its y axis is m × (2D x axis);
 *   4. bin every projection into l rings × t sectors: ring k holds radii in
 *      [k² r0, (k+1)² r0) with r0 = r_max / l², r_max the largest 3D distance
 *      to the centroid; sector s holds angles in [2πs/t, 2π(s+1)/t);
 *   5. the counts of plane (i, j) form row i·q + j of A (pq × lt), column
 *      ring·t + sector; the signature is [u1; v1], A's first left and right
 *      singular vectors, pq + lt values (192 by default).
 *
 * Sign ambiguity.  Both steps produce vectors defined up to sign:
 *   - principal axis a (x' or y') is flipped so that the third moment of the
 *     coordinates along it, Σ (d·a)³, is >= 0 (the heavier tail points to +);
 *     z' = x' × y' keeps the frame right-handed, so z' needs no rule;
 *   - (u1, v1) and (−u1, −v1) are both singular pairs; A has no negative
 *     entry, so its leading pair can be taken with no negative component
 *     (Perron-Frobenius); we flip both when Σ v1 < 0.
 * A cloud whose third moment along an axis is zero (a symmetric one) has no
 * preferred sign there; the descriptor of such a cloud may flip under rotation.
 *
 * Speed: the binning visits every point once per plane (64 planes by
 * default).  The sector is found from a fast polynomial arctangent and then
 * corrected exactly against the sector's boundary directions, so the bins are
 * the ones atan2 gives; `max_points` thins very dense scans by a fixed stride.
 * The ring needs no square root: ring(r2) = floor(sqrt(sqrt(r2) / r0)) is
 * monotone in r2 = u^2 + v^2 under rounding too, so the smallest r2 of each
 * ring, found once per scan by bisection over the doubles, turns it into
 * l - 1 comparisons with the same result.  The binning kernel
 * (m2dp_bins.h) works in float on vectors of 4 or, with AVX2 (picked at
 * create), 8 points, and hands every point whose float bin could differ
 * from the double one to the plain double computation, so the counts are
 * those of the scalar double loop.  With AVX2 and FMA, and the usual
 * settings (up to 8 rings, 8 to 32 sectors in steps of 8), the folded
 * kernel of m2dp_fold.h does the same without square roots or divisions.
 * The singular pair comes from the one leading eigenpair of the smaller
 * Gram matrix (A A^T, 64 x 64 by default), a quarter of the time of a
 * full SVD of A, equal to it within 1e-12.
 */
#include <lapacke.h>
#include <math.h>
#include <stdlib.h>
#include <string.h>
#include <stdio.h>
#include "harness/revisit_plugin.h"

#define M2DP_PI 3.14159265358979323846
#define M2DP_MAX_RINGS 64
#define M2DP_COPIES 8  /* histogram copies: at least the widest kernel's lanes */
#define M2DP_BAND 1e-6  /* ring tolerance of the float kernel, in r_max^2 (m2dp_bins.h) */
#define M2DP_ETA 4e-7   /* largest float error of u and v, in r_max (m2dp_fold.h) */
#define M2DP_FOLD_R2 4e-6  /* ring tolerance of the folded kernel, in r_max^2 (m2dp_fold.h) */
#define M2DP_MAX_SECTORS 256
#define M2DP_FOLD_MAX 32  /* the folded kernel takes multiples of 8 sectors up to this */
#define M2_INLINE static inline __attribute__((always_inline))

enum { SET_AZ, SET_EL, SET_RINGS, SET_SECTORS, SET_MAXPTS, SET_COUNT };

static const struct rv_setting m2dp_settings[SET_COUNT] = {
    {"azimuths", RV_SET_INT, 4, 1, 64, NULL, "projection planes per elevation: azimuths i*pi/p"},
    {"elevations", RV_SET_INT, 16, 1, 64, NULL, "plane elevations j*pi/(2q)"},
    {"rings", RV_SET_INT, 8, 1, M2DP_MAX_RINGS, NULL, "concentric rings per plane, radii grow as k^2"},
    {"sectors", RV_SET_INT, 16, 2, M2DP_MAX_SECTORS, NULL, "angular sectors per plane"},
    {"max_points", RV_SET_INT, 16384, 0, 10000000, NULL,
     "thin scans with more points by a fixed stride (0 keeps all)"},
};

/* One projection plane: 2D axes e1, e2 (rows of a 2x3 matrix). */
struct m2dp_plane {
    double e1[3], e2[3];
};

struct m2dp;
/* The points in the principal frame, in double (x, y, z) and rounded to
 * float (fx, fy, fz); rmax2 the largest squared distance to the centroid. */
struct m2dp_pts {
    size_t used;
    const double *x, *y, *z;
    const float *fx, *fy, *fz;
    double rmax2, inv_r0;  /* inv_r0 = l^2 / r_max */
};
/* Counts of one plane into a row of A (see m2dp_bins.h). */
typedef void (*m2dp_bins_fn)(const struct m2dp *m, const struct m2dp_plane *pl, const struct m2dp_pts *q,
                             const double *edge, uint32_t *hist, double *row);

struct m2dp {
    int p, q, l, t;
    size_t max_points;
    struct m2dp_plane *planes;  /* p*q, row order i*q + j */
    double *bx, *by;            /* t+1 sector boundary directions */
    double margin;              /* see m2dp_sector */
    double sec_scale;           /* t / 2pi: radians to sectors */
    m2dp_bins_fn bins;          /* the binning kernel this CPU runs */
};

static m2dp_bins_fn m2dp_bins_pick(int rings, int sectors);

static void m2dp_cross(const double a[3], const double b[3], double out[3])
{
    out[0] = a[1] * b[2] - a[2] * b[1];
    out[1] = a[2] * b[0] - a[0] * b[2];
    out[2] = a[0] * b[1] - a[1] * b[0];
}

/* Plane axes for normal m in the aligned frame (see step 3 above). */
static void m2dp_plane_axes(double theta, double phi, struct m2dp_plane *pl)
{
    double m[3] = {cos(phi) * cos(theta), cos(phi) * sin(theta), sin(phi)};
    double ax[2][3] = {{1, 0, 0}, {0, 1, 0}};
    for (int k = 0; k < 2; k++) {
        double d = ax[k][0] * m[0] + ax[k][1] * m[1] + ax[k][2] * m[2];
        double e[3] = {ax[k][0] - d * m[0], ax[k][1] - d * m[1], ax[k][2] - d * m[2]};
        double len = sqrt(e[0] * e[0] + e[1] * e[1] + e[2] * e[2]);
        if (len < 1e-9)
            continue;
        for (int c = 0; c < 3; c++)
            pl->e1[c] = e[c] / len;
        break;
    }
    m2dp_cross(m, pl->e1, pl->e2);
}

static void m2dp_free(void *inst)
{
    struct m2dp *m = inst;
    if (!m)
        return;
    free(m->planes);
    free(m->bx);
    free(m->by);
    free(m);
}

static int m2dp_new(const double *v, void **inst, uint32_t *dim, uint32_t *key_dim,
                    char *msg, size_t msg_len)
{
    struct m2dp *m = calloc(1, sizeof *m);
    if (!m)
        return snprintf(msg, msg_len, "out of memory"), RV_ERR_NOMEM;
    m->p = (int)v[SET_AZ];
    m->q = (int)v[SET_EL];
    m->l = (int)v[SET_RINGS];
    m->t = (int)v[SET_SECTORS];
    m->max_points = (size_t)v[SET_MAXPTS];
    m->bins = m2dp_bins_pick(m->l, m->t);
    m->planes = calloc((size_t)(m->p * m->q), sizeof *m->planes);
    m->bx = calloc((size_t)m->t + 1, sizeof *m->bx);
    m->by = calloc((size_t)m->t + 1, sizeof *m->by);
    if (!m->planes || !m->bx || !m->by) {
        m2dp_free(m);
        return snprintf(msg, msg_len, "out of memory"), RV_ERR_NOMEM;
    }
    for (int i = 0; i < m->p; i++)
        for (int j = 0; j < m->q; j++)
            m2dp_plane_axes(i * M2DP_PI / m->p, j * M2DP_PI / (2.0 * m->q),
                            &m->planes[i * m->q + j]);
    m->margin = 2 * 2.1e-4 * m->t / (2 * M2DP_PI);
    m->sec_scale = m->t / (2 * M2DP_PI);
    for (int s = 0; s <= m->t; s++) {
        m->bx[s] = cos(2.0 * M2DP_PI * s / m->t);
        m->by[s] = sin(2.0 * M2DP_PI * s / m->t);
    }
    *inst = m;
    *dim = (uint32_t)(m->p * m->q + m->l * m->t);
    *key_dim = 0;
    return RV_OK;
}

/* Centroid and principal frame of the (strided) points: rows of r are x', y', z'.
 * Returns -1 when LAPACKE fails. */
static int m2dp_frame(const float *xyzi, size_t n, size_t stride, double c[3], double r[3][3])
{
    double cov[9], w[3], sx = 0, sy = 0, sz = 0, cxx = 0, cxy = 0, cxz = 0, cyy = 0, cyz = 0, czz = 0;
    size_t cnt = 0;
    for (size_t k = 0; k < n; k += stride, cnt++) {
        sx += xyzi[4 * k];
        sy += xyzi[4 * k + 1];
        sz += xyzi[4 * k + 2];
    }
    c[0] = sx / (double)cnt, c[1] = sy / (double)cnt, c[2] = sz / (double)cnt;
    for (size_t k = 0; k < n; k += stride) {  /* sums in locals: the array kept them in memory */
        double d0 = xyzi[4 * k] - c[0], d1 = xyzi[4 * k + 1] - c[1], d2 = xyzi[4 * k + 2] - c[2];
        cxx += d0 * d0, cxy += d0 * d1, cxz += d0 * d2;
        cyy += d1 * d1, cyz += d1 * d2, czz += d2 * d2;
    }
    cov[0] = cxx, cov[1] = cxy, cov[2] = cxz, cov[3] = cxy, cov[4] = cyy, cov[5] = cyz;
    cov[6] = cxz, cov[7] = cyz, cov[8] = czz;
    if (LAPACKE_dsyev(LAPACK_ROW_MAJOR, 'V', 'U', 3, cov, 3, w) != 0)
        return -1;
    /* eigenvalues ascending: column 2 is the first principal direction */
    double m3[2] = {0, 0};
    for (int a = 0; a < 2; a++)
        for (int b = 0; b < 3; b++)
            r[a][b] = cov[b * 3 + (2 - a)];
    for (size_t k = 0; k < n; k += stride) {  /* both third moments in one pass */
        double d0 = xyzi[4 * k] - c[0], d1 = xyzi[4 * k + 1] - c[1], d2 = xyzi[4 * k + 2] - c[2];
        double s0 = d0 * r[0][0] + d1 * r[0][1] + d2 * r[0][2], s1 = d0 * r[1][0] + d1 * r[1][1] + d2 * r[1][2];
        m3[0] += s0 * s0 * s0;
        m3[1] += s1 * s1 * s1;
    }
    for (int a = 0; a < 2; a++)
        if (m3[a] < 0)
            for (int b = 0; b < 3; b++)
                r[a][b] = -r[a][b];
    m2dp_cross(r[0], r[1], r[2]);
    return 0;
}

/* atan2 mapped to [0, 2pi) by a polynomial (largest error 2.03e-4 rad,
 * measured on a fine grid of [0, 1] against atan); written
 * with selects only, so the compiler needs no branch. */
static double m2dp_fast_angle(double y, double x)
{
    double ax = fabs(x), ay = fabs(y);
    double mx = ax > ay ? ax : ay, mn = ax > ay ? ay : ax;
    double a = mn / (mx > 0 ? mx : 1), s = a * a;
    double r = ((-0.0464964749 * s + 0.15931422) * s - 0.327622764) * s * a + a;
    r = ay > ax ? M2DP_PI / 2 - r : r;
    r = x < 0 ? M2DP_PI - r : r;
    return y < 0 ? 2 * M2DP_PI - r : r;
}

/* Sector of direction (u, v): the s with boundary s at or before it and
 * boundary s+1 after it, counter-clockwise.  The polynomial angle decides
 * unless it lies within `margin` (twice its error bound, in sectors) of a
 * boundary; then cross products with the boundary directions decide. */
static int m2dp_sector(const struct m2dp *m, double u, double v)
{
    double x = m2dp_fast_angle(v, u) * m->sec_scale;
    int s = (int)x;
    double f = x - s;
    if (s >= m->t)
        s = m->t - 1;
    if (f > m->margin && f < 1 - m->margin)
        return s;
    for (int guard = 0; guard < 4; guard++) {
        if (m->bx[s] * v - m->by[s] * u < 0)
            s = s == 0 ? m->t - 1 : s - 1;
        else if (m->bx[s + 1] * v - m->by[s + 1] * u >= 0 && s + 1 < m->t)
            s = s + 1;
        else
            break;
    }
    return s;
}

/* Bin of point k on plane pl in double, as the plain loop computes it. */
static int m2dp_bin_exact(const struct m2dp *m, const struct m2dp_plane *pl, const struct m2dp_pts *q,
                          size_t k, const double *edge)
{
    const double *e1 = pl->e1, *e2 = pl->e2;
    double u = e1[0] * q->x[k] + e1[1] * q->y[k] + e1[2] * q->z[k];
    double v = e2[0] * q->x[k] + e2[1] * q->y[k] + e2[2] * q->z[k], r2 = u * u + v * v;
    int ring = 0;
    for (int j = 1; j < m->l; j++)
        ring += r2 >= edge[j];
    return ring * m->t + m2dp_sector(m, u, v);
}

#if defined(__x86_64__) || defined(__i386__)
#include <immintrin.h>
#define M2_SQRT(x) _mm_sqrt_ps(x)
#define M2_ANY(m) _mm_movemask_ps((__m128)(m))
#else
#define M2_SQRT(x) m2dp_sqrt4(x)
#define M2_ANY(m) ((m)[0] | (m)[1] | (m)[2] | (m)[3])
typedef float m2dp_v4 __attribute__((vector_size(16)));
static inline m2dp_v4 m2dp_sqrt4(m2dp_v4 x)
{
    for (int l = 0; l < 4; l++)
        x[l] = sqrtf(x[l]);
    return x;
}
#endif
#define M2_VB 16
#define M2_NAME(x) m2dp_##x##_base
#define M2_TARGET static
#define M2_KERNEL m2dp_bins_base
#include "harness/plugins/m2dp/m2dp_bins.h"
#undef M2_VB
#undef M2_NAME
#undef M2_TARGET
#undef M2_KERNEL
#undef M2_SQRT
#undef M2_ANY

#if defined(__x86_64__) || defined(__i386__)
#define M2_SQRT(x) _mm256_sqrt_ps(x)
#define M2_ANY(m) _mm256_movemask_ps((__m256)(m))
#define M2_VB 32
#define M2_NAME(x) m2dp_##x##_avx2
#define M2_TARGET static __attribute__((target("avx2")))
#define M2_KERNEL m2dp_bins_avx2
#include "harness/plugins/m2dp/m2dp_bins.h"
#include "harness/plugins/m2dp/m2dp_fold.h"

/* The kernel for this CPU and setting: the folded one when the CPU has AVX2
 * and FMA and the setting fits it (m2dp_fold.h), else the vector kernel of
 * m2dp_bins.h at the CPU's width. */
static m2dp_bins_fn m2dp_bins_pick(int rings, int sectors)
{
    __builtin_cpu_init();
    int avx2 = __builtin_cpu_supports("avx2"), fma = __builtin_cpu_supports("fma");
    if (avx2 && fma && rings <= 8 && sectors % 8 == 0 && sectors <= M2DP_FOLD_MAX) return m2dp_fold_avx2;
    return avx2 ? m2dp_bins_avx2 : m2dp_bins_base;
}
#else
static m2dp_bins_fn m2dp_bins_pick(int rings, int sectors)
{
    (void)rings, (void)sectors;
    return m2dp_bins_base;
}
#endif

/* edge[j], j = 1..l-1: the smallest double r2 >= 0 with
 * sqrt(sqrt(r2) * inv_r0) >= j, by bisection over the ordered bit patterns
 * of the non-negative doubles (+inf qualifies for every j). */
static void m2dp_ring_edges(int l, double inv_r0, double *edge)
{
    for (int j = 1; j < l; j++) {
        uint64_t lo = 0, hi = 0x7ff0000000000000u;  /* 0.0 fails, +inf passes */
        while (hi - lo > 1) {
            uint64_t mid = lo + (hi - lo) / 2;
            double r2;
            memcpy(&r2, &mid, sizeof r2);
            if (sqrt(sqrt(r2) * inv_r0) >= j)
                hi = mid;
            else
                lo = mid;
        }
        memcpy(&edge[j], &hi, sizeof hi);
    }
}

/* Points to use: every stride-th, so that at most max_points remain. */
static size_t m2dp_stride(const struct m2dp *m, size_t n)
{
    return m->max_points && n > m->max_points ? (n + m->max_points - 1) / m->max_points : 1;
}

/* Fill A (p*q rows, l*t columns, row-major) with the bin counts; q is
 * scratch for 3 * ceil(n / stride) doubles and qf for as many floats (the
 * points in the principal frame, three arrays each), hist for
 * M2DP_COPIES * l * t counts.  Returns the number of points used, 0 when
 * the cloud has no extent. */
static size_t m2dp_matrix(const struct m2dp *m, const float *xyzi, size_t n, double *a, double *q,
                          float *qf, uint32_t *hist)
{
    size_t stride = m2dp_stride(m, n), cnt = 0;
    int rows = m->p * m->q, cols = m->l * m->t;
    double c[3], r[3][3], rmax2 = 0;
    memset(a, 0, sizeof *a * (size_t)rows * (size_t)cols);
    if (n < 3 || m2dp_frame(xyzi, n, stride, c, r))
        return 0;
    size_t used = (n + stride - 1) / stride;
    double *qx = q, *qy = q + used, *qz = q + 2 * used;
    for (size_t k = 0; k < n; k += stride, cnt++) {
        double d[3] = {xyzi[4 * k] - c[0], xyzi[4 * k + 1] - c[1], xyzi[4 * k + 2] - c[2]};
        qx[cnt] = r[0][0] * d[0] + r[0][1] * d[1] + r[0][2] * d[2];
        qy[cnt] = r[1][0] * d[0] + r[1][1] * d[1] + r[1][2] * d[2];
        qz[cnt] = r[2][0] * d[0] + r[2][1] * d[1] + r[2][2] * d[2];
        double d2 = d[0] * d[0] + d[1] * d[1] + d[2] * d[2];
        if (d2 > rmax2)
            rmax2 = d2;
    }
    if (!(rmax2 > 0))
        return 0;
    for (size_t k = 0; k < 3 * used; k++)
        qf[k] = (float)q[k];
    double inv_r0 = (double)m->l * m->l / sqrt(rmax2), edge[M2DP_MAX_RINGS];
    struct m2dp_pts pts = {used, qx, qy, qz, qf, qf + used, qf + 2 * used, rmax2, inv_r0};
    m2dp_ring_edges(m->l, inv_r0, edge);
    for (int pl = 0; pl < rows; pl++)
        m->bins(m, &m->planes[pl], &pts, edge, hist, a + (size_t)pl * cols);
    return used;
}

/* x . y over len values, in four running sums of two lanes each.  With
 * whole numbers as here every order gives the same sum. */
typedef double m2dp_v2d __attribute__((vector_size(16)));
static double m2dp_dot(const double *x, const double *y, int len)
{
    m2dp_v2d s0 = {0, 0}, s1 = s0, s2 = s0, s3 = s0, a[4], b[4];
    double sum = 0;
    int k = 0;
    for (; k + 8 <= len; k += 8) {
        memcpy(a, x + k, sizeof a);
        memcpy(b, y + k, sizeof b);
        s0 += a[0] * b[0], s1 += a[1] * b[1], s2 += a[2] * b[2], s3 += a[3] * b[3];
    }
    for (; k < len; k++)
        sum += x[k] * y[k];
    s0 += s1 + s2 + s3;
    return sum + s0[0] + s0[1];
}

/* G = B B^T for B = A (rows x cols) when by_rows, else B = A^T: n x n,
 * upper triangle filled; bt is scratch for A^T (rows * cols doubles, used
 * when !by_rows).  The counts are whole numbers below 2^26, so every
 * product and sum is exact and G does not depend on the order. */
static void m2dp_gram(const double *a, int rows, int cols, int by_rows, double *bt, double *g)
{
    int n = by_rows ? rows : cols, len = by_rows ? cols : rows;
    const double *b = a;
    if (!by_rows) {
        for (int i = 0; i < rows; i++)
            for (int j = 0; j < cols; j++)
                bt[(size_t)j * rows + i] = a[(size_t)i * cols + j];
        b = bt;
    }
    for (int i = 0; i < n; i++)
        for (int j = i; j < n; j++)
            g[(size_t)i * n + j] = m2dp_dot(b + (size_t)i * len, b + (size_t)j * len, len);
}

/* Leading singular pair of A (rows x cols) into sig = [u1; v1], signs
 * fixed so that sum(v1) >= 0.  The pair comes from the leading eigenvector
 * x of the smaller Gram matrix (A A^T or A^T A, LAPACKE dsyevr for that one
 * eigenpair), the other side as A^T x or A x normalised; it agrees with the
 * leading pair of a full SVD to within rounding (tests/test_m2dp_svd.c).
 * Returns -1 when LAPACKE fails or A is zero. */
static int m2dp_svd(const double *a, int rows, int cols, double *sig)
{
    int by_rows = rows <= cols, n = by_rows ? rows : cols, other = by_rows ? cols : rows, found = 0;
    double *g = malloc(sizeof *g * (size_t)n * (size_t)n), w[1], *x = sig + (by_rows ? 0 : rows);
    double *y = sig + (by_rows ? rows : 0), *z = malloc(sizeof *z * (size_t)n);
    lapack_int *support = malloc(sizeof *support * 2 * (size_t)n);
    double *bt = by_rows ? NULL : malloc(sizeof *bt * (size_t)rows * (size_t)cols);
    int rc = -1;
    if (!g || !z || !support || (!by_rows && !bt))
        goto out;
    m2dp_gram(a, rows, cols, by_rows, bt, g);
    if (LAPACKE_dsyevr(LAPACK_ROW_MAJOR, 'V', 'I', 'U', n, g, n, 0, 0, n, n, 0, &found, w, z, 1, support) != 0
        || found != 1)
        goto out;
    double norm = 0;
    for (int j = 0; j < other; j++) {
        double sum = 0;
        for (int i = 0; i < n; i++)
            sum += z[i] * (by_rows ? a[(size_t)i * cols + j] : a[(size_t)j * cols + i]);
        y[j] = sum;
        norm += sum * sum;
    }
    if (!(norm > 0))
        goto out;
    norm = sqrt(norm);
    double vsum = 0;
    for (int j = 0; j < other; j++)
        y[j] /= norm;
    for (int i = 0; i < n; i++)
        x[i] = z[i];
    for (int j = 0; j < cols; j++)
        vsum += sig[rows + j];
    if (vsum < 0)
        for (int k = 0; k < rows + cols; k++)
            sig[k] = -sig[k];
    rc = 0;
out:
    free(g);
    free(z);
    free(support);
    free(bt);
    return rc;
}

/* When some point has a non-finite coordinate, a malloc'ed copy of the
 * finite ones (*n updated); NULL when all are finite (or out of memory, then
 * *n = 0 and the signature is zeros). */
static float *m2dp_finite(const float *xyzi, size_t *n)
{
    size_t k = 0, m = 0;
    while (k < *n && isfinite(xyzi[4 * k] + xyzi[4 * k + 1] + xyzi[4 * k + 2]))
        k++;
    if (k == *n)
        return NULL;
    float *out = malloc(16 * *n);
    if (!out) {
        *n = 0;
        return NULL;
    }
    for (k = 0; k < *n; k++)
        if (isfinite(xyzi[4 * k] + xyzi[4 * k + 1] + xyzi[4 * k + 2]))
            memcpy(out + 4 * m++, xyzi + 4 * k, 16);
    *n = m;
    return out;
}

/* The whole signature in double precision; sig holds p*q + l*t values.
 * Points with a non-finite coordinate are left out; a scan with fewer than
 * 3 points or no extent gives all zeros.
 * When a_out is not NULL it receives a copy of A.  Returns an rv_status. */
static int m2dp_signature(const struct m2dp *m, const float *xyzi, size_t n, double *sig,
                          double *a_out, char *msg, size_t msg_len)
{
    int rows = m->p * m->q, cols = m->l * m->t;
    double *a = malloc(sizeof *a * (size_t)rows * (size_t)cols);
    size_t cap = 3 * (n / m2dp_stride(m, n) + 1);
    double *q = malloc(sizeof *q * cap);
    float *qf = malloc(sizeof *qf * cap);
    uint32_t *hist = malloc(sizeof *hist * M2DP_COPIES * (size_t)cols);
    if (!a || !q || !qf || !hist) {
        free(a);
        free(q);
        free(qf);
        free(hist);
        return snprintf(msg, msg_len, "out of memory"), RV_ERR_NOMEM;
    }
    memset(sig, 0, sizeof *sig * (size_t)(rows + cols));
    float *clean = m2dp_finite(xyzi, &n);  /* NULL: every point is finite */
    size_t used = m2dp_matrix(m, clean ? clean : xyzi, n, a, q, qf, hist);
    free(clean);
    free(q);
    free(qf);
    free(hist);
    if (a_out)
        memcpy(a_out, a, sizeof *a * (size_t)rows * (size_t)cols);
    int rc = RV_OK;
    if (used && m2dp_svd(a, rows, cols, sig)) {
        snprintf(msg, msg_len, "singular value decomposition did not converge on %zu points", n);
        rc = RV_ERR_INTERNAL;
    }
    free(a);
    return rc;
}

static int m2dp_describe(void *inst, const struct rv_scan *scan, float *desc, float *key,
                         char *msg, size_t msg_len)
{
    const struct m2dp *m = inst;
    size_t dim = (size_t)(m->p * m->q + m->l * m->t);
    double *sig = malloc(sizeof *sig * dim);
    (void)key;
    if (!sig)
        return snprintf(msg, msg_len, "out of memory"), RV_ERR_NOMEM;
    int rc = m2dp_signature(m, scan->xyzi, scan->n, sig, NULL, msg, msg_len);
    for (size_t k = 0; k < dim; k++)
        desc[k] = (float)sig[k];
    free(sig);
    return rc;
}

static const struct rv_method m2dp_method = {
    RV_ABI_VERSION, sizeof m2dp_method, "m2dp", "1.0",
    "multiview 2D projection signature (He, Wang & Zhang, IROS 2016)",
    m2dp_settings, SET_COUNT, RV_DIST_L2, RV_FLAG_THREAD_SAFE,
    m2dp_new, m2dp_describe, m2dp_free, NULL, NULL};

RV_EXPORT const struct rv_method *rv_method_entry(void)
{
    return &m2dp_method;
}
