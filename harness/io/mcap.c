/* mcap.c: MCAP records (layout in mcap.h). */
#include "harness/io/mcap.h"

#include <stdio.h>
#include <stdlib.h>
#include <string.h>

#include "harness/base/grow.h"

#define MCAP_MAGIC_LEN 8
#define MCAP_NAME_MAX 512

enum { MCAP_SCHEMA = 0x03, MCAP_CHANNEL = 0x04, MCAP_MESSAGE = 0x05, MCAP_CHUNK = 0x06, MCAP_FOOTER = 0x02 };

/* Schemas seen: id -> name (channels name their schema by id). */
struct mcap_schema {
    uint16_t id;
    char name[MCAP_NAME_MAX];
};

struct mcap_ctx {
    struct logf *l;
    logf_fn fn;
    void *ctx;
    struct mcap_schema *schemas;
    size_t n_schemas, cap_schemas;
};

/* A bounded reader over one record's content. */
struct mcap_cur {
    const unsigned char *p;
    size_t len, pos;
};

static uint64_t mcap_le(const unsigned char *p, int n)
{
    uint64_t v = 0;
    for (int k = n - 1; k >= 0; k--) v = v << 8 | p[k];
    return v;
}

static int mcap_int(struct mcap_cur *c, int n, uint64_t *v)
{
    if ((size_t)n > c->len - c->pos) return -1;
    *v = mcap_le(c->p + c->pos, n);
    c->pos += (size_t)n;
    return 0;
}

/* A uint32-length string into out (NUL-terminated; too long is -1). */
static int mcap_str(struct mcap_cur *c, char *out, size_t n)
{
    uint64_t len;
    if (mcap_int(c, 4, &len) || len > c->len - c->pos || len >= n) return -1;
    memcpy(out, c->p + c->pos, (size_t)len);
    out[len] = 0;
    c->pos += (size_t)len;
    return 0;
}

/* Skip a uint32-length byte block (schema data, channel metadata). */
static int mcap_skip32(struct mcap_cur *c)
{
    uint64_t len;
    if (mcap_int(c, 4, &len) || len > c->len - c->pos) return -1;
    c->pos += (size_t)len;
    return 0;
}

/* "FILE: record at byte B: " or "FILE: chunk at byte C, record at byte B of its data: ". */
static int mcap_fail(const struct mcap_ctx *x, size_t chunk, size_t off, const char *what, struct err *e)
{
    if (chunk)
        return err_set(e, "%s: chunk at byte %zu, record at byte %zu of its data: %s", x->l->path, chunk, off, what);
    return err_set(e, "%s: record at byte %zu: %s", x->l->path, off, what);
}

static int mcap_schema(struct mcap_ctx *x, struct mcap_cur *c, size_t chunk, size_t off, struct err *e)
{
    uint64_t id;
    char name[MCAP_NAME_MAX], enc[MCAP_NAME_MAX];
    if (mcap_int(c, 2, &id) || mcap_str(c, name, sizeof name) || mcap_str(c, enc, sizeof enc) || mcap_skip32(c))
        return mcap_fail(x, chunk, off, "schema fields run past the record, expected id, name, encoding, data", e);
    for (size_t k = 0; k < x->n_schemas; k++)
        if (x->schemas[k].id == id) return 0;
    if (grow_reserve(&x->schemas, &x->cap_schemas, x->n_schemas + 1, sizeof *x->schemas))
        return err_set(e, "out of memory");
    x->schemas[x->n_schemas].id = (uint16_t)id;
    snprintf(x->schemas[x->n_schemas++].name, MCAP_NAME_MAX, "%s", name);
    return 0;
}

static int mcap_channel(struct mcap_ctx *x, struct mcap_cur *c, size_t chunk, size_t off, struct err *e)
{
    uint64_t id, sid;
    char topic[MCAP_NAME_MAX], enc[64], type[MCAP_NAME_MAX + 80];
    if (mcap_int(c, 2, &id) || mcap_int(c, 2, &sid) || mcap_str(c, topic, sizeof topic) ||
        mcap_str(c, enc, sizeof enc) || mcap_skip32(c))
        return mcap_fail(x, chunk, off, "channel fields run past the record, expected id, schema, topic, "
                         "encoding, metadata", e);
    const char *sname = NULL;
    for (size_t k = 0; k < x->n_schemas && !sname; k++)
        if (x->schemas[k].id == sid) sname = x->schemas[k].name;
    if (!sname && sid) {
        char m[128];
        snprintf(m, sizeof m, "channel %u names schema %u, expected a schema record for it first", (unsigned)id,
                 (unsigned)sid);
        return mcap_fail(x, chunk, off, m, e);
    }
    int cdr = !strcmp(enc, "cdr"), ros1 = !strcmp(enc, "ros1");
    /* another encoding keeps it in the type, so a type check names it */
    snprintf(type, sizeof type, cdr || ros1 ? "%s" : "%s (message encoding '%s')", sname ? sname : "", enc);
    return logf_topic_add(x->l, (uint32_t)id, topic, type, cdr ? WIRE_CDR : WIRE_ROS1, chunk ? chunk : off, e);
}

static int mcap_message(struct mcap_ctx *x, struct mcap_cur *c, size_t chunk, size_t off, struct err *e)
{
    uint64_t ch, seq, log_ns, pub_ns;
    if (mcap_int(c, 2, &ch) || mcap_int(c, 4, &seq) || mcap_int(c, 8, &log_ns) || mcap_int(c, 8, &pub_ns))
        return mcap_fail(x, chunk, off, "message record shorter than its 22-byte head", e);
    struct logf_topic *t = logf_topic_find(x->l, (uint32_t)ch);
    if (!t) {
        char m[128];
        snprintf(m, sizeof m, "message on channel %u, expected a channel record for it first", (unsigned)ch);
        return mcap_fail(x, chunk, off, m, e);
    }
    return logf_deliver(x->l, t, (double)log_ns * 1e-9, c->p + c->pos, c->len - c->pos, chunk ? chunk : off, x->fn,
                        x->ctx, e);
}

static int mcap_records(struct mcap_ctx *x, const unsigned char *p, size_t len, size_t from, size_t chunk,
                        struct err *e);

uint32_t mcap_crc32(uint32_t crc, const void *data, size_t n)
{
    uint32_t table[256];
    for (uint32_t k = 0; k < 256; k++) {
        uint32_t c = k;
        for (int b = 0; b < 8; b++) c = c >> 1 ^ (0xedb88320u & (0u - (c & 1u)));
        table[k] = c;
    }
    const unsigned char *p = data;
    uint32_t c = crc ^ 0xffffffffu;
    for (size_t k = 0; k < n; k++) c = table[(c ^ p[k]) & 0xffu] ^ c >> 8;
    return c ^ 0xffffffffu;
}

static int mcap_chunk(struct mcap_ctx *x, struct mcap_cur *c, size_t off, struct err *e)
{
    uint64_t t0, t1, size, crc, n;
    char codec[32];
    if (mcap_int(c, 8, &t0) || mcap_int(c, 8, &t1) || mcap_int(c, 8, &size) || mcap_int(c, 4, &crc) ||
        mcap_str(c, codec, sizeof codec) || mcap_int(c, 8, &n))
        return mcap_fail(x, 0, off, "chunk fields run past the record", e);
    if (n > c->len - c->pos) {
        char m[160];
        snprintf(m, sizeof m, "chunk records of %llu bytes run past the record (%zu bytes left)",
                 (unsigned long long)n, c->len - c->pos);
        return mcap_fail(x, 0, off, m, e);
    }
    if (codec[0] && strcmp(codec, "lz4") && strcmp(codec, "zstd")) {
        char m[128];
        snprintf(m, sizeof m, "chunk compression '%s', expected none (\"\"), lz4 or zstd", codec);
        return mcap_fail(x, 0, off, m, e);
    }
    if (size > ((size_t)1 << 34)) return mcap_fail(x, 0, off, "chunk unpacked size over 16 GiB", e);
    unsigned char *u = malloc(size ? (size_t)size : 1);
    if (!u) return mcap_fail(x, 0, off, "out of memory for the unpacked chunk", e);
    int rc = logf_unpack(codec[0] ? codec : "none", c->p + c->pos, (size_t)n, u, (size_t)size, e);
    if (rc) {
        char m[ERR_MSG_MAX];
        snprintf(m, sizeof m, "%s", e ? e->msg : "");
        mcap_fail(x, 0, off, m, e);
    } else if (crc && mcap_crc32(0, u, (size_t)size) != crc) {
        char m[160];
        snprintf(m, sizeof m, "the unpacked chunk's CRC-32 is 0x%08x, but the chunk states 0x%08llx",
                 mcap_crc32(0, u, (size_t)size), (unsigned long long)crc);
        rc = mcap_fail(x, 0, off, m, e);
    } else {
        rc = mcap_records(x, u, (size_t)size, 0, off, e);
    }
    free(u);
    return rc;
}

static int mcap_records(struct mcap_ctx *x, const unsigned char *p, size_t len, size_t from, size_t chunk,
                        struct err *e)
{
    for (size_t off = from; off < len;) {
        if (len - off < 9) return mcap_fail(x, chunk, off, "fewer than 9 bytes left, expected an opcode and a "
                                            "length: file truncated", e);
        uint8_t op = p[off];
        uint64_t n = mcap_le(p + off + 1, 8);
        if (n > len - off - 9) {
            char m[160];
            snprintf(m, sizeof m, "length %llu runs past the end (%zu bytes left)%s", (unsigned long long)n,
                     len - off - 9, chunk ? "" : ": file truncated");
            return mcap_fail(x, chunk, off, m, e);
        }
        struct mcap_cur c = {p + off + 9, (size_t)n, 0};
        int rc = 0;
        if (op == MCAP_SCHEMA) rc = mcap_schema(x, &c, chunk, off, e);
        else if (op == MCAP_CHANNEL) rc = mcap_channel(x, &c, chunk, off, e);
        else if (op == MCAP_MESSAGE) rc = mcap_message(x, &c, chunk, off, e);
        else if (op == MCAP_CHUNK && !chunk) rc = mcap_chunk(x, &c, off, e);
        else if (chunk || op == 0 || op == MCAP_CHUNK) {
            char m[128];
            snprintf(m, sizeof m, "opcode 0x%02x, expected %s", op, chunk ? "a schema, channel or message in a chunk"
                                                                       : "a known record");
            return mcap_fail(x, chunk, off, m, e);
        }
        if (rc) return -1;
        off += 9 + (size_t)n;
        if (!chunk && op == MCAP_FOOTER) return len - off == MCAP_MAGIC_LEN ? 0 :
            mcap_fail(x, 0, off, "the footer is not followed by the closing magic, expected the end of the file", e);
    }
    return chunk ? 0 : mcap_fail(x, 0, len, "the file ends without a footer record: file truncated", e);
}

int mcap_walk(struct logf *l, logf_fn fn, void *ctx, struct err *e)
{
    struct mcap_ctx x = {.l = l, .fn = fn, .ctx = ctx};
    int rc = mcap_records(&x, l->map, l->size, MCAP_MAGIC_LEN, 0, e);
    free(x.schemas);
    return rc;
}
