/* wire.c: ROS 1 and CDR message cursor (see wire.h for both layouts). */
#include "harness/io/wire.h"

#include <string.h>

static int wire_short(const struct wire *w, size_t need, const char *what, struct err *e)
{
    return err_set(e, "at byte %zu of %zu: %zu bytes left, expected %zu for %s", w->pos, w->len,
                   w->len - w->pos, need, what);
}

/* Move to the next multiple of a (CDR only); 0 or -1 past the end. */
static int wire_align(struct wire *w, size_t a, const char *what, struct err *e)
{
    if (w->kind != WIRE_CDR || a <= 1) return 0;
    size_t rel = (w->pos - w->origin) % a, pad = rel ? a - rel : 0;
    if (pad > w->len - w->pos) return wire_short(w, pad, what, e);
    w->pos += pad;
    return 0;
}

/* Take n bytes of a value of size n (aligned), in host order, into out. */
static int wire_take(struct wire *w, size_t n, void *out, const char *what, struct err *e)
{
    size_t at = w->pos;
    if (wire_align(w, n, what, e)) return -1;
    if (n > w->len - w->pos) {
        int rc = wire_short(w, n, what, e);
        w->pos = at;
        return rc;
    }
    unsigned char *o = out;
    int swap = w->big;
#if defined(__BYTE_ORDER__) && __BYTE_ORDER__ == __ORDER_BIG_ENDIAN__
    swap = !swap;
#endif
    for (size_t k = 0; k < n; k++) o[k] = w->p[w->pos + (swap ? n - 1 - k : k)];
    w->pos += n;
    return 0;
}

int wire_begin(struct wire *w, const void *data, size_t len, enum wire_kind kind, struct err *e)
{
    memset(w, 0, sizeof *w);
    w->p = data;
    w->len = len;
    w->kind = kind;
    if (kind != WIRE_CDR) return 0;
    if (len < 4) return err_set(e, "at byte 0 of %zu: message shorter than the 4-byte CDR encapsulation header", len);
    if (w->p[0] != 0 || w->p[1] > 1)
        return err_set(e, "at byte 0 of %zu: encapsulation 0x%02x%02x, expected 0x0000 (CDR big-endian) or "
                       "0x0001 (CDR little-endian)", len, w->p[0], w->p[1]);
    w->big = w->p[1] == 0;
    w->pos = w->origin = 4;
    return 0;
}

int wire_u8(struct wire *w, uint8_t *v, struct err *e) { return wire_take(w, 1, v, "a byte", e); }
int wire_u32(struct wire *w, uint32_t *v, struct err *e) { return wire_take(w, 4, v, "a uint32", e); }
int wire_i32(struct wire *w, int32_t *v, struct err *e) { return wire_take(w, 4, v, "an int32", e); }
int wire_f64(struct wire *w, double *v, struct err *e) { return wire_take(w, 8, v, "a float64", e); }

int wire_count(struct wire *w, size_t item_size, size_t item_align, uint32_t *n, struct err *e)
{
    size_t at = w->pos;
    uint32_t c;
    if (wire_u32(w, &c, e)) return -1;
    if (c && wire_align(w, item_align, "the first item", e)) { w->pos = at; return -1; }
    if (item_size && c > (w->len - w->pos) / item_size) {
        size_t left = w->len - w->pos;
        w->pos = at;
        return err_set(e, "at byte %zu of %zu: count %u of %zu-byte items needs %zu bytes, only %zu left",
                       at, w->len, c, item_size, (size_t)c * item_size, left);
    }
    *n = c;
    return 0;
}

int wire_bytes(struct wire *w, size_t n, const unsigned char **out, struct err *e)
{
    if (n > w->len - w->pos) return wire_short(w, n, "the bytes of an array", e);
    *out = w->p + w->pos;
    w->pos += n;
    return 0;
}

int wire_str(struct wire *w, char *out, size_t n, struct err *e)
{
    size_t at = w->pos;
    uint32_t len;
    if (wire_count(w, 1, 1, &len, e)) return -1;
    size_t keep = len;
    if (w->kind == WIRE_CDR) {
        if (len == 0 || w->p[w->pos + len - 1] != 0) {
            w->pos = at;
            return err_set(e, "at byte %zu of %zu: a CDR string of %u bytes without its final NUL", at, w->len, len);
        }
        keep = len - 1;
    }
    if (keep >= n || memchr(w->p + w->pos, 0, keep)) {
        w->pos = at;
        return err_set(e, "at byte %zu of %zu: a string of %zu bytes, expected at most %zu without NUL bytes", at,
                       w->len, keep, n - 1);
    }
    memcpy(out, w->p + w->pos, keep);
    out[keep] = 0;
    w->pos += len;
    return 0;
}

int wire_time(struct wire *w, double *t, struct err *e)
{
    size_t at = w->pos;
    uint32_t sec, nsec;
    if (wire_u32(w, &sec, e) || wire_u32(w, &nsec, e)) { w->pos = at; return -1; }
    if (nsec > 999999999u) {
        w->pos = at;
        return err_set(e, "at byte %zu of %zu: nanoseconds %u, expected at most 999999999", at, w->len, nsec);
    }
    double s = w->kind == WIRE_CDR ? (double)(int32_t)sec : (double)sec;
    *t = s + (double)nsec * 1e-9;
    return 0;
}
