/* summary_verdict.c: judge acceptance criteria on a sweep folder; paired
 * differences are bootstrapped on the queries both cells share. */
#include "harness/results/summary.h"

#include <cjson/cJSON.h>
#include <math.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>
#include <sys/stat.h>

#include "harness/base/fileio.h"
#include "harness/base/json_file.h"
#include "harness/results/cells.h"
#include "harness/results/format.h"
#include "harness/results/cell_set.h"
#include "metrics/boot.h"
#include "metrics/gt.h"
#include "metrics/oppoint.h"
#include "metrics/pr.h"

#define SV_VERDICTS_MAX ((size_t)1 << 30)

/* The scored query set of cell k, rebuilt from its folder (cell_set.h). */
static int sv_cell_set(const struct summary *s, size_t k, struct pr_set **out, struct oppoint_drive *drive,
                       struct err *e)
{
    char dir[4400];
    int n = snprintf(dir, sizeof dir, "%s/cells/%s", s->dir, s->p->cells[k].id);
    if (n < 0 || (size_t)n >= sizeof dir) return err_set(e, "cell %s: its folder path is too long", s->p->cells[k].id);
    if (cell_set_load(dir, &s->p->protocol, out, drive, e)) return err_wrap(e, "cell %s", s->p->cells[k].id);
    const struct summary_cell *c = &s->cells[k];
    if (c->has_op) {   /* paired differences of the PR_OP_* metrics at the cell's own threshold */
        (*out)->op_tau = c->op_tau;
        (*out)->km = c->drive.km;
        (*out)->hours = c->drive.hours;
    }
    return 0;
}

/* Cells of method m, condition cond, at the axis value when has: indices
 * into *out (malloc'ed), count returned; (size_t)-1 when out of memory. */
static size_t sv_group(const struct plan *p, size_t m, size_t cond, int has, double value, size_t **out)
{
    size_t n = 0;
    *out = malloc((p->n_cells + 1) * sizeof **out);
    if (!*out) return (size_t)-1;
    for (size_t k = 0; k < p->n_cells; k++) {
        const struct plan_cell *c = &p->cells[k];
        if (c->method == m && c->cond == cond && (!has || c->axis_value == value)) (*out)[n++] = k;
    }
    return n;
}

/* Every cell of the group must be done and ok. */
static int sv_ready(const struct summary *s, const size_t *g, size_t n, struct err *e)
{
    for (size_t j = 0; j < n; j++) {
        const struct summary_cell *c = &s->cells[g[j]];
        if (!c->done)
            return err_at(e, s->dir, 0, "incomplete sweep: cell %s has no result, expected a finished sweep "
                          "(run 'revisit sweep' again, or merge the shards)", s->p->cells[g[j]].id);
        if (!c->ok) {
            const cJSON *m = cJSON_GetObjectItemCaseSensitive(c->result, "error");
            return err_at(e, s->dir, 0, "cell %s failed (%s), expected a result to judge", s->p->cells[g[j]].id,
                          cJSON_IsString(m) ? m->valuestring : "no message");
        }
    }
    return 0;
}

/* A score at the scenario's operating point also needs, for each cell, the
 * cell its threshold is chosen on, done and ok. */
static int sv_ready_op(const struct summary *s, const struct plan_criterion *r, const size_t *g, size_t n,
                       struct err *e)
{
    int m = pr_metric_find(r->metric);
    if (r->tuned_on >= 0 || m < 0 || !pr_metric_def((enum pr_metric)m)->at_op) return 0;
    for (size_t j = 0; j < n; j++) {
        long b = summary_op_partner(s->p, g[j]);
        if (b < 0)
            return err_at(e, s->p->path, 0, "cell %s has no cell of condition '%s' with its method and seed to "
                          "choose the operating threshold on, expected one (or a tuned_on condition with one seed)",
                          s->p->cells[g[j]].id, s->p->conds[s->p->op.tuned_on].name);
        size_t bb = (size_t)b;
        if (sv_ready(s, &bb, 1, e)) return -1;
    }
    return 0;
}

/* Mean over seeds and the cautious interval of a plain metric. */
static int sv_plain(const struct summary *s, const struct plan_criterion *r, const size_t *g, size_t n,
                    struct summary_verdict *v, struct err *e)
{
    double sum = 0, lo = INFINITY, hi = -INFINITY;
    for (size_t j = 0; j < n; j++) {
        double x, l, h;
        if (summary_metric(s, g[j], r->metric, &x, &l, &h))
            return err_at(e, s->dir, 0, "cell %s has no metric '%s'", s->p->cells[g[j]].id, r->metric);
        sum += x;
        lo = fmin(lo, isnan(l) ? x : l);
        hi = fmax(hi, isnan(h) ? x : h);
    }
    v->value = sum / (double)n;
    v->lo = lo;
    v->hi = hi;
    return 0;
}

/* Paired difference of one cell against its baseline cell. */
static int sv_pair(const struct summary *s, size_t a, size_t b, int m, double *d, double *lo, double *hi,
                   struct err *e)
{
    struct pr_set *sa = NULL, *sb = NULL;
    int rc = sv_cell_set(s, a, &sa, NULL, e) || sv_cell_set(s, b, &sb, NULL, e) ? -1 : 0;
    if (!rc && s->p->bootstrap > 0) {
        struct boot_paired bp;
        rc = boot_paired_diff(sa, sb, s->p->bootstrap, s->p->bootstrap_seed, 0.95, 1, &bp, e);
        if (rc) err_wrap(e, "cells %s and %s", s->p->cells[a].id, s->p->cells[b].id);
        else { *d = bp.diff[m]; *lo = bp.lo[m]; *hi = bp.hi[m]; }
    } else if (!rc) {
        struct pr_scalars xa, xb;
        pr_scalars_compute(sa, NULL, &xa);
        pr_scalars_compute(sb, NULL, &xb);
        *d = *lo = *hi = xa.v[m] - xb.v[m];
    }
    pr_set_free(sa);
    pr_set_free(sb);
    return rc;
}

/* The cell of base[0..nb) with cell g's seed (base[0] when there is only
 * one); role and cond name the reference in the error ("baseline",
 * "tuned_on"). */
static int sv_same_seed(const struct summary *s, size_t g, const size_t *base, size_t nb, const char *role,
                        size_t cond, size_t *out, struct err *e)
{
    size_t b = 0;
    while (nb > 1 && b < nb && s->p->cells[base[b]].seed != s->p->cells[g].seed) b++;
    if (b == nb)
        return err_at(e, s->p->path, 0, "%s '%s' has no seed %llu to pair with cell %s", role,
                      s->p->conds[cond].name, (unsigned long long)s->p->cells[g].seed, s->p->cells[g].id);
    *out = base[b];
    return 0;
}

static int sv_paired(const struct summary *s, const struct plan_criterion *r, const size_t *g, size_t n,
                     const size_t *base, size_t nb, struct summary_verdict *v, struct err *e)
{
    int m = pr_metric_find(r->metric);
    if (m < 0) return err_at(e, s->p->path, 0, "metric '%s' has no paired bootstrap, expected one of the result keys", r->metric);
    double sum = 0, lo = INFINITY, hi = -INFINITY;
    for (size_t j = 0; j < n; j++) {
        size_t b;
        if (sv_same_seed(s, g[j], base, nb, "baseline", r->baseline, &b, e)) return -1;
        double d, l, h;
        if (sv_pair(s, g[j], b, m, &d, &l, &h, e)) return -1;
        sum += d;
        lo = fmin(lo, l);
        hi = fmax(hi, h);
    }
    v->value = sum / (double)n;
    v->lo = lo;
    v->hi = hi;
    return 0;
}

/* Score index of an operating-point metric name, or -1. */
static int sv_op_index(const char *name)
{
    for (int k = 0; k < OPP_N; k++)
        if (!strcmp(oppoint_score_name((enum oppoint_score_id)k), name)) return k;
    return -1;
}

/* One cell at the threshold chosen on its tuned_on cell: the score (or the
 * difference against the tuned_on cell) with its interval, and the threshold. */
static int sv_op_pair(const struct summary *s, const struct plan_criterion *r, size_t a, size_t b, double out[6],
                      struct err *e)
{
    struct pr_set *sa = NULL, *sb = NULL;
    struct oppoint_drive da, db;
    struct oppoint_result o;
    int k = sv_op_index(r->metric), diff = r->target >= PLAN_DIFF;
    int rc = sv_cell_set(s, a, &sa, &da, e) || sv_cell_set(s, b, &sb, &db, e) ? -1 : 0;
    if (!rc && oppoint_carry(sb, sa, &r->op, &db, &da, s->p->bootstrap, s->p->bootstrap_seed, 0.95, &o, e))
        rc = err_wrap(e, "cells %s and %s", s->p->cells[a].id, s->p->cells[b].id);
    if (!rc) {
        out[0] = diff ? o.diff[k] : o.at.v[k];
        out[1] = diff ? o.diff_lo[k] : o.lo[k];
        out[2] = diff ? o.diff_hi[k] : o.hi[k];
        out[3] = o.tau;
        out[4] = o.tau_lo;
        out[5] = o.tau_hi;
        if (s->p->bootstrap <= 0) out[1] = out[2] = out[0];
    }
    pr_set_free(sa);
    pr_set_free(sb);
    return rc;
}

static int sv_oppoint(const struct summary *s, const struct plan_criterion *r, const size_t *g, size_t n,
                      const size_t *base, size_t nb, struct summary_verdict *v, struct err *e)
{
    double sum = 0, lo = INFINITY, hi = -INFINITY, tsum = 0, tlo = INFINITY, thi = -INFINITY;
    for (size_t j = 0; j < n; j++) {
        size_t b;
        if (sv_same_seed(s, g[j], base, nb, "tuned_on", r->tuned_on, &b, e)) return -1;
        double x[6];
        if (sv_op_pair(s, r, g[j], b, x, e)) return -1;
        sum += x[0];
        lo = fmin(lo, x[1]);
        hi = fmax(hi, x[2]);
        tsum += x[3];
        tlo = fmin(tlo, x[4]);
        thi = fmax(thi, x[5]);
    }
    v->value = sum / (double)n;   /* NaN when the rule found no threshold: the criterion fails */
    v->lo = isfinite(lo) ? lo : NAN;
    v->hi = isfinite(hi) ? hi : NAN;
    v->tau = tsum / (double)n;
    v->tau_lo = isfinite(tlo) ? tlo : NAN;
    v->tau_hi = isfinite(thi) ? thi : NAN;
    return 0;
}

/* One verdict: criterion r for method m. */
static int sv_judge_one(const struct summary *s, size_t ri, size_t m, struct summary_verdict *v, struct err *e)
{
    const struct plan_criterion *r = &s->p->criteria[ri];
    size_t *g = NULL, *base = NULL;
    size_t n = sv_group(s->p, m, r->cond, r->has_value, r->value, &g), nb = 0;
    int rc = n == (size_t)-1 ? err_set(e, "out of memory") : 0;
    if (!rc && (r->baseline >= 0 || r->tuned_on >= 0)) {
        int tuned = r->tuned_on >= 0;
        nb = sv_group(s->p, m, (size_t)(tuned ? r->tuned_on : r->baseline), tuned ? r->has_tuned_value : r->has_base_value,
                      tuned ? r->tuned_value : r->base_value, &base);
        if (nb == (size_t)-1) rc = err_set(e, "out of memory");
    }
    if (!rc) rc = sv_ready(s, g, n, e) || sv_ready(s, base, nb, e) || sv_ready_op(s, r, g, n, e) ||
                    sv_ready_op(s, r, base, nb, e) ? -1 : 0;
    memset(v, 0, sizeof *v);
    v->criterion = ri;
    v->method = m;
    v->seeds = n;
    v->tau = v->tau_lo = v->tau_hi = NAN;
    if (!rc)
        rc = r->tuned_on >= 0 ? sv_oppoint(s, r, g, n, base, nb, v, e)
           : r->baseline >= 0 ? sv_paired(s, r, g, n, base, nb, v, e) : sv_plain(s, r, g, n, v, e);
    if (!rc) {
        enum plan_target t = r->target;
        v->measured = (t == PLAN_LO || t == PLAN_DIFF_LO) ? v->lo : (t == PLAN_HI || t == PLAN_DIFF_HI) ? v->hi : v->value;
        v->pass = summary_compare(r->cmp, v->measured, r->threshold);
    }
    free(g);
    free(base);
    return rc;
}

int summary_judge(const struct summary *s, struct summary_verdict **out, size_t *n, struct err *e)
{
    const struct plan *p = s->p;
    size_t cap = p->n_criteria * p->n_methods + 1, k = 0;
    struct summary_verdict *v = calloc(cap, sizeof *v);
    if (!v) return err_set(e, "out of memory");
    for (size_t ri = 0; ri < p->n_criteria; ri++)
        for (size_t m = 0; m < p->n_methods; m++) {
            if (p->criteria[ri].method >= 0 && (size_t)p->criteria[ri].method != m) continue;
            if (sv_judge_one(s, ri, m, &v[k], e)) {
                free(v);
                return err_wrap(e, "criteria[%zu]", ri);
            }
            k++;
        }
    *out = v;
    *n = k;
    return 0;
}

void summary_verdicts_free(struct summary_verdict *v, size_t n)
{
    (void)n;
    free(v);
}

static void sv_add_num(cJSON *o, const char *key, double x)
{
    if (isfinite(x)) cJSON_AddNumberToObject(o, key, x);
    else cJSON_AddNullToObject(o, key);
}

int summary_write_verdicts(const struct summary *s, const struct summary_verdict *v, size_t n, struct err *e)
{
    const struct plan *p = s->p;
    cJSON *root = cJSON_CreateObject(), *list = cJSON_AddArrayToObject(root, "criteria");
    char format[64];
    results_format_json_name(format, sizeof format, "verdicts");
    cJSON_AddStringToObject(root, "format", format);
    for (size_t k = 0; list && k < n; k++) {
        const struct plan_criterion *r = &p->criteria[v[k].criterion];
        cJSON *o = cJSON_CreateObject();
        cJSON_AddStringToObject(o, "criterion", r->text);
        cJSON_AddStringToObject(o, "metric", r->metric);
        cJSON_AddStringToObject(o, "method", p->methods[v[k].method].name);
        cJSON_AddStringToObject(o, "condition", p->conds[r->cond].name);
        if (r->has_value) cJSON_AddNumberToObject(o, "axis_value", r->value);
        if (r->baseline >= 0) cJSON_AddStringToObject(o, "baseline", p->conds[r->baseline].name);
        if (r->has_base_value) cJSON_AddNumberToObject(o, "baseline_value", r->base_value);
        if (r->tuned_on >= 0) {
            cJSON *t = cJSON_AddObjectToObject(o, "operating_point");
            cJSON_AddStringToObject(t, "tuned_on", p->conds[r->tuned_on].name);
            if (r->has_tuned_value) cJSON_AddNumberToObject(t, "tuned_on_value", r->tuned_value);
            cJSON_AddStringToObject(t, "rule", oppoint_rule_name(r->op.rule));
            if (r->op.rule != OPPOINT_F1MAX) cJSON_AddNumberToObject(t, "target", r->op.target);
            sv_add_num(t, "threshold", v[k].tau);
            sv_add_num(t, "threshold_lo", v[k].tau_lo);
            sv_add_num(t, "threshold_hi", v[k].tau_hi);
        }
        sv_add_num(o, "value", v[k].value);
        sv_add_num(o, "lo", v[k].lo);
        sv_add_num(o, "hi", v[k].hi);
        sv_add_num(o, "measured", v[k].measured);
        cJSON_AddNumberToObject(o, "threshold", r->threshold);
        cJSON_AddStringToObject(o, "comparator", plan_cmp_name(r->cmp));
        cJSON_AddStringToObject(o, "target", plan_target_name(r->target));
        cJSON_AddNumberToObject(o, "seeds", (double)v[k].seeds);
        cJSON_AddBoolToObject(o, "pass", v[k].pass);
        cJSON_AddItemToArray(list, o);
    }
    char path[4200];
    if (results_path(path, sizeof path, s->dir, RESULTS_VERDICTS, e)) {
        cJSON_Delete(root);
        return -1;
    }
    return json_file_write(path, root, e);
}

/* Parse text as the verdicts document; the list inside it, or NULL (e set). */
static const cJSON *sv_verdicts_list(const cJSON *root, const char *path, struct err *e)
{
    const cJSON *list = cJSON_IsArray(root) ? root : cJSON_GetObjectItemCaseSensitive(root, "criteria");
    if (!cJSON_IsArray(list))
        return err_at(e, path, 0, "no list of criteria, expected a list or {\"criteria\": [...]}"), NULL;
    if (list != root && results_format_json(root, "verdicts", path, e)) return NULL;
    size_t k = 0;
    for (const cJSON *o = list->child; o; o = o->next, k++)
        if (!cJSON_IsObject(o)) return err_at(e, path, 0, "criterion %zu is not an object", k + 1), NULL;
    return list;
}

int summary_verdicts_read(const char *path, cJSON **root, const cJSON **list, struct err *e)
{
    char *text;
    size_t len;
    struct stat st;
    if (stat(path, &st)) return 1;
    if (fileio_read(path, SV_VERDICTS_MAX, &text, &len, e)) return -1;
    const char *end = NULL;
    cJSON *r = cJSON_ParseWithLengthOpts(text, len, &end, 0);
    if (!r) {
        long line, col;
        err_line_col(text, end ? (size_t)(end - text) : 0, &line, &col);
        free(text);
        return err_set(e, "%s:%ld:%ld: not valid JSON, expected a list of criterion results", path, line, col);
    }
    free(text);
    const cJSON *l = sv_verdicts_list(r, path, e);
    if (!l) {
        cJSON_Delete(r);
        return -1;
    }
    *root = r;
    *list = l;
    return 0;
}
