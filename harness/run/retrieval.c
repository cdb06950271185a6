/* retrieval.c: blocked sgemm scoring with streaming per-query top-K. */
#include "harness/run/retrieval.h"

#include <cblas.h>
#include <math.h>
#include <stdlib.h>
#include <string.h>

#include "harness/base/pool.h"

#define RETR_BQ 1024   /* queries per block */
#define RETR_BM 4096   /* map rows per block */

/* A bounded max-heap of (score, index): the worst kept candidate on top. */
struct retr_heap {
    double *s;
    int32_t *j;
    int n, cap;
};

static int retr_less(double a, int32_t ja, double b, int32_t jb)
{
    return a < b || (a == b && ja < jb);
}

static void retr_push(struct retr_heap *h, double s, int32_t j)
{
    if (h->n == h->cap) {
        if (!retr_less(s, j, h->s[0], h->j[0])) return;
        int k = 0;  /* replace the top and sift down */
        for (;;) {
            int c = 2 * k + 1;
            if (c >= h->n) break;
            if (c + 1 < h->n && retr_less(h->s[c], h->j[c], h->s[c + 1], h->j[c + 1])) c++;
            if (!retr_less(s, j, h->s[c], h->j[c])) break;
            h->s[k] = h->s[c];
            h->j[k] = h->j[c];
            k = c;
        }
        h->s[k] = s;
        h->j[k] = j;
        return;
    }
    int k = h->n++;
    while (k > 0) {
        int p = (k - 1) / 2;
        if (!retr_less(h->s[p], h->j[p], s, j)) break;
        h->s[k] = h->s[p];
        h->j[k] = h->j[p];
        k = p;
    }
    h->s[k] = s;
    h->j[k] = j;
}

double retrieval_pair(const float *a, const float *b, uint32_t dim, enum rv_distance kind)
{
    double s = 0, na = 0, nb = 0;
    if (kind == RV_DIST_COSINE) {
        for (uint32_t k = 0; k < dim; k++) {
            s += (double)a[k] * b[k];
            na += (double)a[k] * a[k];
            nb += (double)b[k] * b[k];
        }
        if (!(na > 0 && nb > 0)) return 1;
        double d = 1 - s / sqrt(na * nb);
        return d < 0 ? 0 : d;
    }
    for (uint32_t k = 0; k < dim; k++) {
        double t = (double)a[k] - b[k];
        s += t * t;
    }
    return sqrt(s);
}

int retrieval_is_candidate(const struct retrieval_rule *r, size_t i, size_t j)
{
    if (!r->loop) return 1;
    if (j >= i) return 0;
    if (r->exclusion_scans >= 0) return j + (size_t)r->exclusion_scans <= i;
    return r->t[j] <= r->t[i] - r->exclusion_s;
}

void retrieval_out_free(struct retrieval_out *o)
{
    free(o->idx);
    free(o->dist);
    free(o->count);
    memset(o, 0, sizeof *o);
}

static int retr_out_alloc(struct retrieval_out *o, size_t nq, int k, struct err *e)
{
    memset(o, 0, sizeof *o);
    o->n_query = nq;
    o->k = k;
    size_t cells = nq * (size_t)k;
    o->idx = malloc((cells ? cells : 1) * sizeof *o->idx);
    o->dist = malloc((cells ? cells : 1) * sizeof *o->dist);
    o->count = calloc(nq ? nq : 1, sizeof *o->count);
    if (!o->idx || !o->dist || !o->count) {
        retrieval_out_free(o);
        return err_set(e, "retrieval: out of memory for %zu queries x %d candidates", nq, k);
    }
    for (size_t c = 0; c < cells; c++) o->idx[c] = -1, o->dist[c] = INFINITY;
    return 0;
}

/* Scratch of the dense path: heaps for all queries, norms, one score block. */
struct retr_dense {
    struct retr_heap *h;
    double *hs;
    int32_t *hj;
    float *qn, *mn, *blk;
    double *pair;
};

static void retr_dense_free(struct retr_dense *d)
{
    free(d->h);
    free(d->hs);
    free(d->hj);
    free(d->qn);
    free(d->mn);
    free(d->blk);
    free(d->pair);
}

/* Norms (or inverse norms for cosine) of every row. */
static void retr_norms(const struct retrieval_mat *m, enum rv_distance kind, float *out)
{
    for (size_t i = 0; i < m->n; i++) {
        double s = 0;
        const float *v = m->v + i * m->dim;
        for (uint32_t k = 0; k < m->dim; k++) s += (double)v[k] * v[k];
        out[i] = kind == RV_DIST_COSINE ? (s > 0 ? (float)(1 / sqrt(s)) : 0.0f) : (float)s;
    }
}

/* One block pair being scored: pool tasks take RETR_ROWS query rows each. */
#define RETR_ROWS 32
struct retr_job {
    const struct retrieval_mat *map, *q;
    enum rv_distance kind;
    const struct retrieval_rule *rule;
    struct retr_dense *d;
    size_t q0, nq, m0, nm;
    int jobs;
};

/* Push every candidate score of rows [a0, a1) of the block into its heap. */
static int retr_rows(void *arg, size_t task, int worker, struct err *e)
{
    (void)worker;
    (void)e;
    const struct retr_job *jb = arg;
    struct retr_dense *d = jb->d;
    size_t a1 = (task + 1) * RETR_ROWS < jb->nq ? (task + 1) * RETR_ROWS : jb->nq;
    for (size_t a = task * RETR_ROWS; a < a1; a++) {
        size_t i = jb->q0 + a, m0 = jb->m0;
        const float *row = d->blk + a * jb->nm;
        struct retr_heap *h = &d->h[i];
        /* loop candidates all lie below i; reloc takes every map row */
        size_t bend = jb->rule->loop && i < m0 + jb->nm ? (i > m0 ? i - m0 : 0) : jb->nm;
        float qn = d->qn[i];
        for (size_t b = 0; b < bend; b++) {
            float sc = jb->kind == RV_DIST_COSINE ? 1.0f - row[b] * qn * d->mn[m0 + b]
                                                  : qn + d->mn[m0 + b] - 2.0f * row[b];
            if (h->n == h->cap && (double)sc > h->s[0]) continue;  /* fast reject */
            if (jb->rule->loop && !retrieval_is_candidate(jb->rule, i, m0 + b)) continue;
            retr_push(h, (double)sc, (int32_t)(m0 + b));
        }
    }
    return 0;
}

/* Score one block pair with one sgemm, then feed the heaps on every core. */
static int retr_block(struct retr_job *jb, struct err *e)
{
    const struct retrieval_mat *q = jb->q, *map = jb->map;
    cblas_sgemm(CblasRowMajor, CblasNoTrans, CblasTrans, (int)jb->nq, (int)jb->nm, (int)q->dim, 1.0f,
                q->v + jb->q0 * q->dim, (int)q->dim, map->v + jb->m0 * map->dim, (int)map->dim, 0.0f,
                jb->d->blk, (int)jb->nm);
    return pool_run((jb->nq + RETR_ROWS - 1) / RETR_ROWS, jb->jobs, retr_rows, jb, e);
}

static int retr_cmp_pair(const void *a, const void *b)
{
    const double *x = a, *y = b;
    if (x[0] != y[0]) return x[0] < y[0] ? -1 : 1;
    return (x[1] > y[1]) - (x[1] < y[1]);
}

/* Exact distances for the kept candidates of query i (pair: 2 x cap
 * scratch), sorted by (distance, index), best k out. */
static void retr_finish(const struct retrieval_mat *map, const struct retrieval_mat *q,
                        enum rv_distance kind, const struct retr_heap *h, size_t i, double *pair,
                        struct retrieval_out *o)
{
    for (int c = 0; c < h->n; c++) {
        pair[2 * c] = kind == RV_DIST_CUSTOM ? h->s[c]
                      : retrieval_pair(q->v + i * q->dim, map->v + (size_t)h->j[c] * map->dim, q->dim, kind);
        pair[2 * c + 1] = h->j[c];
    }
    qsort(pair, (size_t)h->n, 2 * sizeof *pair, retr_cmp_pair);
    int keep = h->n < o->k ? h->n : o->k;
    for (int c = 0; c < keep; c++) {
        o->dist[i * o->k + c] = pair[2 * c];
        o->idx[i * o->k + c] = (int32_t)pair[2 * c + 1];
    }
    o->count[i] = keep;
}

static int retr_check(const struct retrieval_mat *map, const struct retrieval_mat *q,
                      const struct retrieval_rule *rule, int k, struct err *e)
{
    if (k < 1) return err_set(e, "retrieval: top-k %d, expected at least 1", k);
    if (map->dim != q->dim || map->dim == 0)
        return err_set(e, "retrieval: map dimension %u and query dimension %u, expected equal and > 0",
                       map->dim, q->dim);
    if (rule->loop && map->n != q->n)
        return err_set(e, "retrieval: loop mode with %zu map and %zu query scans, expected one set",
                       map->n, q->n);
    if (rule->loop && rule->exclusion_scans < 0 && !rule->t)
        return err_set(e, "retrieval: loop mode with a time exclusion needs scan times");
    if (map->n > INT32_MAX) return err_set(e, "retrieval: %zu map scans, expected at most %d", map->n, INT32_MAX);
    return 0;
}

int retrieval_dense(const struct retrieval_mat *map, const struct retrieval_mat *q,
                    enum rv_distance kind, const struct retrieval_rule *rule, int k, int jobs,
                    struct retrieval_out *out, struct err *e)
{
    if (retr_check(map, q, rule, k, e) || retr_out_alloc(out, q->n, k, e)) return -1;
    int cap = k + k / 4 + 8;
    struct retr_dense d = {0};
    d.h = calloc(q->n ? q->n : 1, sizeof *d.h);
    d.hs = malloc((q->n ? q->n : 1) * (size_t)cap * sizeof *d.hs);
    d.hj = malloc((q->n ? q->n : 1) * (size_t)cap * sizeof *d.hj);
    d.qn = malloc((q->n ? q->n : 1) * sizeof *d.qn);
    d.mn = malloc((map->n ? map->n : 1) * sizeof *d.mn);
    d.blk = malloc((size_t)RETR_BQ * RETR_BM * sizeof *d.blk);
    d.pair = malloc(2 * (size_t)cap * sizeof *d.pair);
    if (!d.h || !d.hs || !d.hj || !d.qn || !d.mn || !d.blk || !d.pair) {
        retr_dense_free(&d);
        retrieval_out_free(out);
        return err_set(e, "retrieval: out of memory for %zu queries", q->n);
    }
    for (size_t i = 0; i < q->n; i++)
        d.h[i] = (struct retr_heap){d.hs + i * cap, d.hj + i * cap, 0, cap};
    retr_norms(q, kind, d.qn);
    retr_norms(map, kind, d.mn);
    for (size_t q0 = 0; q0 < q->n; q0 += RETR_BQ) {
        size_t nq = q->n - q0 < RETR_BQ ? q->n - q0 : RETR_BQ;
        /* loop mode: candidates of these queries have j < q0 + nq */
        size_t mend = rule->loop ? q0 + nq : map->n;
        for (size_t m0 = 0; m0 < mend; m0 += RETR_BM) {
            size_t nm = mend - m0 < RETR_BM ? mend - m0 : RETR_BM;
            struct retr_job jb = {map, q, kind, rule, &d, q0, nq, m0, nm, jobs};
            if (retr_block(&jb, e)) {
                retr_dense_free(&d);
                retrieval_out_free(out);
                return -1;
            }
        }
    }
    for (size_t i = 0; i < q->n; i++) retr_finish(map, q, kind, &d.h[i], i, d.pair, out);
    retr_dense_free(&d);
    return 0;
}

/* Custom path: one pool task per query. */
struct retr_custom {
    const struct retrieval_mat *map, *q;
    const struct retrieval_out *pre;   /* key prefilter or NULL */
    retrieval_fn fn;
    const void *ctx;
    const struct retrieval_rule *rule;
    struct retrieval_out *out;
};

static int retr_custom_task(void *arg, size_t i, int worker, struct err *e)
{
    (void)worker;
    struct retr_custom *c = arg;
    int k = c->out->k;
    double *s = malloc((size_t)k * sizeof *s);
    int32_t *js = malloc((size_t)k * sizeof *js);
    double *tmp = malloc(2 * (size_t)k * sizeof *tmp);
    if (!s || !js || !tmp) {
        free(s);
        free(js);
        free(tmp);
        return err_set(e, "retrieval: out of memory");
    }
    struct retr_heap h = {s, js, 0, k};
    const float *qv = c->q->v + i * c->q->dim;
    size_t n = c->pre ? (size_t)c->pre->count[i] : c->map->n;
    for (size_t t = 0; t < n; t++) {
        size_t j = c->pre ? (size_t)c->pre->idx[i * c->pre->k + t] : t;
        if (!c->pre && !retrieval_is_candidate(c->rule, i, j)) continue;
        double d = c->fn(c->ctx, qv, c->map->v + j * c->map->dim);
        retr_push(&h, isfinite(d) && d >= 0 ? d : INFINITY, (int32_t)j);
    }
    retr_finish(c->map, c->q, RV_DIST_CUSTOM, &h, i, tmp, c->out);
    free(tmp);
    free(js);
    free(s);
    return 0;
}

int retrieval_custom(const struct retrieval_mat *map, const struct retrieval_mat *q,
                     const struct retrieval_mat *map_key, const struct retrieval_mat *query_key,
                     retrieval_fn fn, const void *ctx, const struct retrieval_rule *rule, int k,
                     int top_c, int jobs, struct retrieval_out *out, struct err *e)
{
    if (retr_check(map, q, rule, k, e)) return -1;
    struct retrieval_out pre = {0};
    int use_keys = map_key && query_key && map_key->dim > 0;
    if (use_keys && retrieval_dense(map_key, query_key, RV_DIST_L2, rule, top_c > k ? top_c : k, jobs, &pre, e))
        return -1;
    if (retr_out_alloc(out, q->n, k, e)) {
        retrieval_out_free(&pre);
        return -1;
    }
    struct retr_custom c = {map, q, use_keys ? &pre : NULL, fn, ctx, rule, out};
    int rc = pool_run(q->n, jobs, retr_custom_task, &c, e);
    retrieval_out_free(&pre);
    if (rc) retrieval_out_free(out);
    return rc;
}
