/* summary_op.c: the scenario's operating point carried to every cell of a
 * sweep folder (the PR_OP_* rows of the metric table, metrics/pr.h). */
#include "harness/results/summary.h"

#include <cjson/cJSON.h>
#include <math.h>
#include <stdio.h>
#include <string.h>

#include "harness/results/cell_set.h"
#include "harness/results/oppoint_json.h"
#include "harness/results/result_metrics.h"
#include "metrics/oppoint.h"

long summary_op_partner(const struct plan *p, size_t k)
{
    const struct plan_cell *c = &p->cells[k];
    long only = -1;
    size_t n = 0;
    if (!p->op.on) return -1;
    for (size_t j = 0; j < p->n_cells; j++) {
        const struct plan_cell *d = &p->cells[j];
        if (d->method != c->method || d->cond != p->op.tuned_on || (p->op.has_value && d->axis_value != p->op.value))
            continue;
        if (d->seed == c->seed) return (long)j;
        only = (long)j;
        n++;
    }
    return n == 1 ? only : -1;
}

static int so_load(const struct summary *s, size_t k, struct pr_set **set, struct oppoint_drive *d, struct err *e)
{
    char dir[4400];
    int n = snprintf(dir, sizeof dir, "%s/cells/%s", s->dir, s->p->cells[k].id);
    if (n < 0 || (size_t)n >= sizeof dir) return err_set(e, "cell %s: its folder path is too long", s->p->cells[k].id);
    if (cell_set_load(dir, &s->p->protocol, set, d, e)) return err_wrap(e, "cell %s", s->p->cells[k].id);
    return 0;
}

/* Cell k at the threshold chosen on cell b. */
static int so_cell(struct summary *s, size_t k, size_t b, struct err *e)
{
    const struct plan *p = s->p;
    struct summary_cell *c = &s->cells[k];
    struct pr_set *at = NULL, *ref = NULL;
    struct oppoint_drive dref;
    struct oppoint_result o;
    int rc = so_load(s, k, &at, &c->drive, e) || so_load(s, b, &ref, &dref, e) ? -1 : 0;
    if (!rc && oppoint_carry(ref, at, &p->op.rule, &dref, &c->drive, p->bootstrap, p->bootstrap_seed, 0.95, &o, e))
        rc = err_wrap(e, "cells %s and %s", p->cells[k].id, p->cells[b].id);
    if (!rc) {
        struct pr_scalars point;
        double lo[PR_N_METRICS], hi[PR_N_METRICS];
        result_metrics_oppoint(&o, &point, lo, hi);
        rc = result_metrics_replace_op(c->result, &point, lo, hi, e);
        cJSON_DeleteItemFromObjectCaseSensitive(c->result, "operating_point");
        cJSON *j = rc ? NULL : oppoint_json(&o, p->cells[b].id);
        if (!rc && !cJSON_AddItemToObject(c->result, "operating_point", j)) {
            cJSON_Delete(j);
            rc = err_set(e, "out of memory");
        }
        c->has_op = !rc;
        c->op_tau = o.tau;
    }
    pr_set_free(at);
    pr_set_free(ref);
    return rc;
}

/* Rows of an earlier run whose tuned_on cell is gone (failed, removed to
 * run again): null again, so nothing stale is judged or tabled. */
static int so_clear(struct summary_cell *c, struct err *e)
{
    if (!cJSON_GetObjectItemCaseSensitive(c->result, "operating_point")) return 0;
    struct pr_scalars none;
    double nan[PR_N_METRICS];
    for (int m = 0; m < PR_N_METRICS; m++) none.v[m] = nan[m] = NAN;
    cJSON_DeleteItemFromObjectCaseSensitive(c->result, "operating_point");
    c->op_cleared = 1;
    return result_metrics_replace_op(c->result, &none, nan, nan, e);
}

int summary_op_fill(struct summary *s, struct err *e)
{
    for (size_t k = 0; k < s->p->n_cells; k++) {
        long b = summary_op_partner(s->p, k);
        if (!s->cells[k].ok) continue;
        if (b < 0 || !s->cells[b].ok ? so_clear(&s->cells[k], e) : so_cell(s, k, (size_t)b, e)) return -1;
    }
    return 0;
}
