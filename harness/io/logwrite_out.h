/* logwrite_out.h: internal to the log writers (logwrite*.c): a growing
 * byte buffer, the output file with its byte count, and the one writer
 * each container (ROS 1 bag in logwrite_bag.c, MCAP in logwrite_mcap.c)
 * provides.
 *
 * A container writes its messages in chunks: logwrite.c hands it every
 * message in stamp order; it keeps them in o->chunk, with one index
 * entry per message in o->index[topic], and writes the chunk and its
 * index records when the chunk is full and at the end, then the records
 * that describe the whole file.
 *
 *     logw_begin(&m, 0);            // a message body
 *     logw_uint(&m, 7, 4);
 *     if (m.oom) ...                // one flag for every failed growth
 *
 * Failure contract: the buffer functions cannot fail visibly; a failed
 * growth sets oom and later writes to that buffer do nothing.  Writes to
 * the file are checked once, when the caller commits it (afile_commit
 * checks ferror).
 */
#ifndef RV_LOGWRITE_OUT_H
#define RV_LOGWRITE_OUT_H

#include <stdint.h>
#include <stdio.h>

#include "harness/base/err.h"

/* A growing little-endian byte buffer; with cdr set, values are aligned to
 * their size counted from byte 4 (after the encapsulation header). */
struct logw_buf {
    unsigned char *p;
    size_t len, cap;
    int cdr, oom;
};

void logw_raw(struct logw_buf *b, const void *v, size_t n);
/* An unsigned value of n bytes, little-endian, aligned in CDR. */
void logw_uint(struct logw_buf *b, uint64_t v, int n);
/* A uint32 length (counting a NUL in CDR), then the bytes. */
void logw_str(struct logw_buf *b, const char *s);
/* Empty the buffer; with cdr, start a CDR little-endian body. */
void logw_begin(struct logw_buf *b, int cdr);

/* The two topics every log holds (see logwrite.h). */
enum { LOGW_POINTS, LOGW_ODOM, LOGW_TOPICS };
struct logw_topic {
    const char *topic, *type, *md5, *ros1_def, *ros2, *ros2_def;
};
extern const struct logw_topic logw_topics[LOGW_TOPICS];

/* Records of a chunk are kept until the chunk holds this many bytes. */
#define LOGW_CHUNK_BYTES (1u << 20)

/* The file being written and what its container has collected. */
struct logw_out {
    FILE *f;
    uint64_t pos;                          /* bytes written to f */
    struct logw_buf rec, chunk, tail;      /* one record; the open chunk; the file's closing records */
    struct logw_buf index[LOGW_TOPICS];    /* the open chunk's index entries, per topic */
    uint32_t in_chunk[LOGW_TOPICS];        /* messages per topic in the open chunk */
    uint64_t in_file[LOGW_TOPICS];         /* messages per topic in the file */
    uint64_t chunk_t0, chunk_t1, file_t0, file_t1;  /* stamps, ns */
    uint32_t n_chunks, seq;
    uint32_t crc;                          /* MCAP: CRC-32 of the bytes written */
    int announced[LOGW_TOPICS];            /* its connection (channel) is in the file */
};

/* Write n bytes to the file, counting them. */
void logw_write(struct logw_out *o, const void *p, size_t n);

/* One container: start writes what comes first, message adds one message
 * (topic, stamp in ns, body), end closes the last chunk and writes the
 * records that describe the file.  0, or -1 with e set (out of memory). */
struct logw_container {
    int (*start)(struct logw_out *o, struct err *e);
    int (*message)(struct logw_out *o, int topic, uint64_t t_ns, const struct logw_buf *m, struct err *e);
    int (*end)(struct logw_out *o, struct err *e);
};
extern const struct logw_container logw_bag, logw_mcap;

#endif
