/* scan_io.c: the scan-format table, dispatch through it, raw and text scans. */
#include "harness/io/scan_io.h"

#include <ctype.h>
#include <errno.h>
#include <fcntl.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>
#include <strings.h>
#include <sys/stat.h>
#include <unistd.h>

#include "harness/base/fileio.h"
#include "harness/io/pcd.h"
#include "harness/io/ply.h"
#include "harness/io/scan_body.h"

#define SCAN_RAW_RECORD 16
#define SCAN_TEXT_LINE_MAX 4096

static int scan_read_raw_any(const char *path, struct cloud *c, struct err *e);
static int scan_read_raw(const char *path, struct cloud *c, int *finite, struct err *e);
static int scan_read_text(const char *path, struct cloud *c, struct err *e);

/* The one table of scan formats: name, extensions (the first is written),
 * reader (and the one that checks finiteness while reading, if any),
 * writer, whether recordings may be written in it, and what a file of it
 * keeps.  index, perturb, synth and the recording writer ask here. */
static const struct scan_format scan_formats[] = {
    {SCAN_RAW, "raw", {".bin"}, scan_read_raw_any, scan_read_raw, scan_write_raw, 1, "x y z intensity as float32"},
    {SCAN_PCD, "pcd", {".pcd"}, pcd_read, pcd_read_finite, pcd_write_binary, 1,
     "x y z intensity, ring and time when present"},
    {SCAN_PLY, "ply", {".ply"}, ply_read, NULL, ply_write_binary, 1, "x y z intensity, ring and time when present"},
    {SCAN_TEXT, "text", {".txt", ".xyz", ".csv"}, scan_read_text, NULL, scan_write_text, 0,
     "x y z [intensity] as text"},
    /* the same files as pcd (its reader reads every DATA kind), written LZF-compressed */
    {SCAN_PCD_COMPRESSED, "pcd-compressed", {".pcd"}, pcd_read, pcd_read_finite, pcd_write_compressed, 1,
     "x y z intensity, ring and time when present, LZF-compressed"},
};
#define SCAN_N_FORMATS (sizeof scan_formats / sizeof scan_formats[0])

const struct scan_format *scan_format_at(size_t i)
{
    return i < SCAN_N_FORMATS ? &scan_formats[i] : NULL;
}

const struct scan_format *scan_format_of(enum scan_layout layout)
{
    for (size_t k = 0; k < SCAN_N_FORMATS; k++)
        if (scan_formats[k].layout == layout) return &scan_formats[k];
    return NULL;
}

/* The entries of the list asked for, in table order; their count. */
static size_t scan_entries(int what, const char *v[], size_t most)
{
    size_t n = 0;
    for (size_t k = 0; k < SCAN_N_FORMATS; k++) {
        const struct scan_format *f = &scan_formats[k];
        if (what == SCAN_LIST_EXTS)
            for (int x = 0; x < SCAN_FORMAT_EXTS && f->exts[x] && n < most; x++) {
                int seen = 0;  /* an extension two rows share is listed once */
                for (size_t j = 0; j < n && !seen; j++) seen = !strcmp(v[j], f->exts[x]);
                if (!seen) v[n++] = f->exts[x];
            }
        else if ((what == SCAN_LIST_NAMES || f->recording) && n < most)
            v[n++] = f->name;
    }
    return n;
}

void scan_format_list(char *out, size_t n, const char *sep, const char *last, int what)
{
    const char *v[SCAN_N_FORMATS * SCAN_FORMAT_EXTS];
    size_t m = scan_entries(what, v, sizeof v / sizeof v[0]), at = 0;
    out[0] = 0;
    for (size_t k = 0; k < m; k++) {
        int w = snprintf(out + at, n - at, "%s%s", !k ? "" : k + 1 < m ? sep : last, v[k]);
        if (w < 0 || (size_t)w >= n - at) {   /* no room: keep the whole entries so far */
            out[at] = 0;
            return;
        }
        at += (size_t)w;
    }
}

int scan_layout_parse(const char *name, enum scan_layout *out, struct err *e)
{
    if (!strcmp(name, "auto")) {
        *out = SCAN_AUTO;
        return 0;
    }
    for (size_t k = 0; k < SCAN_N_FORMATS; k++)
        if (!strcmp(name, scan_formats[k].name)) {
            *out = scan_formats[k].layout;
            return 0;
        }
    char names[128];
    scan_format_list(names, sizeof names, ", ", " or ", SCAN_LIST_NAMES);
    return err_set(e, "unknown scan layout '%s', expected auto, %s", name, names);
}

const char *scan_layout_name(enum scan_layout layout)
{
    const struct scan_format *f = scan_format_of(layout);
    return layout == SCAN_AUTO ? "auto" : f ? f->name : "?";
}

const char *scan_layout_ext(enum scan_layout layout)
{
    const struct scan_format *f = scan_format_of(layout);
    return f ? f->exts[0] : "";
}

enum scan_layout scan_layout_from_path(const char *path)
{
    const char *slash = strrchr(path, '/');
    const char *dot = strrchr(slash ? slash : path, '.');
    for (size_t k = 0; dot && k < SCAN_N_FORMATS; k++)
        for (int x = 0; x < SCAN_FORMAT_EXTS && scan_formats[k].exts[x]; x++)
            if (!strcasecmp(dot, scan_formats[k].exts[x])) return scan_formats[k].layout;
    return SCAN_AUTO;
}

/* Byte order: files are little-endian; swap on a big-endian host. */
static void scan_le_floats(float *v, size_t n)
{
#if defined(__BYTE_ORDER__) && __BYTE_ORDER__ == __ORDER_BIG_ENDIAN__
    for (size_t k = 0; k < n; k++) {
        uint32_t u;
        memcpy(&u, v + k, 4);
        u = __builtin_bswap32(u);
        memcpy(v + k, &u, 4);
    }
#else
    (void)v;
    (void)n;
#endif
}

static int scan_read_raw(const char *path, struct cloud *c, int *finite, struct err *e)
{
    int fd;
    size_t size;
    int rc = -1;
    if (fileio_open_regular(path, "a scan file", &fd, &size, e)) return -1;
    if (size == 0) {
        err_at(e, path, 0, "file is empty, expected 16-byte float32 x y z i records");
        goto done;
    }
    if (size % SCAN_RAW_RECORD) {
        err_at(e, path, 0, "size %zu bytes is not a multiple of 16, expected float32 x y z i "
               "records (%zu bytes left over)", size, size % SCAN_RAW_RECORD);
        goto done;
    }
    size_t n = size / SCAN_RAW_RECORD;
    if (n > CLOUD_MAX_POINTS) {
        err_at(e, path, 0, "%zu points is more than the limit of %zu", n, (size_t)CLOUD_MAX_POINTS);
        goto done;
    }
    free(c->ring);
    free(c->time);
    c->ring = NULL;
    c->time = NULL;
    if (cloud_reserve(c, n)) {
        err_at(e, path, 0, "out of memory for %zu points", n);
        goto done;
    }
#if defined(__BYTE_ORDER__) && __BYTE_ORDER__ == __ORDER_BIG_ENDIAN__
    finite = NULL;  /* the bytes are checked only after swapping: leave it to the caller */
#endif
    if (scan_body_read_full(fd, c->pts, size, finite, path, e)) goto done;
    scan_le_floats(c->pts, 4 * n);
    c->n = n;
    rc = 0;
done:
    close(fd);
    return rc;
}

/* Split one text line into numbers; returns the count (up to max+1), or -1
 * when a field is not a number (field index in *bad). */
static int scan_text_fields(char *line, double *v, int max, int *bad)
{
    int n = 0;
    char *s = line;
    for (;;) {
        while (*s == ' ' || *s == '\t' || *s == ',' || *s == '\r' || *s == '\n') s++;
        if (!*s || *s == '#') return n;
        char *end;
        double d = strtod(s, &end);
        if (end == s || (*end && !strchr(" \t,\r\n#", *end))) {
            *bad = n + 1;
            return -1;
        }
        if (n < max + 1) v[n] = d;
        if (n <= max) n++;
        s = end;
    }
}

static int scan_read_text_stream(FILE *f, const char *path, struct cloud *c, struct err *e)
{
    char line[SCAN_TEXT_LINE_MAX];
    long lineno = 0;
    while (fgets(line, sizeof line, f)) {
        lineno++;
        size_t len = strlen(line);
        if (len == sizeof line - 1 && line[len - 1] != '\n')
            return err_at(e, path, lineno, "line longer than %d bytes, expected x y z [i]",
                          SCAN_TEXT_LINE_MAX - 2);
        double v[5];
        int bad = 0;
        int k = scan_text_fields(line, v, 4, &bad);
        if (k < 0) return err_at(e, path, lineno, "field %d is not a number, expected x y z [i]", bad);
        if (k == 0) continue;
        if (k != 3 && k != 4)
            return err_at(e, path, lineno, "found %s%d numbers, expected 3 (x y z) or 4 (x y z i)",
                          k > 4 ? "more than " : "", k > 4 ? 4 : k);
        if (c->n >= CLOUD_MAX_POINTS)
            return err_at(e, path, lineno, "more than %zu points", (size_t)CLOUD_MAX_POINTS);
        if (cloud_push(c, (float)v[0], (float)v[1], (float)v[2], k == 4 ? (float)v[3] : 0.0f))
            return err_at(e, path, lineno, "out of memory");
    }
    if (ferror(f)) return err_at(e, path, 0, "read failed: %s", strerror(errno));
    if (lineno == 0) return err_at(e, path, 0, "file is empty, expected lines of x y z [i]");
    return 0;
}

static int scan_read_text(const char *path, struct cloud *c, struct err *e)
{
    int fd;
    if (fileio_open_regular(path, "a scan file", &fd, NULL, e)) return -1;
    FILE *f = fdopen(fd, "r");
    if (!f) { close(fd); return err_at(e, path, 0, "cannot open: %s", strerror(errno)); }
    free(c->ring);
    free(c->time);
    c->ring = NULL;
    c->time = NULL;
    int rc = scan_read_text_stream(f, path, c, e);
    fclose(f);
    return rc;
}

static int scan_read_raw_any(const char *path, struct cloud *c, struct err *e)
{
    return scan_read_raw(path, c, NULL, e);
}

int scan_read(const char *path, enum scan_layout layout, struct cloud *c, struct err *e)
{
    c->n = 0;
    if (layout == SCAN_AUTO) layout = scan_layout_from_path(path);
    const struct scan_format *f = scan_format_of(layout);
    if (!f) {
        char exts[128];
        scan_format_list(exts, sizeof exts, ", ", " or ", SCAN_LIST_EXTS);
        return err_at(e, path, 0, "unknown scan file extension, expected %s (or name the layout)", exts);
    }
    int rc = f->read(path, c, e);
    if (rc) c->n = 0;
    return rc;
}

int scan_read_finite(const char *path, enum scan_layout layout, struct cloud *c, size_t *n_dropped,
                     struct err *e)
{
    if (n_dropped) *n_dropped = 0;
    if (layout == SCAN_AUTO) layout = scan_layout_from_path(path);
    const struct scan_format *f = scan_format_of(layout);
    int finite = 0;
    if (f && f->read_finite) {
        c->n = 0;
        if (f->read_finite(path, c, &finite, e)) { c->n = 0; return -1; }
    } else if (scan_read(path, layout, c, e)) {
        return -1;
    }
    size_t d = finite ? 0 : cloud_drop_nonfinite(c);
    if (n_dropped) *n_dropped = d;
    return 0;
}

int scan_write_raw(const char *path, const struct cloud *c, struct err *e)
{
    if (c->n == 0)
        return err_at(e, path, 0, "cannot write an empty scan in the raw layout "
                      "(a 0-byte file reads as an error), expected the pcd layout for empty scans");
    struct afile a;
    if (afile_open(&a, path, e)) return -1;
    size_t n = 4 * c->n;
#if defined(__BYTE_ORDER__) && __BYTE_ORDER__ == __ORDER_BIG_ENDIAN__
    for (size_t k = 0; k < n; k++) {
        float v = c->pts[k];
        scan_le_floats(&v, 1);
        fwrite(&v, 4, 1, a.f);
    }
#else
    if (fwrite(c->pts, sizeof(float), n, a.f) != n) {
        afile_abort(&a);
        return err_at(e, path, 0, "write failed: %s", strerror(errno));
    }
#endif
    return afile_commit(&a, e);
}

int scan_write_text(const char *path, const struct cloud *c, struct err *e)
{
    struct afile a;
    if (afile_open(&a, path, e)) return -1;
    for (size_t k = 0; k < c->n; k++)
        fprintf(a.f, "%.9g %.9g %.9g %.9g\n", CLOUD_X(c, k), CLOUD_Y(c, k), CLOUD_Z(c, k),
                CLOUD_I(c, k));
    return afile_commit(&a, e);
}

int scan_write(const char *path, enum scan_layout layout, const struct cloud *c, struct err *e)
{
    const struct scan_format *f = scan_format_of(layout);
    if (!f || !f->write) {
        char names[128];
        scan_format_list(names, sizeof names, ", ", " or ", SCAN_LIST_NAMES);
        return err_at(e, path, 0, "no writer for layout '%s', expected %s", scan_layout_name(layout), names);
    }
    return f->write(path, c, e);
}
