/* rdata.c: read result.json files and the folder around them. */
#include "reports/rdata.h"

#include <cjson/cJSON.h>
#include <dirent.h>
#include <math.h>
#include <stdlib.h>
#include <string.h>
#include <sys/stat.h>

#include "harness/base/fileio.h"
#include "harness/results/cells.h"
#include "harness/results/result_json.h"
#include "metrics/pr.h"

#define RDATA_JSON_MAX ((size_t)256 << 20)

/* The metrics the report's tables show, as rows of the metric table
 * (metrics/pr.h), which gives their keys and labels. */
static const enum pr_metric rdata_metrics[RDATA_NMETRIC] = {PR_F1MAX, PR_R100P, PR_EP, PR_AP, PR_RECALL_1};

const char *rdata_metric_name(int k) { return pr_metric_def(rdata_metrics[k])->label; }
const char *rdata_metric_key(int k) { return pr_metric_def(rdata_metrics[k])->key; }

/* o[key] into out (n bytes); a text cut to fit ends in "...". Returns key
 * when it was cut, else NULL, so names that identify a cell are refused
 * rather than merged with another that shares their first n bytes. */
static const char *json_str(const cJSON *o, const char *key, char *out, size_t n)
{
    const cJSON *v = cJSON_GetObjectItemCaseSensitive(o, key);
    if (!cJSON_IsString(v) || !v->valuestring) return NULL;
    if (!err_cut(snprintf(out, n, "%s", v->valuestring), n)) return NULL;
    if (n > 4) memcpy(out + n - 4, "...", 4);
    return key;
}

/* The first of a and b that is not NULL. */
static const char *first_cut(const char *a, const char *b)
{
    return a ? a : b;
}

static double json_num(const cJSON *o, const char *key, double dflt)
{
    const cJSON *v = cJSON_GetObjectItemCaseSensitive(o, key);
    return cJSON_IsNumber(v) ? v->valuedouble : dflt;
}

/* Returns the key of a name that did not fit, or NULL. */
static const char *cell_condition(const cJSON *c, struct rdata_cell *cell)
{
    if (!cJSON_IsObject(c)) return NULL;
    const char *cut = json_str(c, "name", cell->cond, sizeof cell->cond);
    cut = first_cut(cut, json_str(c, "chain", cell->chain, sizeof cell->chain));
    cut = first_cut(cut, json_str(c, "on", cell->on, sizeof cell->on));
    cell->seed = (unsigned long long)json_num(c, "seed", 0);
    const cJSON *ax = cJSON_GetObjectItemCaseSensitive(c, "axis");
    if (cJSON_IsObject(ax) && cJSON_IsNumber(cJSON_GetObjectItemCaseSensitive(ax, "value"))) {
        cell->has_axis = 1;
        cut = first_cut(cut, json_str(ax, "stage", cell->axis_stage, sizeof cell->axis_stage));
        cut = first_cut(cut, json_str(ax, "key", cell->axis_key, sizeof cell->axis_key));
        cell->axis_value = json_num(ax, "value", NAN);
    }
    return cut;
}

/* "kinds": per kind of revisit, its revisits, recall@1 and R@100P. */
static void cell_kinds(const cJSON *k, struct rdata_cell *cell)
{
    static const char *const names[3] = {"same", "reverse", "crossing"};
    cell->has_kinds = cJSON_IsObject(k);
    for (int c = 0; c < 3; c++) {
        const cJSON *o = cJSON_GetObjectItemCaseSensitive(k, names[c]);
        cell->kind_revisits[c] = json_num(o, "revisits", 0);
        cell->kind_recall1[c] = json_num(o, "recall_at_1", NAN);
        cell->kind_r100p[c] = json_num(o, "r100p", NAN);
    }
}

static void cell_metrics(const cJSON *root, struct rdata_cell *cell)
{
    for (int k = 0; k < RDATA_NMETRIC; k++) {
        struct result_metric m = {NAN, NAN, NAN, NAN};
        struct rdata_metric *r = &cell->m[k];
        r->present = result_json_metric(root, rdata_metric_key(k), &m);
        *r = (struct rdata_metric){r->present, m.value, m.lo, m.hi, m.threshold};
    }
}

/* curve: three equally long numeric arrays.  0 or -1. */
static int cell_curve(const cJSON *cv, const char *path, struct rdata_cell *cell, struct err *e)
{
    if (!cJSON_IsObject(cv)) return 0;
    const char *keys[3] = {"threshold", "precision", "recall"};
    double **dst[3] = {&cell->curve_t, &cell->curve_p, &cell->curve_r};
    const cJSON *a[3];
    for (int k = 0; k < 3; k++) {
        a[k] = cJSON_GetObjectItemCaseSensitive(cv, keys[k]);
        if (!cJSON_IsArray(a[k]))
            return err_at(e, path, 0, "curve.%s is not an array, expected a list of numbers", keys[k]);
    }
    size_t n = (size_t)cJSON_GetArraySize(a[0]);
    if ((size_t)cJSON_GetArraySize(a[1]) != n || (size_t)cJSON_GetArraySize(a[2]) != n)
        return err_at(e, path, 0, "curve arrays differ in length, expected threshold, precision "
                      "and recall of equal length");
    for (int k = 0; k < 3; k++) {
        *dst[k] = malloc((n ? n : 1) * sizeof(double));
        if (!*dst[k]) return err_at(e, path, 0, "out of memory for a curve of %zu points", n);
        size_t i = 0;
        for (const cJSON *v = a[k]->child; v; v = v->next, i++) {
            if (!cJSON_IsNumber(v))
                return err_at(e, path, 0, "curve.%s[%zu] is not a number, expected a number", keys[k], i);
            (*dst[k])[i] = v->valuedouble;
        }
    }
    cell->curve_n = n;
    return 0;
}

/* A string of its own size ("" when o[key] is not one); NULL when out of memory. */
static char *json_dup(const cJSON *o, const char *key)
{
    const cJSON *v = cJSON_GetObjectItemCaseSensitive(o, key);
    return strdup(cJSON_IsString(v) && v->valuestring ? v->valuestring : "");
}

/* "operating_point": where the threshold was chosen, its rule and value.  0 or -1. */
static int cell_oppoint(const cJSON *op, const char *path, struct rdata_cell *c, struct err *e)
{
    c->has_op = cJSON_IsObject(op);
    c->op_target = json_num(op, "target", NAN);
    c->op_tau = json_num(op, "threshold", NAN);
    c->op_tuned_on = json_dup(op, "tuned_on");
    c->op_rule = json_dup(op, "rule");
    if (!c->op_tuned_on || !c->op_rule) return err_at(e, path, 0, "out of memory");
    return 0;
}

void rdata_cell_free(struct rdata_cell *c)
{
    free(c->op_tuned_on);
    free(c->op_rule);
    c->op_tuned_on = c->op_rule = NULL;
    free(c->curve_t);
    free(c->curve_p);
    free(c->curve_r);
    c->curve_t = c->curve_p = c->curve_r = NULL;
    c->curve_n = 0;
}

/* Returns the key of a name that did not fit, or NULL (free texts such as
 * the command and the error may be cut; they end in "..." then). */
static const char *cell_header(const cJSON *root, struct rdata_cell *c)
{
    json_str(root, "software", c->software, sizeof c->software);
    json_str(root, "command", c->command, sizeof c->command);
    const char *cut = json_str(root, "scenario_hash", c->scenario_hash, sizeof c->scenario_hash);
    const cJSON *m = cJSON_GetObjectItemCaseSensitive(root, "method");
    cut = first_cut(cut, json_str(m, "name", c->method, sizeof c->method));
    cut = first_cut(cut, json_str(m, "label", c->label, sizeof c->label));
    cut = first_cut(cut, json_str(m, "alias", c->alias, sizeof c->alias));
    if (!c->label[0]) snprintf(c->label, sizeof c->label, "%s", c->method);
    const cJSON *rec = cJSON_GetObjectItemCaseSensitive(root, "recordings");
    cut = first_cut(cut, json_str(rec, "map", c->rec_map, sizeof c->rec_map));
    cut = first_cut(cut, json_str(rec, "query", c->rec_query, sizeof c->rec_query));
    const cJSON *cnt = cJSON_GetObjectItemCaseSensitive(root, "counts");
    c->queries = (size_t)json_num(cnt, "queries", 0);
    c->revisits = (size_t)json_num(cnt, "revisits", 0);
    const cJSON *tm = cJSON_GetObjectItemCaseSensitive(root, "timing");
    c->describe_s = json_num(tm, "describe_s", NAN);
    c->described = json_num(tm, "described", NAN);
    c->desc_bytes = json_num(m, "descriptor_bytes", NAN);
    json_str(root, "error", c->error, sizeof c->error);
    return cut;
}

int rdata_cell_parse(const char *text, const char *path, struct rdata_cell *c, struct err *e)
{
    cJSON *root = result_json_parse(text, strlen(text), path, e);
    if (!root) return -1;
    if (!cJSON_IsObject(cJSON_GetObjectItemCaseSensitive(root, "method"))) {
        cJSON_Delete(root);
        return err_at(e, path, 0, "no method object, expected \"method\": {\"name\": ...}");
    }
    const char *cut = first_cut(cell_header(root, c),
                                cell_condition(cJSON_GetObjectItemCaseSensitive(root, "condition"), c));
    if (cut) {
        cJSON_Delete(root);
        return err_at(e, path, 0, "the text of '%s' is longer than the report keeps, expected a shorter name "
                      "(two names alike in their first bytes would be taken for one)", cut);
    }
    result_json_protocol(root, &c->proto);
    cell_metrics(root, c);
    cell_kinds(cJSON_GetObjectItemCaseSensitive(root, "kinds"), c);
    int rc = cell_curve(cJSON_GetObjectItemCaseSensitive(root, "curve"), path, c, e);
    if (!rc) rc = cell_oppoint(cJSON_GetObjectItemCaseSensitive(root, "operating_point"), path, c, e);
    int ok = rc ? 0 : result_json_status(root, path, e);
    cJSON_Delete(root);
    if (ok < 0) rc = -1;
    c->ok = ok == 1;
    if (rc) rdata_cell_free(c);
    return rc;
}

static int cell_read(const char *dir, const char *id, struct rdata_cell *c, struct err *e)
{
    memset(c, 0, sizeof *c);
    snprintf(c->id, sizeof c->id, "%s", id);
    snprintf(c->dir, sizeof c->dir, "%s", dir);
    char path[4200], *text;
    size_t len;
    if (results_path(path, sizeof path, dir, RESULTS_RESULT, e)) return -1;
    if (fileio_read(path, RDATA_JSON_MAX, &text, &len, e)) return -1;
    int rc = rdata_cell_parse(text, path, c, e);
    free(text);
    return rc;
}

static int is_dir(const char *p)
{
    struct stat st;
    return !stat(p, &st) && S_ISDIR(st.st_mode);
}

static int is_file(const char *p)
{
    struct stat st;
    return !stat(p, &st) && S_ISREG(st.st_mode);
}

static int name_cmp(const void *a, const void *b)
{
    return strcmp(*(char *const *)a, *(char *const *)b);
}

/* The sorted names of the subfolders of cells/ that hold a result.json. */
static int cell_names(const char *root, const char *cells, char ***names, size_t *n, struct err *e)
{
    *names = NULL;
    *n = 0;
    DIR *d = opendir(cells);
    if (!d) return err_at(e, cells, 0, "cannot open folder, expected a readable cells/ folder");
    size_t cap = 0;
    struct dirent *de;
    int rc = 0;
    while ((de = readdir(d))) {
        if (de->d_name[0] == '.') continue;
        char p[4400];
        if (results_cell_path(p, sizeof p, root, de->d_name, RESULTS_RESULT, NULL) || !is_file(p)) continue;
        if (*n == cap) {
            cap = cap ? 2 * cap : 16;
            char **g = realloc(*names, cap * sizeof *g);
            if (!g) { rc = err_at(e, cells, 0, "out of memory listing cells"); break; }
            *names = g;
        }
        if (!((*names)[*n] = strdup(de->d_name))) { rc = err_at(e, cells, 0, "out of memory"); break; }
        (*n)++;
    }
    closedir(d);
    if (!rc && *n) qsort(*names, *n, sizeof **names, name_cmp);
    return rc;
}

static int sweep_cells(struct rdata_set *s, struct err *e)
{
    char cells[4200];
    char **names = NULL;
    size_t n = 0;
    int rc = results_cell_path(cells, sizeof cells, s->root, NULL, NULL, e);
    if (!rc) rc = cell_names(s->root, cells, &names, &n, e);
    if (!rc && n == 0)
        rc = err_at(e, cells, 0, "no cell holds a result.json, expected cells/ID/result.json");
    if (!rc && !(s->cells = calloc(n, sizeof *s->cells)))
        rc = err_at(e, cells, 0, "out of memory for %zu cells", n);
    for (size_t k = 0; !rc && k < n; k++) {
        char dir[4500];
        rc = results_cell_path(dir, sizeof dir, s->root, names[k], NULL, e);
        if (!rc) rc = cell_read(dir, names[k], &s->cells[k], e);
        if (!rc) s->n++;
    }
    for (size_t k = 0; k < n; k++) free(names[k]);
    free(names);
    return rc;
}

static void sweep_scenario(struct rdata_set *s)
{
    char path[4200], *text;
    size_t len;
    if (results_path(path, sizeof path, s->root, RESULTS_SCENARIO, NULL)) return;
    if (fileio_read(path, RDATA_JSON_MAX, &text, &len, NULL)) return;
    cJSON *root = cJSON_Parse(text);
    free(text);
    json_str(root, "name", s->scenario_name, sizeof s->scenario_name);
    json_str(root, "description", s->description, sizeof s->description);
    const cJSON *b = cJSON_GetObjectItemCaseSensitive(root, "bootstrap");
    s->boot_resamples = json_num(b, "resamples", NAN);
    s->boot_seed = json_num(b, "seed", NAN);
    cJSON_Delete(root);
}

int rdata_load(const char *dir, struct rdata_set *s, struct err *e)
{
    memset(s, 0, sizeof *s);
    s->boot_resamples = s->boot_seed = NAN;
    snprintf(s->root, sizeof s->root, "%s", dir);
    char p1[4200], p2[4200];
    if (results_path(p1, sizeof p1, dir, RESULTS_RESULT, e) || results_cell_path(p2, sizeof p2, dir, NULL, NULL, e))
        return -1;
    int rc;
    if (!is_dir(dir)) {
        return err_at(e, dir, 0, "no such folder, expected a results folder");
    } else if (is_file(p1)) {
        rc = (s->cells = calloc(1, sizeof *s->cells)) ? 0 : err_set(e, "out of memory");
        if (!rc) rc = cell_read(dir, ".", &s->cells[0], e);
        if (!rc) s->n = 1;
    } else if (is_dir(p2)) {
        s->is_sweep = 1;
        rc = sweep_cells(s, e);
        if (!rc) sweep_scenario(s);
    } else {
        return err_at(e, dir, 0, "not a results folder, expected result.json or cells/");
    }
    if (!rc) rc = rdata_verdicts_read(s, e);
    if (!rc) rc = rdata_sens_read(s, e);
    if (rc) rdata_free(s);
    return rc;
}

void rdata_free(struct rdata_set *s)
{
    for (size_t k = 0; k < s->n; k++) rdata_cell_free(&s->cells[k]);
    free(s->cells);
    rdata_verdicts_free(s);
    free(s->sens);
    s->cells = NULL;
    s->sens = NULL;
    s->n_sens = 0;
    s->n = 0;
}
