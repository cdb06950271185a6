/* logfile.h: a robot log (ROS 1 bag 2.0 or MCAP), opened by its first bytes,
 * walked message by message.
 *
 *     struct logf l;
 *     if (logf_open(&l, "drive.bag", e)) return -1;
 *     if (logf_each(&l, my_fn, &ctx, e)) ...;   // my_fn sees every message
 *     for (size_t k = 0; k < l.n_topics; k++) l.topics[k] ...  // after a walk
 *     logf_close(&l);
 *
 * The file is mapped read-only; a message's data points into the map or
 * into a decompressed chunk and is valid only during the callback.  Topics
 * are registered as their connection / channel records are met, so after a
 * complete walk l.topics lists every topic with its message count.
 * Record readers: harness/io/bag.h, harness/io/mcap.h.
 *
 * Failure contract: 0, or -1 with "FILE: record at byte B: what, expected
 * what" (or "FILE: message N: ...") in e.  A callback's -1 stops the walk
 * and its message is kept.  logf_close accepts a closed or failed log.
 * Not thread-safe on one log.
 */
#ifndef RV_LOGFILE_H
#define RV_LOGFILE_H

#include <stddef.h>
#include <stdint.h>

#include "harness/base/err.h"
#include "harness/io/wire.h"

enum logf_kind { LOGF_BAG = 1, LOGF_MCAP };

struct logf_topic {
    uint32_t id;         /* connection (bag) or channel (MCAP) id */
    char *name, *type;   /* topic, message type ("sensor_msgs/PointCloud2") */
    enum wire_kind wire; /* how its messages are serialised */
    size_t count;        /* messages seen so far */
};

struct logf_msg {
    const struct logf_topic *topic;
    double log_time;            /* when it was logged, seconds */
    const unsigned char *data;  /* serialised message */
    size_t len;
    size_t offset;              /* byte of its record (in the file, or of its chunk) */
    size_t index;               /* 0-based over all messages of the log */
};

typedef int (*logf_fn)(void *ctx, const struct logf_msg *m, struct err *e);

struct logf {
    const char *path;
    const unsigned char *map;
    size_t size;
    enum logf_kind kind;
    struct logf_topic *topics;
    size_t n_topics, cap_topics;
    size_t n_msgs;              /* messages walked */
};

/* Map path and tell bag from MCAP by the magic; -1 names what was found. */
int logf_open(struct logf *l, const char *path, struct err *e);
/* Walk every message in file order (topics re-registered from scratch). */
int logf_each(struct logf *l, logf_fn fn, void *ctx, struct err *e);
void logf_close(struct logf *l);
/* "bag" or "mcap". */
const char *logf_kind_name(enum logf_kind k);

/* For the record readers: register a topic (a repeated id with the same
 * name and type is kept once; a different one is refused), find one by id
 * (NULL if unknown), and hand a message to fn with its index. */
int logf_topic_add(struct logf *l, uint32_t id, const char *name, const char *type, enum wire_kind wire,
                   size_t offset, struct err *e);
struct logf_topic *logf_topic_find(struct logf *l, uint32_t id);
int logf_deliver(struct logf *l, struct logf_topic *t, double log_time, const unsigned char *data, size_t len,
                 size_t offset, logf_fn fn, void *ctx, struct err *e);

/* For the record readers: decompress src (n bytes) into dst (exactly out
 * bytes) with the named codec: "none", "bz2", "lz4" (LZ4 frame format),
 * "zstd".  -1 with e naming the codec and what went wrong. */
int logf_unpack(const char *codec, const unsigned char *src, size_t n, unsigned char *dst, size_t out,
                struct err *e);

#endif
