/* poses_io.c: pose files (CSV with header, whitespace lines, 3x4 rows + times). */
#include "harness/io/poses_io.h"

#include <ctype.h>
#include <math.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>

#include "harness/base/fileio.h"
#include "harness/base/grow.h"
#include "harness/base/numfmt.h"

#define POSES_FILE_MAX ((size_t)4 << 30)
#define POSES_MAX_COLS 64

static const char *const poses_names[] = {"auto", "csv", "text", "matrix"};
static const char *const poses_csv_cols[8] = {"t", "x", "y", "z", "qx", "qy", "qz", "qw"};

int poses_layout_parse(const char *name, enum poses_layout *out, struct err *e)
{
    for (int k = 0; k < 4; k++)
        if (!strcmp(name, poses_names[k])) { *out = (enum poses_layout)k; return 0; }
    return err_set(e, "unknown pose layout '%s', expected auto, csv, text or matrix", name);
}

const char *poses_layout_name(enum poses_layout layout)
{
    return (unsigned)layout < 4 ? poses_names[layout] : "?";
}

void poses_free(struct poses *ps)
{
    if (!ps) return;
    free(ps->v);
    ps->v = NULL;
    ps->n = 0;
}

/* A line cursor over a NUL-terminated buffer; lines are cut in place. */
struct poses_lines { char *s; long line; };

/* Next data line (blank and '#' lines skipped), or NULL at the end. */
static char *poses_next_line(struct poses_lines *L)
{
    while (*L->s) {
        char *start = L->s, *nl = strchr(start, '\n');
        if (nl) { *nl = 0; L->s = nl + 1; } else L->s = start + strlen(start);
        L->line++;
        size_t len = strlen(start);
        if (len && start[len - 1] == '\r') start[len - 1] = 0;
        char *p = start;
        while (*p == ' ' || *p == '\t') p++;
        if (*p && *p != '#') return p;
    }
    return NULL;
}

/* Split on commas (csv) or on whitespace and commas (others), in place. */
static int poses_split(char *s, int csv, char **f, int max)
{
    int n = 0;
    if (csv) {
        for (char *p = s;; ) {
            char *c = strchr(p, ',');
            if (c) *c = 0;
            while (*p == ' ' || *p == '\t') p++;
            char *end = p + strlen(p);
            while (end > p && (end[-1] == ' ' || end[-1] == '\t')) *--end = 0;
            if (n < max) f[n] = p;
            n++;
            if (!c) break;
            p = c + 1;
        }
        return n;
    }
    for (char *p = s; *p; ) {
        while (*p == ' ' || *p == '\t' || *p == ',') p++;
        if (!*p) break;
        if (n < max) f[n] = p;
        n++;
        while (*p && *p != ' ' && *p != '\t' && *p != ',') p++;
        if (*p) *p++ = 0;
    }
    return n;
}

static int poses_num(const char *s, double *v)
{
    char *end;
    *v = strtod(s, &end);
    return end == s || *end ? -1 : 0;
}

static int poses_push(struct poses *ps, size_t *cap, const struct pose *p, const char *path,
                      long line, struct err *e)
{
    if (ps->n >= POSES_MAX) return err_at(e, path, line, "more than %zu poses", POSES_MAX);
    if (ps->n && !(p->t > ps->v[ps->n - 1].t))
        return err_at(e, path, line, "time %.17g is not after the previous pose's %.17g, expected "
                      "strictly increasing times", p->t, ps->v[ps->n - 1].t);
    if (grow_reserve(&ps->v, cap, ps->n + 1, sizeof *ps->v)) return err_at(e, path, line, "out of memory");
    ps->v[ps->n++] = *p;
    return 0;
}

/* Map the CSV header to column indices of t x y z qx qy qz qw. */
static int poses_csv_header(char *line, const char *path, long lineno, int col[8], int *ncols, struct err *e)
{
    char *f[POSES_MAX_COLS];
    int n = poses_split(line, 1, f, POSES_MAX_COLS);
    if (n > POSES_MAX_COLS) return err_at(e, path, lineno, "header has %d columns, expected at most %d", n, POSES_MAX_COLS);
    for (int k = 0; k < 8; k++) col[k] = -1;
    for (int j = 0; j < n; j++)
        for (int k = 0; k < 8; k++)
            if (!strcmp(f[j], poses_csv_cols[k])) {
                if (col[k] >= 0) return err_at(e, path, lineno, "column '%s' appears twice in the header", f[j]);
                col[k] = j;
            }
    for (int k = 0; k < 8; k++)
        if (col[k] < 0)
            return err_at(e, path, lineno, "header lacks column '%s', expected t,x,y,z,qx,qy,qz,qw in any order",
                          poses_csv_cols[k]);
    *ncols = n;
    return 0;
}

/* Parse the numbers of one row into v (want of them, by column map or in order). */
static int poses_row(char *line, int csv, int want, const int *col, double *v, const char *path,
                     long lineno, struct err *e)
{
    char *f[POSES_MAX_COLS];
    int n = poses_split(line, csv, f, POSES_MAX_COLS);
    if (n != want)
        return err_at(e, path, lineno, "found %d %s, expected %d", n, csv ? "columns" : "numbers", want);
    int take = col ? 8 : want;
    for (int k = 0; k < take; k++) {
        int j = col ? col[k] : k;
        if (poses_num(f[j], &v[k]))
            return err_at(e, path, lineno, "%s '%s' is not a number", col ? poses_csv_cols[k] : "value", f[j]);
    }
    return 0;
}

/* Detect the layout from the first data line. */
static enum poses_layout poses_detect(const char *first)
{
    char tmp[4096];
    snprintf(tmp, sizeof tmp, "%s", first);
    char *f[POSES_MAX_COLS];
    int n = poses_split(tmp, 0, f, POSES_MAX_COLS);
    double v;
    for (int k = 0; k < n && k < POSES_MAX_COLS; k++)
        if (poses_num(f[k], &v)) return POSES_CSV;
    if (n == 12) return POSES_MATRIX;
    if (n == 8) return POSES_TEXT;
    return POSES_AUTO;
}

int poses_read_times(const char *path, double **t, size_t *n, struct err *e)
{
    *t = NULL;
    *n = 0;
    char *buf;
    size_t len;
    if (fileio_read(path, POSES_FILE_MAX, &buf, &len, e)) return -1;
    struct poses_lines L = {buf, 0};
    size_t cap = 0;
    double *v = NULL;
    for (char *line; (line = poses_next_line(&L)); ) {
        double x;
        char *f[2];
        int k = poses_split(line, 0, f, 2);
        if (k != 1) {
            err_at(e, path, L.line, "found %d values, expected one time in seconds", k);
            goto fail;
        }
        if (poses_num(f[0], &x) || !isfinite(x)) {
            err_at(e, path, L.line, "'%s' is not a finite number, expected one time in seconds", f[0]);
            goto fail;
        }
        if (*n && !(x > v[*n - 1])) {
            err_at(e, path, L.line, "time %.17g is not after the previous time %.17g, expected strictly "
                   "increasing times", x, v[*n - 1]);
            goto fail;
        }
        if (*n >= POSES_MAX) { err_at(e, path, L.line, "more than %zu times", POSES_MAX); goto fail; }
        if (grow_reserve(&v, &cap, *n + 1, sizeof *v)) { err_at(e, path, L.line, "out of memory"); goto fail; }
        v[(*n)++] = x;
    }
    free(buf);
    *t = v;
    return 0;
fail:
    free(buf);
    free(v);
    *n = 0;
    return -1;
}

/* Build pose k of a row in layout; times (matrix) may be NULL. */
static int poses_make(enum poses_layout layout, const double *v, double t, struct pose *p,
                      const char *path, long line, struct err *e)
{
    int rc = layout == POSES_MATRIX ? pose_from_matrix(p, t, v, e) : pose_from_quat(p, v[0], v + 1, v + 4, e);
    return rc ? err_wrap(e, "%s:%ld", path, line) : 0;
}

static int poses_parse(char *buf, const char *path, enum poses_layout layout, const double *times,
                       size_t n_times, struct poses *ps, struct err *e)
{
    struct poses_lines L = {buf, 0};
    int col[8], ncols = 0;
    size_t cap = 0;
    char *line = poses_next_line(&L);
    if (!line) return err_at(e, path, 0, "no poses in the file, expected %s",
                             layout == POSES_CSV ? "a header and rows" : "rows of numbers");
    if (layout == POSES_CSV) {
        if (poses_csv_header(line, path, L.line, col, &ncols, e)) return -1;
        line = poses_next_line(&L);
    }
    int want = layout == POSES_CSV ? ncols : layout == POSES_MATRIX ? 12 : 8;
    for (; line; line = poses_next_line(&L)) {
        double v[12];
        if (poses_row(line, layout == POSES_CSV, want, layout == POSES_CSV ? col : NULL, v, path, L.line, e))
            return -1;
        size_t k = ps->n;
        if (layout == POSES_MATRIX && times && k >= n_times)
            return err_at(e, path, L.line, "more rows than the %zu times in the times file, expected one time per row",
                          n_times);
        struct pose p;
        if (poses_make(layout, v, times ? times[k] : (double)k, &p, path, L.line, e)) return -1;
        if (poses_push(ps, &cap, &p, path, L.line, e)) return -1;
    }
    if (times && ps->n != n_times)
        return err_at(e, path, 0, "%zu rows but the times file has %zu times, expected one time per row",
                      ps->n, n_times);
    return 0;
}

int poses_read(const char *path, enum poses_layout layout, const char *times_path,
               struct poses *out, struct err *e)
{
    memset(out, 0, sizeof *out);
    char *buf;
    size_t len;
    if (fileio_read(path, POSES_FILE_MAX, &buf, &len, e)) return -1;
    if (layout == POSES_AUTO) {
        char *copy = strdup(buf);
        struct poses_lines L = {copy, 0};
        const char *first = copy ? poses_next_line(&L) : NULL;
        int any = first != NULL;
        layout = any ? poses_detect(first) : POSES_AUTO;
        free(copy);
        if (!any) {
            free(buf);
            return err_at(e, path, 0, "no poses in the file, expected lines of poses");
        }
        if (layout == POSES_AUTO) {
            free(buf);
            return err_at(e, path, L.line, "cannot tell the pose layout, expected a CSV header "
                          "naming t,x,y,z,qx,qy,qz,qw, lines of 8 numbers (t x y z qx qy qz qw) or of 12 "
                          "(a 3x4 matrix)");
        }
    }
    if (times_path && layout != POSES_MATRIX) {
        free(buf);
        return err_at(e, times_path, 0, "a times file goes with the matrix layout only, but %s is %s",
                      path, poses_layout_name(layout));
    }
    double *times = NULL;
    size_t n_times = 0;
    int rc = times_path ? poses_read_times(times_path, &times, &n_times, e) : 0;
    if (!rc) rc = poses_parse(buf, path, layout, times, n_times, out, e);
    free(times);
    free(buf);
    if (rc) poses_free(out);
    else out->layout = layout;
    return rc;
}

static void poses_write_row(FILE *f, enum poses_layout layout, const struct pose *p)
{
    char b[NUMFMT_LEN];
    if (layout == POSES_MATRIX) {
        const double *R = p->R;
        const double row[12] = {R[0], R[1], R[2], p->p[0], R[3], R[4], R[5], p->p[1], R[6], R[7], R[8], p->p[2]};
        for (int k = 0; k < 12; k++) fprintf(f, "%s%c", numfmt(b, row[k]), k < 11 ? ' ' : '\n');
        return;
    }
    char sep = layout == POSES_CSV ? ',' : ' ';
    const double row[8] = {p->t, p->p[0], p->p[1], p->p[2], p->q[0], p->q[1], p->q[2], p->q[3]};
    for (int k = 0; k < 8; k++) fprintf(f, "%s%c", numfmt(b, row[k]), k < 7 ? sep : '\n');
}

int poses_write(const char *path, enum poses_layout layout, const struct pose *v, size_t n,
                const char *times_path, struct err *e)
{
    if (layout == POSES_AUTO) return err_at(e, path, 0, "no layout named for writing, expected csv, text or matrix");
    if ((layout == POSES_MATRIX) != (times_path != NULL))
        return err_at(e, path, 0, "a times file goes with the matrix layout, and only with it");
    struct afile a;
    if (afile_open(&a, path, e)) return -1;
    if (layout == POSES_CSV) fprintf(a.f, "t,x,y,z,qx,qy,qz,qw\n");
    for (size_t k = 0; k < n; k++) poses_write_row(a.f, layout, &v[k]);
    if (afile_commit(&a, e)) return -1;
    if (!times_path) return 0;
    if (afile_open(&a, times_path, e)) return -1;
    char b[NUMFMT_LEN];
    for (size_t k = 0; k < n; k++) fprintf(a.f, "%s\n", numfmt(b, v[k].t));
    return afile_commit(&a, e);
}
