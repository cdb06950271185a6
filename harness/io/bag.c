/* bag.c: ROS 1 bag 2.0 records (layout in bag.h). */
#include "harness/io/bag.h"

#include <stdio.h>
#include <stdlib.h>
#include <string.h>

#define BAG_START 13                       /* after "#ROSBAG V2.0\n" */

enum { BAG_MSG = 0x02, BAG_HEADER = 0x03, BAG_INDEX = 0x04, BAG_CHUNK = 0x05, BAG_CHUNK_INFO = 0x06,
       BAG_CONN = 0x07 };

/* Where records are read from: the file, or one unpacked chunk. */
struct bag_span {
    const unsigned char *p;
    size_t len;
    size_t chunk;     /* byte of the chunk record in the file, or 0 for the file itself */
    const char *path;
};

struct bag_rec {
    size_t off;                 /* byte of the record in its span */
    const unsigned char *hdr, *data;
    uint32_t hlen, dlen;
};

static uint32_t bag_u32(const unsigned char *p)
{
    return (uint32_t)p[0] | (uint32_t)p[1] << 8 | (uint32_t)p[2] << 16 | (uint32_t)p[3] << 24;
}

/* "FILE: record at byte B: " or "FILE: chunk at byte C, record at byte B of its data: " then fmt. */
static int bag_fail(const struct bag_span *s, size_t off, struct err *e, const char *what)
{
    if (s->chunk)
        return err_set(e, "%s: chunk at byte %zu, record at byte %zu of its data: %s", s->path, s->chunk, off, what);
    return err_set(e, "%s: record at byte %zu: %s", s->path, off, what);
}

/* Cut the record at s->p[off]; both lengths checked against the span. */
static int bag_record(const struct bag_span *s, size_t off, struct bag_rec *r, struct err *e)
{
    char m[256];
    size_t left = s->len - off;
    if (left < 4) {
        snprintf(m, sizeof m, "%zu bytes left, expected a 4-byte header length: file truncated", left);
        return bag_fail(s, off, e, m);
    }
    r->off = off;
    r->hlen = bag_u32(s->p + off);
    if ((size_t)r->hlen + 8 > left) {
        snprintf(m, sizeof m, "header length %u runs past the end (%zu bytes left), expected at most %zu%s", r->hlen,
                 left, left >= 8 ? left - 8 : 0, s->chunk ? "" : ": file truncated");
        return bag_fail(s, off, e, m);
    }
    r->hdr = s->p + off + 4;
    r->dlen = bag_u32(r->hdr + r->hlen);
    if ((size_t)r->dlen > left - 8 - r->hlen) {
        snprintf(m, sizeof m, "data length %u runs past the end (%zu bytes left), expected at most %zu%s", r->dlen,
                 left - 8 - r->hlen, left - 8 - r->hlen, s->chunk ? "" : ": file truncated");
        return bag_fail(s, off, e, m);
    }
    r->data = r->hdr + r->hlen + 4;
    return 0;
}

/* Field name of a header block (hdr, hlen): value and its length, or -1 when
 * absent; a field whose length runs past the header is an error (-2). */
static int bag_field(const unsigned char *hdr, uint32_t hlen, const char *name, const unsigned char **v,
                     size_t *vlen)
{
    size_t nl = strlen(name);
    for (size_t o = 0; o < hlen;) {
        if (hlen - o < 4) return -2;
        uint32_t fl = bag_u32(hdr + o);
        if (fl > hlen - o - 4) return -2;
        const unsigned char *f = hdr + o + 4, *eq = memchr(f, '=', fl);
        if (!eq) return -2;
        if ((size_t)(eq - f) == nl && !memcmp(f, name, nl)) {
            *v = eq + 1;
            *vlen = fl - nl - 1;
            return 0;
        }
        o += 4 + (size_t)fl;
    }
    return -1;
}

/* A required field of exactly want bytes (want 0: any length). */
static int bag_need(const struct bag_span *s, const struct bag_rec *r, const unsigned char *hdr, uint32_t hlen,
                    const char *name, size_t want, const unsigned char **v, size_t *vlen, struct err *e)
{
    char m[256];
    int rc = bag_field(hdr, hlen, name, v, vlen);
    if (rc == -2)
        snprintf(m, sizeof m, "a header field runs past its header of %u bytes, expected 'len name=value' fields", hlen);
    else if (rc == -1)
        snprintf(m, sizeof m, "header lacks field '%s'", name);
    else if (want && *vlen != want)
        snprintf(m, sizeof m, "field '%s' has %zu bytes, expected %zu", name, *vlen, want);
    else
        return 0;
    return bag_fail(s, r->off, e, m);
}

/* A field's value as a NUL-terminated copy (freed by the caller). */
static char *bag_strdup(const unsigned char *v, size_t n)
{
    char *s = malloc(n + 1);
    if (s) {
        memcpy(s, v, n);
        s[n] = 0;
    }
    return s;
}

static int bag_conn(struct logf *l, const struct bag_span *s, const struct bag_rec *r, struct err *e)
{
    const unsigned char *v, *tv, *typ;
    size_t n, tn, typn;
    if (bag_need(s, r, r->hdr, r->hlen, "conn", 4, &v, &n, e) ||
        bag_need(s, r, r->hdr, r->hlen, "topic", 0, &tv, &tn, e) ||
        bag_need(s, r, r->data, r->dlen, "type", 0, &typ, &typn, e))
        return -1;
    char *topic = bag_strdup(tv, tn), *type = bag_strdup(typ, typn);
    int rc = topic && type ? logf_topic_add(l, bag_u32(v), topic, type, WIRE_ROS1, r->off, e)
                           : err_set(e, "out of memory");
    free(topic);
    free(type);
    return rc;
}

static int bag_message(struct logf *l, const struct bag_span *s, const struct bag_rec *r, logf_fn fn, void *ctx,
                       struct err *e)
{
    const unsigned char *v, *tv;
    size_t n, tn;
    if (bag_need(s, r, r->hdr, r->hlen, "conn", 4, &v, &n, e) || bag_need(s, r, r->hdr, r->hlen, "time", 8, &tv, &tn, e))
        return -1;
    struct logf_topic *t = logf_topic_find(l, bag_u32(v));
    if (!t) {
        char m[128];
        snprintf(m, sizeof m, "message on connection %u, expected a connection record for it first", bag_u32(v));
        return bag_fail(s, r->off, e, m);
    }
    double when = (double)bag_u32(tv) + (double)bag_u32(tv + 4) * 1e-9;
    return logf_deliver(l, t, when, r->data, r->dlen, s->chunk ? s->chunk : r->off, fn, ctx, e);
}

static int bag_records(struct logf *l, const struct bag_span *s, size_t from, logf_fn fn, void *ctx, struct err *e);

static int bag_chunk(struct logf *l, const struct bag_span *s, const struct bag_rec *r, logf_fn fn, void *ctx,
                     struct err *e)
{
    const unsigned char *cv, *sv;
    size_t cn, sn;
    if (bag_need(s, r, r->hdr, r->hlen, "compression", 0, &cv, &cn, e) ||
        bag_need(s, r, r->hdr, r->hlen, "size", 4, &sv, &sn, e))
        return -1;
    char codec[16];
    snprintf(codec, sizeof codec, "%.*s", (int)(cn < 15 ? cn : 15), (const char *)cv);
    if (cn >= 15 || (strcmp(codec, "none") && strcmp(codec, "bz2") && strcmp(codec, "lz4"))) {
        char m[160];
        snprintf(m, sizeof m, "chunk compression '%.*s', expected none, bz2 or lz4", (int)(cn < 64 ? cn : 64),
                 (const char *)cv);
        return bag_fail(s, r->off, e, m);
    }
    size_t size = bag_u32(sv);
    unsigned char *u = malloc(size ? size : 1);
    if (!u) return bag_fail(s, r->off, e, "out of memory for the unpacked chunk");
    int rc = logf_unpack(codec, r->data, r->dlen, u, size, e);
    if (rc) {
        char m[ERR_MSG_MAX];
        snprintf(m, sizeof m, "%s", e ? e->msg : "");
        bag_fail(s, r->off, e, m);
    } else {
        struct bag_span in = {.p = u, .len = size, .chunk = r->off, .path = s->path};
        rc = bag_records(l, &in, 0, fn, ctx, e);
    }
    free(u);
    return rc;
}

static int bag_records(struct logf *l, const struct bag_span *s, size_t from, logf_fn fn, void *ctx, struct err *e)
{
    for (size_t off = from; off < s->len;) {
        struct bag_rec r;
        const unsigned char *op;
        size_t opn;
        if (bag_record(s, off, &r, e) || bag_need(s, &r, r.hdr, r.hlen, "op", 1, &op, &opn, e)) return -1;
        int rc = 0, inner = s->chunk != 0;
        if (*op == BAG_CONN) rc = bag_conn(l, s, &r, e);
        else if (*op == BAG_MSG) rc = bag_message(l, s, &r, fn, ctx, e);
        else if (*op == BAG_CHUNK && !inner) rc = bag_chunk(l, s, &r, fn, ctx, e);
        else if (inner || (*op != BAG_HEADER && *op != BAG_INDEX && *op != BAG_CHUNK_INFO)) {
            char m[160];
            snprintf(m, sizeof m, "op 0x%02x, expected %s", *op, inner ? "0x02 (message) or 0x07 (connection) "
                     "inside a chunk" : "0x02 to 0x07");
            return bag_fail(s, off, e, m);
        }
        if (rc) return -1;
        off += 8 + (size_t)r.hlen + r.dlen;
    }
    return 0;
}

int bag_walk(struct logf *l, logf_fn fn, void *ctx, struct err *e)
{
    struct bag_span s = {.p = l->map, .len = l->size, .chunk = 0, .path = l->path};
    return bag_records(l, &s, BAG_START, fn, ctx, e);
}
