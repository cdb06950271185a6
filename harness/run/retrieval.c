/* retrieval.c: pair distances, the candidate rule, the exact re-rank and
 * the custom-distance path (the sgemm path is retrieval_dense.c). */
#include "harness/run/retrieval.h"

#include <math.h>
#include <stdlib.h>
#include <string.h>

#include "harness/base/pool.h"
#include "harness/run/retrieval_rank.h"

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

int retr_out_alloc(struct retrieval_out *o, size_t nq, int k, struct err *e)
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

static int retr_cmp_pair(const void *a, const void *b)
{
    const double *x = a, *y = b;
    if (x[0] != y[0]) return x[0] < y[0] ? -1 : 1;
    return (x[1] > y[1]) - (x[1] < y[1]);
}

/* retrieval_pair of a against four rows at once: each lane runs exactly
 * the sums of retrieval_pair in the same order, so every result is the
 * same bit for bit; the four dependency chains only overlap in time. */
static void retr_pair4(const float *a, const float *const b[4], uint32_t dim, enum rv_distance kind,
                       double out[4])
{
    const float *b0 = b[0], *b1 = b[1], *b2 = b[2], *b3 = b[3];
    double s0 = 0, s1 = 0, s2 = 0, s3 = 0;
    if (kind == RV_DIST_COSINE) {
        double na = 0, n0 = 0, n1 = 0, n2 = 0, n3 = 0;
        for (uint32_t k = 0; k < dim; k++) {
            double x = a[k];
            na += x * x;
            s0 += x * b0[k], n0 += (double)b0[k] * b0[k];
            s1 += x * b1[k], n1 += (double)b1[k] * b1[k];
            s2 += x * b2[k], n2 += (double)b2[k] * b2[k];
            s3 += x * b3[k], n3 += (double)b3[k] * b3[k];
        }
        const double s[4] = {s0, s1, s2, s3}, nb[4] = {n0, n1, n2, n3};
        for (int l = 0; l < 4; l++) {
            double d = na > 0 && nb[l] > 0 ? 1 - s[l] / sqrt(na * nb[l]) : 1;
            out[l] = d < 0 ? 0 : d;
        }
        return;
    }
    for (uint32_t k = 0; k < dim; k++) {
        double x = a[k], t0 = x - b0[k], t1 = x - b1[k], t2 = x - b2[k], t3 = x - b3[k];
        s0 += t0 * t0, s1 += t1 * t1, s2 += t2 * t2, s3 += t3 * t3;
    }
    out[0] = sqrt(s0), out[1] = sqrt(s1), out[2] = sqrt(s2), out[3] = sqrt(s3);
}

void retr_rank(const struct retrieval_mat *map, const struct retrieval_mat *q, enum rv_distance kind,
               const double *s, const int32_t *j, int n, size_t i, double *pair, struct retrieval_out *o)
{
    for (int c = 0; c < n; c += 4) {
        const float *rows[4];
        double d[4];
        for (int l = 0; l < 4; l++)   /* past the end: repeat the last row, result unused */
            rows[l] = map->v + (size_t)j[c + l < n ? c + l : n - 1] * map->dim;
        if (kind != RV_DIST_CUSTOM) retr_pair4(q->v + i * q->dim, rows, q->dim, kind, d);
        for (int l = 0; l < 4 && c + l < n; l++) {
            pair[2 * (c + l)] = kind == RV_DIST_CUSTOM ? s[c + l] : d[l];
            pair[2 * (c + l) + 1] = j[c + l];
        }
    }
    qsort(pair, (size_t)n, 2 * sizeof *pair, retr_cmp_pair);
    int keep = n < o->k ? n : o->k;
    for (int c = 0; c < keep; c++) {
        o->dist[i * o->k + c] = pair[2 * c];
        o->idx[i * o->k + c] = (int32_t)pair[2 * c + 1];
    }
    o->count[i] = keep;
}

int retr_check(const struct retrieval_mat *map, const struct retrieval_mat *q,
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

int retrieval_distance_ok(const char *name, double d, size_t query, size_t map, struct err *e)
{
    if (d >= 0) return 0;
    return err_set(e, "method '%s': distance of query %zu to map scan %zu is %g, expected a number >= 0", name,
                   query, map, d);
}

/* Custom path: one pool task per query. */
struct retr_custom {
    const struct retrieval_mat *map, *q;
    const struct retrieval_out *pre;   /* key prefilter or NULL */
    retrieval_fn fn;
    const void *ctx;
    const char *name;
    const struct retrieval_rule *rule;
    struct retrieval_out *out;
};

/* The candidates of query i (map indices into js, rows into rows); how many. */
static size_t retr_candidates(const struct retr_custom *c, size_t i, int32_t *js, const float **rows)
{
    size_t n = c->pre ? (size_t)c->pre->count[i] : c->map->n, m = 0;
    for (size_t t = 0; t < n; t++) {
        size_t j = c->pre ? (size_t)c->pre->idx[i * c->pre->k + t] : t;
        if (!c->pre && !retrieval_is_candidate(c->rule, i, j)) continue;
        js[m] = (int32_t)j;
        rows[m++] = c->map->v + j * c->map->dim;
    }
    return m;
}

static int retr_custom_task(void *arg, size_t i, int worker, struct err *e)
{
    (void)worker;
    struct retr_custom *c = arg;
    int k = c->out->k, rc = -1;
    size_t most = c->pre ? (size_t)c->pre->k : c->map->n;
    double *s = malloc((size_t)k * sizeof *s), *tmp = malloc(2 * (size_t)k * sizeof *tmp);
    double *d = malloc((most ? most : 1) * sizeof *d);
    int32_t *hs = malloc((size_t)k * sizeof *hs), *js = malloc((most ? most : 1) * sizeof *js);
    const float **rows = malloc((most ? most : 1) * sizeof *rows);
    if (!s || !tmp || !d || !hs || !js || !rows) {
        err_set(e, "retrieval: out of memory");
        goto done;
    }
    struct retr_heap h = {s, hs, 0, k};
    size_t n = retr_candidates(c, i, js, rows);
    if (n && c->fn(c->ctx, c->q->v + i * c->q->dim, rows, n, d, e)) {
        err_wrap(e, "query %zu", i);
        goto done;
    }
    for (size_t t = 0; t < n; t++) {
        if (retrieval_distance_ok(c->name, d[t], i, (size_t)js[t], e)) goto done;
        retr_push(&h, d[t], js[t]);
    }
    retr_rank(c->map, c->q, RV_DIST_CUSTOM, h.s, h.j, h.n, i, tmp, c->out);
    if (c->rule->prog) progress_add(c->rule->prog, 1);
    rc = 0;
done:
    free(rows);
    free(js);
    free(hs);
    free(d);
    free(tmp);
    free(s);
    return rc;
}

int retrieval_custom(const struct retrieval_mat *map, const struct retrieval_mat *q,
                     const struct retrieval_mat *map_key, const struct retrieval_mat *query_key,
                     retrieval_fn fn, const void *ctx, const char *name, const struct retrieval_rule *rule,
                     int k, int top_c, int jobs, struct retrieval_out *out, struct err *e)
{
    if (retr_check(map, q, rule, k, e)) return -1;
    struct retrieval_out pre = {0};
    int use_keys = map_key && query_key && map_key->dim > 0;
    struct retrieval_rule pre_rule = *rule;
    pre_rule.prog = NULL;   /* the re-ranking below counts the queries */
    if (use_keys && retrieval_dense(map_key, query_key, RV_DIST_L2, &pre_rule, top_c > k ? top_c : k, jobs, &pre, e))
        return -1;
    if (retr_out_alloc(out, q->n, k, e)) {
        retrieval_out_free(&pre);
        return -1;
    }
    struct retr_custom c = {map, q, use_keys ? &pre : NULL, fn, ctx, name, rule, out};
    int rc = pool_run(q->n, jobs, retr_custom_task, &c, e);
    retrieval_out_free(&pre);
    if (rc) retrieval_out_free(out);
    return rc;
}
