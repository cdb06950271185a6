/* fuzz_mcap.c: the MCAP reader and the CDR message decoders on arbitrary
 * bytes: a clean error or a full walk, never a crash, a hang or a leak. */
#include "tests/fuzz_log.h"

int LLVMFuzzerTestOneInput(const uint8_t *data, size_t size) { return fuzz_log("log.mcap", data, size); }
