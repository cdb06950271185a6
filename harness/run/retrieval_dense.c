/* retrieval_dense.c: L2 and cosine top-K by blocked single-threaded sgemm
 * on the pool's threads, each score block screened while it is in cache.
 *
 * One pool task owns RETR_TQ queries for the whole map: it multiplies them
 * by RETR_BM map rows at a time into its worker's block, and feeds each
 * query's row of scores into that query's collector (struct retr_top).
 * When the task has seen every map row, each query's candidates are cut
 * to those that can still reach its top K (retr_top_cut), re-ranked
 * exactly (retr_exact) and written out, so per-query state lives only in
 * the task:
 *
 *     worker w:  blk   | RETR_TQ x RETR_BM float scores |
 *                keys  | RETR_TQ collectors of room (= 4 cap) keys |
 *                js    | this query's rows to re-rank | the next query's |
 *                pair  | 2 room doubles | the query in dim doubles |
 */
#include "harness/run/retrieval.h"

#include <cblas.h>
#include <float.h>
#include <math.h>
#include <stdlib.h>
#include <string.h>
#if defined(__SSE2__)
#include <emmintrin.h>
#endif
#if defined(__x86_64__) || defined(__i386__)
#include <immintrin.h>
#define RETR_X86 1
#endif

#include "harness/base/blas.h"
#include "harness/base/pool.h"
#include "harness/run/retrieval_rank.h"

#define RETR_TQ 256    /* queries per pool task */
#define RETR_BM 1024   /* map rows per sgemm */
#define RETR_CHUNK 64  /* scores screened at once (one bit each in a mask) */
#define RETR_SEED 64   /* samples for a collector's first bar */
#define RETR_NORM_ROWS 1024   /* rows per pool task of norms */

/* The best cap candidates of one query so far, in an unsorted buffer of
 * room (= 4 cap) keys.  A key packs (score, index) into one integer whose
 * order is theirs: the float's bits made monotone in the high half (-0 as
 * +0, NaN after everything), the map index in the low half.  A score is
 * looked at when !(score >= bar): bar is NaN until the buffer first fills
 * (everything enters), then the score of the worst key kept by the last
 * trim; a full buffer is trimmed to the cap best keys.  A query meets its
 * map rows in increasing index order, so a later score equal to the bar
 * has the larger key and stays out.
 *     cap 2, room 4:  0.5 0.9 0.2 0.7  -> trim ->  0.2 0.5, bar 0.5 */
struct retr_top {
    uint64_t *key;
    int n;
    float bar;
    uint64_t bar_key;
};

static uint64_t retr_key(float s, int32_t j)
{
    uint32_t u;
    s += 0.0f;   /* -0 -> +0 */
    memcpy(&u, &s, sizeof u);
    u = s != s ? UINT32_MAX : (u & 0x80000000u) ? ~u : u | 0x80000000u;
    return (uint64_t)u << 32 | (uint32_t)j;
}

static float retr_key_score(uint64_t k)
{
    uint32_t u = (uint32_t)(k >> 32);
    if (u == UINT32_MAX) return NAN;
    u = (u & 0x80000000u) ? u & 0x7fffffffu : ~u;
    float s;
    memcpy(&s, &u, sizeof s);
    return s;
}

typedef uint64_t (*retr_screen_fn)(int cosine, const float *r, const float *m, float qn, float bar, size_t nb,
                                   float *sc);

struct retr_dense {
    const struct retrieval_mat *map, *q;
    enum rv_distance kind;
    const struct retrieval_rule *rule;
    struct retrieval_out *out;
    size_t n_tasks;
    int cap, room, workers, fast;
    retr_screen_fn screen;    /* retr_screen_base or a wider one */
    float *qn, *mn;           /* squared norms (L2) or inverse norms (cosine) */
    float *blk;               /* per worker: scores */
    uint64_t *keys;           /* per worker: RETR_TQ collectors of room keys */
    int32_t *js;              /* per worker: 2 room indices, this query's re-rank and the next's */
    double *pair;             /* per worker: re-rank scratch (2 room, then dim) */
};

static void retr_dense_free(struct retr_dense *d)
{
    free(d->qn);
    free(d->mn);
    free(d->blk);
    free(d->keys);
    free(d->js);
    free(d->pair);
}

static float retr_norm_value(enum rv_distance kind, double s)
{
    return kind == RV_DIST_COSINE ? (s > 0 ? (float)(1 / sqrt(s)) : 0.0f) : (float)s;
}

/* Norms of rows [i0, i1) of m, four rows side by side: each row's sum
 * still runs over its entries in order, as it would alone. */
static void retr_norm_rows(const struct retrieval_mat *m, enum rv_distance kind, size_t i0, size_t i1, float *out)
{
    size_t i = i0;
    for (; i + 4 <= i1; i += 4) {
        const float *v0 = m->v + i * m->dim, *v1 = v0 + m->dim, *v2 = v1 + m->dim, *v3 = v2 + m->dim;
        double s0 = 0, s1 = 0, s2 = 0, s3 = 0;
        for (uint32_t k = 0; k < m->dim; k++) {
            s0 += (double)v0[k] * v0[k];
            s1 += (double)v1[k] * v1[k];
            s2 += (double)v2[k] * v2[k];
            s3 += (double)v3[k] * v3[k];
        }
        out[i] = retr_norm_value(kind, s0), out[i + 1] = retr_norm_value(kind, s1);
        out[i + 2] = retr_norm_value(kind, s2), out[i + 3] = retr_norm_value(kind, s3);
    }
    for (; i < i1; i++) {
        double s = 0;
        const float *v = m->v + i * m->dim;
        for (uint32_t k = 0; k < m->dim; k++) s += (double)v[k] * v[k];
        out[i] = retr_norm_value(kind, s);
    }
}

/* One pool task of norms: RETR_NORM_ROWS query rows, then map rows. */
static int retr_norm_task(void *arg, size_t task, int w, struct err *e)
{
    (void)w, (void)e;
    const struct retr_dense *d = arg;
    size_t tq = (d->q->n + RETR_NORM_ROWS - 1) / RETR_NORM_ROWS;
    const struct retrieval_mat *m = task < tq ? d->q : d->map;
    size_t i0 = (task < tq ? task : task - tq) * RETR_NORM_ROWS;
    size_t i1 = m->n - i0 < RETR_NORM_ROWS ? m->n : i0 + RETR_NORM_ROWS;
    retr_norm_rows(m, d->kind, i0, i1, task < tq ? d->qn : d->mn);
    return 0;
}

/* Keep the k (< n) smallest keys, in any order: quickselect with a
 * median-of-three pivot and a partition without branches on the data (the
 * keys are distinct, since every index differs).  [lo, hi) holds the k-th
 * smallest; a pass leaves the pivot at s with smaller keys before it. */
static void retr_top_keep(struct retr_top *t, int k)
{
    uint64_t *v = t->key;
    int lo = 0, hi = t->n;
    while (hi - lo > 1) {
        int m = lo + (hi - lo) / 2, e = hi - 1;
        uint64_t a = v[lo], b = v[m], c = v[e];
        int med = (a < b) == (b < c) ? m : (b < a) == (a < c) ? lo : e;
        uint64_t p = v[med];
        v[med] = c;
        v[e] = p;
        int s = lo;
        for (int i = lo; i < e; i++) {
            uint64_t x = v[i];
            v[i] = v[s];
            v[s] = x;
            s += x < p;
        }
        v[e] = v[s];
        v[s] = p;
        if (k - 1 == s) break;
        if (k - 1 < s) hi = s;
        else lo = s + 1;
    }
    t->n = k;
}

/* Trim a full buffer to cap; the bar becomes the worst key kept. */
static void retr_top_trim(struct retr_top *t, int cap)
{
    retr_top_keep(t, cap);
    uint64_t worst = t->key[0];
    for (int c = 1; c < cap; c++) worst = t->key[c] > worst ? t->key[c] : worst;
    t->bar_key = worst;
    t->bar = retr_key_score(worst);
}

/* Scores of nb map rows (r: their dot products with the query, m: their
 * norms) into sc; returns a bit per score that a collector with this bar
 * may take (bit b for sc[b], NaN included).  Full chunks use SSE or AVX2
 * where the CPU has it: the same float operations in the same order as
 * the scalar expressions (no fused multiply-add), so the scores are the
 * same bit for bit. */
static uint64_t retr_screen_base(int cosine, const float *r, const float *m, float qn, float bar, size_t nb,
                                 float *sc)
{
    uint64_t mask = 0;
#if defined(__SSE2__)
    if (nb == RETR_CHUNK) {
        const __m128 vq = _mm_set1_ps(qn), vbar = _mm_set1_ps(bar), one = _mm_set1_ps(1.0f),
                     two = _mm_set1_ps(2.0f);
        for (size_t b = 0; b < RETR_CHUNK; b += 4) {
            __m128 vr = _mm_loadu_ps(r + b), vm = _mm_loadu_ps(m + b);
            __m128 v = cosine ? _mm_sub_ps(one, _mm_mul_ps(_mm_mul_ps(vr, vq), vm))
                              : _mm_sub_ps(_mm_add_ps(vq, vm), _mm_mul_ps(two, vr));
            _mm_storeu_ps(sc + b, v);
            mask |= (uint64_t)_mm_movemask_ps(_mm_cmpnge_ps(v, vbar)) << b;
        }
        return mask;
    }
#endif
    for (size_t b = 0; b < nb; b++) {
        sc[b] = cosine ? 1.0f - r[b] * qn * m[b] : qn + m[b] - 2.0f * r[b];
        mask |= (uint64_t)!(sc[b] >= bar) << b;
    }
    return mask;
}

#if RETR_X86
__attribute__((target("avx2"), optimize("fp-contract=off")))
static uint64_t retr_screen_avx2(int cosine, const float *r, const float *m, float qn, float bar, size_t nb,
                                 float *sc)
{
    if (nb != RETR_CHUNK) return retr_screen_base(cosine, r, m, qn, bar, nb, sc);
    const __m256 vq = _mm256_set1_ps(qn), vbar = _mm256_set1_ps(bar), one = _mm256_set1_ps(1.0f),
                 two = _mm256_set1_ps(2.0f);
    uint64_t mask = 0;
    if (cosine) {
        for (size_t b = 0; b < RETR_CHUNK; b += 8) {
            __m256 v = _mm256_sub_ps(one, _mm256_mul_ps(_mm256_mul_ps(_mm256_loadu_ps(r + b), vq),
                                                        _mm256_loadu_ps(m + b)));
            _mm256_storeu_ps(sc + b, v);
            mask |= (uint64_t)(uint32_t)_mm256_movemask_ps(_mm256_cmp_ps(v, vbar, _CMP_NGE_UQ)) << b;
        }
        return mask;
    }
    for (size_t b = 0; b < RETR_CHUNK; b += 8) {
        __m256 v = _mm256_sub_ps(_mm256_add_ps(vq, _mm256_loadu_ps(m + b)), _mm256_mul_ps(two, _mm256_loadu_ps(r + b)));
        _mm256_storeu_ps(sc + b, v);
        mask |= (uint64_t)(uint32_t)_mm256_movemask_ps(_mm256_cmp_ps(v, vbar, _CMP_NGE_UQ)) << b;
    }
    return mask;
}
#endif

static retr_screen_fn retr_screen_pick(void)
{
#if RETR_X86
    __builtin_cpu_init();
    if (__builtin_cpu_supports("avx2")) return retr_screen_avx2;
#endif
    return retr_screen_base;
}

/* Offer score s of map row j to a collector (the bar is passed already). */
static void retr_top_offer(struct retr_top *t, int cap, int room, float s, int32_t j)
{
    uint64_t key = retr_key(s, j);
    if (key >= t->bar_key) return;
    if (t->n == room) {
        retr_top_trim(t, cap);
        if (key >= t->bar_key) return;
    }
    t->key[t->n++] = key;
}

/* Score of map row m0 + b against query i, the same expression as the screen. */
static float retr_score(const struct retr_dense *d, size_t i, const float *row, size_t m0, size_t b)
{
    float qn = d->qn[i], m = d->mn[m0 + b], r = row[b];
    return d->kind == RV_DIST_COSINE ? 1.0f - r * qn * m : qn + m - 2.0f * r;
}

/* Samples for a first bar: the up to RETR_SEED / 4 smallest of about
 * RETR_SEED evenly spaced candidate scores of these rows, ascending, into
 * low; returns their count (0: too few rows to sample). */
static size_t retr_top_sample(const struct retr_dense *d, size_t i, const float *row, size_t m0, size_t n,
                              float low[RETR_SEED / 4])
{
    size_t step = n / RETR_SEED, nl = 0, keep = RETR_SEED / 4;
    if (step == 0) return 0;
    for (size_t b = 0; b < n; b += step) {
        float s = retr_score(d, i, row, m0, b);
        if (s != s || (d->rule->loop && !retrieval_is_candidate(d->rule, i, m0 + b))) continue;
        size_t at = nl < keep ? nl++ : keep;
        for (; at > 0 && low[at - 1] > s; at--)
            if (at < keep) low[at] = low[at - 1];
        if (at < keep) low[at] = s;
    }
    return nl;
}

/* Feed the scores of map rows [m0, m0 + n) against query i (row: their
 * dot products) into its collector, under its bar. */
static void retr_feed_rows(const struct retr_dense *d, struct retr_top *t, size_t i, const float *row, size_t m0,
                           size_t n)
{
    const float *mn = d->mn + m0;
    const float qn = d->qn[i];
    const int cosine = d->kind == RV_DIST_COSINE, loop = d->rule->loop;
    float sc[RETR_CHUNK];
    for (size_t b0 = 0; b0 < n; b0 += RETR_CHUNK) {
        size_t nb = n - b0 < RETR_CHUNK ? n - b0 : RETR_CHUNK;
        uint64_t mask = d->screen(cosine, row + b0, mn + b0, qn, t->bar, nb, sc);
        for (; mask; mask &= mask - 1) {
            size_t b = (size_t)__builtin_ctzll(mask);
            if (sc[b] >= t->bar) continue;   /* the bar may have dropped since the screen */
            size_t j = m0 + b0 + b;
            if (loop && !retrieval_is_candidate(d->rule, i, j)) continue;
            retr_top_offer(t, d->cap, d->room, sc[b], (int32_t)j);
        }
    }
}

/* Feed these rows; a collector with no bar yet first tries one from the
 * rows' samples: the rank-th smallest, then the 4 rank-th.  A tried bar v
 * stands when at least cap candidates here score below it (they are the
 * entries, all of them: so no score at or above v can reach the cap best);
 * otherwise the collector is emptied and the next try, or no bar, runs.
 * It saves the buffer from filling with the many early, loose entries.
 *     cap 39, 1024 rows: the 5th of 64 samples, about 80 rows below it */
static void retr_feed(const struct retr_dense *d, struct retr_top *t, size_t i, const float *row, size_t m0,
                      size_t n)
{
    float low[RETR_SEED / 4];
    size_t rank = 2 * (size_t)d->cap * RETR_SEED / (n ? n : 1) + 1, nl = 0;
    if (t->bar != t->bar && rank <= RETR_SEED / 4) nl = retr_top_sample(d, i, row, m0, n, low);
    for (size_t r = rank; r <= nl; r = r < nl && 4 * r > nl ? nl : 4 * r) {
        t->bar = low[r - 1];
        t->bar_key = retr_key(t->bar, 0);
        retr_feed_rows(d, t, i, row, m0, n);
        if (t->n >= d->cap) return;
        *t = (struct retr_top){t->key, 0, NAN, UINT64_MAX};
    }
    retr_feed_rows(d, t, i, row, m0, n);
}

/* Ask the cache for the rows a query will re-rank. */
static void retr_prefetch(const struct retrieval_mat *map, const int32_t *js, int n)
{
    size_t bytes = (size_t)map->dim * sizeof *map->v;
    for (int c = 0; c < n; c++) {
        const char *row = (const char *)(map->v + (size_t)js[c] * map->dim);
        for (size_t o = 0; o < bytes; o += 64) __builtin_prefetch(row + o);
    }
}

/* A bound on |score - exact distance| for one pair, doubled: L2 scores
 * carry at most (dim + 5) u (|q|^2 + |m|^2) (u = 2^-24: the sgemm's
 * dot product in any order, the float norms, two float operations) plus
 * less than 2^-126 from products that underflow; cosine scores (dim + 7) u
 * while both inverse norms lie in [FLT_MIN, 2^60] (a zero vector, inverse
 * norm 0, scores exactly 1).  Twice that: (dim + 8) 2^-23 times the same
 * scale, plus 2^-125.  Infinity (nothing is dropped) when no bound holds. */
static float retr_slack(const struct retr_dense *d, float qn, float mn)
{
    float rho = (float)(d->q->dim + 8) * 0x1p-23f;
    if (d->kind != RV_DIST_COSINE) return rho * (qn + mn) + 0x1p-125f;
    int q_ok = qn == 0 || (qn >= FLT_MIN && qn <= 0x1p60f), m_ok = mn == 0 || (mn >= FLT_MIN && mn <= 0x1p60f);
    return q_ok && m_ok ? rho : INFINITY;
}

/* Cut a query's kept candidates to the k best and those that may still
 * rank among them in double precision: a candidate c whose score minus
 * its slack exceeds every k-best score plus slack is farther than each of
 * those k in exact arithmetic by more than the double re-rank's error, so
 * it can never enter the output; dropping it leaves the output of the
 * re-rank over the cap best unchanged.  The rest keep their place in key
 * order: a survivor beyond the cap best (cap or more smaller keys) is not
 * a candidate at all.  Returns the rows to re-rank in js.
 *     k 2, cap 3:  scores 1.0 1.2 5.0, slack 0.01  ->  rows of 1.0, 1.2 */
static int retr_top_cut(const struct retr_dense *d, struct retr_top *t, size_t i, int32_t *js)
{
    int k = d->out->k, n = 0;
    if (t->n <= k) {
        for (int c = 0; c < t->n; c++) js[n++] = (int32_t)(uint32_t)t->key[c];
        return n;
    }
    int all = t->n;
    retr_top_keep(t, k);
    t->n = all;
    float reach = -INFINITY, qn = d->qn[i];
    for (int c = 0; c < k; c++) {
        int32_t j = (int32_t)(uint32_t)t->key[c];
        float s = retr_key_score(t->key[c]), r = s + retr_slack(d, qn, d->mn[j]);
        reach = r > reach || r != r ? r : reach;
        js[n++] = j;
    }
    if (!(reach < INFINITY && reach > -INFINITY)) reach = INFINITY;   /* NaN, overflow: drop nothing */
    for (int c = k; c < all; c++) {
        int32_t j = (int32_t)(uint32_t)t->key[c];
        float s = retr_key_score(t->key[c]);
        if (s - retr_slack(d, qn, d->mn[j]) > reach) continue;   /* false for NaN or infinity: kept */
        int smaller = 0;
        for (int o = 0; o < all; o++) smaller += t->key[o] < t->key[c];
        if (smaller < d->cap) js[n++] = j;
    }
    return n;
}

/* Every query of a task has met every map row: cut each one's candidates
 * and re-rank them exactly, fetching the next query's rows meanwhile. */
static void retr_task_rank(const struct retr_dense *d, struct retr_top *tops, size_t q0, size_t nq, int w)
{
    double *pair = d->pair + (size_t)w * (2 * d->room + d->q->dim);
    int32_t *js = d->js + (size_t)w * 2 * d->room, *next = js + d->room;
    int n = nq ? retr_top_cut(d, &tops[0], q0, js) : 0;
    for (size_t a = 0; a < nq; a++) {
        int n_next = a + 1 < nq ? retr_top_cut(d, &tops[a + 1], q0 + a + 1, next) : 0;
        retr_prefetch(d->map, next, n_next);
        retr_exact(d->map, d->q, d->kind, d->fast, js, n, q0 + a, pair + 2 * d->room, pair, d->out);
        int32_t *t = js;
        js = next, next = t, n = n_next;
    }
}

/* One pool task: RETR_TQ queries against the map.  Tasks run from the last
 * query block down: in loop mode those see the most map rows, so the long
 * ones start first. */
static int retr_task(void *arg, size_t task, int w, struct err *e)
{
    (void)e;
    const struct retr_dense *d = arg;
    const struct retrieval_mat *q = d->q, *map = d->map;
    size_t q0 = (d->n_tasks - 1 - task) * RETR_TQ;
    size_t nq = q->n - q0 < RETR_TQ ? q->n - q0 : RETR_TQ;
    size_t mend = d->rule->loop ? q0 + nq - 1 : map->n;   /* loop: candidates j < i */
    float *blk = d->blk + (size_t)w * RETR_TQ * RETR_BM;
    struct retr_top tops[RETR_TQ];
    for (size_t a = 0; a < nq; a++) {
        size_t at = ((size_t)w * RETR_TQ + a) * d->room;
        tops[a] = (struct retr_top){d->keys + at, 0, NAN, UINT64_MAX};
    }
    for (size_t m0 = 0; m0 < mend; m0 += RETR_BM) {
        size_t nm = mend - m0 < RETR_BM ? mend - m0 : RETR_BM;
        cblas_sgemm(CblasRowMajor, CblasNoTrans, CblasTrans, (int)nq, (int)nm, (int)q->dim, 1.0f,
                    q->v + q0 * q->dim, (int)q->dim, map->v + m0 * map->dim, (int)map->dim, 0.0f, blk,
                    (int)nm);
        for (size_t a = 0; a < nq; a++) {
            size_t i = q0 + a;
            size_t n = !d->rule->loop ? nm : i <= m0 ? 0 : i - m0 < nm ? i - m0 : nm;
            if (n) retr_feed(d, &tops[a], i, blk + a * nm, m0, n);
        }
    }
    retr_task_rank(d, tops, q0, nq, w);
    if (d->rule->prog) progress_add(d->rule->prog, nq);
    return 0;
}

/* Norms and per-worker scratch; 0 or -1 (out of memory, d freed). */
static int retr_dense_alloc(struct retr_dense *d, int k, int jobs, struct err *e)
{
    d->cap = k + k / 4 + 8;
    d->room = 4 * d->cap;
    d->n_tasks = (d->q->n + RETR_TQ - 1) / RETR_TQ;
    d->workers = pool_threads(jobs);
    if ((size_t)d->workers > d->n_tasks) d->workers = d->n_tasks ? (int)d->n_tasks : 1;
    size_t w = (size_t)d->workers, slots = w * RETR_TQ * (size_t)d->room;
    d->qn = malloc((d->q->n ? d->q->n : 1) * sizeof *d->qn);
    d->mn = malloc((d->map->n ? d->map->n : 1) * sizeof *d->mn);
    d->blk = malloc(w * RETR_TQ * RETR_BM * sizeof *d->blk);
    d->keys = malloc(slots * sizeof *d->keys);
    d->js = malloc(w * 2 * (size_t)d->room * sizeof *d->js);
    d->pair = malloc(w * (2 * (size_t)d->room + d->q->dim) * sizeof *d->pair);
    d->fast = retr_exact_fast();
    d->screen = retr_screen_pick();
    if (!d->qn || !d->mn || !d->blk || !d->keys || !d->js || !d->pair) {
        retr_dense_free(d);
        return err_set(e, "retrieval: out of memory for %zu queries", d->q->n);
    }
    return 0;
}

int retrieval_dense(const struct retrieval_mat *map, const struct retrieval_mat *q,
                    enum rv_distance kind, const struct retrieval_rule *rule, int k, int jobs,
                    struct retrieval_out *out, struct err *e)
{
    if (retr_check(map, q, rule, k, e) || retr_out_alloc(out, q->n, k, e)) return -1;
    struct retr_dense d = {.map = map, .q = q, .kind = kind, .rule = rule, .out = out};
    if (retr_dense_alloc(&d, k, jobs, e)) {
        retrieval_out_free(out);
        return -1;
    }
    size_t norm_tasks = (q->n + RETR_NORM_ROWS - 1) / RETR_NORM_ROWS + (map->n + RETR_NORM_ROWS - 1) / RETR_NORM_ROWS;
    if (pool_run(norm_tasks, d.workers, retr_norm_task, &d, e)) {
        retr_dense_free(&d);
        retrieval_out_free(out);
        return -1;
    }
    /* The pool's workers each run a single-threaded sgemm: OpenBLAS's own
     * threads would only compete with them (a sweep running cells in
     * parallel has set one thread already: nothing changes then). */
    int blas_n = blas_threads();
    if (blas_n > 1) blas_set_threads(1);
    int rc = pool_run(d.n_tasks, d.workers, retr_task, &d, e);
    if (blas_n > 1) blas_set_threads(blas_n);
    retr_dense_free(&d);
    if (rc) retrieval_out_free(out);
    return rc;
}
