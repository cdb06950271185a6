/* test_plan_scale.c: expanding a scenario's grid costs about as many key
 * comparisons per cell at 8,192 cells as at 512 (names and cell ids are
 * checked for repeats through a set, not against every earlier one), and
 * the expansion itself is the fixed order with the ids it always had.
 *
 * The comparisons are counted by this program's own strcmp, strncmp and
 * memcmp, which take the place of the C library's for every call made from
 * the harness code linked in (and from cJSON): the count is what the
 * loader really does, not a figure it reports about itself.
 */
#include <stdio.h>
#include <stdlib.h>
#include <string.h>

#include "harness/plan/plan.h"
#include "tests/check.h"
#include "tests/plan_grid.h"

static unsigned long long n_compare;

int strcmp(const char *a, const char *b)
{
    n_compare++;
    while (*a && *a == *b) a++, b++;
    return (unsigned char)*a - (unsigned char)*b;
}

int strncmp(const char *a, const char *b, size_t n)
{
    n_compare++;
    for (; n && *a && *a == *b; n--) a++, b++;
    return n ? (unsigned char)*a - (unsigned char)*b : 0;
}

int memcmp(const void *x, const void *y, size_t n)
{
    const unsigned char *a = x, *b = y;
    n_compare++;
    for (; n; n--, a++, b++)
        if (*a != *b) return *a - *b;
    return 0;
}

/* Load the grid; the comparisons counted while loading into *cmp. */
static int load(struct plan *p, int m, int c, unsigned long long *cmp)
{
    char *t = plan_grid(m, c);
    struct err e;
    if (!t) return -1;
    unsigned long long before = n_compare;
    int rc = plan_parse(p, t, strlen(t), "grid.json", &e);
    *cmp = n_compare - before;
    if (rc) fprintf(stderr, "%s\n", e.msg);
    free(t);
    return rc;
}

/* Every cell where the fixed order puts it, with its id, found by it. */
static int order_ok(const struct plan *p, int m, int c)
{
    static const char *const widths[] = {"30", "60", "90", "120"};
    size_t k = 0;
    for (int i = 0; i < m; i++)
        for (int j = 0; j < c; j++)
            for (int v = 0; v < 4; v++)
                for (int s = 1; s <= 2; s++, k++) {
                    char id[PLAN_ID_MAX];
                    snprintf(id, sizeof id, "scan-context_rings-%d__c%d_width-%s__s%d", i + 1, j, widths[v], s);
                    const struct plan_cell *x = &p->cells[k];
                    if (strcmp(x->id, id) || x->method != (size_t)i || x->cond != (size_t)j ||
                        x->seed != (uint64_t)s || plan_find_cell(p, id) != (long)k) {
                        fprintf(stderr, "cell %zu: %s, expected %s\n", k, x->id, id);
                        return 0;
                    }
                }
    return k == p->n_cells && plan_find_cell(p, "scan-context_rings-1__c0_width-45__s1") == -1;
}

int main(void)
{
    struct plan small, big;
    unsigned long long c_small = 0, c_big = 0;
    int rc_small = load(&small, 8, 8, &c_small), rc_big = load(&big, 32, 32, &c_big);
    CHECK(rc_small == 0 && small.n_cells == 512, "8 variants x 8 conditions x 4 values x 2 seeds: 512 cells");
    CHECK(rc_big == 0 && big.n_cells == 8192, "32 x 32 x 4 x 2: 8,192 cells");
    CHECK(!rc_small && order_ok(&small, 8, 8), "512 cells in the fixed order, each found by its id");
    CHECK(!rc_big && order_ok(&big, 32, 32), "8,192 cells in the fixed order, each found by its id");
    /* 16 times the cells (and 4 times the methods, conditions, criteria):
     * linear work grows 16 times, n log n about 23 times, a check of each
     * name against every earlier one 256 times. */
    double growth = c_small ? (double)c_big / (double)c_small : 0;
    fprintf(stderr, "comparisons: %llu for 512 cells, %llu for 8,192 (x%.1f)\n", c_small, c_big, growth);
    CHECK(growth > 4 && growth < 32, "comparisons grow with the cells, not with their square");
    plan_free(&small);
    plan_free(&big);
    return check_done();
}
