/* fuzz_poses.c: the pose readers (csv, text, matrix with a times file). The
 * first byte picks the layout; for matrix the rest is split at the first
 * 0xff byte into the matrix file and the times file. */
#include <stdlib.h>
#include "harness/io/poses_io.h"
#include "tests/fuzz_util.h"

int LLVMFuzzerTestOneInput(const uint8_t *data, size_t size)
{
    if (size < 1) return 0;
    static const enum poses_layout layouts[] = {POSES_AUTO, POSES_CSV, POSES_TEXT, POSES_MATRIX};
    enum poses_layout lay = layouts[data[0] % 4];
    data++, size--;
    char path[256], tpath[256];
    const char *times = NULL;
    size_t cut = size;
    if (lay == POSES_MATRIX) {
        const uint8_t *ff = memchr(data, 0xff, size);
        if (ff) {
            cut = (size_t)(ff - data);
            times = fuzz_file(tpath, sizeof tpath, "times.txt", ff + 1, size - cut - 1);
        }
    }
    if (!fuzz_file(path, sizeof path, "poses.txt", data, cut)) return 0;
    struct poses ps;
    struct err e;
    if (!poses_read(path, lay, times, &ps, &e)) poses_free(&ps);
    return 0;
}
