/* test_m2dp_svd.c: the M2DP plugin's leading singular pair (the leading
 * eigenvector of the smaller Gram matrix, the other side by one product)
 * against the full singular value decomposition of LAPACKE dgesvd
 * (tests/m2dp_reference.h): count matrices of random clouds, and random
 * whole-number matrices wider and taller than square, must give the same
 * signature to within 1e-12 in every component (the components are those
 * of unit vectors). */
#include "harness/plugins/m2dp/m2dp.c"
#include "tests/check.h"
#include "tests/m2dp_reference.h"

static unsigned rnd_state = 1016;
static double rnd(void)
{
    rnd_state = rnd_state * 1103515245u + 12345u;
    return ((rnd_state >> 8) + 0.5) / 16777216.0;
}

/* Largest component difference of the two signatures of a (rows x cols);
 * 1 when either fails. */
static double pair_gap(const double *a, int rows, int cols)
{
    size_t cells = (size_t)rows * (size_t)cols;
    double *copy = malloc(sizeof *copy * cells), *s1 = malloc(sizeof *s1 * (size_t)(rows + cols));
    double *s2 = malloc(sizeof *s2 * (size_t)(rows + cols)), gap = 1;
    memcpy(copy, a, sizeof *a * cells);
    if (!m2dp_svd(a, rows, cols, s1) && !m2dpref_svd(copy, rows, cols, s2)) {
        gap = 0;
        for (int k = 0; k < rows + cols; k++) gap = fmax(gap, fabs(s1[k] - s2[k]));
    }
    free(copy);
    free(s1);
    free(s2);
    return gap;
}

static void count_matrices(void)
{
    enum { N = 4001 };
    static float pts[4 * N];
    static const double set[][SET_COUNT] = {{4, 16, 8, 16, 0}, {2, 3, 5, 7, 0}, {4, 16, 2, 2, 0}};
    double worst = 0;
    for (int c = 0; c < 8; c++) {
        for (size_t k = 0; k < N; k++) {
            double s[3] = {12, 5 + c, 1.5};
            for (int a = 0; a < 3; a++) pts[4 * k + a] = (float)(c % 2 ? -s[a] * log(rnd()) : s[a] * (2 * rnd() - 1));
        }
        for (size_t s = 0; s < sizeof set / sizeof *set; s++) {
            void *inst;
            uint32_t dim, kd;
            char msg[256];
            if (m2dp_new(set[s], &inst, &dim, &kd, msg, sizeof msg) != RV_OK) { worst = 1; continue; }
            struct m2dp *m = inst;
            int rows = m->p * m->q, cols = m->l * m->t;
            double *a = malloc(sizeof *a * (size_t)rows * (size_t)cols), *q = malloc(sizeof *q * 3 * (N + 1));
            float *qf = malloc(sizeof *qf * 3 * (N + 1));
            uint32_t *hist = malloc(sizeof *hist * M2DP_COPIES * (size_t)cols);
            m2dp_matrix(m, pts, N, a, q, qf, hist);
            worst = fmax(worst, pair_gap(a, rows, cols));
            free(a), free(q), free(qf), free(hist);
            m2dp_free(inst);
        }
    }
    CHECK(worst <= 1e-12, "count matrices of random clouds (wide and tall): leading pair within 1e-12 of dgesvd's");
}

static void random_matrices(void)
{
    static const int shape[][2] = {{64, 128}, {128, 64}, {5, 5}, {1, 7}, {9, 1}, {30, 31}};
    double worst = 0;
    for (size_t s = 0; s < sizeof shape / sizeof *shape; s++) {
        int rows = shape[s][0], cols = shape[s][1];
        double *a = malloc(sizeof *a * (size_t)rows * (size_t)cols);
        for (int k = 0; k < rows * cols; k++) a[k] = floor(rnd() * rnd() * 400);
        worst = fmax(worst, pair_gap(a, rows, cols));
        free(a);
    }
    CHECK(worst <= 1e-12, "random whole-number matrices, six shapes: leading pair within 1e-12 of dgesvd's");
}

int main(void)
{
    count_matrices();
    random_matrices();
    return check_done();
}
