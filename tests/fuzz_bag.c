/* fuzz_bag.c: the ROS 1 bag reader on arbitrary bytes, every message handed
 * to the decoder its topic's type names (cloud, pose, tf): a clean error or
 * a full walk, never a crash, a hang or a leak. */
#include "harness/io/logfile.h"
#include "harness/io/rosmsg.h"
#include "tests/fuzz_util.h"

static int fuzz_tf(void *ctx, const struct rosmsg_header *h, const char *child, const struct pose *p,
                   struct err *e)
{
    (void)ctx; (void)h; (void)child; (void)p; (void)e;
    return 0;
}

static int fuzz_msg(void *ctx, const struct logf_msg *m, struct err *e)
{
    struct cloud *c = ctx;
    struct wire w;
    struct rosmsg_header h;
    struct pose p;
    char child[ROSMSG_NAME_MAX];
    if (wire_begin(&w, m->data, m->len, m->topic->wire, e)) return 0;
    enum rosmsg_type t = rosmsg_type_of(m->topic->type);
    if (t == ROSMSG_CLOUD) rosmsg_cloud(&w, &h, c, e);
    else if (t == ROSMSG_TF) rosmsg_tf(&w, fuzz_tf, NULL, e);
    else if (t != ROSMSG_OTHER) rosmsg_pose(&w, t, &h, &p, child, e);
    return 0;
}

int LLVMFuzzerTestOneInput(const uint8_t *data, size_t size)
{
    char path[256];
    if (!fuzz_file(path, sizeof path, "log.bag", data, size)) return 0;
    struct logf l;
    struct err e;
    struct cloud c;
    cloud_init(&c);
    if (!logf_open(&l, path, &e)) {
        logf_each(&l, fuzz_msg, &c, &e);
        logf_close(&l);
    }
    cloud_free(&c);
    return 0;
}
