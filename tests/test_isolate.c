/* test_isolate.c: untrusted work in a child process: results come back
 * through shared memory; a crash, an abort, a hang and an unbounded
 * allocation each end in a clear error naming the unit, and the parent
 * carries on. */
#include <signal.h>
#include <stdint.h>
#include <stdlib.h>
#include "harness/run/isolate.h"
#include "tests/check.h"

enum { W_OK, W_SEGV, W_ABORT, W_HANG, W_ALLOC, W_FAIL };

static int work(void *ctx, void *shared, struct isolate_ctx *ic, struct err *e)
{
    int mode = *(int *)ctx;
    float *out = shared;
    for (size_t k = 0; k < 10; k++) {
        isolate_beat(ic, k);
        out[k] = (float)k * 2.0f;
        if (k == 3 && mode == W_SEGV) raise(SIGSEGV);
        if (k == 4 && mode == W_ABORT) abort();
        if (k == 5 && mode == W_HANG) for (;;) {}
        if (k == 6 && mode == W_FAIL) return err_set(e, "method 'x' on scan 6: refused");
        if (k == 7 && mode == W_ALLOC) {
            for (size_t got = 0; got < ((size_t)8 << 30); got += (size_t)64 << 20) {
                char *p = malloc((size_t)64 << 20);
                if (!p) return err_set(e, "method 'x' on scan 7: out of memory after %zu MiB", got >> 20);
                for (size_t b = 0; b < ((size_t)64 << 20); b += 4096) p[b] = 1;
            }
            return err_set(e, "allocated 8 GiB without hitting the limit");
        }
    }
    return 0;
}

static int run(int mode, float *buf, struct err *e)
{
    struct isolate_opts o = {"method 'x'", "scan", 1.0, (size_t)256 << 20};
    return isolate_run(&o, work, &mode, buf, e);
}

int main(void)
{
    struct err e;
    float *buf = isolate_shared_new(10 * sizeof(float), &e);
    CHECK(buf != NULL, "shared memory is mapped");
    if (!buf) return check_done();
    CHECK(run(W_OK, buf, &e) == 0, "work that finishes succeeds");
    CHECK(buf[9] == 18.0f && buf[1] == 2.0f, "the child's results arrive through shared memory");
    CHECK(run(W_SEGV, buf, &e) == -1, "a segfault in the child is an error, not a crash");
    CHECK_MSG(e.msg, "method 'x' on scan 3: the child died of signal 11", "the segfault names method, scan and signal");
    CHECK(run(W_ABORT, buf, &e) == -1, "an abort in the child is an error");
    CHECK_MSG(e.msg, "on scan 4: the child died of signal 6", "the abort names its scan and signal");
    CHECK(run(W_HANG, buf, &e) == -1, "a child that hangs is stopped");
    CHECK_MSG(e.msg, "on scan 5: no progress within 1 s (time-out)", "the hang names its scan and the time-out");
    CHECK(run(W_FAIL, buf, &e) == -1, "a failing child returns its error");
    CHECK_MSG(e.msg, "method 'x' on scan 6: refused", "the child's message passes through");
#if defined(__SANITIZE_ADDRESS__)
    /* AddressSanitizer reserves terabytes of address space before main, so
     * an address-space limit cannot bound the child in this build. */
    CHECK_SKIP("an unbounded allocation is stopped by the memory limit (not in an ASan build)");
#else
    CHECK(run(W_ALLOC, buf, &e) == -1, "an unbounded allocation is stopped by the memory limit");
    CHECK_MSG(e.msg, "scan 7", "the allocation failure names its scan");
#endif
    CHECK(run(W_OK, buf, &e) == 0, "the parent carries on after failed children");
    isolate_shared_free(buf, 10 * sizeof(float));
    return check_done();
}
