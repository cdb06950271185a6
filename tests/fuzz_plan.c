/* fuzz_plan.c: the sweep scenario file loader on arbitrary text. */
#include <string.h>
#include "harness/plan/plan.h"
#include "tests/fuzz_util.h"

int LLVMFuzzerTestOneInput(const uint8_t *data, size_t size)
{
    struct plan p;
    memset(&p, 0, sizeof p);
    struct err e;
    if (!plan_parse(&p, (const char *)data, size, "/tmp/fuzz-scenario.json", &e)) plan_free(&p);
    else plan_free(&p);
    return 0;
}
