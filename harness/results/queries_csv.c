/* queries_csv.c: read, check and write the per-query results CSV. */
#include "harness/results/queries_csv.h"

#include <ctype.h>
#include <limits.h>
#include <errno.h>
#include <math.h>
#include <stdint.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>

#include "harness/base/fileio.h"
#include "harness/base/numfmt.h"
#include "harness/results/format.h"

#define QCSV_MAX_BYTES ((size_t)1 << 34)

struct qcsv_build {
    struct queries_csv *q;
    size_t cap_rows, cap_c, n_c;
};

static int qcsv_grow(void **p, size_t *cap, size_t need, size_t size)
{
    if (need <= *cap) return 0;
    size_t c = *cap ? *cap * 2 : 256;
    while (c < need) c *= 2;
    void *n = realloc(*p, c * size);
    if (!n) return -1;
    *p = n;
    *cap = c;
    return 0;
}

static int qcsv_push_row(struct qcsv_build *b, size_t query, long line)
{
    struct queries_csv *q = b->q;
    size_t need = q->n_rows + 2, c1 = b->cap_rows, c2 = b->cap_rows, c3 = b->cap_rows;
    if (qcsv_grow((void **)&q->query, &c1, need, sizeof *q->query) ||
        qcsv_grow((void **)&q->line, &c2, need, sizeof *q->line) ||
        qcsv_grow((void **)&q->off, &c3, need, sizeof *q->off))
        return -1;
    b->cap_rows = c3;   /* the three grew alike: same start, same need */
    q->query[q->n_rows] = query;
    q->line[q->n_rows] = line;
    q->off[q->n_rows] = b->n_c;
    q->n_rows++;
    q->off[q->n_rows] = b->n_c;
    return 0;
}

/* Cut the next comma-separated field off *p (empty fields kept); NULL at the end. */
static char *qcsv_field(char **p)
{
    if (!*p) return NULL;
    char *f = *p, *comma = strchr(f, ',');
    if (comma) { *comma = 0; *p = comma + 1; }
    else *p = NULL;
    return f;
}

static char *qcsv_trim(char *s)
{
    while (*s == ' ' || *s == '\t') s++;
    char *end = s + strlen(s);
    while (end > s && (end[-1] == ' ' || end[-1] == '\t' || end[-1] == '\r')) *--end = 0;
    return s;
}

/* A whole number >= 0 in s.  0 or -1. */
static int qcsv_index(const char *s, size_t *out)
{
    if (!isdigit((unsigned char)*s)) return -1;
    errno = 0;
    char *end;
    unsigned long long v = strtoull(s, &end, 10);
    if (*end || errno || v > (unsigned long long)LONG_MAX) return -1;
    *out = (size_t)v;
    return 0;
}

/* Parse one data line (NUL-terminated, no newline) into a row. */
static int qcsv_line(struct qcsv_build *b, char *text, long line, struct err *e)
{
    const char *path = b->q->path;
    char *rest = text, *f;
    size_t query;
    char *first = qcsv_trim(qcsv_field(&rest));
    if (qcsv_index(first, &query))
        return err_at(e, path, line, "query index '%s' is not a whole number, expected an index >= 0", first);
    if (qcsv_push_row(b, query, line)) return err_at(e, path, line, "out of memory");
    for (int field = 2; (f = qcsv_field(&rest)); field += 2) {
        char *cs = qcsv_trim(f), *ds = qcsv_field(&rest);
        size_t cand;
        if (qcsv_index(cs, &cand))
            return err_at(e, path, line, "field %d: candidate '%s' is not a whole number, expected a map index >= 0",
                          field, cs);
        if (!ds)
            return err_at(e, path, line, "field %d: candidate %zu has no distance, expected candidate,distance pairs",
                          field, cand);
        ds = qcsv_trim(ds);
        char *end;
        double d = strtod(ds, &end);
        if (!*ds || *end || !isfinite(d))
            return err_at(e, path, line, "field %d: distance '%s' is not a finite number, expected a descriptor distance",
                          field + 1, ds);
        if (qcsv_grow((void **)&b->q->c, &b->cap_c, b->n_c + 1, sizeof *b->q->c))
            return err_at(e, path, line, "out of memory");
        b->q->c[b->n_c++] = (struct pr_cand){(long)cand, d};
        b->q->off[b->q->n_rows] = b->n_c;
    }
    return 0;
}

static int qcsv_parse(struct qcsv_build *b, char *buf, struct err *e)
{
    long line = 0;
    int seen_data = 0;
    for (char *p = buf; p && *p;) {
        char *nl = strchr(p, '\n');
        if (nl) *nl = 0;
        line++;
        char *s = qcsv_trim(p);
        p = nl ? nl + 1 : NULL;
        if (*s == '#' && !seen_data && results_format_line(s, RESULTS_QUERIES_KIND, b->q->path, line, e) < 0)
            return -1;
        if (!*s || *s == '#') continue;
        if (!seen_data++ && isalpha((unsigned char)*s)) {
            if (strncmp(s, "query", 5))
                return err_at(e, b->q->path, line, "unknown header '%.40s', expected 'query,cand,dist,...' or a row of numbers", s);
            continue;
        }
        if (qcsv_line(b, s, line, e)) return -1;
    }
    return 0;
}

int queries_csv_read(const char *path, struct queries_csv *out, struct err *e)
{
    char *buf = NULL;
    size_t len;
    if (fileio_read(path, QCSV_MAX_BYTES, &buf, &len, e)) return -1;
    struct queries_csv q;
    memset(&q, 0, sizeof q);
    snprintf(q.path, sizeof q.path, "%s", path);
    struct qcsv_build b = {&q, 0, 0, 0};
    int rc = qcsv_parse(&b, buf, e);
    free(buf);
    if (!rc && !q.off) {
        q.off = calloc(1, sizeof *q.off);
        if (!q.off) rc = err_at(e, path, 0, "out of memory");
    }
    if (rc) { queries_csv_free(&q); return -1; }
    *out = q;
    return 0;
}

void queries_csv_free(struct queries_csv *q)
{
    if (!q) return;
    free(q->query);
    free(q->line);
    free(q->off);
    free(q->c);
    memset(q, 0, sizeof *q);
}

/* Check row r against the ground truth. */
static int qcsv_check_row(const struct queries_csv *q, size_t r, const struct gt *g,
                          const size_t *seen, struct err *e)
{
    size_t i = q->query[r];
    long line = q->line[r];
    if (i >= g->n_query)
        return err_at(e, q->path, line, "query %zu is out of range, expected a query index from 0 to %zu",
                      i, g->n_query ? g->n_query - 1 : 0);
    if (seen[i] != SIZE_MAX)
        return err_at(e, q->path, line, "query %zu is listed again (first on line %ld), expected one row per query",
                      i, q->line[seen[i]]);
    double prev = -INFINITY;
    for (size_t k = q->off[r]; k < q->off[r + 1]; k++) {
        long j = q->c[k].idx;
        if ((size_t)j >= g->n_map)
            return err_at(e, q->path, line, "query %zu: candidate %ld is out of range, expected a map index from 0 to %zu",
                          i, j, g->n_map ? g->n_map - 1 : 0);
        if (gt_is_future(g, i, (size_t)j))
            return (size_t)j == i
                ? err_at(e, q->path, line, "query %zu lists itself, expected earlier scans only in loop mode", i)
                : err_at(e, q->path, line, "query %zu lists scan %ld, a later scan; loop mode expects earlier scans only", i, j);
        if (q->c[k].dist < prev)
            return err_at(e, q->path, line, "query %zu: distance %g after %g, expected candidates best first",
                          i, q->c[k].dist, prev);
        prev = q->c[k].dist;
    }
    return 0;
}

int queries_csv_lists(const struct queries_csv *q, const struct gt *g, size_t **off,
                      struct pr_cand **c, struct err *e)
{
    size_t n = g->n_query, nc = q->n_rows ? q->off[q->n_rows] : 0;
    size_t *seen = malloc((n + 1) * sizeof *seen);
    size_t *o = calloc(n + 1, sizeof *o);
    struct pr_cand *cc = malloc((nc ? nc : 1) * sizeof *cc);
    if (!seen || !o || !cc) { err_at(e, q->path, 0, "out of memory"); goto fail; }
    for (size_t i = 0; i < n; i++) seen[i] = SIZE_MAX;
    for (size_t r = 0; r < q->n_rows; r++) {
        if (qcsv_check_row(q, r, g, seen, e)) goto fail;
        seen[q->query[r]] = r;
    }
    size_t at = 0;
    for (size_t i = 0; i < n; i++) {   /* rows in query order */
        o[i] = at;
        if (seen[i] == SIZE_MAX) continue;
        size_t r = seen[i], len = q->off[r + 1] - q->off[r];
        memcpy(cc + at, q->c + q->off[r], len * sizeof *cc);
        at += len;
    }
    o[n] = at;
    free(seen);
    *off = o;
    *c = cc;
    return 0;
fail:
    free(seen);
    free(o);
    free(cc);
    return -1;
}

int queries_csv_write(const char *path, const struct pr_lists *l, struct err *e)
{
    struct afile a;
    if (afile_open(&a, path, e)) return -1;
    results_format_write(a.f, RESULTS_QUERIES_KIND);
    fputs("query,cand,dist,cand,dist,...\n", a.f);
    for (size_t i = 0; i < l->n_query; i++) {
        fprintf(a.f, "%zu", i);
        char b[NUMFMT_LEN];
        for (size_t k = l->off[i]; k < l->off[i + 1]; k++)
            fprintf(a.f, ",%ld,%s", l->c[k].idx, numfmt(b, l->c[k].dist));
        fputc('\n', a.f);
    }
    return afile_commit(&a, e);
}
