/* retrieval_exact.c: the dense path's re-rank: exact double distances of a
 * query against its kept candidate rows, sixteen rows at a time in AVX2
 * lanes, then the best k by (distance, index).
 *
 * Every lane runs the sums of retrieval_pair in the same order, with the
 * same roundings (separate multiply and add, no fused multiply-add), so a
 * distance is the same bit for bit as retrieval_pair's; only sixteen
 * dependency chains overlap in time.  The rows of four candidates are read
 * four floats at a time and transposed, so each vector holds one dimension
 * of four rows:
 *
 *     rows  r0: a0 a1 a2 a3 |        t0: a0 b0 c0 d0   (dimension k)
 *           r1: b0 b1 b2 b3 |  --->  t1: a1 b1 c1 d1   (k + 1)
 *           r2: c0 ...      |        t2: ...
 *           r3: d0 ...      |        t3: ...
 *
 * A CPU without AVX2 goes through retr_rank instead, which gives the same
 * output by construction.  So does a NaN among a query's distances (only
 * from NaN in the descriptors, which eval refuses): the shared comparator
 * leaves the order of NaNs to the sort, so the candidates are first put in
 * index order, which makes that order depend on the candidate set alone. */
#include "harness/run/retrieval_rank.h"

#include <math.h>
#include <stdlib.h>
#if defined(__x86_64__) || defined(__i386__)
#include <immintrin.h>
#define RETR_X86 1
#endif

#define RETR_LANES 16   /* candidates per pass: four vectors of four doubles */

#if RETR_X86
#define RETR_AVX2 __attribute__((target("avx2"), optimize("fp-contract=off")))

/* One dimension's step for four rows (b: their values as doubles). */
#define RETR_L2_STEP(acc, x, b)                     \
    do {                                            \
        __m256d v_ = _mm256_sub_pd((x), (b));       \
        (acc) = _mm256_add_pd((acc), _mm256_mul_pd(v_, v_)); \
    } while (0)
#define RETR_COS_STEP(acc, nrm, x, b)                              \
    do {                                                           \
        (acc) = _mm256_add_pd((acc), _mm256_mul_pd((x), (b)));     \
        (nrm) = _mm256_add_pd((nrm), _mm256_mul_pd((b), (b)));     \
    } while (0)

/* Dimensions k..k+3 of four rows, transposed: t[u] holds dimension k + u. */
RETR_AVX2 static inline void retr_load4(const float *const r[4], uint32_t k, __m256d t[4])
{
    __m128 t0 = _mm_loadu_ps(r[0] + k), t1 = _mm_loadu_ps(r[1] + k), t2 = _mm_loadu_ps(r[2] + k),
           t3 = _mm_loadu_ps(r[3] + k);
    _MM_TRANSPOSE4_PS(t0, t1, t2, t3);
    t[0] = _mm256_cvtps_pd(t0), t[1] = _mm256_cvtps_pd(t1), t[2] = _mm256_cvtps_pd(t2),
    t[3] = _mm256_cvtps_pd(t3);
}

/* Dimension k of four rows. */
RETR_AVX2 static inline __m256d retr_load1(const float *const r[4], uint32_t k)
{
    return _mm256_cvtps_pd(_mm_setr_ps(r[0][k], r[1][k], r[2][k], r[3][k]));
}

/* Squared L2 sums over every dimension for rows[0..15], into s. */
RETR_AVX2 static void retr_l2_16(const double *a, const float *const rows[RETR_LANES], uint32_t dim,
                                 double s[RETR_LANES])
{
    __m256d s0 = _mm256_setzero_pd(), s1 = s0, s2 = s0, s3 = s0, b0[4], b1[4], b2[4], b3[4];
    uint32_t k = 0;
    for (; k + 4 <= dim; k += 4) {
        retr_load4(rows, k, b0);
        retr_load4(rows + 4, k, b1);
        retr_load4(rows + 8, k, b2);
        retr_load4(rows + 12, k, b3);
        for (int u = 0; u < 4; u++) {
            __m256d x = _mm256_broadcast_sd(a + k + u);
            RETR_L2_STEP(s0, x, b0[u]);
            RETR_L2_STEP(s1, x, b1[u]);
            RETR_L2_STEP(s2, x, b2[u]);
            RETR_L2_STEP(s3, x, b3[u]);
        }
    }
    for (; k < dim; k++) {
        __m256d x = _mm256_broadcast_sd(a + k);
        RETR_L2_STEP(s0, x, retr_load1(rows, k));
        RETR_L2_STEP(s1, x, retr_load1(rows + 4, k));
        RETR_L2_STEP(s2, x, retr_load1(rows + 8, k));
        RETR_L2_STEP(s3, x, retr_load1(rows + 12, k));
    }
    _mm256_storeu_pd(s, s0), _mm256_storeu_pd(s + 4, s1), _mm256_storeu_pd(s + 8, s2),
    _mm256_storeu_pd(s + 12, s3);
}

/* Dot products (s) and squared norms (nb) over every dimension for rows[0..15]. */
RETR_AVX2 static void retr_cos_16(const double *a, const float *const rows[RETR_LANES], uint32_t dim,
                                  double s[RETR_LANES], double nb[RETR_LANES])
{
    __m256d s0 = _mm256_setzero_pd(), s1 = s0, s2 = s0, s3 = s0, n0 = s0, n1 = s0, n2 = s0, n3 = s0;
    __m256d b0[4], b1[4], b2[4], b3[4];
    uint32_t k = 0;
    for (; k + 4 <= dim; k += 4) {
        retr_load4(rows, k, b0);
        retr_load4(rows + 4, k, b1);
        retr_load4(rows + 8, k, b2);
        retr_load4(rows + 12, k, b3);
        for (int u = 0; u < 4; u++) {
            __m256d x = _mm256_broadcast_sd(a + k + u);
            RETR_COS_STEP(s0, n0, x, b0[u]);
            RETR_COS_STEP(s1, n1, x, b1[u]);
            RETR_COS_STEP(s2, n2, x, b2[u]);
            RETR_COS_STEP(s3, n3, x, b3[u]);
        }
    }
    for (; k < dim; k++) {
        __m256d x = _mm256_broadcast_sd(a + k), c0 = retr_load1(rows, k), c1 = retr_load1(rows + 4, k),
                c2 = retr_load1(rows + 8, k), c3 = retr_load1(rows + 12, k);
        RETR_COS_STEP(s0, n0, x, c0);
        RETR_COS_STEP(s1, n1, x, c1);
        RETR_COS_STEP(s2, n2, x, c2);
        RETR_COS_STEP(s3, n3, x, c3);
    }
    _mm256_storeu_pd(s, s0), _mm256_storeu_pd(s + 4, s1), _mm256_storeu_pd(s + 8, s2),
    _mm256_storeu_pd(s + 12, s3);
    _mm256_storeu_pd(nb, n0), _mm256_storeu_pd(nb + 4, n1), _mm256_storeu_pd(nb + 8, n2),
    _mm256_storeu_pd(nb + 12, n3);
}

/* Distances of query row qv (as doubles: a) to the n rows js, into pair
 * as (distance, index); 1 when one is NaN. */
static int retr_exact_pairs(const struct retrieval_mat *map, enum rv_distance kind, const double *a, double na,
                            const int32_t *js, int n, double *pair)
{
    const int cosine = kind == RV_DIST_COSINE;
    int nan = 0;
    for (int c = 0; c < n; c += RETR_LANES) {
        const float *rows[RETR_LANES];
        double s[RETR_LANES], nb[RETR_LANES];
        for (int l = 0; l < RETR_LANES; l++)   /* past the end: repeat the last row, result unused */
            rows[l] = map->v + (size_t)js[c + l < n ? c + l : n - 1] * map->dim;
        if (cosine) retr_cos_16(a, rows, map->dim, s, nb);
        else retr_l2_16(a, rows, map->dim, s);
        for (int l = 0; l < RETR_LANES && c + l < n; l++) {
            double d;
            if (cosine) {
                d = na > 0 && nb[l] > 0 ? 1 - s[l] / sqrt(na * nb[l]) : 1;
                d = d < 0 ? 0 : d;
            } else {
                d = sqrt(s[l]);
            }
            nan |= d != d;
            pair[2 * (c + l)] = d;
            pair[2 * (c + l) + 1] = js[c + l];
        }
    }
    return nan;
}
#endif

static int retr_pair_cmp(const void *x, const void *y)
{
    const double *a = x, *b = y;   /* no NaN here: a total order on distinct indices */
    if (a[0] != b[0]) return a[0] < b[0] ? -1 : 1;
    return (a[1] > b[1]) - (a[1] < b[1]);
}

/* Sort n (distance, index) pairs: insertion for the short lists the dense
 * path keeps, qsort beyond. */
static void retr_pair_sort(double *pair, int n)
{
    if (n > 64) {
        qsort(pair, (size_t)n, 2 * sizeof *pair, retr_pair_cmp);
        return;
    }
    for (int c = 1; c < n; c++) {
        double d = pair[2 * c], j = pair[2 * c + 1];
        int at = c;
        for (; at > 0 && (pair[2 * at - 2] > d || (pair[2 * at - 2] == d && pair[2 * at - 1] > j)); at--) {
            pair[2 * at] = pair[2 * at - 2];
            pair[2 * at + 1] = pair[2 * at - 1];
        }
        pair[2 * at] = d;
        pair[2 * at + 1] = j;
    }
}

static int retr_index_cmp(const void *x, const void *y)
{
    int32_t a = *(const int32_t *)x, b = *(const int32_t *)y;
    return (a > b) - (a < b);
}

int retr_exact_fast(void)
{
#if RETR_X86
    __builtin_cpu_init();
    return __builtin_cpu_supports("avx2");
#else
    return 0;
#endif
}

void retr_exact(const struct retrieval_mat *map, const struct retrieval_mat *q, enum rv_distance kind, int fast,
                int32_t *js, int n, size_t i, double *a, double *pair, struct retrieval_out *o)
{
#if RETR_X86
    if (n == 0 || !fast) {
        retr_rank(map, q, kind, NULL, js, n, i, pair, o);
        return;
    }
    const float *qv = q->v + i * q->dim;
    double na = 0;
    for (uint32_t k = 0; k < q->dim; k++) {
        a[k] = qv[k];
        na += a[k] * a[k];
    }
    if (retr_exact_pairs(map, kind, a, na, js, n, pair)) {
        qsort(js, (size_t)n, sizeof *js, retr_index_cmp);
        retr_rank(map, q, kind, NULL, js, n, i, pair, o);
        return;
    }
    retr_pair_sort(pair, n);
    int keep = n < o->k ? n : o->k;
    for (int c = 0; c < keep; c++) {
        o->dist[i * o->k + c] = pair[2 * c];
        o->idx[i * o->k + c] = (int32_t)pair[2 * c + 1];
    }
    o->count[i] = keep;
#else
    (void)fast, (void)a;
    retr_rank(map, q, kind, NULL, js, n, i, pair, o);
#endif
}
