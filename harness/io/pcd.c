/* pcd.c: PCD v0.7 reader (ascii, binary, binary_compressed) and writers.
 *
 * The file layout follows the PCD v0.7 file-format description: a text
 * header of keyword lines, then DATA and the body; a binary body holds the
 * points one after another, each the fields in header order, each field
 * COUNT values of SIZE bytes, little-endian.  A binary_compressed body is
 *
 *     | uint32 packed size | uint32 unpacked size | LZF block (packed size) |
 *
 * and the unpacked bytes hold the fields one after another, each for all
 * points (field 0 of every point, then field 1 of every point, ...).
 */
#include "harness/io/pcd.h"

#include <ctype.h>
#include <errno.h>
#include <fcntl.h>
#include <math.h>
#include <stdint.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>
#include <sys/stat.h>
#include <unistd.h>

#include <liblzf/lzf.h>

#include "harness/base/fileio.h"
#include "harness/io/scan_body.h"

#define PCD_MAX_FIELDS 64
#define PCD_HEADER_MAX 65536
#define PCD_BLOCK ((size_t)256 << 10)  /* binary bodies are read in blocks of this size (in cache) */
#define PCD_HEAD_READ ((size_t)PCD_HEADER_MAX + 4096)  /* the first read: the longest header and a margin */
/* A scan file is at most the point bound times a generous record size. */
#define PCD_FILE_MAX ((size_t)CLOUD_MAX_POINTS * 64)

enum pcd_data { PCD_NONE = 0, PCD_ASCII, PCD_BINARY, PCD_COMPRESSED };

struct pcd_field {
    char name[32];
    char type;       /* I U F */
    int size;        /* bytes */
    int count;
    size_t offset;   /* bytes from the start of a binary point */
    int value0;      /* index of its first value in an ascii line */
};

struct pcd_header {
    struct pcd_field f[PCD_MAX_FIELDS];
    int nf, have_size, have_type, have_count, have_width;
    size_t width, height, points;
    int have_points;
    enum pcd_data data;
    size_t point_size;   /* binary bytes per point */
    int n_values;        /* ascii numbers per point */
    int ix, iy, iz, ii, ir, it;  /* field indices or -1 */
    size_t body;         /* byte offset of the body */
    long body_line;      /* line number of the first body line */
};

/* Next whitespace-separated word of s (advanced); NULL at the end. */
static char *pcd_word(char **s)
{
    char *p = *s;
    while (*p == ' ' || *p == '\t' || *p == '\r') p++;
    if (!*p) { *s = p; return NULL; }
    char *w = p;
    while (*p && *p != ' ' && *p != '\t' && *p != '\r') p++;
    if (*p) *p++ = 0;
    *s = p;
    return w;
}

static int pcd_size_t(const char *w, size_t *out)
{
    if (!w || !isdigit((unsigned char)w[0])) return -1;
    char *end;
    errno = 0;
    unsigned long long v = strtoull(w, &end, 10);
    if (*end || errno) return -1;
    *out = (size_t)v;
    return 0;
}

/* FIELDS / SIZE / TYPE / COUNT: one entry per field. */
static int pcd_field_line(struct pcd_header *h, const char *key, char *rest, const char *path,
                          long line, struct err *e)
{
    int k = 0;
    for (char *w; (w = pcd_word(&rest)); k++) {
        if (k >= PCD_MAX_FIELDS)
            return err_at(e, path, line, "more than %d fields, expected fewer", PCD_MAX_FIELDS);
        struct pcd_field *f = &h->f[k];
        size_t v = 0;
        if (!strcmp(key, "FIELDS")) {
            snprintf(f->name, sizeof f->name, "%s", w);
            f->count = 1;
        } else if (!strcmp(key, "TYPE")) {
            if (strlen(w) != 1 || !strchr("IUF", w[0]))
                return err_at(e, path, line, "unknown field type '%s' for field %d, expected I, U or F", w, k + 1);
            f->type = w[0];
        } else if (pcd_size_t(w, &v) || v == 0 || v > 8) {
            return err_at(e, path, line, "%s entry %d is '%s', expected a whole number %s", key, k + 1, w,
                          !strcmp(key, "SIZE") ? "1, 2, 4 or 8" : "from 1 to 8");
        } else if (!strcmp(key, "SIZE")) {
            f->size = (int)v;
        } else {
            f->count = (int)v;
        }
    }
    if (!strcmp(key, "FIELDS")) { h->nf = k; return k ? 0 : err_at(e, path, line, "FIELDS names no field, expected x y z ..."); }
    if (k != h->nf)
        return err_at(e, path, line, "%s has %d entries, expected %d (one per field)", key, k, h->nf);
    return 0;
}

static int pcd_header_line(struct pcd_header *h, char *s, const char *path, long line, struct err *e)
{
    char *key = pcd_word(&s);
    if (!key) return 0;
    if (!strcmp(key, "VERSION") || !strcmp(key, "VIEWPOINT")) return 0;
    int is_field_key = !strcmp(key, "SIZE") || !strcmp(key, "TYPE") || !strcmp(key, "COUNT");
    if (is_field_key && h->nf == 0) return err_at(e, path, line, "%s before FIELDS, expected FIELDS first", key);
    if (!strcmp(key, "FIELDS") || is_field_key) {
        if (pcd_field_line(h, key, s, path, line, e)) return -1;
        h->have_size |= !strcmp(key, "SIZE");
        h->have_type |= !strcmp(key, "TYPE");
        return 0;
    }
    size_t *dst = !strcmp(key, "WIDTH") ? &h->width : !strcmp(key, "HEIGHT") ? &h->height
                : !strcmp(key, "POINTS") ? &h->points : NULL;
    if (dst) {
        char *w = pcd_word(&s);
        if (pcd_size_t(w, dst)) return err_at(e, path, line, "%s is '%s', expected a whole number", key, w ? w : "");
        h->have_width |= dst == &h->width;
        h->have_points |= dst == &h->points;
        return 0;
    }
    if (!strcmp(key, "DATA")) {
        char *w = pcd_word(&s);
        if (w && !strcmp(w, "ascii")) h->data = PCD_ASCII;
        else if (w && !strcmp(w, "binary")) h->data = PCD_BINARY;
        else if (w && !strcmp(w, "binary_compressed")) h->data = PCD_COMPRESSED;
        else return err_at(e, path, line, "DATA '%s', expected ascii, binary or binary_compressed", w ? w : "");
        return 0;
    }
    return err_at(e, path, line, "unknown header keyword '%s', expected VERSION, FIELDS, SIZE, TYPE, COUNT, "
                  "WIDTH, HEIGHT, VIEWPOINT, POINTS or DATA", key);
}

/* Check types against sizes, find x y z and the optional fields, lay out a point. */
static int pcd_header_finish(struct pcd_header *h, const char *path, struct err *e)
{
    if (!h->nf || !h->have_size || !h->have_type || !h->have_width)
        return err_at(e, path, 0, "header lacks %s, expected FIELDS, SIZE, TYPE, WIDTH and DATA",
                      !h->nf ? "FIELDS" : !h->have_size ? "SIZE" : !h->have_type ? "TYPE" : "WIDTH");
    if (!h->have_points) h->points = h->width * h->height;
    if (h->height == 0 || h->points != h->width * h->height)
        return err_at(e, path, 0, "POINTS %zu does not equal WIDTH %zu x HEIGHT %zu", h->points, h->width, h->height);
    if (h->points > CLOUD_MAX_POINTS)
        return err_at(e, path, 0, "POINTS %zu is more than the limit of %zu", h->points, (size_t)CLOUD_MAX_POINTS);
    h->ix = h->iy = h->iz = h->ii = h->ir = h->it = -1;
    size_t off = 0;
    int nv = 0;
    for (int k = 0; k < h->nf; k++) {
        struct pcd_field *f = &h->f[k];
        int ok = f->type == 'F' ? (f->size == 4 || f->size == 8) : (f->size == 1 || f->size == 2 || f->size == 4);
        if (!ok)
            return err_at(e, path, 0, "field '%s' has TYPE %c with SIZE %d, expected %s", f->name, f->type, f->size,
                          f->type == 'F' ? "SIZE 4 or 8" : "SIZE 1, 2 or 4");
        f->offset = off;
        f->value0 = nv;
        off += (size_t)f->size * (size_t)f->count;
        nv += f->count;
        int *slot = !strcmp(f->name, "x") ? &h->ix : !strcmp(f->name, "y") ? &h->iy : !strcmp(f->name, "z") ? &h->iz
                  : !strcmp(f->name, "intensity") ? &h->ii : !strcmp(f->name, "ring") ? &h->ir
                  : (!strcmp(f->name, "time") || !strcmp(f->name, "t")) ? &h->it : NULL;
        if (slot && *slot < 0) *slot = k;
    }
    if (h->ix < 0 || h->iy < 0 || h->iz < 0)
        return err_at(e, path, 0, "fields lack %s, expected x, y and z", h->ix < 0 ? "x" : h->iy < 0 ? "y" : "z");
    h->point_size = off;
    h->n_values = nv;
    return 0;
}

static int pcd_parse_header(const unsigned char *buf, size_t len, const char *path,
                            struct pcd_header *h, struct err *e)
{
    memset(h, 0, sizeof *h);
    h->height = 1;
    size_t pos = 0;
    long line = 0;
    char tmp[4096];
    while (h->data == PCD_NONE) {
        if (pos >= len || pos > PCD_HEADER_MAX)
            return err_at(e, path, line, "header has no DATA line, expected DATA ascii, binary or binary_compressed");
        const unsigned char *nl = memchr(buf + pos, '\n', len - pos);
        size_t ll = nl ? (size_t)(nl - (buf + pos)) : len - pos;
        line++;
        if (ll >= sizeof tmp) return err_at(e, path, line, "header line longer than %zu bytes", sizeof tmp - 1);
        memcpy(tmp, buf + pos, ll);
        tmp[ll] = 0;
        pos += ll + (nl ? 1 : 0);
        if (tmp[0] == '#') continue;
        if (pcd_header_line(h, tmp, path, line, e)) return -1;
    }
    h->body = pos;
    h->body_line = line + 1;
    return pcd_header_finish(h, path, e);
}

/* One value of a binary field, as double. */
static double pcd_value(const unsigned char *p, char type, int size)
{
    switch (size) {
    case 1: return type == 'I' ? (double)(int8_t)p[0] : (double)p[0];
    case 2: {
        uint16_t u = (uint16_t)(p[0] | p[1] << 8);
        return type == 'I' ? (double)(int16_t)u : (double)u;
    }
    case 4: {
        uint32_t u = (uint32_t)p[0] | (uint32_t)p[1] << 8 | (uint32_t)p[2] << 16 | (uint32_t)p[3] << 24;
        if (type == 'F') { float f; memcpy(&f, &u, 4); return f; }
        return type == 'I' ? (double)(int32_t)u : (double)u;
    }
    default: {
        uint64_t u = 0;
        for (int k = 7; k >= 0; k--) u = u << 8 | p[k];
        double d;
        memcpy(&d, &u, 8);
        return d;
    }
    }
}

/* Make room for the points; ring and time arrays exactly when the file has
 * those fields (a buffer of the same kind from the last scan is reused: the
 * reader overwrites every entry). */
static int pcd_prepare(struct cloud *c, const struct pcd_header *h)
{
    c->n = 0;
    if (h->ir < 0) { free(c->ring); c->ring = NULL; }
    if (h->it < 0) { free(c->time); c->time = NULL; }
    if (cloud_reserve(c, h->points)) return -1;
    if (h->ir >= 0 && cloud_enable_ring(c)) return -1;
    if (h->it >= 0 && cloud_enable_time(c)) return -1;
    return 0;
}

static uint16_t pcd_ring(double v)
{
    if (!(v >= 0)) return 0;
    return v > 65535 ? 65535 : (uint16_t)v;
}

/* Store point k from its values in field order (v[field] = first value). */
static void pcd_store(struct cloud *c, size_t k, const struct pcd_header *h, const double *v)
{
    float *p = c->pts + 4 * k;
    p[0] = (float)v[h->ix];
    p[1] = (float)v[h->iy];
    p[2] = (float)v[h->iz];
    p[3] = h->ii >= 0 ? (float)v[h->ii] : 0.0f;
    if (c->ring) c->ring[k] = pcd_ring(v[h->ir]);
    if (c->time) c->time[k] = (float)v[h->it];
}

/* One field's first value at point p; float32 read directly. */
static double pcd_get(const unsigned char *p, const struct pcd_field *f)
{
    if (f->type == 'F' && f->size == 4) {
        float v;
        memcpy(&v, p + f->offset, 4);
        return v;
    }
    return pcd_value(p + f->offset, f->type, f->size);
}

/* 1 when x y z intensity are float32 at offsets 0, 4, 8, 12: the leading 16
 * bytes of a point are then a cloud record as they stand (little-endian host). */
static int pcd_xyzi_leading(const struct pcd_header *h)
{
#if defined(__BYTE_ORDER__) && __BYTE_ORDER__ == __ORDER_BIG_ENDIAN__
    (void)h;
    return 0;
#else
    const int idx[4] = {h->ix, h->iy, h->iz, h->ii};
    for (int k = 0; k < 4; k++) {
        if (idx[k] < 0) return 0;
        const struct pcd_field *f = &h->f[idx[k]];
        if (f->type != 'F' || f->size != 4 || f->offset != (size_t)(4 * k)) return 0;
    }
    return 1;
#endif
}

/* 1 when the kept fields are laid out so a record unpacks by plain copies:
 * x y z intensity float32 leading (pcd_xyzi_leading), ring (when present)
 * uint16 and time (when present) float32, anywhere after them. */
static int pcd_packed(const struct pcd_header *h)
{
    if (!pcd_xyzi_leading(h)) return 0;
    const struct pcd_field *r = h->ir >= 0 ? &h->f[h->ir] : NULL, *t = h->it >= 0 ? &h->f[h->it] : NULL;
    return (!r || (r->type == 'U' && r->size == 2)) && (!t || (t->type == 'F' && t->size == 4));
}

/* Points k0 .. k0 + m - 1 from m packed records at p (pcd_packed): one
 * 16-byte copy a point, then the ring and time values by their offsets. */
static void pcd_unpack(const struct pcd_header *h, const unsigned char *p, size_t k0, size_t m, struct cloud *c)
{
    const size_t ps = h->point_size;
    float *q = c->pts + 4 * k0;
    for (size_t k = 0; k < m; k++) memcpy(q + 4 * k, p + k * ps, 16);
    if (c->ring) {
        const unsigned char *s = p + h->f[h->ir].offset;
        uint16_t *r = c->ring + k0;
        for (size_t k = 0; k < m; k++) memcpy(r + k, s + k * ps, 2);
    }
    if (c->time) {
        const unsigned char *s = p + h->f[h->it].offset;
        float *t = c->time + k0;
        for (size_t k = 0; k < m; k++) memcpy(t + k, s + k * ps, 4);
    }
}

/* Convert m consecutive binary records at p into points k0 .. k0 + m - 1,
 * field by field (any types and sizes the header allows); with lead
 * (pcd_xyzi_leading) the first 16 bytes are copied as they stand. */
static void pcd_convert(const struct pcd_header *h, const unsigned char *p, size_t k0, size_t m, int lead,
                        struct cloud *c)
{
    const size_t ps = h->point_size;
    for (size_t k = k0; k < k0 + m; k++, p += ps) {
        float *q = c->pts + 4 * k;
        if (lead) {
            memcpy(q, p, 16);
        } else {
            q[0] = (float)pcd_get(p, &h->f[h->ix]);
            q[1] = (float)pcd_get(p, &h->f[h->iy]);
            q[2] = (float)pcd_get(p, &h->f[h->iz]);
            q[3] = h->ii >= 0 ? (float)pcd_get(p, &h->f[h->ii]) : 0.0f;
        }
        if (c->ring) c->ring[k] = pcd_ring(pcd_get(p, &h->f[h->ir]));
        if (c->time) c->time[k] = (float)pcd_get(p, &h->f[h->it]);
    }
}

static int pcd_read_n(int fd, unsigned char *buf, size_t len, const char *path, struct err *e)
{
    size_t got = 0;
    while (got < len) {
        ssize_t r = read(fd, buf + got, len - got);
        if (r < 0 && errno == EINTR) continue;
        if (r < 0) return err_at(e, path, 0, "read failed: %s", strerror(errno));
        if (r == 0) return err_at(e, path, 0, "file ended after %zu more bytes, expected %zu", got, len);
        got += (size_t)r;
    }
    return 0;
}

/* The body size against POINTS: refused when short or long. */
static int pcd_body_size(size_t size, const char *path, const struct pcd_header *h, struct err *e)
{
    size_t have = size - h->body, ps = h->point_size;
    if (ps == 0 || have / ps < h->points)
        return err_at(e, path, 0, "binary body is %zu bytes, POINTS %zu needs %zu (%zu bytes per point): "
                      "file truncated at point %zu", have, h->points, h->points * ps, ps, ps ? have / ps : 0);
    if (have != h->points * ps)
        return err_at(e, path, 0, "binary body is %zu bytes, POINTS %zu needs %zu (%zu bytes per point): "
                      "%zu bytes more than the header declares, expected POINTS to count every point",
                      have, h->points, h->points * ps, ps, have - h->points * ps);
    return 0;
}

/* The binary body, streamed through blk (cap bytes, which holds the part
 * read with the header at blk[h->body .. head_len)): whole records are
 * converted in place, the part of one left over moves to the front, the
 * next read fills the rest.  Each block's points are checked for
 * non-finite values while in cache (*finite 1 when none was found).
 * Records that are cloud records as they stand are read straight into
 * cloud.pts instead. */
static int pcd_body_binary(int fd, size_t size, unsigned char *blk, size_t head_len, size_t cap, const char *path,
                           const struct pcd_header *h, struct cloud *c, int *finite, struct err *e)
{
    if (pcd_body_size(size, path, h, e)) return -1;
    if (pcd_prepare(c, h)) return err_at(e, path, 0, "out of memory for %zu points", h->points);
    const size_t ps = h->point_size, body = h->points * ps;
    size_t fill = head_len - h->body < body ? head_len - h->body : body;
    *finite = 1;
    if (ps == 16 && pcd_xyzi_leading(h)) {
        memcpy(c->pts, blk + h->body, fill);
        *finite = cloud_values_finite(c->pts, fill / 4);
        int all = 1, rc = scan_body_read_full(fd, (unsigned char *)c->pts + fill, body - fill, &all, path, e);
        if (!rc) c->n = h->points;
        *finite = *finite && all;
        return rc;
    }
    const int packed = pcd_packed(h), lead = pcd_xyzi_leading(h);
    const unsigned char *p = blk + h->body;
    size_t taken = fill, k = 0;
    for (;;) {
        size_t m = fill / ps;
        if (packed) pcd_unpack(h, p, k, m, c);
        else pcd_convert(h, p, k, m, lead, c);
        if (*finite) *finite = cloud_values_finite(c->pts + 4 * k, 4 * m);
        k += m;
        if (k == h->points) break;
        memmove(blk, p + m * ps, fill - m * ps);
        fill -= m * ps;
        p = blk;
        size_t want = cap / ps * ps - fill;  /* the block ends on a record boundary */
        if (want > body - taken) want = body - taken;
        if (pcd_read_n(fd, blk + fill, want, path, e)) return -1;
        fill += want;
        taken += want;
    }
    c->n = h->points;
    return 0;
}

static uint32_t pcd_u32le(const unsigned char *p)
{
    return (uint32_t)p[0] | (uint32_t)p[1] << 8 | (uint32_t)p[2] << 16 | (uint32_t)p[3] << 24;
}

/* Points from the unpacked field-after-field bytes u (h->points records). */
static void pcd_convert_columns(const struct pcd_header *h, const unsigned char *u, struct cloud *c)
{
    const size_t n = h->points;
    double v[PCD_MAX_FIELDS];
    const int want[6] = {h->ix, h->iy, h->iz, h->ii, h->ir, h->it};
    for (size_t k = 0; k < n; k++) {
        for (int j = 0; j < 6; j++) {
            if (want[j] < 0) continue;
            const struct pcd_field *f = &h->f[want[j]];
            size_t stride = (size_t)f->size * (size_t)f->count;
            v[want[j]] = pcd_value(u + n * f->offset + k * stride, f->type, f->size);
        }
        pcd_store(c, k, h, v);
    }
    c->n = n;
}

/* A binary_compressed body in buf[h->body .. len): both sizes checked
 * against the file and the header before anything is unpacked. */
static int pcd_body_compressed(const unsigned char *buf, size_t len, const char *path,
                               const struct pcd_header *h, struct cloud *c, struct err *e)
{
    size_t have = len - h->body;
    if (have < 8)
        return err_at(e, path, 0, "binary_compressed body at byte %zu is %zu bytes, expected at least 8 "
                      "(packed and unpacked sizes)", h->body, have);
    size_t packed = pcd_u32le(buf + h->body), unpacked = pcd_u32le(buf + h->body + 4);
    size_t need = h->points * h->point_size;
    if (unpacked != need)
        return err_at(e, path, 0, "binary_compressed unpacked size %zu (byte %zu), expected %zu for POINTS %zu "
                      "of %zu bytes", unpacked, h->body + 4, need, h->points, h->point_size);
    if (packed > have - 8)
        return err_at(e, path, 0, "binary_compressed packed size %zu (byte %zu) runs past the end of the file, "
                      "expected at most %zu: file truncated", packed, h->body, have - 8);
    if ((packed == 0) != (need == 0))
        return err_at(e, path, 0, "binary_compressed packed size %zu for %zu unpacked bytes, expected %s",
                      packed, need, need ? "a non-empty block" : "0");
    if (pcd_prepare(c, h)) return err_at(e, path, 0, "out of memory for %zu points", h->points);
    if (need == 0) return 0;
    unsigned char *u = malloc(need);
    if (!u) return err_at(e, path, 0, "out of memory for %zu bytes", need);
    errno = 0;
    unsigned got = lzf_decompress(buf + h->body + 8, (unsigned)packed, u, (unsigned)need);
    int rc = 0;
    if (got != need)
        rc = err_at(e, path, 0, "binary_compressed block at byte %zu does not unpack (%s), expected %zu bytes",
                    h->body + 8, got ? "too short" : errno == E2BIG ? "longer than stated" : "corrupt data", need);
    else
        pcd_convert_columns(h, u, c);
    free(u);
    return rc;
}

static int pcd_body_ascii(const unsigned char *buf, size_t len, const char *path,
                          const struct pcd_header *h, struct cloud *c, struct err *e)
{
    /* Each value needs at least one digit and one separator. */
    if ((len - h->body) / 2 / (size_t)h->n_values < h->points)
        return err_at(e, path, 0, "body is %zu bytes, too short for POINTS %zu of %d values",
                      len - h->body, h->points, h->n_values);
    if (pcd_prepare(c, h)) return err_at(e, path, 0, "out of memory for %zu points", h->points);
    const char *s = (const char *)buf + h->body;
    long line = h->body_line;
    double v[PCD_MAX_FIELDS];
    for (size_t k = 0; k < h->points; k++, line++) {
        while (*s == '\n' || *s == '\r' || *s == ' ' || *s == '\t') { if (*s == '\n') line++; s++; }
        if (!*s) return err_at(e, path, line, "file ends after %zu points, POINTS declares %zu", k, h->points);
        int f = 0, vi = 0;
        for (int j = 0; j < h->n_values; j++) {
            while (*s == ' ' || *s == '\t') s++;
            char *end;
            double d = strtod(s, &end);
            if (end == s || (*end && !strchr(" \t\r\n", *end)))
                return err_at(e, path, line, "value %d is not a number, expected %d values per point", j + 1, h->n_values);
            if (f < h->nf && j == h->f[f].value0) v[f] = d;
            if (f < h->nf && ++vi == h->f[f].count) { f++; vi = 0; }
            s = end;
        }
        while (*s == ' ' || *s == '\t' || *s == '\r') s++;
        if (*s && *s != '\n')
            return err_at(e, path, line, "more than %d values on the line, expected %d", h->n_values, h->n_values);
        if (*s == '\n') s++;
        pcd_store(c, k, h, v);
        c->n = k + 1;
    }
    while (*s == '\n' || *s == '\r' || *s == ' ' || *s == '\t') { if (*s == '\n') line++; s++; }
    if (*s)
        return err_at(e, path, line, "more points than POINTS %zu declares, expected POINTS to count every point",
                      h->points);
    return 0;
}

/* Open path and read its first bytes (the header, at most PCD_HEADER_MAX
 * and a margin) into a NUL-terminated buffer of cap + 1 bytes. */
static int pcd_open(const char *path, int *fd, size_t *size, unsigned char **head, size_t *head_len, size_t cap,
                    struct err *e)
{
    if (fileio_open_regular(path, "a scan file", fd, size, e)) return -1;
    if (*size == 0) return err_at(e, path, 0, "file is empty, expected a scan");
    if (*size > PCD_FILE_MAX)
        return err_at(e, path, 0, "file is %zu bytes, more than the limit of %zu for a scan", *size, PCD_FILE_MAX);
    *head_len = *size < PCD_HEAD_READ ? *size : PCD_HEAD_READ;
    if (!(*head = malloc(cap + 1))) return err_at(e, path, 0, "out of memory");
    (*head)[*head_len] = 0;
    return pcd_read_n(*fd, *head, *head_len, path, e);
}

int pcd_read_finite(const char *path, struct cloud *c, int *finite, struct err *e)
{
    int fd = -1;
    size_t size = 0, len = 0;
    unsigned char *buf = NULL;
    c->n = 0;
    *finite = 0;
    struct pcd_header h;
    int rc = pcd_open(path, &fd, &size, &buf, &len, PCD_BLOCK, e);
    if (!rc) rc = pcd_parse_header(buf, len, path, &h, e);
    if (!rc && h.data == PCD_BINARY) {
        rc = pcd_body_binary(fd, size, buf, len, PCD_BLOCK, path, &h, c, finite, e);
    } else if (!rc) {
        /* ascii and binary_compressed: the whole file in memory */
        unsigned char *all = realloc(buf, size + 1);
        if (!all) rc = err_at(e, path, 0, "out of memory for %zu bytes", size);
        else {
            buf = all;
            rc = pcd_read_n(fd, buf + len, size - len, path, e);
            buf[size] = 0;
        }
        if (!rc && h.data == PCD_COMPRESSED) rc = pcd_body_compressed(buf, size, path, &h, c, e);
        else if (!rc) rc = pcd_body_ascii(buf, size, path, &h, c, e);
    }
    free(buf);
    if (fd >= 0) close(fd);
    if (rc) { c->n = 0; *finite = 0; }
    return rc;
}

int pcd_read(const char *path, struct cloud *c, struct err *e)
{
    int finite;
    return pcd_read_finite(path, c, &finite, e);
}

/* The header of what revisit writes: x y z intensity, then ring and time
 * when the cloud has them; word is the DATA kind. */
static int pcd_header(char *out, size_t n, const struct cloud *c, const char *word)
{
    const char *r = c->ring ? " " : "", *t = c->time ? " " : "";
    return snprintf(out, n, "# .PCD v0.7 - written by revisit\nVERSION 0.7\nFIELDS x y z intensity%s%s%s%s\n"
                    "SIZE 4 4 4 4%s%s%s%s\nTYPE F F F F%s%s%s%s\nCOUNT 1 1 1 1%s%s%s%s\n"
                    "WIDTH %zu\nHEIGHT 1\nVIEWPOINT 0 0 0 1 0 0 0\nPOINTS %zu\nDATA %s\n",
                    r, c->ring ? "ring" : "", t, c->time ? "time" : "", r, c->ring ? "2" : "", t,
                    c->time ? "4" : "", r, c->ring ? "U" : "", t, c->time ? "F" : "", r, c->ring ? "1" : "", t,
                    c->time ? "1" : "", c->n, c->n, word);
}

int pcd_write_binary(const char *path, const struct cloud *c, struct err *e)
{
    return scan_body_write(path, c, pcd_header, "binary", SCAN_BODY_RECORDS, NULL, 0, e);
}

int pcd_write_ascii(const char *path, const struct cloud *c, struct err *e)
{
    return scan_body_write(path, c, pcd_header, "ascii", SCAN_BODY_LINES, NULL, 0, e);
}

static void pcd_put_u32le(unsigned char *p, uint32_t v)
{
    for (int k = 0; k < 4; k++) p[k] = (unsigned char)(v >> (8 * k));
}

/* The cloud's fields one after another (x of every point, then y, ...),
 * in the order and sizes pcd_header declares; *len bytes, malloc'ed. */
static unsigned char *pcd_columns(const struct cloud *c, size_t *len)
{
    size_t n = c->n, rec = 16 + (c->ring ? 2 : 0) + (c->time ? 4 : 0);
    *len = n * rec;
    unsigned char *u = malloc(*len ? *len : 1), *p = u;
    if (!u) return NULL;
    for (int j = 0; j < 4; j++)
        for (size_t k = 0; k < n; k++, p += 4) memcpy(p, c->pts + 4 * k + j, 4);
    for (size_t k = 0; c->ring && k < n; k++, p += 2) {
        p[0] = (unsigned char)(c->ring[k] & 0xff);
        p[1] = (unsigned char)(c->ring[k] >> 8);
    }
    for (size_t k = 0; c->time && k < n; k++, p += 4) memcpy(p, c->time + k, 4);
    return u;
}

int pcd_write_compressed(const char *path, const struct cloud *c, struct err *e)
{
    size_t len;
    unsigned char *u = pcd_columns(c, &len);
    if (!u) return err_at(e, path, 0, "out of memory for %zu points", c->n);
    if (len > 0xffffffffu / 2) {
        free(u);
        return err_at(e, path, 0, "%zu points make %zu bytes, more than binary_compressed can hold", c->n, len);
    }
    /* LZF output stays under 104% of its input (liblzf's lzf.h) */
    size_t cap = len + len / 16 + 64;
    unsigned char *z = malloc(cap + 8);
    unsigned packed = z && len ? lzf_compress(u, (unsigned)len, z + 8, (unsigned)cap) : 0;
    free(u);
    if (!z || (len && !packed)) {
        free(z);
        return err_at(e, path, 0, "%s", z ? "LZF compression failed" : "out of memory");
    }
    pcd_put_u32le(z, packed);
    pcd_put_u32le(z + 4, (uint32_t)len);
    int rc = scan_body_write(path, c, pcd_header, "binary_compressed", SCAN_BODY_GIVEN, z, 8 + (size_t)packed, e);
    free(z);
    return rc;
}
