/* test_pool.c: the task pool gives the same results for any thread count. */
#include <stdint.h>
#include "harness/base/pool.h"
#include "tests/check.h"

static int square(void *ctx, size_t task, int worker, struct err *e)
{
    (void)worker;
    uint64_t *out = ctx;
    if (task == 777 && out[0] == 12345) return err_set(e, "task %zu failed", task);
    out[task + 1] = (uint64_t)task * task;
    return 0;
}

int main(void)
{
    static uint64_t a[1001], b[1001];
    struct err e;
    CHECK(!pool_run(1000, 1, square, a, &e), "one thread runs every task");
    CHECK(!pool_run(1000, 7, square, b, &e), "seven threads run every task");
    CHECK(!memcmp(a, b, sizeof a), "results do not depend on the thread count");
    CHECK(a[1000] == 999u * 999u, "each task writes its own slot");
    b[0] = 12345;
    CHECK(pool_run(1000, 4, square, b, &e) == -1, "a failing task fails the run");
    CHECK_MSG(e.msg, "task 777 failed", "the failing task's message is returned");
    CHECK(!pool_run(0, 4, square, a, &e), "zero tasks is not an error");
    return check_done();
}
