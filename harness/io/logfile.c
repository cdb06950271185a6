/* logfile.c: open a robot log, its topic table, and chunk decompression. */
#include "harness/io/logfile.h"

#include <bzlib.h>
#include <errno.h>
#include <fcntl.h>
#include <lz4frame.h>
#include <stdlib.h>
#include <string.h>
#include <sys/mman.h>
#include <sys/stat.h>
#include <unistd.h>
#include <zstd.h>

#include "harness/base/grow.h"
#include "harness/io/bag.h"
#include "harness/io/mcap.h"

#define LOGF_BAG_MAGIC "#ROSBAG V2.0\n"
#define LOGF_MCAP_MAGIC "\x89MCAP0\r\n"

const char *logf_kind_name(enum logf_kind k)
{
    return k == LOGF_BAG ? "bag" : k == LOGF_MCAP ? "mcap" : "?";
}

int logf_open(struct logf *l, const char *path, struct err *e)
{
    memset(l, 0, sizeof *l);
    l->path = path;
    int fd = open(path, O_RDONLY);
    if (fd < 0) return err_at(e, path, 0, "cannot open: %s", strerror(errno));
    struct stat st;
    if (fstat(fd, &st) || !S_ISREG(st.st_mode)) {
        close(fd);
        return err_at(e, path, 0, "not a regular file, expected a ROS 1 bag or an MCAP file");
    }
    l->size = (size_t)st.st_size;
    if (l->size >= 8) {
        void *m = mmap(NULL, l->size, PROT_READ, MAP_PRIVATE, fd, 0);
        if (m == MAP_FAILED) {
            close(fd);
            return err_at(e, path, 0, "cannot map the file: %s", strerror(errno));
        }
        l->map = m;
    }
    close(fd);
    if (l->size >= 13 && !memcmp(l->map, LOGF_BAG_MAGIC, 13)) l->kind = LOGF_BAG;
    else if (l->size >= 8 && !memcmp(l->map, LOGF_MCAP_MAGIC, 8)) l->kind = LOGF_MCAP;
    if (l->kind) return 0;
    logf_close(l);
    return err_at(e, path, 0, "the file starts with neither '#ROSBAG V2.0' nor the MCAP magic, expected a "
                  "ROS 1 bag (format 2.0) or an MCAP file");
}

static void logf_topics_clear(struct logf *l)
{
    for (size_t k = 0; k < l->n_topics; k++) {
        free(l->topics[k].name);
        free(l->topics[k].type);
    }
    l->n_topics = 0;
}

void logf_close(struct logf *l)
{
    if (!l) return;
    if (l->map) munmap((void *)l->map, l->size);
    logf_topics_clear(l);
    free(l->topics);
    memset(l, 0, sizeof *l);
}

int logf_each(struct logf *l, logf_fn fn, void *ctx, struct err *e)
{
    logf_topics_clear(l);
    l->n_msgs = 0;
    if (l->kind == LOGF_BAG) return bag_walk(l, fn, ctx, e);
    if (l->kind == LOGF_MCAP) return mcap_walk(l, fn, ctx, e);
    return err_at(e, l->path, 0, "unknown log kind");
}

struct logf_topic *logf_topic_find(struct logf *l, uint32_t id)
{
    for (size_t k = 0; k < l->n_topics; k++)
        if (l->topics[k].id == id) return &l->topics[k];
    return NULL;
}

int logf_topic_add(struct logf *l, uint32_t id, const char *name, const char *type, enum wire_kind wire,
                   size_t offset, struct err *e)
{
    struct logf_topic *t = logf_topic_find(l, id);
    if (t) {
        if (!strcmp(t->name, name) && !strcmp(t->type, type)) return 0;
        return err_at(e, l->path, 0, "record at byte %zu: connection %u is '%s' (%s), but earlier '%s' (%s), "
                      "expected one topic per connection", offset, id, name, type, t->name, t->type);
    }
    if (grow_reserve(&l->topics, &l->cap_topics, l->n_topics + 1, sizeof *l->topics)) return err_set(e, "out of memory");
    t = &l->topics[l->n_topics];
    *t = (struct logf_topic){.id = id, .name = strdup(name), .type = strdup(type), .wire = wire};
    if (!t->name || !t->type) {
        free(t->name);
        free(t->type);
        return err_set(e, "out of memory");
    }
    l->n_topics++;
    return 0;
}

int logf_deliver(struct logf *l, struct logf_topic *t, double log_time, const unsigned char *data, size_t len,
                 size_t offset, logf_fn fn, void *ctx, struct err *e)
{
    struct logf_msg m = {.topic = t, .log_time = log_time, .data = data, .len = len, .offset = offset,
                         .index = l->n_msgs++};
    t->count++;
    return fn ? fn(ctx, &m, e) : 0;
}

static int logf_lz4(const unsigned char *src, size_t n, unsigned char *dst, size_t out, struct err *e)
{
    LZ4F_dctx *d;
    if (LZ4F_isError(LZ4F_createDecompressionContext(&d, LZ4F_VERSION))) return err_set(e, "out of memory");
    size_t in_pos = 0, out_pos = 0, r = 1;
    while (r && in_pos < n) {
        size_t src_n = n - in_pos, dst_n = out - out_pos;
        r = LZ4F_decompress(d, dst + out_pos, &dst_n, src + in_pos, &src_n, NULL);
        if (LZ4F_isError(r)) {
            LZ4F_freeDecompressionContext(d);
            return err_set(e, "lz4 data does not unpack (%s)", LZ4F_getErrorName(r));
        }
        in_pos += src_n;
        out_pos += dst_n;
        if (!src_n && !dst_n) break;
    }
    LZ4F_freeDecompressionContext(d);
    if (r || out_pos != out)
        return err_set(e, "lz4 data unpacks to %zu bytes%s, expected %zu", out_pos, r ? " and more" : "", out);
    return 0;
}

int logf_unpack(const char *codec, const unsigned char *src, size_t n, unsigned char *dst, size_t out,
                struct err *e)
{
    if (!strcmp(codec, "none") || !codec[0]) {
        if (n != out) return err_set(e, "an uncompressed chunk of %zu bytes, but its size says %zu", n, out);
        memcpy(dst, src, n);
        return 0;
    }
    if (!strcmp(codec, "bz2")) {
        if (n > 0xffffffffu || out > 0xffffffffu) return err_set(e, "a bz2 chunk over 4 GiB");
        unsigned got = (unsigned)out;
        int rc = BZ2_bzBuffToBuffDecompress((char *)dst, &got, (char *)src, (unsigned)n, 0, 0);
        if (rc != BZ_OK || got != out)
            return err_set(e, "bz2 data does not unpack to the %zu bytes stated (%s)", out,
                           rc == BZ_OUTBUFF_FULL ? "longer" : rc == BZ_OK ? "shorter" : "corrupt data");
        return 0;
    }
    if (!strcmp(codec, "lz4")) return logf_lz4(src, n, dst, out, e);
    if (!strcmp(codec, "zstd")) {
        size_t got = ZSTD_decompress(dst, out, src, n);
        if (ZSTD_isError(got)) return err_set(e, "zstd data does not unpack (%s)", ZSTD_getErrorName(got));
        if (got != out) return err_set(e, "zstd data unpacks to %zu bytes, expected %zu", got, out);
        return 0;
    }
    return err_set(e, "unknown compression '%s', expected none, bz2, lz4 or zstd", codec);
}
