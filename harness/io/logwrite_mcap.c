/* logwrite_mcap.c: the MCAP container of the log writer: records
 * "uint8 opcode, uint64 length, content" between two magics; ros2msg
 * schemas, CDR channels, messages at the top level, no summary section. */
#include <string.h>

#include "harness/io/logwrite_out.h"

#define MCAP_MAGIC "\x89MCAP0\r\n"

static void mcap_record(struct logw_out *o, uint8_t op, const struct logw_buf *c)
{
    unsigned char t[9];
    t[0] = op;
    for (int k = 0; k < 8; k++) t[1 + k] = (unsigned char)((uint64_t)c->len >> (8 * k));
    logw_write(o, t, 9);
    logw_write(o, c->p, c->len);
}

static int mcap_start(struct logw_out *o, struct err *e)
{
    struct logw_buf *c = &o->rec;
    logw_write(o, MCAP_MAGIC, 8);
    logw_begin(c, 0);
    logw_str(c, "ros2");
    logw_str(c, "revisit");
    mcap_record(o, 0x01, c);
    for (uint16_t k = 0; k < LOGW_TOPICS; k++) {
        logw_begin(c, 0);
        logw_uint(c, k + 1u, 2);
        logw_str(c, logw_topics[k].ros2);
        logw_str(c, "ros2msg");
        logw_str(c, logw_topics[k].ros2_def);   /* uint32 length + bytes, as a string */
        mcap_record(o, 0x03, c);
        logw_begin(c, 0);
        logw_uint(c, k, 2);
        logw_uint(c, k + 1u, 2);
        logw_str(c, logw_topics[k].topic);
        logw_str(c, "cdr");
        logw_uint(c, 0, 4);             /* empty metadata map */
        mcap_record(o, 0x04, c);
    }
    return c->oom ? err_set(e, "out of memory writing the MCAP schemas") : 0;
}

static int mcap_message(struct logw_out *o, int topic, uint64_t t_ns, const struct logw_buf *m, struct err *e)
{
    struct logw_buf *c = &o->rec;
    logw_begin(c, 0);
    logw_uint(c, (uint64_t)topic, 2);
    logw_uint(c, o->seq++, 4);
    logw_uint(c, t_ns, 8);
    logw_uint(c, t_ns, 8);
    logw_raw(c, m->p, m->len);
    if (c->oom) return err_set(e, "out of memory writing message %u of the MCAP file", o->seq - 1);
    mcap_record(o, 0x05, c);
    return 0;
}

static int mcap_end(struct logw_out *o, struct err *e)
{
    struct logw_buf *c = &o->rec;
    (void)e;
    logw_begin(c, 0);
    logw_uint(c, 0, 4);                 /* data end: no CRC */
    mcap_record(o, 0x0f, c);
    logw_begin(c, 0);
    logw_uint(c, 0, 8);                 /* footer: no summary section */
    logw_uint(c, 0, 8);
    logw_uint(c, 0, 4);
    mcap_record(o, 0x02, c);
    logw_write(o, MCAP_MAGIC, 8);
    return 0;
}

const struct logw_container logw_mcap = {mcap_start, mcap_message, mcap_end};
