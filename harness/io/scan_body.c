/* scan_body.c: what the scan readers and writers share: whole reads of a
 * scan file, and the writer of PCD and PLY files (header, then body). */
#include "harness/io/scan_body.h"

#include <errno.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>
#include <unistd.h>

#include "harness/base/fileio.h"

/* Read exactly len bytes from fd into buf.  With finite != NULL, read in
 * blocks and check each for NaN / infinity while it is in cache (len a
 * multiple of 4, buf float-aligned); *finite is 1 when none was found. */
#define SCAN_BLOCK ((size_t)512 << 10)
int scan_body_read_full(int fd, void *buf, size_t len, int *finite, const char *path, struct err *e)
{
    unsigned char *p = buf;
    size_t got = 0;
    if (finite) *finite = 1;
    while (got < len) {
        size_t want = len - got;
        if (finite && want > SCAN_BLOCK) want = SCAN_BLOCK;
        ssize_t r = read(fd, p + got, want);
        if (r < 0 && errno == EINTR) continue;
        if (r < 0) return err_at(e, path, 0, "read failed: %s", strerror(errno));
        if (r == 0) return err_at(e, path, 0, "file ended after %zu of %zu bytes", got, len);
        if (finite && *finite) {
            /* check the whole floats now complete, including one split by the previous read */
            size_t from = got & ~(size_t)3, to = (got + (size_t)r) & ~(size_t)3;
            *finite = cloud_values_finite((const float *)(p + from), (to - from) / 4);
        }
        got += (size_t)r;
    }
    return 0;
}

int scan_body_slurp(const char *path, size_t max_bytes, unsigned char **buf, size_t *len,
               struct err *e)
{
    *buf = NULL;
    *len = 0;
    int fd;
    size_t size;
    int rc = -1;
    unsigned char *b = NULL;
    if (fileio_open_regular(path, "a scan file", &fd, &size, e)) return -1;
    if (size == 0) { err_at(e, path, 0, "file is empty, expected a scan"); goto done; }
    if (size > max_bytes) {
        err_at(e, path, 0, "file is %zu bytes, more than the limit of %zu for a scan", size, max_bytes);
        goto done;
    }
    b = malloc(size + 1);
    if (!b) { err_at(e, path, 0, "out of memory for %zu bytes", size); goto done; }
    if (scan_body_read_full(fd, b, size, NULL, path, e)) goto done;
    b[size] = 0;
    *buf = b;
    *len = size;
    b = NULL;
    rc = 0;
done:
    free(b);
    close(fd);
    return rc;
}

size_t scan_body_record(const struct cloud *c, size_t k, unsigned char rec[SCAN_BODY_RECORD_MAX])
{
    size_t o = 16;
    memcpy(rec, c->pts + 4 * k, 16);
    if (c->ring) { rec[o] = (unsigned char)(c->ring[k] & 0xff); rec[o + 1] = (unsigned char)(c->ring[k] >> 8); o += 2; }
    if (c->time) { memcpy(rec + o, c->time + k, 4); o += 4; }
    return o;
}

/* Points k0 .. k0 + m - 1 as records into dst; the bytes used.  The usual
 * kinds (no ring and time, or both) copy fixed sizes in a loop of their own. */
static size_t scan_body_pack(unsigned char *dst, const struct cloud *c, size_t k0, size_t m)
{
    unsigned char *d = dst;
    if (!c->ring && !c->time) {
        memcpy(d, c->pts + 4 * k0, 16 * m);
        return 16 * m;
    }
#if !defined(__BYTE_ORDER__) || __BYTE_ORDER__ == __ORDER_LITTLE_ENDIAN__
    if (c->ring && c->time) {
        for (size_t k = k0; k < k0 + m; k++, d += 22) {
            memcpy(d, c->pts + 4 * k, 16);
            memcpy(d + 16, c->ring + k, 2);
            memcpy(d + 18, c->time + k, 4);
        }
        return 22 * m;
    }
#endif
    for (size_t k = k0; k < k0 + m; k++) d += scan_body_record(c, k, d);
    return (size_t)(d - dst);
}

#define SCAN_BODY_BLOCK ((size_t)4 << 20)   /* records are handed to the file this many bytes at a time */

/* The header and the records, packed into blocks, one fwrite each: a block
 * as large as the stream's buffer or larger goes to the file as it is. */
static int scan_body_records(struct afile *a, const struct cloud *c, const char *head, size_t hl, struct err *e)
{
    const size_t rec = 16 + (c->ring ? 2 : 0) + (c->time ? 4 : 0), total = hl + c->n * rec;
    const size_t cap = total < SCAN_BODY_BLOCK ? total : SCAN_BODY_BLOCK;
    unsigned char *buf = malloc(cap);
    if (!buf) return err_at(e, a->path, 0, "out of memory for %zu bytes", cap);
    memcpy(buf, head, hl);
    size_t used = hl;
    for (size_t k = 0; k < c->n;) {
        size_t m = (cap - used) / rec;
        if (m > c->n - k) m = c->n - k;
        used += scan_body_pack(buf + used, c, k, m);
        k += m;
        fwrite(buf, 1, used, a->f);
        used = 0;
    }
    if (used) fwrite(buf, 1, used, a->f);
    free(buf);
    return 0;
}

static void scan_body_lines(FILE *f, const struct cloud *c)
{
    for (size_t k = 0; k < c->n; k++) {
        fprintf(f, "%.9g %.9g %.9g %.9g", CLOUD_X(c, k), CLOUD_Y(c, k), CLOUD_Z(c, k), CLOUD_I(c, k));
        if (c->ring) fprintf(f, " %u", (unsigned)c->ring[k]);
        if (c->time) fprintf(f, " %.9g", c->time[k]);
        fputc('\n', f);
    }
}

int scan_body_write(const char *path, const struct cloud *c, scan_header_fn header, const char *word,
                    enum scan_body_kind kind, const void *given, size_t len, struct err *e)
{
    char head[SCAN_HEADER_MAX];
    int hl = header(head, sizeof head, c, word);
    if (hl < 0 || (size_t)hl >= sizeof head)
        return err_at(e, path, 0, "header longer than %zu bytes, expected fewer", sizeof head - 1);
    struct afile a;
    if (afile_open(&a, path, e)) return -1;
    int rc = 0;
    if (kind == SCAN_BODY_RECORDS) {
        rc = scan_body_records(&a, c, head, (size_t)hl, e);
    } else {
        fwrite(head, 1, (size_t)hl, a.f);
        if (kind == SCAN_BODY_LINES) scan_body_lines(a.f, c);
        else if (len) fwrite(given, 1, len, a.f);
    }
    if (rc) {
        afile_abort(&a);
        return -1;
    }
    return afile_commit(&a, e);
}
