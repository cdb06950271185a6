/* ply.c: PLY reader (ascii, binary_little_endian) and writers.
 *
 * The layout follows the PLY format description (Turk, 1994): a text header
 * "ply", "format ...", then "element NAME COUNT" each followed by its
 * "property TYPE NAME" or "property list COUNT_TYPE ITEM_TYPE NAME" lines,
 * ending with "end_header"; the body holds the elements in header order.
 */
#include "harness/io/ply.h"

#include <errno.h>
#include <stdint.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>

#include "harness/base/fileio.h"
#include "harness/io/scan_body.h"

#define PLY_MAX_ELEMENTS 16
#define PLY_MAX_PROPS 64
#define PLY_HEADER_MAX 65536
#define PLY_FILE_MAX ((size_t)CLOUD_MAX_POINTS * 64)

/* Scalar types: t = 'i' signed, 'u' unsigned, 'f' float. */
struct ply_type { char t; int size; };

struct ply_prop {
    char name[32];
    struct ply_type type;     /* scalar, or the item type of a list */
    int is_list;
    struct ply_type count;    /* list count type */
};

struct ply_element {
    char name[32];
    size_t count;
    struct ply_prop p[PLY_MAX_PROPS];
    int np;
};

struct ply_header {
    int binary;    /* 0 ascii, 1 binary_little_endian */
    struct ply_element el[PLY_MAX_ELEMENTS];
    int ne;
    size_t body;
    long body_line;
};

static int ply_type_of(const char *w, struct ply_type *t)
{
    static const struct { const char *name; char t; int size; } types[] = {
        {"char", 'i', 1}, {"uchar", 'u', 1}, {"short", 'i', 2}, {"ushort", 'u', 2},
        {"int", 'i', 4}, {"uint", 'u', 4}, {"float", 'f', 4}, {"double", 'f', 8},
        {"int8", 'i', 1}, {"uint8", 'u', 1}, {"int16", 'i', 2}, {"uint16", 'u', 2},
        {"int32", 'i', 4}, {"uint32", 'u', 4}, {"float32", 'f', 4}, {"float64", 'f', 8}};
    for (size_t k = 0; k < sizeof types / sizeof types[0]; k++)
        if (!strcmp(w, types[k].name)) { t->t = types[k].t; t->size = types[k].size; return 0; }
    return -1;
}

static int ply_property(struct ply_header *h, char *s, const char *path, long line, struct err *e)
{
    if (h->ne == 0) return err_at(e, path, line, "property before any element, expected an element line first");
    struct ply_element *el = &h->el[h->ne - 1];
    if (el->np >= PLY_MAX_PROPS) return err_at(e, path, line, "more than %d properties, expected fewer", PLY_MAX_PROPS);
    struct ply_prop *p = &el->p[el->np];
    memset(p, 0, sizeof *p);
    char a[32] = "", b[32] = "", c[32] = "", d[32] = "";
    int n = sscanf(s, "%31s %31s %31s %31s", a, b, c, d);
    if (n >= 1 && !strcmp(a, "list")) {
        if (n != 4 || ply_type_of(b, &p->count) || ply_type_of(c, &p->type) || p->count.t == 'f')
            return err_at(e, path, line, "bad list property, expected 'property list COUNT_TYPE ITEM_TYPE NAME'");
        p->is_list = 1;
        snprintf(p->name, sizeof p->name, "%s", d);
    } else {
        if (n != 2) return err_at(e, path, line, "bad property line, expected 'property TYPE NAME'");
        if (ply_type_of(a, &p->type))
            return err_at(e, path, line, "unknown property type '%s', expected char uchar short ushort int uint "
                          "float double (or int8 ... float64)", a);
        snprintf(p->name, sizeof p->name, "%s", b);
    }
    el->np++;
    return 0;
}

static int ply_header_line(struct ply_header *h, char *s, const char *path, long line, struct err *e)
{
    char key[32] = "";
    int off = 0;
    if (sscanf(s, "%31s %n", key, &off) < 1) return 0;
    char *rest = s + off;
    if (!strcmp(key, "comment") || !strcmp(key, "obj_info")) return 0;
    if (!strcmp(key, "format")) {
        char f[64] = "", v[16] = "";
        sscanf(rest, "%63s %15s", f, v);
        if (!strcmp(f, "ascii")) h->binary = 0;
        else if (!strcmp(f, "binary_little_endian")) h->binary = 1;
        else if (!strcmp(f, "binary_big_endian"))
            return err_at(e, path, line, "format binary_big_endian is not supported, expected ascii or "
                          "binary_little_endian (convert the file first)");
        else return err_at(e, path, line, "format '%s', expected ascii or binary_little_endian", f);
        if (strcmp(v, "1.0")) return err_at(e, path, line, "format version '%s', expected 1.0", v);
        return 0;
    }
    if (!strcmp(key, "element")) {
        if (h->ne >= PLY_MAX_ELEMENTS) return err_at(e, path, line, "more than %d elements", PLY_MAX_ELEMENTS);
        struct ply_element *el = &h->el[h->ne];
        memset(el, 0, sizeof *el);
        char num[32] = "", tail[8] = "", *end;
        if (sscanf(rest, "%31s %31s %7s", el->name, num, tail) != 2 || num[0] < '0' || num[0] > '9')
            return err_at(e, path, line, "bad element line, expected 'element NAME COUNT'");
        errno = 0;
        el->count = (size_t)strtoull(num, &end, 10);
        if (*end || errno) return err_at(e, path, line, "element count '%s', expected a whole number", num);
        h->ne++;
        return 0;
    }
    if (!strcmp(key, "property")) return ply_property(h, rest, path, line, e);
    return err_at(e, path, line, "unknown header keyword '%s', expected format, comment, obj_info, element, "
                  "property or end_header", key);
}

static int ply_parse_header(const unsigned char *buf, size_t len, const char *path,
                            struct ply_header *h, struct err *e)
{
    memset(h, 0, sizeof *h);
    h->binary = -1;
    size_t pos = 0;
    long line = 0;
    char tmp[1024];
    for (;;) {
        if (pos >= len || pos > PLY_HEADER_MAX)
            return err_at(e, path, line, "header has no end_header line, expected one");
        const unsigned char *nl = memchr(buf + pos, '\n', len - pos);
        size_t ll = nl ? (size_t)(nl - (buf + pos)) : len - pos;
        line++;
        if (ll >= sizeof tmp) return err_at(e, path, line, "header line longer than %zu bytes", sizeof tmp - 1);
        memcpy(tmp, buf + pos, ll);
        tmp[ll] = 0;
        if (ll && tmp[ll - 1] == '\r') tmp[ll - 1] = 0;
        pos += ll + (nl ? 1 : 0);
        if (line == 1) {
            if (strcmp(tmp, "ply")) return err_at(e, path, 1, "first line is not 'ply', expected a PLY file");
            continue;
        }
        if (!strcmp(tmp, "end_header")) break;
        if (ply_header_line(h, tmp, path, line, e)) return -1;
    }
    if (h->binary < 0) return err_at(e, path, 0, "header has no format line, expected 'format ascii 1.0' or "
                                     "'format binary_little_endian 1.0'");
    h->body = pos;
    h->body_line = line + 1;
    return 0;
}

/* Slots in the vertex element: x y z intensity ring time (property index or -1). */
struct ply_slots { int x, y, z, i, r, t; };

static int ply_find_slots(const struct ply_element *el, struct ply_slots *s, const char *path, struct err *e)
{
    s->x = s->y = s->z = s->i = s->r = s->t = -1;
    for (int k = 0; k < el->np; k++) {
        const char *n = el->p[k].name;
        int *slot = !strcmp(n, "x") ? &s->x : !strcmp(n, "y") ? &s->y : !strcmp(n, "z") ? &s->z
                  : (!strcmp(n, "intensity") || !strcmp(n, "scalar_intensity")) ? &s->i
                  : !strcmp(n, "ring") ? &s->r : !strcmp(n, "time") ? &s->t : NULL;
        if (slot && el->p[k].is_list)
            return err_at(e, path, 0, "vertex property '%s' is a list, expected a scalar", n);
        if (slot && *slot < 0) *slot = k;
    }
    if (s->x < 0 || s->y < 0 || s->z < 0)
        return err_at(e, path, 0, "vertex element lacks property %s, expected x, y and z",
                      s->x < 0 ? "x" : s->y < 0 ? "y" : "z");
    return 0;
}

static double ply_bin_value(const unsigned char *p, struct ply_type t)
{
    uint64_t u = 0;
    for (int k = t.size - 1; k >= 0; k--) u = u << 8 | p[k];
    if (t.t == 'f') {
        if (t.size == 4) { uint32_t w = (uint32_t)u; float f; memcpy(&f, &w, 4); return f; }
        double d; memcpy(&d, &u, 8); return d;
    }
    if (t.t == 'u') return (double)u;
    if (t.size == 1) return (int8_t)u;
    if (t.size == 2) return (int16_t)u;
    return (int32_t)u;
}

/* Body reader state: a cursor over binary bytes or ascii tokens. */
struct ply_cur {
    const unsigned char *buf;
    size_t len, pos;
    long line;
    int binary;
    const char *path;
};

static int ply_next(struct ply_cur *c, struct ply_type t, double *v, struct err *e)
{
    if (c->binary) {
        if (c->len - c->pos < (size_t)t.size) return err_at(e, c->path, 0, "file truncated at byte %zu", c->pos);
        *v = ply_bin_value(c->buf + c->pos, t);
        c->pos += (size_t)t.size;
        return 0;
    }
    const char *s = (const char *)c->buf;
    while (c->pos < c->len && strchr(" \t\r\n", s[c->pos])) { if (s[c->pos] == '\n') c->line++; c->pos++; }
    if (c->pos >= c->len) return err_at(e, c->path, c->line, "file ends early, expected more values");
    char *end;
    *v = strtod(s + c->pos, &end);
    if (end == s + c->pos || (*end && !strchr(" \t\r\n", *end)))
        return err_at(e, c->path, c->line, "value is not a number, expected a %s", t.t == 'f' ? "number" : "whole number");
    c->pos = (size_t)(end - s);
    return 0;
}

/* Read one item of an element; values of scalar properties go to v[prop]. */
static int ply_item(struct ply_cur *c, const struct ply_element *el, double *v, struct err *e)
{
    for (int k = 0; k < el->np; k++) {
        const struct ply_prop *p = &el->p[k];
        if (!p->is_list) { if (ply_next(c, p->type, &v[k], e)) return -1; continue; }
        double n;
        if (ply_next(c, p->count, &n, e)) return -1;
        if (!(n >= 0) || n > 1e6) return err_at(e, c->path, c->line, "list length %g, expected 0 to 1000000", n);
        double skip;
        for (long j = 0; j < (long)n; j++) if (ply_next(c, p->type, &skip, e)) return -1;
        v[k] = 0;
    }
    return 0;
}

static size_t ply_item_bytes(const struct ply_element *el)
{
    size_t b = 0;
    for (int k = 0; k < el->np; k++) {
        if (el->p[k].is_list) return 0;
        b += (size_t)el->p[k].type.size;
    }
    return b;
}

/* The fewest body bytes one item can take: binary, every scalar and every
 * list count (an empty list); ascii, one digit and one separator per value. */
static size_t ply_item_min_bytes(const struct ply_element *el, int binary)
{
    size_t b = 0;
    for (int k = 0; k < el->np; k++)
        b += binary ? (size_t)(el->p[k].is_list ? el->p[k].count.size : el->p[k].type.size) : 2;
    return b;
}

/* Refuse an element whose items cannot fit in the bytes left; an element
 * without properties is bounded by the file size all the same. */
static int ply_fits(const struct ply_cur *cur, const struct ply_element *el, struct err *e)
{
    size_t left = cur->len - cur->pos, ib = ply_item_min_bytes(el, cur->binary);
    if (ib ? left / ib >= el->count : el->count <= cur->len) return 0;
    if (!ib)
        return err_at(e, cur->path, 0, "element %s has no properties and %zu items, more than the %zu bytes "
                      "of the file, expected a property line or a smaller count", el->name, el->count, cur->len);
    return err_at(e, cur->path, 0, "body is %zu bytes, too short for element %s %zu (at least %zu bytes each)",
                  left, el->name, el->count, ib);
}

static int ply_vertices(struct ply_cur *cur, const struct ply_element *el, struct cloud *c, struct err *e)
{
    struct ply_slots s;
    if (ply_find_slots(el, &s, cur->path, e)) return -1;
    if (el->count > CLOUD_MAX_POINTS)
        return err_at(e, cur->path, 0, "element vertex %zu is more than the limit of %zu points", el->count,
                      (size_t)CLOUD_MAX_POINTS);
    if (ply_fits(cur, el, e)) return -1;
    free(c->ring); free(c->time);
    c->ring = NULL; c->time = NULL;
    if (cloud_reserve(c, el->count) || (s.r >= 0 && cloud_enable_ring(c)) || (s.t >= 0 && cloud_enable_time(c)))
        return err_at(e, cur->path, 0, "out of memory for %zu points", el->count);
    double v[PLY_MAX_PROPS];
    for (size_t k = 0; k < el->count; k++) {
        if (ply_item(cur, el, v, e)) return -1;
        float *p = c->pts + 4 * k;
        p[0] = (float)v[s.x]; p[1] = (float)v[s.y]; p[2] = (float)v[s.z];
        p[3] = s.i >= 0 ? (float)v[s.i] : 0.0f;
        if (c->ring) c->ring[k] = v[s.r] >= 0 && v[s.r] <= 65535 ? (uint16_t)v[s.r] : 0;
        if (c->time) c->time[k] = (float)v[s.t];
        c->n = k + 1;
    }
    return 0;
}

static int ply_body(const unsigned char *buf, size_t len, const char *path, const struct ply_header *h,
                    struct cloud *c, struct err *e)
{
    struct ply_cur cur = {buf, len, h->body, h->body_line, h->binary, path};
    int seen = 0;
    for (int k = 0; k < h->ne && !seen; k++) {
        const struct ply_element *el = &h->el[k];
        if (!strcmp(el->name, "vertex")) {
            if (ply_vertices(&cur, el, c, e)) return -1;
            seen = 1;
            continue;
        }
        if (ply_fits(&cur, el, e)) return -1;
        size_t ib = ply_item_bytes(el);
        if ((cur.binary && ib) || el->np == 0) {
            cur.pos += ib * el->count;
            continue;
        }
        double v[PLY_MAX_PROPS];
        for (size_t j = 0; j < el->count; j++)
            if (ply_item(&cur, el, v, e)) return -1;
    }
    if (!seen) return err_at(e, path, 0, "no vertex element, expected 'element vertex N'");
    return 0;
}

int ply_read(const char *path, struct cloud *c, struct err *e)
{
    unsigned char *buf;
    size_t len;
    c->n = 0;
    if (scan_body_slurp(path, PLY_FILE_MAX, &buf, &len, e)) return -1;
    struct ply_header h;
    int rc = ply_parse_header(buf, len, path, &h, e);
    if (!rc) rc = ply_body(buf, len, path, &h, c, e);
    free(buf);
    if (rc) c->n = 0;
    return rc;
}

/* The header of what revisit writes: float x y z intensity, then ushort
 * ring and float time when the cloud has them; word is the format. */
static int ply_header(char *out, size_t n, const struct cloud *c, const char *word)
{
    return snprintf(out, n, "ply\nformat %s 1.0\ncomment written by revisit\nelement vertex %zu\n"
                    "property float x\nproperty float y\nproperty float z\nproperty float intensity\n%s%s"
                    "end_header\n", word, c->n, c->ring ? "property ushort ring\n" : "",
                    c->time ? "property float time\n" : "");
}

int ply_write_binary(const char *path, const struct cloud *c, struct err *e)
{
    return scan_body_write(path, c, ply_header, "binary_little_endian", SCAN_BODY_RECORDS, NULL, 0, e);
}

int ply_write_ascii(const char *path, const struct cloud *c, struct err *e)
{
    return scan_body_write(path, c, ply_header, "ascii", SCAN_BODY_LINES, NULL, 0, e);
}
