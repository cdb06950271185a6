/* fuzz_cdr.c: the pose and transform decoders on arbitrary message bytes;
 * the first byte picks the encoding (bit 0: CDR or ROS 1) and the message
 * type (Odometry, PoseStamped, PoseWithCovarianceStamped, TFMessage). */
#include "harness/io/rosmsg.h"
#include "tests/fuzz_util.h"

static int fuzz_tf(void *ctx, const struct rosmsg_header *h, const char *child, const struct pose *p,
                   struct err *e)
{
    (void)ctx; (void)h; (void)child; (void)e;
    if (!(p->q[3] >= 0)) __builtin_trap();  /* poses are built normalised, w >= 0 */
    return 0;
}

int LLVMFuzzerTestOneInput(const uint8_t *data, size_t size)
{
    if (size < 1) return 0;
    static const enum rosmsg_type types[4] = {ROSMSG_ODOMETRY, ROSMSG_POSE, ROSMSG_POSE_COV, ROSMSG_TF};
    enum rosmsg_type t = types[(data[0] >> 1) & 3];
    struct wire w;
    struct err e;
    struct rosmsg_header h;
    struct pose p;
    char child[ROSMSG_NAME_MAX];
    if (wire_begin(&w, data + 1, size - 1, data[0] & 1 ? WIRE_CDR : WIRE_ROS1, &e)) return 0;
    if (t == ROSMSG_TF) rosmsg_tf(&w, fuzz_tf, NULL, &e);
    else if (!rosmsg_pose(&w, t, &h, &p, child, &e) && !(p.q[3] >= 0)) __builtin_trap();
    return 0;
}
