/* report_summary.c: the summary chart's numbers from the table: per
 * condition (one row each) and method, the mean and interval of F1max and
 * R@100P, and the method's value on its reference condition as the
 * baseline. */
#include "reports/report_int.h"

#include <math.h>
#include <stdlib.h>

#include "harness/base/progress.h"

static const int summary_metrics[] = {RDATA_F1MAX, RDATA_R100P};
#define SUMMARY_PANELS (sizeof summary_metrics / sizeof summary_metrics[0])

static double group_value(const struct rstat_table *t, size_t m, size_t c, int mk, int which)
{
    const struct rstat_group *g = rstat_find(t, m, c);
    if (!g || !g->n_seeds || !g->present[mk]) return NAN;
    return which == 0 ? g->mean[mk] : which == 1 ? g->lo[mk] : g->hi[mk];
}

int report_summary_plot(struct report_doc *d, struct plot_set *ps, struct progress *pg, struct err *e)
{
    const struct rstat_table *t = d->table;
    size_t nc = t->n_conds, nm = t->n_methods, n = SUMMARY_PANELS * nm;
    double *v = malloc(3 * nc * n * sizeof *v + 1);
    struct plot_dots *dots = malloc(n * sizeof *dots + 1);
    const char **rows = malloc(nc * sizeof *rows + 1);
    int rc = (!v || !dots || !rows) ? err_set(e, "out of memory for the summary chart") : 0;
    for (size_t c = 0; !rc && c < nc; c++) rows[c] = report_cond_name(t, c);
    for (size_t p = 0; !rc && p < SUMMARY_PANELS; p++)
        for (size_t m = 0; m < nm; m++) {
            int mk = summary_metrics[p];
            double *x = v + 3 * nc * (p * nm + m);
            for (size_t c = 0; c < nc; c++)
                for (int w = 0; w < 3; w++) x[w * nc + c] = group_value(t, m, c, mk, w);
            dots[p * nm + m] = (struct plot_dots){t->methods[m], rdata_metric_name(mk), m, x, x + nc, x + 2 * nc,
                                                  group_value(t, m, t->ref_cond[m], mk, 0)};
        }
    if (!rc && nc && nm)
        rc = plot_summary(ps, "summary-by-condition",
                          "Per condition: mean and 95% interval; dashed: the method's reference condition", rows,
                          nc, dots, SUMMARY_PANELS, nm, e);
    progress_add(pg, 1);
    free(v);
    free(dots);
    free(rows);
    return rc;
}
