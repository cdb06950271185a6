/* pool.c: second-order max pooling and the power-Euclidean transform.
 *
 * pooled[a][b] = max over segments i of F_a[i][a] * F_b[i][b]: the maximum
 * is exact in floating point and does not depend on the order or number of
 * the segments (second-order pooling, Carreira et al., ECCV 2012).
 * The transform replaces the singular values s of the pooled matrix
 * M = U diag(s) V^T by s^alpha (Dryden, Koloydenko & Zhou, Ann. Appl. Stat.
 * 2009, the power-Euclidean metric); alpha = 1 gives M back up to rounding.
 * The result is flattened row by row and L2-normalised.
 */
#include <lapacke.h>
#include <math.h>
#include <stdlib.h>
#include <string.h>
#include "harness/plugins/sop/sop.h"

void pool_second_order(const struct sop_seg *s, const double *fb, size_t n, int dim,
                       double *pooled)
{
    size_t dd = (size_t)dim * dim;
    if (n == 0) {
        memset(pooled, 0, sizeof *pooled * dd);
        return;
    }
    for (size_t k = 0; k < dd; k++)
        pooled[k] = -INFINITY;
    for (size_t i = 0; i < n; i++) {
        const double *b = fb + i * (size_t)dim;
        for (int a = 0; a < dim; a++) {
            double fa = s[i].fa[a], *row = pooled + (size_t)a * dim;
            for (int c = 0; c < dim; c++) {
                double v = fa * b[c];
                if (v > row[c])
                    row[c] = v;
            }
        }
    }
}

int pool_power(double *mat, int dim, double alpha)
{
    size_t dd = (size_t)dim * dim;
    double *u = malloc(sizeof *u * dd), *vt = malloc(sizeof *vt * dd);
    double *s = malloc(sizeof *s * (size_t)dim), *sup = malloc(sizeof *sup * (size_t)dim);
    int rc = -1;
    if (!u || !vt || !s || !sup)
        goto out;
    if (LAPACKE_dgesvd(LAPACK_ROW_MAJOR, 'S', 'S', dim, dim, mat, dim, s, u, dim, vt, dim, sup) != 0)
        goto out;
    for (int k = 0; k < dim; k++)
        s[k] = s[k] > 0 ? pow(s[k], alpha) : 0;
    for (int i = 0; i < dim; i++)
        for (int j = 0; j < dim; j++) {
            double acc = 0;
            for (int k = 0; k < dim; k++)
                acc += u[(size_t)i * dim + k] * s[k] * vt[(size_t)k * dim + j];
            mat[(size_t)i * dim + j] = acc;
        }
    rc = 0;
out:
    free(u);
    free(vt);
    free(s);
    free(sup);
    return rc;
}

void pool_normalise(const double *mat, int dim, float *desc)
{
    size_t dd = (size_t)dim * dim;
    double ss = 0;
    for (size_t k = 0; k < dd; k++)
        ss += mat[k] * mat[k];
    double inv = ss > 0 ? 1.0 / sqrt(ss) : 0;
    for (size_t k = 0; k < dd; k++)
        desc[k] = (float)(mat[k] * inv);
}
