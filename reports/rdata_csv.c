/* rdata_csv.c: poses.csv, queries.csv, matrix.csv and the verdicts file. */
#include "reports/rdata.h"

#include <cjson/cJSON.h>
#include <ctype.h>
#include <errno.h>
#include <math.h>
#include <stdlib.h>
#include <string.h>

#include "harness/base/fileio.h"

#define RDATA_CSV_MAX ((size_t)1 << 30)
#define RDATA_INDEX_MAX 100000000L

/* Next line of a buffer: NUL-terminates it in place and advances *pos. */
static char *next_line(char *buf, size_t len, size_t *pos)
{
    if (*pos >= len) return NULL;
    char *line = buf + *pos;
    char *nl = memchr(line, '\n', len - *pos);
    if (nl) { *nl = 0; *pos = (size_t)(nl - buf) + 1; }
    else *pos = len;
    size_t l = strlen(line);
    if (l && line[l - 1] == '\r') line[l - 1] = 0;
    return line;
}

static int blank(const char *s)
{
    while (isspace((unsigned char)*s)) s++;
    return *s == 0;
}

/* Read one number field ending at ',' or end of line.  NaN for "nan" or empty. */
static int field_num(char **p, double *v)
{
    char *s = *p, *end;
    while (*s == ' ') s++;
    if (*s == ',' || *s == 0) { *v = NAN; }
    else {
        errno = 0;
        *v = strtod(s, &end);
        if (end == s) return -1;
        s = end;
    }
    while (*s == ' ') s++;
    if (*s == ',') s++;
    else if (*s) return -1;
    *p = s;
    return 0;
}

static int track_put(struct rdata_track *t, long idx, const double v[4])
{
    if ((size_t)idx >= t->n) {
        size_t n = (size_t)idx + 1, cap = t->n;
        while (cap < n) cap = cap ? 2 * cap : 64;
        unsigned char *h = realloc(t->has, cap);
        if (!h) return -1;
        t->has = h;
        double **arr[4] = {&t->t, &t->x, &t->y, &t->z};
        for (int k = 0; k < 4; k++) {
            double *g = realloc(*arr[k], cap * sizeof(double));
            if (!g) return -1;
            *arr[k] = g;
        }
        memset(t->has + t->n, 0, cap - t->n);
        t->n = n;
    }
    t->has[idx] = 1;
    t->t[idx] = v[0]; t->x[idx] = v[1]; t->y[idx] = v[2]; t->z[idx] = v[3];
    return 0;
}

static void track_free(struct rdata_track *t)
{
    free(t->has); free(t->t); free(t->x); free(t->y); free(t->z);
    memset(t, 0, sizeof *t);
}

void rdata_poses_free(struct rdata_poses *p)
{
    track_free(&p->map);
    track_free(&p->query);
}

static int pose_row(char *line, const char *path, long ln, struct rdata_poses *p, struct err *e)
{
    char *comma = strchr(line, ',');
    if (!comma) return err_at(e, path, ln, "no comma, expected set,index,t,x,y,z");
    *comma = 0;
    struct rdata_track *t = !strcmp(line, "map") ? &p->map : !strcmp(line, "query") ? &p->query : NULL;
    if (!t) return err_at(e, path, ln, "set '%.40s' unknown, expected map or query", line);
    char *s = comma + 1, *end;
    long idx = strtol(s, &end, 10);
    if (end == s || *end != ',' || idx < 0 || idx > RDATA_INDEX_MAX)
        return err_at(e, path, ln, "bad scan index, expected a whole number from 0 to %ld", RDATA_INDEX_MAX);
    s = end + 1;
    double v[4];
    for (int k = 0; k < 4; k++)
        if (field_num(&s, &v[k]) || !isfinite(v[k]))
            return err_at(e, path, ln, "field %d is not a finite number, expected set,index,t,x,y,z", k + 3);
    if (track_put(t, idx, v)) return err_at(e, path, ln, "out of memory");
    return 0;
}

int rdata_poses_load(const char *path, struct rdata_poses *p, struct err *e)
{
    memset(p, 0, sizeof *p);
    char *buf;
    size_t len, pos = 0;
    if (fileio_read(path, RDATA_CSV_MAX, &buf, &len, e)) return -1;
    char *line;
    long ln = 0;
    int rc = 0;
    while (!rc && (line = next_line(buf, len, &pos))) {
        ln++;
        if (line[0] == '#' || blank(line) || !strncmp(line, "set,", 4)) continue;
        rc = pose_row(line, path, ln, p, e);
    }
    free(buf);
    if (!rc && !p->map.n && !p->query.n) rc = err_at(e, path, 0, "no pose rows, expected set,index,t,x,y,z");
    if (rc) rdata_poses_free(p);
    return rc;
}

void rdata_queries_free(struct rdata_queries *q)
{
    free(q->q);
    q->q = NULL;
    q->n = 0;
}

static int query_row(char *s, const char *path, long ln, struct rdata_top1 *r, struct err *e)
{
    char *end;
    r->query = strtol(s, &end, 10);
    if (end == s || r->query < 0 || (*end && *end != ','))
        return err_at(e, path, ln, "bad query index, expected query,cand,dist,...");
    r->cand = -1;
    r->dist = NAN;
    if (!*end) return 0;
    s = end + 1;
    if (blank(s)) return 0;
    r->cand = strtol(s, &end, 10);
    if (end == s || *end != ',' || r->cand < 0)
        return err_at(e, path, ln, "bad candidate index, expected query,cand,dist,...");
    s = end + 1;
    r->dist = strtod(s, &end);
    if (end == s || (*end && *end != ',') || isnan(r->dist))
        return err_at(e, path, ln, "bad distance, expected a number after the candidate");
    return 0;
}

int rdata_queries_load(const char *path, struct rdata_queries *q, struct err *e)
{
    memset(q, 0, sizeof *q);
    char *buf;
    size_t len, pos = 0, cap = 0;
    if (fileio_read(path, RDATA_CSV_MAX, &buf, &len, e)) return -1;
    char *line;
    long ln = 0;
    int rc = 0;
    while (!rc && (line = next_line(buf, len, &pos))) {
        ln++;
        if (line[0] == '#' || blank(line) || !strncmp(line, "query", 5)) continue;
        if (q->n == cap) {
            cap = cap ? 2 * cap : 256;
            struct rdata_top1 *g = realloc(q->q, cap * sizeof *g);
            if (!g) { rc = err_at(e, path, ln, "out of memory"); break; }
            q->q = g;
        }
        rc = query_row(line, path, ln, &q->q[q->n], e);
        if (!rc) q->n++;
    }
    free(buf);
    if (rc) rdata_queries_free(q);
    return rc;
}

void rdata_matrix_free(struct rdata_matrix *m)
{
    free(m->row_idx);
    free(m->col_idx);
    free(m->d);
    memset(m, 0, sizeof *m);
}

/* "#rows,3,7,9" -> a malloc'ed list of indices. */
static int index_line(char *line, const char *tag, const char *path, long ln,
                      long **out, size_t *n, struct err *e)
{
    size_t tl = strlen(tag);
    if (!line || strncmp(line, tag, tl) || (line[tl] && line[tl] != ','))
        return err_at(e, path, ln, "line does not start with '%s', expected %s then indices", tag, tag);
    size_t cap = 1;
    for (char *c = line; *c; c++) cap += *c == ',';
    if (!(*out = malloc(cap * sizeof **out))) return err_at(e, path, ln, "out of memory");
    *n = 0;
    char *s = line + tl;
    while (*s == ',') {
        char *end;
        long v = strtol(++s, &end, 10);
        if (end == s || v < 0) return err_at(e, path, ln, "index %zu is not a whole number >= 0", *n + 1);
        (*out)[(*n)++] = v;
        s = end;
    }
    if (*s) return err_at(e, path, ln, "unexpected text '%.20s', expected comma-separated indices", s);
    return 0;
}

static int matrix_rows(char *buf, size_t len, size_t *pos, const char *path, long *ln,
                       struct rdata_matrix *m, struct err *e)
{
    if (!m->rows || !m->cols) return err_at(e, path, 0, "empty matrix, expected at least one row and column");
    if (!(m->d = malloc(m->rows * m->cols * sizeof *m->d))) return err_at(e, path, 0, "out of memory");
    size_t r = 0;
    char *line;
    while ((line = next_line(buf, len, pos))) {
        (*ln)++;
        if (blank(line)) continue;
        if (r == m->rows) return err_at(e, path, *ln, "more than %zu distance rows, expected one per #rows index", m->rows);
        char *s = line;
        for (size_t c = 0; c < m->cols; c++) {
            if (!*s && c < m->cols) return err_at(e, path, *ln, "%zu distances, expected %zu", c, m->cols);
            if (field_num(&s, &m->d[r * m->cols + c]))
                return err_at(e, path, *ln, "distance %zu is not a number, expected %zu numbers", c + 1, m->cols);
        }
        if (*s) return err_at(e, path, *ln, "more than %zu distances, expected %zu", m->cols, m->cols);
        r++;
    }
    if (r != m->rows) return err_at(e, path, 0, "%zu distance rows, expected %zu", r, m->rows);
    return 0;
}

int rdata_matrix_load(const char *path, struct rdata_matrix *m, struct err *e)
{
    memset(m, 0, sizeof *m);
    char *buf;
    size_t len, pos = 0;
    if (fileio_read(path, RDATA_CSV_MAX, &buf, &len, e)) return -1;
    long ln = 1;
    int rc = index_line(next_line(buf, len, &pos), "#rows", path, ln, &m->row_idx, &m->rows, e);
    ln++;
    if (!rc) rc = index_line(next_line(buf, len, &pos), "#cols", path, ln, &m->col_idx, &m->cols, e);
    if (!rc) rc = matrix_rows(buf, len, &pos, path, &ln, m, e);
    free(buf);
    if (rc) rdata_matrix_free(m);
    return rc;
}

static void verdict_fill(const cJSON *o, struct rdata_verdict *v)
{
    const char *keys[6] = {"criterion", "metric", "method", "condition", "comparator", "target"};
    char *dst[6] = {v->text, v->metric, v->method, v->cond, v->cmp, v->target};
    size_t sz[6] = {sizeof v->text, sizeof v->metric, sizeof v->method, sizeof v->cond, sizeof v->cmp,
                    sizeof v->target};
    for (int k = 0; k < 6; k++) {
        const cJSON *s = cJSON_GetObjectItemCaseSensitive(o, keys[k]);
        if (cJSON_IsString(s)) snprintf(dst[k], sz[k], "%s", s->valuestring);
    }
    const char *nk[5] = {"value", "lo", "hi", "threshold", "measured"};
    double *nd[5] = {&v->value, &v->lo, &v->hi, &v->threshold, &v->measured};
    for (int k = 0; k < 5; k++) {
        const cJSON *n = cJSON_GetObjectItemCaseSensitive(o, nk[k]);
        *nd[k] = cJSON_IsNumber(n) ? n->valuedouble : NAN;
    }
    if (isnan(v->measured)) v->measured = v->value;
    const cJSON *ax = cJSON_GetObjectItemCaseSensitive(o, "axis_value");
    if (cJSON_IsNumber(ax)) {
        size_t l = strlen(v->cond);
        snprintf(v->cond + l, sizeof v->cond - l, " at %g", ax->valuedouble);
    }
    v->pass = cJSON_IsTrue(cJSON_GetObjectItemCaseSensitive(o, "pass"));
}

/* DIR/verdicts.json: a list of criterion results, or an object holding the
 * list under "criteria".  Absent file: no verdicts, not an error. */
int rdata_verdicts_read(struct rdata_set *s, struct err *e)
{
    char path[4200], *text;
    size_t len;
    fileio_join(path, sizeof path, s->root, "verdicts.json");
    FILE *f = fopen(path, "rb");
    if (!f) return 0;
    fclose(f);
    if (fileio_read(path, RDATA_CSV_MAX, &text, &len, e)) return -1;
    const char *end = NULL;
    cJSON *root = cJSON_ParseWithLengthOpts(text, len, &end, 0);
    if (!root) {
        long line, col;
        err_line_col(text, end ? (size_t)(end - text) : 0, &line, &col);
        free(text);
        return err_set(e, "%s:%ld:%ld: not valid JSON, expected a list of criterion results", path, line, col);
    }
    free(text);
    const cJSON *list = cJSON_IsArray(root) ? root : cJSON_GetObjectItemCaseSensitive(root, "criteria");
    int rc = 0;
    if (!cJSON_IsArray(list)) {
        rc = err_at(e, path, 0, "no list of criteria, expected a list or {\"criteria\": [...]}");
    } else {
        size_t n = (size_t)cJSON_GetArraySize(list);
        s->verdicts = calloc(n ? n : 1, sizeof *s->verdicts);
        if (!s->verdicts) rc = err_at(e, path, 0, "out of memory");
        for (const cJSON *o = list->child; !rc && o; o = o->next) {
            if (!cJSON_IsObject(o)) { rc = err_at(e, path, 0, "criterion %zu is not an object", s->n_verdicts + 1); break; }
            verdict_fill(o, &s->verdicts[s->n_verdicts++]);
        }
        snprintf(s->verdict_file, sizeof s->verdict_file, "verdicts.json");
    }
    cJSON_Delete(root);
    return rc;
}
