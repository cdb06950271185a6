/* fuzz_external.c: the host side of the external-program protocol.  The
 * "program" is /bin/cat printing the fuzz input as its whole answer (hello,
 * then descriptor or error frames); the host must refuse garbage with a
 * clear error, never crash, hang or read past a frame. */
#include <stdlib.h>
#include "harness/run/external.h"
#include "tests/fuzz_util.h"

int LLVMFuzzerTestOneInput(const uint8_t *data, size_t size)
{
    char path[256];
    if (!fuzz_file(path, sizeof path, "answer.bin", data, size)) return 0;
    const char *args[] = {path};
    struct external *x = NULL;
    struct err e;
    if (external_start(&x, "/bin/cat", args, 1, 2.0, &e)) return 0;
    float pts[8] = {1, 2, 3, 0.5f, 4, 5, 6, 0.25f};
    struct rv_scan s = {2, pts, NULL, NULL, 0.0, 0, 0};
    float *desc = calloc(x->dim ? x->dim : 1, sizeof *desc);
    for (uint32_t k = 0; desc && k < 3; k++) {
        s.index = k;
        if (external_describe(x, &s, desc, &e)) break;
    }
    free(desc);
    external_stop(x);
    return 0;
}
