/* bench_report.c: the report's per-query outcomes (hash grid over the map
 * poses) against all pairs, measured in the same run on the same route.
 * One JSON line per figure on stdout. */
#include <math.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>
#include <time.h>

#include "reports/rstat.h"

static double cpu_now(void)
{
    struct timespec ts;
    clock_gettime(CLOCK_PROCESS_CPUTIME_ID, &ts);
    return (double)ts.tv_sec + 1e-9 * (double)ts.tv_nsec;
}

/* A route of laps around a 400 m x 200 m block, a scan every 1.5 m at 10 m/s,
 * each lap shifted a little sideways, so every place is revisited. */
static void route(struct rdata_track *t, size_t n)
{
    t->n = n;
    t->has = malloc(n);
    t->t = malloc(n * sizeof(double)); t->x = malloc(n * sizeof(double));
    t->y = malloc(n * sizeof(double)); t->z = calloc(n, sizeof(double));
    const double per = 1200.0;
    for (size_t i = 0; i < n; i++) {
        double s = fmod(1.5 * (double)i, per), lap = floor(1.5 * (double)i / per);
        double off = fmod(lap * 0.7, 2.0);
        double x, y;
        if (s < 400) { x = s; y = off; }
        else if (s < 600) { x = 400 - off; y = s - 400; }
        else if (s < 1000) { x = 1000 - s; y = 200 - off; }
        else { x = off; y = 1200 - s; }
        t->has[i] = 1; t->t[i] = 0.15 * (double)i; t->x[i] = x; t->y[i] = y;
    }
}

/* Revisits among every step-th query, by checking every pair for the
 * nearest true candidate (what the grid finds, for the revisit kind). */
static size_t all_pairs(const struct rdata_track *m, const struct protocol *pr, size_t step)
{
    size_t rev = 0;
    for (size_t i = 0; i < m->n; i += step) {
        double best = INFINITY;
        for (size_t j = 0; j < m->n; j++) {
            double d = hypot(m->x[i] - m->x[j], m->y[i] - m->y[j]);
            if (m->t[j] <= m->t[i] - pr->exclusion_s && d <= pr->r_pos_m && d < best) best = d;
        }
        rev += (size_t)isfinite(best);
    }
    return rev;
}

int main(void)
{
    const size_t n = 40000, n_ref = 2000;
    struct rdata_poses p;
    memset(&p, 0, sizeof p);
    route(&p.map, n);
    struct rdata_queries q = {n, malloc(n * sizeof(struct rdata_top1))};
    for (size_t i = 0; i < n; i++) q.q[i] = (struct rdata_top1){(long)i, (long)(i / 2), 0.3};
    struct protocol pr;
    protocol_defaults(&pr);
    struct rstat_outcomes o;
    struct err e;
    double t0 = cpu_now();
    if (rstat_outcomes(&p, &q, &pr, 0.5, &o, &e)) { printf("{\"bench\":\"report_outcomes\",\"error\":\"%s\"}\n", e.msg); return 1; }
    double t_grid = cpu_now() - t0;
    size_t rev = 0;
    const size_t step = n / n_ref;
    for (size_t i = 0; i < n; i += step) rev += (size_t)o.o[i].revisit;
    t0 = cpu_now();
    size_t rev_ref = all_pairs(&p.map, &pr, step);
    double t_ref = (cpu_now() - t0) * (double)step;  /* scaled to all queries */
    printf("{\"bench\":\"report_outcomes\",\"queries\":%zu,\"cpu_seconds\":%.4f,\"reference\":\"all pairs on "
           "every %zu-th query, scaled to %zu\",\"reference_cpu_seconds\":%.3f,\"ratio\":%.1f,"
           "\"revisits_sampled\":%zu,\"reference_revisits_sampled\":%zu}\n",
           n, t_grid, step, n, t_ref, t_ref / t_grid, rev, rev_ref);
    rstat_outcomes_free(&o);
    free(q.q);
    rdata_poses_free(&p);
    return rev == rev_ref ? 0 : 1;
}
