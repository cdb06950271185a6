/* fuzz_queries.c: the per-query results CSV reader on arbitrary bytes. */
#include "harness/results/queries_csv.h"
#include "tests/fuzz_util.h"

int LLVMFuzzerTestOneInput(const uint8_t *data, size_t size)
{
    char path[256];
    if (!fuzz_file(path, sizeof path, "queries.csv", data, size)) return 0;
    struct queries_csv q;
    struct err e;
    if (!queries_csv_read(path, &q, &e)) queries_csv_free(&q);
    return 0;
}
