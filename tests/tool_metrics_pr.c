/* tool_metrics_pr.c: a driver for tests/xcheck_metrics_sklearn.py.
 * stdin:  "N N_MAP COUNTING" (COUNTING 0 strict, 1 lenient), then N lines
 *         "D1 CLASS REVISIT FIRST_POS" (D1 "inf" for no candidate; CLASS as
 *         enum gt_class).
 * stdout: one "curve TAU PRECISION RECALL" line per point, ascending, then
 *         one "scalar NAME VALUE" line per scalar, all with 17 digits. */
#include <stdio.h>
#include <stdlib.h>

#include "metrics/pr.h"

int main(void)
{
    size_t n, n_map;
    int counting;
    if (scanf("%zu %zu %d", &n, &n_map, &counting) != 3) return 2;
    struct pr_outcome *o = malloc((n ? n : 1) * sizeof *o);
    if (!o) return 2;
    for (size_t i = 0; i < n; i++) {
        int cls, rev, first;
        if (scanf("%lf %d %d %d", &o[i].d1, &cls, &rev, &first) != 4) return 2;
        o[i].query = o[i].slot = i;
        o[i].cls = (unsigned char)cls;
        o[i].revisit = (unsigned char)rev;
        o[i].first_pos = first;
    }
    struct pr_set *s = NULL;
    struct pr_curve *c = NULL;
    struct err e = {{0}};
    if (pr_set_from_outcomes(o, n, n_map, counting ? PROTOCOL_LENIENT : PROTOCOL_STRICT, &s, &e) ||
        pr_curve_build(s, &c, &e)) {
        fprintf(stderr, "%s\n", e.msg);
        return 2;
    }
    for (size_t k = 0; k < c->n; k++)
        printf("curve %.17g %.17g %.17g\n", c->threshold[k], c->precision[k], c->recall[k]);
    struct pr_scalars v;
    pr_scalars_compute(s, NULL, &v);
    for (int m = 0; m < PR_N_METRICS; m++)
        printf("scalar %s %.17g\n", pr_metric_name((enum pr_metric)m), v.v[m]);
    pr_curve_free(c);
    pr_set_free(s);
    free(o);
    return 0;
}
