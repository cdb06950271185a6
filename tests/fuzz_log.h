/* fuzz_log.h: shared by tests/fuzz_bag.c and tests/fuzz_mcap.c: open a log
 * written from the fuzz input and hand every message to the decoder its
 * topic's type names (cloud, pose, tf). */
#ifndef RV_FUZZ_LOG_H
#define RV_FUZZ_LOG_H

#include "harness/io/logfile.h"
#include "harness/io/rosmsg.h"
#include "tests/fuzz_util.h"

static int fuzz_log_tf(void *ctx, const struct rosmsg_header *h, const char *child, const struct pose *p,
                       struct err *e)
{
    (void)ctx; (void)h; (void)child; (void)p; (void)e;
    return 0;
}

static int fuzz_log_msg(void *ctx, const struct logf_msg *m, struct err *e)
{
    struct cloud *c = ctx;
    struct wire w;
    struct rosmsg_header h;
    struct pose p;
    char child[ROSMSG_NAME_MAX];
    if (wire_begin(&w, m->data, m->len, m->topic->wire, e)) return 0;
    enum rosmsg_type t = rosmsg_type_of(m->topic->type);
    if (t == ROSMSG_CLOUD) rosmsg_cloud(&w, &h, c, e);
    else if (t == ROSMSG_TF) rosmsg_tf(&w, fuzz_log_tf, NULL, e);
    else if (t != ROSMSG_OTHER) rosmsg_pose(&w, t, &h, &p, child, e);
    return 0;
}

static inline int fuzz_log(const char *name, const uint8_t *data, size_t size)
{
    char path[256];
    if (!fuzz_file(path, sizeof path, name, data, size)) return 0;
    struct logf l;
    struct err e;
    struct cloud c;
    cloud_init(&c);
    if (!logf_open(&l, path, &e)) {
        logf_each(&l, fuzz_log_msg, &c, &e);
        logf_close(&l);
    }
    cloud_free(&c);
    return 0;
}

#endif
