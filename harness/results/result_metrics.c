/* result_metrics.c: scalars, intervals and the curve as result.json objects. */
#include "harness/results/result_metrics.h"

#include <math.h>
#include <string.h>

/* A number, or null when it is not finite. */
static cJSON *rm_number(double v)
{
    return isfinite(v) ? cJSON_CreateNumber(v) : cJSON_CreateNull();
}

static int rm_put(cJSON *obj, const char *key, cJSON *item)
{
    if (!item) return -1;
    if (!cJSON_AddItemToObject(obj, key, item)) { cJSON_Delete(item); return -1; }
    return 0;
}

static cJSON *rm_metric(const struct pr_scalars *p, const struct boot_result *ci, int m)
{
    cJSON *o = cJSON_CreateObject();
    if (!o) return NULL;
    int bad = rm_put(o, "value", rm_number(p->v[m]));
    bad |= rm_put(o, "lo", ci ? rm_number(ci->lo[m]) : cJSON_CreateNull());
    bad |= rm_put(o, "hi", ci ? rm_number(ci->hi[m]) : cJSON_CreateNull());
    if (m == PR_F1MAX) bad |= rm_put(o, "threshold", rm_number(p->f1max_threshold));
    if (m == PR_R100P) bad |= rm_put(o, "threshold", rm_number(p->r100p_threshold));
    if (bad) { cJSON_Delete(o); return NULL; }
    return o;
}

static cJSON *rm_curve(const struct pr_curve *c)
{
    cJSON *o = cJSON_CreateObject();
    const double *cols[3] = {c->threshold, c->precision, c->recall};
    const char *keys[3] = {"threshold", "precision", "recall"};
    if (!o) return NULL;
    for (int k = 0; k < 3; k++) {
        /* cJSON_CreateDoubleArray takes an int count */
        cJSON *a = cJSON_CreateArray();
        for (size_t i = 0; a && i < c->n; i++)
            if (!cJSON_AddItemToArray(a, cJSON_CreateNumber(cols[k][i]))) { cJSON_Delete(a); a = NULL; }
        if (rm_put(o, keys[k], a)) { cJSON_Delete(o); return NULL; }
    }
    return o;
}

int result_metrics_add(cJSON *root, const struct pr_scalars *point, const struct boot_result *ci,
                       const struct pr_curve *curve, size_t queries, size_t revisits,
                       struct err *e)
{
    cJSON *counts = cJSON_CreateObject(), *metrics = cJSON_CreateObject();
    int bad = !counts || !metrics;
    if (!bad) {
        bad |= rm_put(counts, "queries", cJSON_CreateNumber((double)queries));
        bad |= rm_put(counts, "revisits", cJSON_CreateNumber((double)revisits));
        for (int m = 0; m < PR_N_METRICS && !bad; m++)
            bad |= rm_put(metrics, pr_metric_name((enum pr_metric)m), rm_metric(point, ci, m));
    }
    if (bad) {
        cJSON_Delete(counts);
        cJSON_Delete(metrics);
        return err_set(e, "out of memory writing the metrics of a result");
    }
    if (rm_put(root, "counts", counts) | rm_put(root, "metrics", metrics))
        return err_set(e, "out of memory writing the metrics of a result");
    if (curve && rm_put(root, "curve", rm_curve(curve)))
        return err_set(e, "out of memory writing the curve of a result");
    return 0;
}

cJSON *result_metrics_protocol(const struct protocol *p)
{
    cJSON *o = cJSON_CreateObject();
    cJSON_AddStringToObject(o, "mode", protocol_mode_name(p->mode));
    cJSON_AddNumberToObject(o, "r_pos_m", p->r_pos_m);
    cJSON_AddNumberToObject(o, "r_neg_m", p->r_neg_m);
    cJSON_AddNumberToObject(o, "exclusion_s", p->exclusion_s);
    if (p->exclusion_scans >= 0) cJSON_AddNumberToObject(o, "exclusion_scans", (double)p->exclusion_scans);
    else cJSON_AddNullToObject(o, "exclusion_scans");
    cJSON_AddBoolToObject(o, "planar", p->planar);
    cJSON_AddStringToObject(o, "counting", protocol_counting_name(p->counting));
    cJSON_AddNumberToObject(o, "top_k", p->top_k);
    return o;
}

static double rm_get(const cJSON *o, const char *key)
{
    const cJSON *v = cJSON_GetObjectItemCaseSensitive(o, key);
    return cJSON_IsNumber(v) ? v->valuedouble : NAN;
}

int result_metrics_read(const cJSON *root, struct pr_scalars *value, double *lo, double *hi,
                        struct err *e)
{
    const cJSON *metrics = cJSON_GetObjectItemCaseSensitive(root, "metrics");
    if (!cJSON_IsObject(metrics)) return err_set(e, "result has no \"metrics\" object, expected one");
    for (int m = 0; m < PR_N_METRICS; m++) {
        const char *name = pr_metric_name((enum pr_metric)m);
        const cJSON *o = cJSON_GetObjectItemCaseSensitive(metrics, name);
        double v = rm_get(o, "value");
        /* a score at an operating point is null (or, written before it existed, absent) without one */
        int op = pr_metric_def((enum pr_metric)m)->at_op;
        if (op && (!o || cJSON_IsNull(cJSON_GetObjectItemCaseSensitive(o, "value")))) v = NAN;
        else if (!cJSON_IsObject(o) || isnan(v))
            return err_set(e, "result: $.metrics.%s.value is missing or not a number, expected a number", name);
        value->v[m] = v;
        if (lo) lo[m] = rm_get(o, "lo");
        if (hi) hi[m] = rm_get(o, "hi");
    }
    value->f1max_threshold = rm_get(cJSON_GetObjectItemCaseSensitive(metrics, "f1max"), "threshold");
    value->r100p_threshold = rm_get(cJSON_GetObjectItemCaseSensitive(metrics, "r100p"), "threshold");
    return 0;
}

void result_metrics_oppoint(const struct oppoint_result *o, struct pr_scalars *point, double *lo, double *hi)
{
    for (int k = 0; k < OPP_N; k++) {
        point->v[PR_OP_PRECISION + k] = o->at.v[k];
        lo[PR_OP_PRECISION + k] = o->lo[k];
        hi[PR_OP_PRECISION + k] = o->hi[k];
    }
}

int result_metrics_replace_op(cJSON *root, const struct pr_scalars *point, const double *lo, const double *hi,
                              struct err *e)
{
    cJSON *metrics = cJSON_GetObjectItemCaseSensitive(root, "metrics");
    if (!cJSON_IsObject(metrics)) return err_set(e, "result has no \"metrics\" object, expected one");
    struct boot_result ci;
    memcpy(ci.lo, lo, sizeof ci.lo);
    memcpy(ci.hi, hi, sizeof ci.hi);
    for (int m = PR_OP_PRECISION; m <= PR_OP_FP_PER_HOUR; m++) {
        const char *key = pr_metric_name((enum pr_metric)m);
        cJSON *row = rm_metric(point, &ci, m);
        if (!row) return err_set(e, "out of memory writing the metrics of a result");
        cJSON_DeleteItemFromObjectCaseSensitive(metrics, key);
        if (rm_put(metrics, key, row)) return err_set(e, "out of memory writing the metrics of a result");
    }
    return 0;
}
