/* logwrite_mcap.c: the MCAP container of the log writer, with the index and
 * summary the format defines, so readers that seek by the summary open it:
 *
 *     magic, header (profile "ros2")
 *     schema x2, channel x2            ros2msg schemas, CDR channels
 *     chunk                            uncompressed records: messages; CRC-32 of the records
 *     message index                    one per channel in the chunk: (log time, offset in the records)
 *     ...                              (a chunk and its message indexes, per chunk)
 *     data end                         CRC-32 of every byte before it
 *     summary: schema x2, channel x2, statistics, chunk index per chunk
 *     summary offset per group         (opcode, start, length)
 *     footer                           summary start, summary offset start, CRC-32 of the summary up to here
 *     magic
 *
 * A record is "uint8 opcode, uint64 length, content"; strings and maps carry
 * a uint32 byte length, chunk records a uint64 one; all little-endian.  The
 * chunk index records wait in o->tail until the summary is written.
 */
#include <stdlib.h>
#include <string.h>

#include "harness/io/logwrite_out.h"
#include "harness/io/mcap.h"

#define MCAP_MAGIC "\x89MCAP0\r\n"

enum { OP_HEADER = 0x01, OP_FOOTER = 0x02, OP_SCHEMA = 0x03, OP_CHANNEL = 0x04, OP_MESSAGE = 0x05, OP_CHUNK = 0x06,
       OP_MESSAGE_INDEX = 0x07, OP_CHUNK_INDEX = 0x08, OP_STATISTICS = 0x0b, OP_SUMMARY_OFFSET = 0x0e,
       OP_DATA_END = 0x0f };

/* Append the record (op, content c) to b. */
static void mcap_record(struct logw_buf *b, int op, const struct logw_buf *c)
{
    logw_uint(b, (uint64_t)op, 1);
    logw_uint(b, c->len, 8);
    logw_raw(b, c->p, c->len);
}

/* Write b to the file, counting it into o->crc. */
static void mcap_put(struct logw_out *o, const struct logw_buf *b)
{
    o->crc = mcap_crc32(o->crc, b->p, b->len);
    logw_write(o, b->p, b->len);
}

/* The schema records, then the channel records, of every topic, appended
 * to b; the byte each group ends at in b goes to ends[0], ends[1]. */
static void mcap_topics(struct logw_buf *b, size_t ends[2])
{
    struct logw_buf c = {0};
    for (uint16_t k = 0; k < LOGW_TOPICS; k++) {
        logw_begin(&c, 0);
        logw_uint(&c, k + 1u, 2);
        logw_str(&c, logw_topics[k].ros2);
        logw_str(&c, "ros2msg");
        logw_str(&c, logw_topics[k].ros2_def);   /* uint32 length + bytes, as a string */
        mcap_record(b, OP_SCHEMA, &c);
    }
    ends[0] = b->len;
    for (uint16_t k = 0; k < LOGW_TOPICS; k++) {
        logw_begin(&c, 0);
        logw_uint(&c, k, 2);
        logw_uint(&c, k + 1u, 2);
        logw_str(&c, logw_topics[k].topic);
        logw_str(&c, "cdr");
        logw_uint(&c, 0, 4);                     /* empty metadata map */
        mcap_record(b, OP_CHANNEL, &c);
    }
    ends[1] = b->len;
    b->oom |= c.oom;
    free(c.p);
}

static int mcap_start(struct logw_out *o, struct err *e)
{
    struct logw_buf c = {0};
    size_t ends[2];
    logw_begin(&o->rec, 0);
    logw_raw(&o->rec, MCAP_MAGIC, 8);
    logw_str(&c, "ros2");
    logw_str(&c, "revisit");
    mcap_record(&o->rec, OP_HEADER, &c);
    mcap_topics(&o->rec, ends);
    int oom = c.oom | o->rec.oom;
    free(c.p);
    if (oom) return err_set(e, "out of memory writing the MCAP schemas");
    mcap_put(o, &o->rec);
    return 0;
}

/* The message index records of the open chunk, into b; their offsets in
 * the file (the chunk's records end at file byte at) into c as the chunk
 * index's map. */
static void mcap_indexes(const struct logw_out *o, struct logw_buf *b, struct logw_buf *map, uint64_t at)
{
    struct logw_buf c = {0};
    logw_begin(b, 0);
    logw_begin(map, 0);
    for (int k = 0; k < LOGW_TOPICS; k++) {
        if (!o->in_chunk[k]) continue;
        logw_uint(map, (uint64_t)k, 2);
        logw_uint(map, at + b->len, 8);
        logw_begin(&c, 0);
        logw_uint(&c, (uint64_t)k, 2);
        logw_uint(&c, o->index[k].len, 4);
        logw_raw(&c, o->index[k].p, o->index[k].len);
        mcap_record(b, OP_MESSAGE_INDEX, &c);
    }
    b->oom |= c.oom;
    free(c.p);
}

/* Write the open chunk and its message indexes; keep its chunk index. */
static int mcap_flush(struct logw_out *o, struct err *e)
{
    if (!o->chunk.len) return 0;
    struct logw_buf c = {0}, idx = {0}, map = {0};
    logw_uint(&c, o->chunk_t0, 8);
    logw_uint(&c, o->chunk_t1, 8);
    logw_uint(&c, o->chunk.len, 8);
    logw_uint(&c, mcap_crc32(0, o->chunk.p, o->chunk.len), 4);
    logw_str(&c, "");                                /* compression: none */
    logw_uint(&c, o->chunk.len, 8);
    logw_raw(&c, o->chunk.p, o->chunk.len);
    logw_begin(&o->rec, 0);
    mcap_record(&o->rec, OP_CHUNK, &c);
    uint64_t at = o->pos, chunk_len = o->rec.len;
    mcap_indexes(o, &idx, &map, at + chunk_len);
    logw_begin(&c, 0);                               /* the chunk index, for the summary */
    logw_uint(&c, o->chunk_t0, 8);
    logw_uint(&c, o->chunk_t1, 8);
    logw_uint(&c, at, 8);
    logw_uint(&c, chunk_len, 8);
    logw_uint(&c, map.len, 4);
    logw_raw(&c, map.p, map.len);
    logw_uint(&c, idx.len, 8);
    logw_str(&c, "");
    logw_uint(&c, o->chunk.len, 8);                  /* compressed size: the records as stored */
    logw_uint(&c, o->chunk.len, 8);
    mcap_record(&o->tail, OP_CHUNK_INDEX, &c);
    int oom = c.oom | idx.oom | map.oom | o->rec.oom | o->tail.oom;
    if (!oom) {
        mcap_put(o, &o->rec);
        mcap_put(o, &idx);
        o->n_chunks++;
        o->chunk.len = 0;
        for (int k = 0; k < LOGW_TOPICS; k++) o->in_chunk[k] = 0, o->index[k].len = 0;
    }
    free(c.p);
    free(idx.p);
    free(map.p);
    return oom ? err_set(e, "out of memory writing chunk %u of the MCAP file", o->n_chunks) : 0;
}

static int mcap_message(struct logw_out *o, int topic, uint64_t t_ns, const struct logw_buf *m, struct err *e)
{
    uint32_t held = 0;
    for (int k = 0; k < LOGW_TOPICS; k++) held += o->in_chunk[k];
    if (!held || t_ns < o->chunk_t0) o->chunk_t0 = t_ns;
    if (!held || t_ns > o->chunk_t1) o->chunk_t1 = t_ns;
    if (!o->seq || t_ns < o->file_t0) o->file_t0 = t_ns;
    if (!o->seq || t_ns > o->file_t1) o->file_t1 = t_ns;
    logw_uint(&o->index[topic], t_ns, 8);
    logw_uint(&o->index[topic], o->chunk.len, 8);
    o->in_chunk[topic]++;
    o->in_file[topic]++;
    struct logw_buf *c = &o->rec;
    logw_begin(c, 0);
    logw_uint(c, (uint64_t)topic, 2);
    logw_uint(c, o->seq++, 4);
    logw_uint(c, t_ns, 8);
    logw_uint(c, t_ns, 8);
    logw_raw(c, m->p, m->len);
    mcap_record(&o->chunk, OP_MESSAGE, c);
    if (c->oom || o->chunk.oom || o->index[topic].oom)
        return err_set(e, "out of memory writing message %u of the MCAP file", o->seq - 1);
    return o->chunk.len >= LOGW_CHUNK_BYTES ? mcap_flush(o, e) : 0;
}

/* The statistics record, appended to b. */
static void mcap_statistics(const struct logw_out *o, struct logw_buf *b)
{
    struct logw_buf c = {0};
    logw_uint(&c, o->seq, 8);                        /* messages */
    logw_uint(&c, LOGW_TOPICS, 2);                   /* schemas */
    logw_uint(&c, LOGW_TOPICS, 4);                   /* channels */
    logw_uint(&c, 0, 4);                             /* attachments */
    logw_uint(&c, 0, 4);                             /* metadata */
    logw_uint(&c, o->n_chunks, 4);
    logw_uint(&c, o->file_t0, 8);
    logw_uint(&c, o->file_t1, 8);
    logw_uint(&c, LOGW_TOPICS * 10u, 4);             /* the map: uint16 channel, uint64 count each */
    for (int k = 0; k < LOGW_TOPICS; k++) {
        logw_uint(&c, (uint64_t)k, 2);
        logw_uint(&c, o->in_file[k], 8);
    }
    mcap_record(b, OP_STATISTICS, &c);
    b->oom |= c.oom;
    free(c.p);
}

/* A summary offset record for the group of b[from, to) at file byte base. */
static void mcap_group(struct logw_buf *b, int op, uint64_t base, size_t from, size_t to)
{
    struct logw_buf c = {0};
    logw_uint(&c, (uint64_t)op, 1);
    logw_uint(&c, base + from, 8);
    logw_uint(&c, to - from, 8);
    mcap_record(b, OP_SUMMARY_OFFSET, &c);
    b->oom |= c.oom;
    free(c.p);
}

static int mcap_end(struct logw_out *o, struct err *e)
{
    if (mcap_flush(o, e)) return -1;
    struct logw_buf c = {0}, *s = &o->rec;
    logw_uint(&c, o->crc, 4);
    logw_begin(s, 0);
    mcap_record(s, OP_DATA_END, &c);
    mcap_put(o, s);
    uint64_t start = o->pos;                         /* the summary section */
    size_t ends[4];
    logw_begin(s, 0);
    mcap_topics(s, ends);
    mcap_statistics(o, s);
    ends[2] = s->len;
    logw_raw(s, o->tail.p, o->tail.len);             /* the chunk indexes */
    ends[3] = s->len;
    mcap_group(s, OP_SCHEMA, start, 0, ends[0]);
    mcap_group(s, OP_CHANNEL, start, ends[0], ends[1]);
    mcap_group(s, OP_STATISTICS, start, ends[1], ends[2]);
    if (o->n_chunks) mcap_group(s, OP_CHUNK_INDEX, start, ends[2], ends[3]);
    logw_uint(s, OP_FOOTER, 1);
    logw_uint(s, 8 + 8 + 4, 8);
    logw_uint(s, start, 8);
    logw_uint(s, start + ends[3], 8);
    logw_uint(s, mcap_crc32(0, s->p, s->len), 4);    /* the summary, its offsets and the footer so far */
    logw_raw(s, MCAP_MAGIC, 8);
    int oom = c.oom | s->oom;
    free(c.p);
    if (oom) return err_set(e, "out of memory writing the MCAP summary");
    logw_write(o, s->p, s->len);
    return 0;
}

const struct logw_container logw_mcap = {mcap_start, mcap_message, mcap_end};
