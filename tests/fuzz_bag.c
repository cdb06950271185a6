/* fuzz_bag.c: the ROS 1 bag reader and the message decoders on arbitrary
 * bytes: a clean error or a full walk, never a crash, a hang or a leak. */
#include "tests/fuzz_log.h"

int LLVMFuzzerTestOneInput(const uint8_t *data, size_t size) { return fuzz_log("log.bag", data, size); }
