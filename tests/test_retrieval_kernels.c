/* test_retrieval_kernels.c: the dense path's vector kernels against the
 * plain code they stand for, bit for bit: the score screen (AVX2 against
 * the base SSE/scalar one: scores and masks) and the exact re-rank
 * (retr_exact in AVX2 lanes against retr_rank, which runs retrieval_pair
 * and qsort): indices, distances and counts identical, on random rows of
 * every dimension from 1 to 70 and some long ones, with duplicated rows,
 * zero rows and NaN entries planted (with a NaN distance, the fast path
 * hands the rows to retr_rank in index order, whatever order it got);
 * and the whole dense path against every pair by retrieval_pair on random
 * rows scaled from 1e-21 to 1e18 (products that underflow, large scales),
 * where the cut before the re-rank may drop only rows that cannot reach
 * the top K.  A CPU without AVX2 reports the
 * vector checks as skipped. */
#include "harness/run/retrieval_dense.c"
#include "tests/check.h"

static unsigned rnd_state = 77;
static float rnd(void)
{
    rnd_state = rnd_state * 1103515245u + 12345u;
    return (float)((rnd_state >> 8) / 16777216.0 - 0.5);
}

/* Both screens on one chunk; 1 when scores and masks agree bit for bit. */
static int screen_same(int cosine, const float *r, const float *m, float qn, float bar, size_t nb)
{
    float a[RETR_CHUNK], b[RETR_CHUNK];
    uint64_t ma = retr_screen_base(cosine, r, m, qn, bar, nb, a);
    uint64_t mb = retr_screen_avx2(cosine, r, m, qn, bar, nb, b);
    return ma == mb && !memcmp(a, b, nb * sizeof *a);
}

static void test_screen(void)
{
    float r[RETR_CHUNK], m[RETR_CHUNK];
    int bad = 0, runs = 0;
    for (int round = 0; round < 400; round++) {
        for (int b = 0; b < RETR_CHUNK; b++) {
            r[b] = 40 * rnd();
            m[b] = round % 2 ? 50 + 10 * rnd() : 1 + rnd();
        }
        if (round % 5 == 0) r[round % RETR_CHUNK] = NAN;
        float qn = round % 2 ? 60 + 10 * rnd() : 1 + rnd();
        float bar = round % 7 == 0 ? NAN : round % 2 ? 40 + 40 * rnd() : 0.5f + rnd();
        for (int cosine = 0; cosine < 2; cosine++) {
            bad += !screen_same(cosine, r, m, qn, bar, RETR_CHUNK);
            bad += !screen_same(cosine, r, m, qn, bar, (size_t)(round % RETR_CHUNK));
            runs += 2;
        }
    }
    CHECK(bad == 0, "AVX2 screen: the same scores and masks as the base screen on every chunk");
    CHECK(runs == 1600, "AVX2 screen: every chunk compared");
}

/* n candidates of query 0 ranked both ways (retr_rank in the order of
 * ref, retr_exact in the order of js); 1 when the outputs agree. */
static int rank_same(const struct retrieval_mat *map, const struct retrieval_mat *q, enum rv_distance kind,
                     const int32_t *ref, const int32_t *js, int n, int k)
{
    int32_t mine[256];
    memcpy(mine, js, (size_t)n * sizeof *js);
    struct retrieval_out a, b;
    struct err e;
    if (retr_out_alloc(&a, 1, k, &e) || retr_out_alloc(&b, 1, k, &e)) return 0;
    double *pair = malloc((2 * (size_t)n + 1) * sizeof *pair), *qa = malloc(q->dim * sizeof *qa);
    retr_rank(map, q, kind, NULL, ref, n, 0, pair, &a);
    retr_exact(map, q, kind, 1, mine, n, 0, qa, pair, &b);
    int same = a.count[0] == b.count[0] && !memcmp(a.idx, b.idx, (size_t)k * sizeof *a.idx) &&
               !memcmp(a.dist, b.dist, (size_t)k * sizeof *a.dist);
    free(pair);
    free(qa);
    retrieval_out_free(&a);
    retrieval_out_free(&b);
    return same;
}

static void test_rank(void)
{
    enum { ROWS = 150 };
    int bad = 0, runs = 0, nan_runs = 0;
    for (uint32_t dim = 1; dim <= 300; dim = dim < 70 ? dim + 1 : dim + 77) {
        float *v = malloc((size_t)(ROWS + 1) * dim * sizeof *v);
        for (size_t c = 0; c < (size_t)(ROWS + 1) * dim; c++) v[c] = rnd();
        memcpy(v + 7 * dim, v + 3 * dim, dim * sizeof *v);    /* a duplicate: a tie broken by index */
        memset(v + 11 * dim, 0, dim * sizeof *v);              /* a zero row: cosine distance 1 */
        memcpy(v + 20 * dim, v + ROWS * dim, dim * sizeof *v); /* the query itself: distance 0 */
        struct retrieval_mat map = {v, ROWS, dim}, q = {v + ROWS * dim, 1, dim};
        int32_t js[ROWS], sorted[ROWS];
        for (int c = 0; c < ROWS; c++) js[c] = (c * 37) % ROWS, sorted[c] = c;
        for (int kind = 0; kind < 2; kind++) {
            enum rv_distance kd = kind ? RV_DIST_COSINE : RV_DIST_L2;
            for (int n = 1; n <= ROWS; n += n < 40 ? 1 : 19) {
                bad += !rank_same(&map, &q, kd, js, js, n, n < 25 ? n : 25);
                runs++;
            }
            v[(size_t)13 * dim] = NAN;   /* a NaN distance: the shared comparator on the rows in index order */
            bad += !rank_same(&map, &q, kd, sorted, js, ROWS, 25);
            v[(size_t)13 * dim] = 0.25f;
            nan_runs++;
        }
        free(v);
    }
    CHECK(bad == 0, "AVX2 re-rank: the same indices, distances and counts as retr_rank");
    CHECK(runs > 1000 && nan_runs == 144, "AVX2 re-rank: every size and dimension compared");
}

static int pair_cmp(const void *x, const void *y)
{
    const double *a = x, *b = y;
    if (a[0] != b[0]) return a[0] < b[0] ? -1 : 1;
    return (a[1] > b[1]) - (a[1] < b[1]);
}

/* retrieval_dense against every pair by retrieval_pair, sorted by
 * (distance, index): the cut may drop only rows that cannot reach the top
 * K, also where float scores underflow or carry a large scale. */
static void test_cut(void)
{
    enum { N = 700, DIM = 8, K = 10 };
    /* below about 1e-20 squares underflow float: every score is 0 and the
     * float collector keeps the lowest indices (retrieval.h says so) */
    static const float scales[] = {1, 1e-21f, 1e-19f, 1e15f, 1e18f};
    int bad = 0, runs = 0;
    float *v = malloc((size_t)N * DIM * sizeof *v);
    double *all = malloc(2 * (size_t)N * sizeof *all);
    for (size_t sc = 0; sc < sizeof scales / sizeof *scales; sc++)
        for (int kind = 0; kind < 2; kind++) {
            enum rv_distance kd = kind ? RV_DIST_COSINE : RV_DIST_L2;
            for (size_t c = 0; c < (size_t)N * DIM; c++) v[c] = rnd() * scales[sc];
            struct retrieval_mat m = {v, N, DIM};
            struct retrieval_rule rule = {1, NULL, 0, 3, NULL};
            struct retrieval_out o;
            struct err e;
            if (retrieval_dense(&m, &m, kd, &rule, K, 2, &o, &e)) {
                bad++;
                continue;
            }
            for (size_t i = 0; i < N; i++) {
                int n = 0;
                for (size_t j = 0; j + 3 <= i; j++, n++) {
                    all[2 * n] = retrieval_pair(v + i * DIM, v + j * DIM, DIM, kd);
                    all[2 * n + 1] = (double)j;
                }
                qsort(all, (size_t)n, 2 * sizeof *all, pair_cmp);
                int want = n < K ? n : K, same = o.count[i] == want;
                for (int c = 0; same && c < want; c++)
                    same = o.idx[i * K + c] == (int32_t)all[2 * c + 1] && o.dist[i * K + c] == all[2 * c];
                bad += !same;
            }
            runs++;
            retrieval_out_free(&o);
        }
    free(v);
    free(all);
    CHECK(bad == 0, "dense top K equals all pairs by retrieval_pair at every scale, tiny and large");
    CHECK(runs == 10, "dense top K: every scale and distance compared");
}

int main(void)
{
    test_cut();
    if (!retr_exact_fast()) {
        CHECK_SKIP("AVX2 screen (this CPU has no AVX2)");
        CHECK_SKIP("AVX2 re-rank (this CPU has no AVX2)");
        return check_done();
    }
    test_screen();
    test_rank();
    return check_done();
}
