/* rdata_csv.c: poses.csv and queries.csv (read by harness/results/) as the
 * report sees them, and the verdicts file. */
#include "reports/rdata.h"

#include <cjson/cJSON.h>
#include <ctype.h>
#include <errno.h>
#include <math.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>

#include "harness/results/cells.h"
#include "harness/results/poses_csv.h"
#include "harness/results/queries_csv.h"
#include "harness/results/summary.h"


static int track_fill(struct rdata_track *t, const struct poses_csv_set *s)
{
    size_t n = s->n ? s->n : 1;
    t->has = malloc(n);
    double **arr[4] = {&t->t, &t->x, &t->y, &t->z};
    int bad = !t->has;
    for (int k = 0; k < 4; k++) bad |= !(*arr[k] = malloc(n * sizeof(double)));
    if (bad) return -1;
    t->n = s->n;
    memset(t->has, 1, n);
    if (s->n) memcpy(t->t, s->t, s->n * sizeof *s->t);   /* s->t is NULL when there are no poses */
    for (size_t i = 0; i < s->n; i++) {
        t->x[i] = s->xyz[3 * i];
        t->y[i] = s->xyz[3 * i + 1];
        t->z[i] = s->xyz[3 * i + 2];
    }
    return 0;
}

static void track_free(struct rdata_track *t)
{
    free(t->has); free(t->t); free(t->x); free(t->y); free(t->z);
    memset(t, 0, sizeof *t);
}

void rdata_poses_free(struct rdata_poses *p)
{
    track_free(&p->map);
    track_free(&p->query);
}

int rdata_poses_load(const char *path, struct rdata_poses *p, struct err *e)
{
    memset(p, 0, sizeof *p);
    struct poses_csv pc;
    if (poses_csv_read(path, &pc, e)) return -1;
    int rc = track_fill(&p->map, &pc.set[POSES_CSV_MAP]) || track_fill(&p->query, &pc.set[POSES_CSV_QUERY]);
    poses_csv_free(&pc);
    if (rc) {
        rdata_poses_free(p);
        return err_at(e, path, 0, "out of memory");
    }
    return 0;
}

void rdata_queries_free(struct rdata_queries *q)
{
    free(q->q);
    q->q = NULL;
    q->n = 0;
}

int rdata_queries_load(const char *path, struct rdata_queries *q, struct err *e)
{
    memset(q, 0, sizeof *q);
    struct queries_csv qc;
    if (queries_csv_read(path, &qc, e)) return -1;
    if (!(q->q = malloc((qc.n_rows ? qc.n_rows : 1) * sizeof *q->q))) {
        queries_csv_free(&qc);
        return err_at(e, path, 0, "out of memory");
    }
    for (size_t r = 0; r < qc.n_rows; r++) {
        int any = qc.off[r + 1] > qc.off[r];
        q->q[r] = (struct rdata_top1){(long)qc.query[r], any ? qc.c[qc.off[r]].idx : -1,
                                     any ? qc.c[qc.off[r]].dist : NAN};
    }
    q->n = qc.n_rows;
    queries_csv_free(&qc);
    return 0;
}

/* o[key] as a string of its own size into *dst ("" when absent), with
 * suffix appended.  0, or -1 when out of memory. */
static int verdict_str(char **dst, const cJSON *o, const char *key, const char *suffix)
{
    const cJSON *v = cJSON_GetObjectItemCaseSensitive(o, key);
    const char *t = cJSON_IsString(v) && v->valuestring ? v->valuestring : "";
    size_t n = strlen(t), m = strlen(suffix);
    if (!(*dst = malloc(n + m + 1))) return -1;
    memcpy(*dst, t, n);
    memcpy(*dst + n, suffix, m + 1);
    return 0;
}

static void verdict_free(struct rdata_verdict *v)
{
    char **f[8] = {&v->text, &v->metric, &v->method, &v->cond, &v->cmp, &v->target, &v->tuned_on, &v->rule};
    for (int k = 0; k < 8; k++) { free(*f[k]); *f[k] = NULL; }
}

/* 0, or -1 when out of memory (v freed). */
static int verdict_fill(const cJSON *o, struct rdata_verdict *v)
{
    const char *keys[5] = {"criterion", "metric", "method", "comparator", "target"};
    char **dst[5] = {&v->text, &v->metric, &v->method, &v->cmp, &v->target};
    int rc = 0;
    for (int k = 0; k < 5; k++) rc |= verdict_str(dst[k], o, keys[k], "");
    const char *nk[5] = {"value", "lo", "hi", "threshold", "measured"};
    double *nd[5] = {&v->value, &v->lo, &v->hi, &v->threshold, &v->measured};
    for (int k = 0; k < 5; k++) {
        const cJSON *n = cJSON_GetObjectItemCaseSensitive(o, nk[k]);
        *nd[k] = cJSON_IsNumber(n) ? n->valuedouble : NAN;
    }
    if (isnan(v->measured)) v->measured = v->value;
    const cJSON *ax = cJSON_GetObjectItemCaseSensitive(o, "axis_value");
    char at[48] = "";
    if (cJSON_IsNumber(ax)) {
        v->has_axis = 1;
        v->axis_value = ax->valuedouble;
        snprintf(at, sizeof at, " at %g", ax->valuedouble);   /* %g: at most 13 bytes */
    }
    rc |= verdict_str(&v->cond, o, "condition", at);
    if (!rc) v->cond_len = strlen(v->cond) - strlen(at);
    v->pass = cJSON_IsTrue(cJSON_GetObjectItemCaseSensitive(o, "pass"));
    const cJSON *op = cJSON_GetObjectItemCaseSensitive(o, "operating_point");
    v->has_op = cJSON_IsObject(op);
    rc |= verdict_str(&v->tuned_on, op, "tuned_on", "");
    rc |= verdict_str(&v->rule, op, "rule", "");
    const char *tk[4] = {"target", "threshold", "threshold_lo", "threshold_hi"};
    double *td[4] = {&v->op_target, &v->op_tau, &v->op_tau_lo, &v->op_tau_hi};
    for (int k = 0; k < 4; k++) {
        const cJSON *n = v->has_op ? cJSON_GetObjectItemCaseSensitive(op, tk[k]) : NULL;
        *td[k] = cJSON_IsNumber(n) ? n->valuedouble : NAN;
    }
    if (rc) verdict_free(v);
    return rc ? -1 : 0;
}

void rdata_verdicts_free(struct rdata_set *s)
{
    for (size_t k = 0; k < s->n_verdicts; k++) verdict_free(&s->verdicts[k]);
    free(s->verdicts);
    s->verdicts = NULL;
    s->n_verdicts = 0;
}

/* DIR/verdicts.json: {"format": "revisit-verdicts-1", "criteria": [...]}, or
 * the bare list written before the format key.  Absent file: no verdicts,
 * not an error. */
int rdata_verdicts_read(struct rdata_set *s, struct err *e)
{
    char path[4200];
    cJSON *root = NULL;
    const cJSON *list = NULL;
    if (results_path(path, sizeof path, s->root, RESULTS_VERDICTS, e)) return -1;
    int rc = summary_verdicts_read(path, &root, &list, e);
    if (rc) return rc < 0 ? -1 : 0;
    size_t n = (size_t)cJSON_GetArraySize(list);
    s->verdicts = calloc(n ? n : 1, sizeof *s->verdicts);
    if (!s->verdicts) rc = err_at(e, path, 0, "out of memory");
    for (const cJSON *o = list->child; !rc && o; o = o->next) {
        if (verdict_fill(o, &s->verdicts[s->n_verdicts])) rc = err_at(e, path, 0, "out of memory for the verdicts");
        else s->n_verdicts++;
    }
    if (!rc) snprintf(s->verdict_file, sizeof s->verdict_file, "%s", RESULTS_VERDICTS);
    cJSON_Delete(root);
    return rc;
}
