/* bench_plan.c: loading and expanding a scenario of 100,000 cells, against
 * one of 10,000 cells measured in the same run.
 *   plan_100k: CPU seconds of plan_parse (read, check, expand, index the
 *              ids) for 125 variants x 100 conditions x 4 axis values x 2
 *              seeds, and the cost per cell as a ratio to the cost per cell
 *              of 25 x 50 x 4 x 2.  Target: ratio < 2 (the work is linear
 *              in the cells; a check of each id against every earlier one
 *              made it about 10).
 */
#include <stdio.h>
#include <string.h>
#include <time.h>

#include "harness/plan/plan.h"
#include "tests/plan_grid.h"

/* CPU seconds of this thread (the machine is shared). */
static double cpu_now(void)
{
    struct timespec ts;
    clock_gettime(CLOCK_THREAD_CPUTIME_ID, &ts);
    return (double)ts.tv_sec + 1e-9 * (double)ts.tv_nsec;
}

/* Best of three loads of an m x c grid: CPU seconds, or -1 on failure. */
static double best_load(int m, int c, size_t *cells)
{
    char *t = plan_grid(m, c);
    if (!t) return -1;
    double best = -1;
    for (int r = 0; r < 3; r++) {
        struct plan p;
        struct err e;
        double t0 = cpu_now();
        int rc = plan_parse(&p, t, strlen(t), "grid.json", &e);
        double dt = cpu_now() - t0;
        if (rc) {
            fprintf(stderr, "bench_plan: %s\n", e.msg);
            best = -1;
            break;
        }
        *cells = p.n_cells;
        plan_free(&p);
        if (best < 0 || dt < best) best = dt;
    }
    free(t);
    return best;
}

int main(void)
{
    size_t n_ref = 0, n_big = 0;
    double t_ref = best_load(25, 50, &n_ref), t_big = best_load(125, 100, &n_big);
    if (t_ref <= 0 || t_big <= 0 || n_ref != 10000 || n_big != 100000) {
        printf("{\"bench\":\"plan_100k\",\"error\":\"the grids did not load\"}\n");
        return 1;
    }
    double ratio = (t_big / (double)n_big) / (t_ref / (double)n_ref);
    printf("{\"bench\":\"plan_100k\",\"cells\":%zu,\"cpu_s\":%.3f,\"ref_cells\":%zu,\"ref_cpu_s\":%.4f,"
           "\"per_cell_ratio\":%.2f,\"target_ratio\":2}\n", n_big, t_big, n_ref, t_ref, ratio);
    return 0;
}
