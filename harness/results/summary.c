/* summary.c: read every cell of a sweep folder and write the summary tables. */
#include "harness/results/summary.h"
#include "harness/results/sensitivity.h"

#include <cjson/cJSON.h>
#include <math.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>

#include "harness/results/cell_json.h"
#include "harness/base/fileio.h"
#include "harness/base/json_file.h"
#include "harness/base/numfmt.h"
#include "harness/results/cells.h"
#include "harness/results/format.h"
#include "harness/results/result_json.h"
#include "metrics/boot.h"
#include "metrics/pr.h"

/* The metrics of the tables: every row of the metric table (metrics/pr.h),
 * by its result.json key; NULL past the last. */
static const char *sm_metric(int m)
{
    return m < PR_N_METRICS ? pr_metric_name((enum pr_metric)m) : NULL;
}

static int sm_load_cell(struct summary *s, size_t k, struct err *e)
{
    const char *id = s->p->cells[k].id;
    struct summary_cell *c = &s->cells[k];
    if (!results_cell_done(s->dir, id)) return 0;
    char path[4200];
    if (results_cell_path(path, sizeof path, s->dir, id, RESULTS_RESULT, e)) return -1;
    if (!(c->result = result_json_load(path, e))) return -1;
    const cJSON *h = cJSON_GetObjectItemCaseSensitive(c->result, "scenario_hash");
    if (cJSON_IsString(h) && strcmp(h->valuestring, s->p->hash))
        return err_at(e, path, 0, "scenario_hash %s, expected %s (a cell of another scenario file)",
                      h->valuestring, s->p->hash);
    int ok = result_json_status(c->result, path, e);
    if (ok < 0) return -1;
    c->done = 1;
    c->ok = ok;
    s->n_done++;
    if (c->ok) s->n_ok++;
    else s->n_failed++;
    return 0;
}

int summary_load(struct summary *s, const struct plan *p, const char *dir, struct err *e)
{
    memset(s, 0, sizeof *s);
    s->p = p;
    snprintf(s->dir, sizeof s->dir, "%s", dir);
    if (!(s->cells = calloc(p->n_cells + 1, sizeof *s->cells))) return err_set(e, "out of memory");
    for (size_t k = 0; k < p->n_cells; k++)
        if (sm_load_cell(s, k, e)) {
            summary_free(s);
            return -1;
        }
    if (summary_op_fill(s, e)) {
        summary_free(s);
        return -1;
    }
    return 0;
}

void summary_free(struct summary *s)
{
    if (!s || !s->cells) return;
    for (size_t k = 0; k < s->p->n_cells; k++) cJSON_Delete(s->cells[k].result);
    free(s->cells);
    s->cells = NULL;
}

int summary_metric(const struct summary *s, size_t k, const char *metric, double *value, double *lo, double *hi)
{
    const struct summary_cell *c = &s->cells[k];
    struct result_metric m;
    if (!c->ok || !result_json_metric(c->result, metric, &m)) return -1;
    *value = m.value;
    *lo = m.lo;
    *hi = m.hi;
    return 0;
}

int summary_compare(enum plan_cmp c, double value, double threshold)
{
    if (isnan(value)) return 0;
    switch (c) {
    case PLAN_GE: return value >= threshold;
    case PLAN_GT: return value > threshold;
    case PLAN_LE: return value <= threshold;
    case PLAN_LT: return value < threshold;
    }
    return 0;
}

/* ---- tables ------------------------------------------------------------- */

static void sm_num(FILE *f, double v)
{
    if (isnan(v)) fputs(",", f);
    else {
        char b[NUMFMT_LEN];
        fprintf(f, ",%s", numfmt(b, v));
    }
}

/* method, condition, axis_stage, axis_key, axis_value (CSV, no newline) */
static void sm_keys(FILE *f, const struct plan *p, size_t k)
{
    const struct plan_cell *c = &p->cells[k];
    const struct plan_cond *d = &p->conds[c->cond];
    fprintf(f, "\"%s\",%s,%s,%s", p->methods[c->method].name, d->name,
            c->has_axis ? d->axis_stage : "", c->has_axis ? d->axis_key : "");
    if (c->has_axis) sm_num(f, c->axis_value);
    else fputs(",", f);
}

static long sm_count(const cJSON *res, const char *key)
{
    const cJSON *v = cJSON_GetObjectItemCaseSensitive(cJSON_GetObjectItemCaseSensitive(res, "counts"), key);
    return cJSON_IsNumber(v) ? (long)v->valuedouble : -1;
}

static int sm_write_cells_csv(const struct summary *s, struct err *e)
{
    char path[4200];
    struct afile a;
    if (results_path(path, sizeof path, s->dir, RESULTS_SUMMARY_CSV, e) || afile_open(&a, path, e)) return -1;
    fputs("cell,method,condition,axis_stage,axis_key,axis_value,seed,status,queries,revisits", a.f);
    for (int m = 0; sm_metric(m); m++) fprintf(a.f, ",%s,%s_lo,%s_hi", sm_metric(m), sm_metric(m), sm_metric(m));
    fputc('\n', a.f);
    for (size_t k = 0; k < s->p->n_cells; k++) {
        const struct summary_cell *c = &s->cells[k];
        fprintf(a.f, "%s,", s->p->cells[k].id);
        sm_keys(a.f, s->p, k);
        fprintf(a.f, ",%llu,%s", (unsigned long long)s->p->cells[k].seed,
                !c->done ? "missing" : c->ok ? "ok" : "failed");
        long q = c->ok ? sm_count(c->result, "queries") : -1, r = c->ok ? sm_count(c->result, "revisits") : -1;
        sm_num(a.f, q < 0 ? NAN : (double)q);
        sm_num(a.f, r < 0 ? NAN : (double)r);
        for (int m = 0; sm_metric(m); m++) {
            double v = NAN, lo = NAN, hi = NAN;
            summary_metric(s, k, sm_metric(m), &v, &lo, &hi);
            sm_num(a.f, v);
            sm_num(a.f, lo);
            sm_num(a.f, hi);
        }
        fputc('\n', a.f);
    }
    return afile_commit(&a, e);
}

/* The group of cell k: the run of cells with its method, condition and axis
 * value (seeds vary innermost in plan order).  Returns one past its end. */
static size_t sm_group_end(const struct plan *p, size_t k)
{
    size_t j = k + 1;
    while (j < p->n_cells && p->cells[j].method == p->cells[k].method && p->cells[j].cond == p->cells[k].cond &&
           p->cells[j].has_axis == p->cells[k].has_axis &&
           (!p->cells[k].has_axis || p->cells[j].axis_value == p->cells[k].axis_value))
        j++;
    return j;
}

/* Spread of one metric over cells [k, end); n = 0 when no cell has it. */
static void sm_spread(const struct summary *s, size_t k, size_t end, const char *metric, struct boot_spread *out)
{
    double *v = malloc((end - k) * sizeof *v), lo, hi;
    size_t n = 0;
    memset(out, 0, sizeof *out);
    for (size_t j = k; v && j < end; j++)
        if (!summary_metric(s, j, metric, &v[n], &lo, &hi)) n++;
    if (!n || boot_spread_of(v, n, out, NULL)) out->n = 0;
    free(v);
}

static int sm_write_groups_csv(const struct summary *s, struct err *e)
{
    char path[4200];
    struct afile a;
    if (results_path(path, sizeof path, s->dir, RESULTS_SUMMARY_SEEDS, e) || afile_open(&a, path, e)) return -1;
    fputs("method,condition,axis_stage,axis_key,axis_value,seeds,ok", a.f);
    for (int m = 0; sm_metric(m); m++)
        fprintf(a.f, ",%s_mean,%s_sd,%s_min,%s_max", sm_metric(m), sm_metric(m), sm_metric(m), sm_metric(m));
    fputc('\n', a.f);
    for (size_t k = 0, end; k < s->p->n_cells; k = end) {
        end = sm_group_end(s->p, k);
        size_t ok = 0;
        for (size_t j = k; j < end; j++) ok += (size_t)s->cells[j].ok;
        sm_keys(a.f, s->p, k);
        fprintf(a.f, ",%zu,%zu", end - k, ok);
        for (int m = 0; sm_metric(m); m++) {
            struct boot_spread sp;
            sm_spread(s, k, end, sm_metric(m), &sp);
            sm_num(a.f, sp.n ? sp.mean : NAN);
            sm_num(a.f, sp.n ? sp.sd : NAN);
            sm_num(a.f, sp.n ? sp.min : NAN);
            sm_num(a.f, sp.n ? sp.max : NAN);
        }
        fputc('\n', a.f);
    }
    return afile_commit(&a, e);
}

/* {"method", "condition", "axis": {...}} shared by cells and groups. */
static cJSON *sm_keys_json(const struct plan *p, size_t k)
{
    const struct plan_cell *c = &p->cells[k];
    const struct plan_cond *d = &p->conds[c->cond];
    cJSON *o = cJSON_CreateObject();
    cJSON_AddStringToObject(o, "method", p->methods[c->method].name);
    cJSON_AddStringToObject(o, "condition", d->name);
    cell_json_axis(o, p, k);
    return o;
}

static cJSON *sm_cell_json(const struct summary *s, size_t k)
{
    const struct summary_cell *c = &s->cells[k];
    cJSON *o = sm_keys_json(s->p, k);
    cJSON_AddStringToObject(o, "cell", s->p->cells[k].id);
    cJSON_AddNumberToObject(o, "seed", (double)s->p->cells[k].seed);
    cJSON_AddStringToObject(o, "status", !c->done ? "missing" : c->ok ? "ok" : "failed");
    const cJSON *m = cJSON_GetObjectItemCaseSensitive(c->result, "metrics");
    if (c->ok && m) cJSON_AddItemToObject(o, "metrics", cJSON_Duplicate(m, 1));
    const cJSON *err = cJSON_GetObjectItemCaseSensitive(c->result, "error");
    if (c->done && !c->ok && cJSON_IsString(err)) cJSON_AddStringToObject(o, "error", err->valuestring);
    return o;
}

static cJSON *sm_group_json(const struct summary *s, size_t k, size_t end)
{
    cJSON *o = sm_keys_json(s->p, k);
    size_t ok = 0;
    for (size_t j = k; j < end; j++) ok += (size_t)s->cells[j].ok;
    cJSON_AddNumberToObject(o, "seeds", (double)(end - k));
    cJSON_AddNumberToObject(o, "ok", (double)ok);
    cJSON *ms = cJSON_AddObjectToObject(o, "metrics");
    for (int m = 0; sm_metric(m); m++) {
        struct boot_spread sp;
        sm_spread(s, k, end, sm_metric(m), &sp);
        if (!sp.n) continue;
        cJSON *x = cJSON_AddObjectToObject(ms, sm_metric(m));
        cJSON_AddNumberToObject(x, "mean", sp.mean);
        cJSON_AddNumberToObject(x, "sd", sp.sd);
        cJSON_AddNumberToObject(x, "min", sp.min);
        cJSON_AddNumberToObject(x, "max", sp.max);
    }
    return o;
}

static int sm_write_json(const struct summary *s, struct err *e)
{
    char path[4200], format[64];
    if (results_path(path, sizeof path, s->dir, RESULTS_SUMMARY_JSON, e)) return -1;
    results_format_json_name(format, sizeof format, "summary");
    cJSON *root = cJSON_CreateObject();
    cJSON_AddStringToObject(root, "format", format);
    cJSON_AddStringToObject(root, "scenario_hash", s->p->hash);
    cJSON_AddNumberToObject(root, "cells_total", (double)s->p->n_cells);
    cJSON_AddNumberToObject(root, "cells_done", (double)s->n_done);
    cJSON_AddNumberToObject(root, "cells_failed", (double)s->n_failed);
    cJSON *methods = cJSON_AddArrayToObject(root, "methods");
    for (size_t m = 0; methods && m < s->p->n_methods; m++) {
        cJSON *o = cJSON_CreateObject();
        cJSON_AddStringToObject(o, "name", s->p->methods[m].name);
        cJSON_AddStringToObject(o, "label", s->p->methods[m].label);
        cJSON_AddItemToArray(methods, o);
    }
    cJSON *cells = cJSON_AddArrayToObject(root, "cells"), *groups = cJSON_AddArrayToObject(root, "groups");
    for (size_t k = 0; k < s->p->n_cells; k++) cJSON_AddItemToArray(cells, sm_cell_json(s, k));
    for (size_t k = 0, end; k < s->p->n_cells; k = end) {
        end = sm_group_end(s->p, k);
        cJSON_AddItemToArray(groups, sm_group_json(s, k, end));
    }
    return json_file_write(path, root, e);
}

/* DIR/sensitivity.csv (sensitivity.h), when the plan has an axis or a stage run alone. */
static int sm_write_sensitivity(const struct summary *s, struct err *e)
{
    struct sens_row *rows = NULL;
    size_t n = 0;
    if (sens_compute(s, &rows, &n, e)) return -1;
    int rc = n ? sens_write(s, rows, n, e) : 0;
    sens_free(rows);
    return rc;
}

/* The result.json of every cell scored at the operating point, rewritten
 * (atomically) with its rows: a cell's results hold what summary.csv shows. */
static int sm_write_op_cells(const struct summary *s, struct err *e)
{
    for (size_t k = 0; k < s->p->n_cells; k++) {
        char path[4200];
        if (!s->cells[k].has_op && !s->cells[k].op_cleared) continue;
        if (results_cell_path(path, sizeof path, s->dir, s->p->cells[k].id, RESULTS_RESULT, e) ||
            json_file_write(path, cJSON_Duplicate(s->cells[k].result, 1), e))
            return -1;
    }
    return 0;
}

int summary_write(const struct summary *s, struct err *e)
{
    return sm_write_op_cells(s, e) || sm_write_cells_csv(s, e) || sm_write_groups_csv(s, e) ||
           sm_write_json(s, e) || sm_write_sensitivity(s, e) ? -1 : 0;
}
