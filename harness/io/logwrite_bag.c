/* logwrite_bag.c: the ROS 1 bag 2.0 container of the log writer, indexed
 * as the format states, so readers that seek by the index open it:
 *
 *     #ROSBAG V2.0\n
 *     bag header     op 0x03: index_pos, conn_count, chunk_count (padded to 4096 bytes)
 *     chunk          op 0x05: compression none, size; data: connection and message records
 *     index data     op 0x04: ver 1, conn, count; data: count x (time, uint32 offset in the chunk)
 *     ...            (a chunk and its index records, per chunk)
 *     connection     op 0x07: one per topic, at index_pos
 *     chunk info     op 0x06: ver 1, chunk_pos, start_time, end_time, count; data: count x (conn, count)
 *
 * Each record is "uint32 header_len, header fields 'uint32 len, name=value',
 * uint32 data_len, data"; times are uint32 sec, uint32 nsec; all
 * little-endian.  The bag header is written first with zeros and written
 * again in place at the end, when the index position and counts are known.
 */
#include <stdlib.h>
#include <string.h>

#include "harness/io/logwrite_out.h"

#define BAG_HEADER_AT 13     /* after "#ROSBAG V2.0\n" */
#define BAG_HEADER_BYTES 4096

static void bag_field(struct logw_buf *h, const char *name, const void *v, size_t n)
{
    logw_uint(h, strlen(name) + 1 + n, 4);
    logw_raw(h, name, strlen(name));
    logw_raw(h, "=", 1);
    logw_raw(h, v, n);
}

static void bag_field_u(struct logw_buf *h, const char *name, uint64_t v, int n)
{
    unsigned char t[8];
    for (int k = 0; k < n; k++) t[k] = (unsigned char)(v >> (8 * k));
    bag_field(h, name, t, (size_t)n);
}

/* A time field: uint32 sec, uint32 nsec. */
static void bag_field_t(struct logw_buf *h, const char *name, uint64_t t_ns)
{
    bag_field_u(h, name, t_ns / 1000000000u | (t_ns % 1000000000u) << 32, 8);
}

/* Append the record (header h, data) to b. */
static void bag_record(struct logw_buf *b, const struct logw_buf *h, const void *data, size_t n)
{
    logw_uint(b, h->len, 4);
    logw_raw(b, h->p, h->len);
    logw_uint(b, n, 4);
    logw_raw(b, data, n);
}

static void bag_op(struct logw_buf *h, int op)
{
    unsigned char c = (unsigned char)op;
    logw_begin(h, 0);
    bag_field(h, "op", &c, 1);
}

/* The bag header record, padded with spaces to 4096 bytes, at o->rec. */
static void bag_header(struct logw_out *o, uint64_t index_pos)
{
    char pad[BAG_HEADER_BYTES];
    struct logw_buf h = {0};
    bag_op(&h, 0x03);
    bag_field_u(&h, "index_pos", index_pos, 8);
    bag_field_u(&h, "conn_count", LOGW_TOPICS, 4);
    bag_field_u(&h, "chunk_count", o->n_chunks, 4);
    memset(pad, ' ', sizeof pad);
    logw_begin(&o->rec, 0);
    if (!h.oom) bag_record(&o->rec, &h, pad, BAG_HEADER_BYTES - 8 - h.len);
    o->rec.oom |= h.oom;
    free(h.p);
}

/* The connection record of topic k, appended to b. */
static void bag_conn(struct logw_buf *b, int k)
{
    const struct logw_topic *t = &logw_topics[k];
    struct logw_buf h = {0}, d = {0};
    bag_op(&h, 0x07);
    bag_field_u(&h, "conn", (uint64_t)k, 4);
    bag_field(&h, "topic", t->topic, strlen(t->topic));
    bag_field(&d, "topic", t->topic, strlen(t->topic));
    bag_field(&d, "type", t->type, strlen(t->type));
    bag_field(&d, "md5sum", t->md5, strlen(t->md5));
    bag_field(&d, "message_definition", t->ros1_def, strlen(t->ros1_def));
    bag_record(b, &h, d.p, d.len);
    b->oom |= h.oom | d.oom;
    free(h.p);
    free(d.p);
}

static int bag_start(struct logw_out *o, struct err *e)
{
    logw_write(o, "#ROSBAG V2.0\n", BAG_HEADER_AT);
    bag_header(o, 0);
    if (o->rec.oom) return err_set(e, "out of memory writing the bag header");
    logw_write(o, o->rec.p, o->rec.len);
    return 0;
}

/* Write the open chunk, its index records, and keep its chunk info. */
static int bag_flush(struct logw_out *o, struct err *e)
{
    if (!o->chunk.len) return 0;
    uint64_t at = o->pos;
    struct logw_buf h = {0};
    bag_op(&h, 0x05);
    bag_field(&h, "compression", "none", 4);
    bag_field_u(&h, "size", o->chunk.len, 4);
    logw_begin(&o->rec, 0);
    bag_record(&o->rec, &h, o->chunk.p, o->chunk.len);
    uint32_t conns = 0;
    for (int k = 0; k < LOGW_TOPICS; k++) {
        if (!o->in_chunk[k]) continue;
        bag_op(&h, 0x04);
        bag_field_u(&h, "ver", 1, 4);
        bag_field_u(&h, "conn", (uint64_t)k, 4);
        bag_field_u(&h, "count", o->in_chunk[k], 4);
        bag_record(&o->rec, &h, o->index[k].p, o->index[k].len);
        conns++;
    }
    struct logw_buf d = {0};                /* chunk info: (conn, count) per topic in the chunk */
    for (int k = 0; k < LOGW_TOPICS; k++)
        if (o->in_chunk[k]) {
            logw_uint(&d, (uint64_t)k, 4);
            logw_uint(&d, o->in_chunk[k], 4);
        }
    bag_op(&h, 0x06);
    bag_field_u(&h, "ver", 1, 4);
    bag_field_u(&h, "chunk_pos", at, 8);
    bag_field_t(&h, "start_time", o->chunk_t0);
    bag_field_t(&h, "end_time", o->chunk_t1);
    bag_field_u(&h, "count", conns, 4);
    bag_record(&o->tail, &h, d.p, d.len);
    int oom = h.oom | d.oom | o->rec.oom | o->tail.oom;
    free(h.p);
    free(d.p);
    if (oom) return err_set(e, "out of memory writing chunk %u of the bag", o->n_chunks);
    logw_write(o, o->rec.p, o->rec.len);
    o->n_chunks++;
    o->chunk.len = 0;
    for (int k = 0; k < LOGW_TOPICS; k++) o->in_chunk[k] = 0, o->index[k].len = 0;
    return 0;
}

static int bag_message(struct logw_out *o, int topic, uint64_t t_ns, const struct logw_buf *m, struct err *e)
{
    if (!o->announced[topic]) {            /* a connection record before its first message */
        bag_conn(&o->chunk, topic);
        o->announced[topic] = 1;
    }
    uint32_t held = 0;
    for (int k = 0; k < LOGW_TOPICS; k++) held += o->in_chunk[k];
    if (!held || t_ns < o->chunk_t0) o->chunk_t0 = t_ns;
    if (!held || t_ns > o->chunk_t1) o->chunk_t1 = t_ns;
    logw_uint(&o->index[topic], t_ns / 1000000000u, 4);
    logw_uint(&o->index[topic], t_ns % 1000000000u, 4);
    logw_uint(&o->index[topic], o->chunk.len, 4);
    o->in_chunk[topic]++;
    struct logw_buf h = {0};
    bag_op(&h, 0x02);
    bag_field_u(&h, "conn", (uint64_t)topic, 4);
    bag_field_t(&h, "time", t_ns);
    bag_record(&o->chunk, &h, m->p, m->len);
    int oom = h.oom | o->chunk.oom | o->index[topic].oom;
    free(h.p);
    if (oom) return err_set(e, "out of memory writing chunk %u of the bag", o->n_chunks);
    return o->chunk.len >= LOGW_CHUNK_BYTES ? bag_flush(o, e) : 0;
}

static int bag_end(struct logw_out *o, struct err *e)
{
    if (bag_flush(o, e)) return -1;
    uint64_t index_pos = o->pos;
    logw_begin(&o->rec, 0);
    for (int k = 0; k < LOGW_TOPICS; k++) bag_conn(&o->rec, k);
    if (o->rec.oom) return err_set(e, "out of memory writing the bag's connections");
    logw_write(o, o->rec.p, o->rec.len);
    logw_write(o, o->tail.p, o->tail.len);
    bag_header(o, index_pos);
    if (o->rec.oom) return err_set(e, "out of memory writing the bag header");
    if (fseek(o->f, BAG_HEADER_AT, SEEK_SET)) return err_set(e, "cannot seek back to the bag header");
    fwrite(o->rec.p, 1, o->rec.len, o->f);
    if (fseek(o->f, 0, SEEK_END)) return err_set(e, "cannot seek to the end of the bag");
    return 0;
}

const struct logw_container logw_bag = {bag_start, bag_message, bag_end};
