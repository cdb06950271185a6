/* scan_body.c: what the scan readers and writers share: whole reads of a
 * scan file and the point body after a header. */
#include "harness/io/scan_body.h"

#include <errno.h>
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

void scan_body_binary(FILE *f, const struct cloud *c)
{
    unsigned char buf[512 * SCAN_BODY_RECORD_MAX];   /* records packed 512 at a time: one fwrite each */
    size_t used = 0;
    for (size_t k = 0; k < c->n; k++) {
        used += scan_body_record(c, k, buf + used);
        if (used + SCAN_BODY_RECORD_MAX > sizeof buf) {
            fwrite(buf, 1, used, f);
            used = 0;
        }
    }
    if (used) fwrite(buf, 1, used, f);
}

void scan_body_ascii(FILE *f, const struct cloud *c)
{
    for (size_t k = 0; k < c->n; k++) {
        fprintf(f, "%.9g %.9g %.9g %.9g", CLOUD_X(c, k), CLOUD_Y(c, k), CLOUD_Z(c, k), CLOUD_I(c, k));
        if (c->ring) fprintf(f, " %u", (unsigned)c->ring[k]);
        if (c->time) fprintf(f, " %.9g", c->time[k]);
        fputc('\n', f);
    }
}

