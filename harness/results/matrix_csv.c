/* matrix_csv.c: read and write matrix.csv and matrix.bin of a results folder. */
#include "harness/results/matrix_csv.h"

#include <errno.h>
#include <math.h>
#include <stdlib.h>
#include <stdint.h>
#include <string.h>
#include <sys/stat.h>

#include "harness/base/fileio.h"
#include "harness/results/cells.h"
#include "harness/base/numfmt.h"
#include "harness/results/format.h"

#define MCSV_MAX_BYTES ((size_t)1 << 30)

/* Next line of a buffer: NUL-terminates it in place and advances *pos. */
static char *mcsv_next_line(char *buf, size_t len, size_t *pos)
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

static int mcsv_blank(const char *s)
{
    while (*s == ' ' || *s == '\t') s++;
    return *s == 0;
}

/* Read one number field ending at ',' or end of line.  NaN for "nan" or empty. */
static int mcsv_field(char **p, double *v)
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

/* "#rows,3,7,9" -> a malloc'ed list of indices. */
static int mcsv_index_line(char *line, const char *tag, const char *path, long ln,
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

static int mcsv_rows(char *buf, size_t len, size_t *pos, const char *path, long *ln,
                     struct matrix_csv *m, struct err *e)
{
    if (!m->rows || !m->cols) return err_at(e, path, 0, "empty matrix, expected at least one row and column");
    if (!(m->d = malloc(m->rows * m->cols * sizeof *m->d))) return err_at(e, path, 0, "out of memory");
    size_t r = 0;
    char *line;
    while ((line = mcsv_next_line(buf, len, pos))) {
        (*ln)++;
        if (mcsv_blank(line)) continue;
        if (r == m->rows) return err_at(e, path, *ln, "more than %zu distance rows, expected one per #rows index", m->rows);
        char *s = line;
        for (size_t c = 0; c < m->cols; c++) {
            if (!*s && c < m->cols) return err_at(e, path, *ln, "%zu distances, expected %zu", c, m->cols);
            if (mcsv_field(&s, &m->d[r * m->cols + c]))
                return err_at(e, path, *ln, "distance %zu is not a number, expected %zu numbers", c + 1, m->cols);
        }
        if (*s) return err_at(e, path, *ln, "more than %zu distances, expected %zu", m->cols, m->cols);
        r++;
    }
    if (r != m->rows) return err_at(e, path, 0, "%zu distance rows, expected %zu", r, m->rows);
    return 0;
}

int matrix_csv_read(const char *path, struct matrix_csv *m, struct err *e)
{
    memset(m, 0, sizeof *m);
    char *buf;
    size_t len, pos = 0;
    if (fileio_read(path, MCSV_MAX_BYTES, &buf, &len, e)) return -1;
    long ln = 1;
    char *line = mcsv_next_line(buf, len, &pos);
    int rc = line ? results_format_line(line, RESULTS_MATRIX_KIND, path, ln, e) : 0;
    if (rc == 1) line = mcsv_next_line(buf, len, &pos), ln++, rc = 0;
    if (!rc) rc = mcsv_index_line(line, "#rows", path, ln, &m->row_idx, &m->rows, e);
    ln++;
    if (!rc) rc = mcsv_index_line(mcsv_next_line(buf, len, &pos), "#cols", path, ln, &m->col_idx, &m->cols, e);
    if (!rc) rc = mcsv_rows(buf, len, &pos, path, &ln, m, e);
    free(buf);
    if (rc) matrix_csv_free(m);
    return rc;
}

void matrix_csv_free(struct matrix_csv *m)
{
    free(m->row_idx);
    free(m->col_idx);
    free(m->d);
    memset(m, 0, sizeof *m);
}

int matrix_csv_write(const char *path, const size_t *row_idx, size_t rows, const size_t *col_idx,
                     size_t cols, const double *d, struct err *e)
{
    struct afile a;
    if (afile_open(&a, path, e)) return -1;
    results_format_write(a.f, RESULTS_MATRIX_KIND);
    fprintf(a.f, "#rows");
    for (size_t k = 0; k < rows; k++) fprintf(a.f, ",%zu", row_idx[k]);
    fprintf(a.f, "\n#cols");
    for (size_t k = 0; k < cols; k++) fprintf(a.f, ",%zu", col_idx[k]);
    fprintf(a.f, "\n");
    char b[NUMFMT_LEN];
    for (size_t r = 0; r < rows; r++)   /* fputs and putc: an fprintf per number took as long as numfmt */
        for (size_t k = 0; k < cols; k++) {
            fputs(numfmt(b, d[r * cols + k]), a.f);
            putc(k + 1 < cols ? ',' : '\n', a.f);
        }
    return afile_commit(&a, e);
}

/* ---- matrix.bin ---------------------------------------------------------- */

static void mbin_u32(FILE *f, uint32_t v)
{
    unsigned char b[4] = {(unsigned char)v, (unsigned char)(v >> 8), (unsigned char)(v >> 16),
                          (unsigned char)(v >> 24)};
    fwrite(b, 1, 4, f);
}

static uint32_t mbin_get_u32(const unsigned char *b)
{
    return (uint32_t)b[0] | (uint32_t)b[1] << 8 | (uint32_t)b[2] << 16 | (uint32_t)b[3] << 24;
}

int matrix_csv_bin_write(const char *path, const size_t *row_idx, size_t rows, const size_t *col_idx,
                         size_t cols, const double *d, struct err *e)
{
    if (rows > MATRIX_BIN_MAX || cols > MATRIX_BIN_MAX)
        return err_at(e, path, 0, "%zu x %zu distances, expected at most %d x %d", rows, cols, MATRIX_BIN_MAX,
                      MATRIX_BIN_MAX);
    struct afile a;
    if (afile_open(&a, path, e)) return -1;
    results_format_write(a.f, RESULTS_MATRIX_KIND);
    fprintf(a.f, "#binary,%zu,%zu\n", rows, cols);
    for (size_t k = 0; k < rows; k++) mbin_u32(a.f, (uint32_t)row_idx[k]);
    for (size_t k = 0; k < cols; k++) mbin_u32(a.f, (uint32_t)col_idx[k]);
    for (size_t k = 0; k < rows * cols; k++) {
        float v = (float)d[k];
        uint32_t u;
        memcpy(&u, &v, 4);
        mbin_u32(a.f, u);
    }
    if (ferror(a.f)) { afile_abort(&a); return err_at(e, path, 0, "write failed"); }
    return afile_commit(&a, e);
}

/* The two text lines of matrix.bin: the format line (optional) and
 * "#binary,ROWS,COLS".  Sets *at to the first binary byte. */
static int mbin_header(char *buf, size_t len, const char *path, size_t *at, size_t *rows, size_t *cols,
                       struct err *e)
{
    size_t pos = 0;
    long ln = 1;
    char *line = mcsv_next_line(buf, len, &pos);
    int rc = line ? results_format_line(line, RESULTS_MATRIX_KIND, path, ln, e) : 0;
    if (rc < 0) return -1;
    if (rc == 1) line = mcsv_next_line(buf, len, &pos), ln++;
    char tail;
    if (!line || sscanf(line, "#binary,%zu,%zu%c", rows, cols, &tail) != 2)
        return err_at(e, path, ln, "expected '#binary,ROWS,COLS'");
    if (!*rows || !*cols || *rows > MATRIX_BIN_MAX || *cols > MATRIX_BIN_MAX)
        return err_at(e, path, ln, "%zu x %zu distances, expected 1 to %d rows and columns", *rows, *cols,
                      MATRIX_BIN_MAX);
    *at = pos;
    return 0;
}

int matrix_csv_bin_read(const char *path, struct matrix_csv *m, struct err *e)
{
    memset(m, 0, sizeof *m);
    char *buf;
    size_t len, at = 0, rows = 0, cols = 0;
    size_t most = 200 + 4 * (2 * (size_t)MATRIX_BIN_MAX + (size_t)MATRIX_BIN_MAX * MATRIX_BIN_MAX);
    if (fileio_read(path, most, &buf, &len, e)) return -1;
    int rc = mbin_header(buf, len, path, &at, &rows, &cols, e);
    size_t need = 4 * (rows + cols + rows * cols);
    if (!rc && len - at != need)
        rc = err_at(e, path, 0, "%zu bytes after the header, expected %zu for %zu x %zu distances", len - at, need,
                    rows, cols);
    if (!rc) {
        m->rows = rows;
        m->cols = cols;
        m->row_idx = malloc(rows * sizeof *m->row_idx);
        m->col_idx = malloc(cols * sizeof *m->col_idx);
        m->d = malloc(rows * cols * sizeof *m->d);
        if (!m->row_idx || !m->col_idx || !m->d) rc = err_at(e, path, 0, "out of memory for %zu x %zu distances", rows, cols);
    }
    const unsigned char *b = (const unsigned char *)buf + at;
    for (size_t k = 0; !rc && k < rows; k++) m->row_idx[k] = (long)mbin_get_u32(b + 4 * k);
    for (size_t k = 0; !rc && k < cols; k++) m->col_idx[k] = (long)mbin_get_u32(b + 4 * (rows + k));
    for (size_t k = 0; !rc && k < rows * cols; k++) {
        uint32_t u = mbin_get_u32(b + 4 * (rows + cols + k));
        float v;
        memcpy(&v, &u, 4);
        m->d[k] = v;
    }
    free(buf);
    if (rc) matrix_csv_free(m);
    return rc;
}

int matrix_csv_load(const char *dir, struct matrix_csv *m, struct err *e)
{
    char path[4200];
    struct stat st;
    memset(m, 0, sizeof *m);
    if (results_path(path, sizeof path, dir, RESULTS_MATRIX_BIN, e)) return -1;
    if (!stat(path, &st)) return matrix_csv_bin_read(path, m, e);
    if (results_path(path, sizeof path, dir, RESULTS_MATRIX, e)) return -1;
    if (stat(path, &st)) return 1;
    return matrix_csv_read(path, m, e);
}
