/* fuzz_pcd.c: the pcd scan reader on arbitrary bytes must return a clean
 * error or a cloud with finite coordinates, never crash or leak. */
#include <math.h>
#include "harness/base/cloud.h"
#include "harness/io/scan_io.h"
#include "tests/fuzz_util.h"

int LLVMFuzzerTestOneInput(const uint8_t *data, size_t size)
{
    char path[256];
    if (!fuzz_file(path, sizeof path, "scan.pcd", data, size)) return 0;
    struct cloud c;
    cloud_init(&c);
    struct err e;
    size_t dropped = 0;
    if (!scan_read_finite(path, SCAN_PCD, &c, &dropped, &e)) {
        for (size_t k = 0; k < c.n; k++)
            if (!isfinite(CLOUD_X(&c, k))) __builtin_trap();  /* scan_read_finite drops them */
    }
    cloud_free(&c);
    return 0;
}
