/* m2dp_reference.h: the plain M2DP count-matrix loop the plugin replaced,
 * kept as the reference of tests/test_m2dp_kernels.c and the speed
 * reference of tests/bench_methods.c.  Include after
 * harness/plugins/m2dp/m2dp.c (it uses the plugin's frame, stride and
 * sector search).  Per point and plane: two square roots for the ring,
 * the sector search, and a double += 1 into the row. */
#ifndef RV_M2DP_REFERENCE_H
#define RV_M2DP_REFERENCE_H

/* A (p*q x l*t, row-major) from n points; q: scratch as m2dp_matrix's.
 * Returns the number of points used, 0 when the cloud has no extent. */
static inline size_t m2dpref_matrix(const struct m2dp *m, const float *xyzi, size_t n, double *a, double *q)
{
    size_t stride = m2dp_stride(m, n), cnt = 0;
    int rows = m->p * m->q, cols = m->l * m->t;
    double c[3], r[3][3], rmax2 = 0;
    memset(a, 0, sizeof *a * (size_t)rows * (size_t)cols);
    if (n < 3 || m2dp_frame(xyzi, n, stride, c, r)) return 0;
    size_t used = (n + stride - 1) / stride;
    double *qx = q, *qy = q + used, *qz = q + 2 * used;
    for (size_t k = 0; k < n; k += stride, cnt++) {
        double d[3] = {xyzi[4 * k] - c[0], xyzi[4 * k + 1] - c[1], xyzi[4 * k + 2] - c[2]};
        qx[cnt] = r[0][0] * d[0] + r[0][1] * d[1] + r[0][2] * d[2];
        qy[cnt] = r[1][0] * d[0] + r[1][1] * d[1] + r[1][2] * d[2];
        qz[cnt] = r[2][0] * d[0] + r[2][1] * d[1] + r[2][2] * d[2];
        double d2 = d[0] * d[0] + d[1] * d[1] + d[2] * d[2];
        if (d2 > rmax2) rmax2 = d2;
    }
    if (!(rmax2 > 0)) return 0;
    double inv_r0 = (double)m->l * m->l / sqrt(rmax2);
    for (int pl = 0; pl < rows; pl++) {
        const double *e1 = m->planes[pl].e1, *e2 = m->planes[pl].e2;
        double *row = a + (size_t)pl * cols;
        for (size_t k = 0; k < used; k++) {
            double u = e1[0] * qx[k] + e1[1] * qy[k] + e1[2] * qz[k];
            double v = e2[0] * qx[k] + e2[1] * qy[k] + e2[2] * qz[k];
            int ring = (int)sqrt(sqrt(u * u + v * v) * inv_r0);
            if (ring >= m->l) ring = m->l - 1;
            row[ring * m->t + m2dp_sector(m, u, v)] += 1;
        }
    }
    return used;
}

/* The leading singular pair as the plugin first took it: the full
 * LAPACKE dgesvd of A (destroyed), signs as m2dp_svd's.  -1 on failure. */
static inline int m2dpref_svd(double *a, int rows, int cols, double *sig)
{
    int kmin = rows < cols ? rows : cols, rc = -1;
    double *s = malloc(sizeof *s * (size_t)kmin), *u = malloc(sizeof *u * (size_t)rows * (size_t)kmin);
    double *vt = malloc(sizeof *vt * (size_t)kmin * (size_t)cols), *sup = malloc(sizeof *sup * (size_t)kmin);
    if (s && u && vt && sup && LAPACKE_dgesvd(LAPACK_ROW_MAJOR, 'S', 'S', rows, cols, a, cols, s, u, kmin, vt, cols, sup) == 0) {
        double sum = 0;
        for (int j = 0; j < cols; j++) sum += vt[j];
        double sign = sum < 0 ? -1.0 : 1.0;
        for (int i = 0; i < rows; i++) sig[i] = sign * u[(size_t)i * kmin];
        for (int j = 0; j < cols; j++) sig[rows + j] = sign * vt[j];
        rc = 0;
    }
    free(s);
    free(u);
    free(vt);
    free(sup);
    return rc;
}

#endif
