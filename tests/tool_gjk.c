/* tool_gjk.c: hull distances for the scipy cross-check (tests/xcheck_gjk.py).
 * Reads cases from stdin, each "NA NB" then NA and NB points as x y z;
 * prints one distance per case. */
#include <stdio.h>
#include <stdlib.h>
#include "harness/plugins/sop/gjk.c"

int main(void)
{
    int na, nb;
    while (scanf("%d %d", &na, &nb) == 2) {
        if (na < 1 || nb < 1 || na > 100000 || nb > 100000)
            return fprintf(stderr, "tool_gjk: bad sizes %d %d\n", na, nb), 2;
        double *a = malloc(sizeof *a * 3 * (size_t)na), *b = malloc(sizeof *b * 3 * (size_t)nb);
        if (!a || !b)
            return 2;
        for (int k = 0; k < 3 * na; k++)
            if (scanf("%lf", &a[k]) != 1)
                return 2;
        for (int k = 0; k < 3 * nb; k++)
            if (scanf("%lf", &b[k]) != 1)
                return 2;
        printf("%.17g\n", gjk_distance(a, na, b, nb));
        free(a);
        free(b);
    }
    return 0;
}
