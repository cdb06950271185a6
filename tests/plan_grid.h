/* plan_grid.h: a scenario text of a given grid size, for the tests and
 * benchmarks of grid expansion (tests/test_plan_scale.c, tests/bench_plan.c). */
#ifndef RV_TESTS_PLAN_GRID_H
#define RV_TESTS_PLAN_GRID_H

#include <stdlib.h>
#include "harness/base/textbuf.h"

/* A scenario of m methods (variants of one), c conditions of 4 axis values
 * and 2 seeds each, and one criterion per condition: m * c * 8 cells.
 * malloc'ed text, or NULL when out of memory. */
static char *plan_grid(int m, int c)
{
    size_t n = 4096 + (size_t)(m + c) * 256;
    char *t = malloc(n);
    if (!t) return NULL;
    struct textbuf b = textbuf_init(t, n);
    textbuf_put(&b, "{\"format\": \"revisit-sweep-1\", \"recordings\": {\"map\": \"r\"}, \"seeds\": 2,\n"
                " \"methods\": [{\"name\": \"scan-context\", \"variants\": [");
    for (int k = 0; k < m; k++) textbuf_put(&b, "%s{\"rings\": %d}", k ? ", " : "", k + 1);
    textbuf_put(&b, "]}],\n \"conditions\": [");
    for (int k = 0; k < c; k++)
        textbuf_put(&b, "%s{\"name\": \"c%d\", \"axis\": {\"stage\": \"sector\", \"key\": \"width\", "
                    "\"values\": [30, 60, 90, 120]}}", k ? ",\n  " : "", k);
    textbuf_put(&b, "],\n \"criteria\": [");
    for (int k = 0; k < c; k++)
        textbuf_put(&b, "%s{\"metric\": \"f1max\", \"condition\": \"c%d\", \"value\": 60, "
                    "\"comparator\": \">=\", \"threshold\": 0.5}", k ? ",\n  " : "", k);
    textbuf_put(&b, "]}\n");
    if (b.len >= n) { free(t); return NULL; }
    return t;
}

#endif
