/* fuzz_cloud.c: the PointCloud2 decoder on arbitrary message bytes, as ROS 1
 * serialisation and as CDR (the first byte picks): a clean error or a cloud
 * of exactly height x width points, never a crash. */
#include "harness/io/rosmsg.h"
#include "tests/fuzz_util.h"

int LLVMFuzzerTestOneInput(const uint8_t *data, size_t size)
{
    if (size < 1) return 0;
    struct wire w;
    struct err e;
    struct rosmsg_header h;
    struct cloud c;
    cloud_init(&c);
    if (!wire_begin(&w, data + 1, size - 1, data[0] & 1 ? WIRE_CDR : WIRE_ROS1, &e) &&
        !rosmsg_cloud(&w, &h, &c, &e) && c.n > CLOUD_MAX_POINTS)
        __builtin_trap();
    cloud_free(&c);
    return 0;
}
