/* cmd_metrics.c: `revisit metrics --results FILE ...`: score a per-query
 * results CSV made by any program against ground truth from poses. */
#include <ctype.h>
#include <limits.h>
#include <math.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>
#include <sys/stat.h>

#include <cJSON.h>

#include "harness/cli/cmd.h"
#include "harness/base/fileio.h"
#include "harness/base/opt.h"
#include "harness/base/numfmt.h"
#include "harness/cli/opt_protocol.h"
#include "harness/base/pool.h"
#include "harness/io/poses_io.h"
#include "harness/base/progress.h"
#include "harness/results/cell_set.h"
#include "harness/results/cells.h"
#include "harness/results/format.h"
#include "harness/results/oppoint_json.h"
#include "harness/results/poses_csv.h"
#include "harness/results/queries_csv.h"
#include "harness/results/result_json.h"
#include "harness/io/recording.h"
#include "harness/results/result_metrics.h"
#include "metrics/boot.h"
#include "metrics/oppoint.h"

#define MT_FILE_MAX ((size_t)1 << 32)   /* --only lists */
#define MT_KEY_W(r) ((r)->has_op ? 27 : 16)   /* metric column: room for the op_ keys when shown */

static const char about[] =
    "Score retrieval results made by any program.  FILE is a per-query results CSV\n"
    "(lines 'query,cand,dist,cand,dist,...', best first; '#' comments; see\n"
    "DEVELOPERS.md \"Results folder\").  Ground truth comes from the poses: a pose\n"
    "file (--poses) or a recording (--rec) for the map, and in reloc mode a second\n"
    "one for the queries.  Without either, the poses.csv beside FILE (as a results\n"
    "folder holds it: set,index,t,x,y,z) is used, and the protocol recorded in the\n"
    "result.json beside it fills every protocol option not given.  Prints every\n"
    "scalar with its 95% percentile-bootstrap interval; --json writes them with\n"
    "the exact curve.\n"
    "Which scans are queries: by default every scan of the pose file (or those of\n"
    "--only), and a scan with no row counts as a query that returned no candidate,\n"
    "so a program that leaves hard queries out gains nothing by it; the number of\n"
    "such scans is printed on stderr and written as counts.without_row.  With\n"
    "--listed the queries are the rows of FILE only.\n"
    "--against scores a second results file on the same queries and gives each\n"
    "difference with a paired-bootstrap interval and the share of resamples in\n"
    "which the first is better.\n"
    "--tuned-on DIR carries an operating threshold over from another results\n"
    "folder (queries.csv and poses.csv, as eval and sweep cells write them):\n"
    "the threshold --operating-point chooses there is applied here, and the\n"
    "op_ rows give precision, recall, F1 and false positives (count, per km, per\n"
    "hour) at it, with intervals; with --against, the second file is scored at\n"
    "the same threshold.\n\n";

struct mt_set {
    double *xyz, *t;
    size_t n;
};

struct mt_opts {
    const char *results, *poses, *rec, *qposes, *qrec, *only, *json, *against, *tuned_on, *op_rule;
    long bootstrap, jobs;
    unsigned long long seed;
    int quiet, listed;
};

static void mt_set_free(struct mt_set *s)
{
    free(s->xyz);
    free(s->t);
    memset(s, 0, sizeof *s);
}

static int mt_set_alloc(struct mt_set *s, size_t n, struct err *e)
{
    s->n = n;
    s->xyz = malloc((n ? n : 1) * 3 * sizeof *s->xyz);
    s->t = malloc((n ? n : 1) * sizeof *s->t);
    if (!s->xyz || !s->t) return mt_set_free(s), err_set(e, "out of memory for %zu poses", n);
    for (size_t i = 0; i < n; i++) s->t[i] = NAN;   /* "no row yet" for the folder reader */
    return 0;
}

static int mt_from_poses(const struct pose *v, size_t n, struct mt_set *s, struct err *e)
{
    if (mt_set_alloc(s, n, e)) return -1;
    for (size_t i = 0; i < n; i++) {
        memcpy(s->xyz + 3 * i, v[i].p, sizeof v[i].p);
        s->t[i] = v[i].t;
    }
    return 0;
}

/* A pose file (any layout poses_read knows) or a recording. */
static int mt_load(const char *poses, const char *rec, struct mt_set *s, struct err *e)
{
    int rc;
    if (poses) {
        struct poses ps;
        if (poses_read(poses, POSES_AUTO, NULL, &ps, e)) return -1;
        rc = mt_from_poses(ps.v, ps.n, s, e);
        poses_free(&ps);
        return rc;
    }
    struct recording r;
    if (recording_load(rec, 0, &r, e)) return -1;
    rc = mt_from_poses(r.poses, r.n, s, e);
    recording_free(&r);
    return rc;
}

/* poses.csv of a results folder: its map and query sets move into map and qry. */
static int mt_load_folder(const char *path, struct mt_set *map, struct mt_set *qry, struct err *e)
{
    struct poses_csv p;
    if (poses_csv_read(path, &p, e)) return -1;
    struct mt_set *dst[2] = {map, qry};
    for (int k = 0; k < 2; k++)
        *dst[k] = (struct mt_set){p.set[k].xyz, p.set[k].t, p.set[k].n};
    return 0;
}

/* --only FILE: query indices, one per line ('#' comments). */
static int mt_load_only(const char *path, size_t **idx, size_t *n, struct err *e)
{
    char *buf;
    size_t len, cap = 0;
    if (fileio_read(path, MT_FILE_MAX, &buf, &len, e)) return -1;
    *idx = NULL;
    *n = 0;
    long ln = 0;
    int rc = 0;
    for (char *p = buf, *nl; !rc && p && *p; p = nl ? nl + 1 : NULL) {
        nl = strchr(p, '\n');
        if (nl) *nl = 0;
        ln++;
        while (isspace((unsigned char)*p)) p++;
        if (!*p || *p == '#') continue;
        char *end;
        long v = strtol(p, &end, 10);
        while (isspace((unsigned char)*end)) end++;
        if (!isdigit((unsigned char)*p) || *end || v < 0) {
            rc = err_at(e, path, ln, "'%.40s' is not a query index, expected a whole number >= 0", p);
            break;
        }
        if (*n == cap) {
            size_t *g = realloc(*idx, (cap = cap ? 2 * cap : 64) * sizeof *g);
            if (!g) { rc = err_at(e, path, ln, "out of memory"); break; }
            *idx = g;
        }
        (*idx)[(*n)++] = (size_t)v;
    }
    free(buf);
    if (rc) { free(*idx); *idx = NULL; }
    return rc;
}

/* A results folder's result.json gives the protocol the results were made
 * under; fill every protocol option not given on the command line from it,
 * so scoring the folder again reproduces its numbers.  No result.json, or
 * one without "protocol": nothing changes. */
static int mt_folder_protocol(const char *results, struct opt_protocol *op, int *used, struct err *e)
{
    char dir[4096], path[4200];
    struct stat st;
    fileio_dirname(dir, sizeof dir, results);
    if (results_path(path, sizeof path, dir, RESULTS_RESULT, e)) return -1;
    if (stat(path, &st)) return 0;
    cJSON *root = result_json_load(path, e);
    if (!root) return -1;
    struct protocol p;
    int has = result_json_protocol(root, &p);
    cJSON_Delete(root);
    if (!has) return 0;
    if (!op->mode) op->mode = protocol_mode_name(p.mode);
    if (!op->counting) op->counting = protocol_counting_name(p.counting);
    if (isnan(op->r_pos)) op->r_pos = p.r_pos_m;
    if (isnan(op->r_neg)) op->r_neg = p.r_neg_m;
    if (isnan(op->excl_s)) op->excl_s = p.exclusion_s;
    if (op->excl_scans == LONG_MIN && p.exclusion_scans >= 0) op->excl_scans = p.exclusion_scans;  /* -1: none */
    if (op->top_k == LONG_MIN) op->top_k = p.top_k;
    if (p.planar) op->planar = 1;
    *used = 1;
    return 0;
}

/* Everything one scoring run holds; mt_free releases it all. */
struct mt_run {
    struct mt_opts o;
    struct protocol p;
    struct mt_set map, qry;
    size_t *only, n_only;
    struct gt *g;
    struct queries_csv csv;
    size_t *off;
    struct pr_cand *cand;
    struct pr_set *set;
    struct pr_curve *curve;
    struct boot_result br;
    size_t without_row;   /* scored scans with no row in the results file */
    /* --against: a second results file on the same queries */
    struct queries_csv csv2;
    size_t *off2;
    struct pr_cand *cand2;
    struct pr_set *set2;
    struct pr_scalars point2;
    struct boot_paired bp;
    /* --tuned-on: the operating point carried from another results folder */
    int has_op;
    struct oppoint_choice rule;
    struct oppoint_result op;
};

static void mt_free(struct mt_run *r)
{
    mt_set_free(&r->map);
    mt_set_free(&r->qry);
    free(r->only);
    gt_free(r->g);
    queries_csv_free(&r->csv);
    free(r->off);
    free(r->cand);
    pr_set_free(r->set);
    pr_curve_free(r->curve);
    queries_csv_free(&r->csv2);
    free(r->off2);
    free(r->cand2);
    pr_set_free(r->set2);
}

static int mt_poses(struct mt_run *r, struct err *e)
{
    const struct mt_opts *o = &r->o;
    int reloc = r->p.mode == PROTOCOL_RELOC;
    if (o->poses && o->rec) return err_set(e, "revisit metrics: give --poses or --rec, not both");
    if (o->qposes && o->qrec) return err_set(e, "revisit metrics: give --query-poses or --query-rec, not both");
    if (!reloc && (o->qposes || o->qrec))
        return err_set(e, "revisit metrics: query poses need --mode reloc (loop mode scores one recording)");
    if (o->poses || o->rec) {
        if (mt_load(o->poses, o->rec, &r->map, e)) return -1;
        if (!reloc) return 0;
        if (!o->qposes && !o->qrec)
            return err_set(e, "revisit metrics: reloc mode needs --query-poses or --query-rec for the queries");
        return mt_load(o->qposes, o->qrec, &r->qry, e);
    }
    char dir[4096], path[4200];
    struct stat st;
    fileio_dirname(dir, sizeof dir, o->results);
    if (results_path(path, sizeof path, dir, RESULTS_POSES, e)) return -1;
    if (stat(path, &st))
        return err_set(e, "revisit metrics: no poses: give --poses FILE or --rec REC (no %s beside the results)", path);
    return mt_load_folder(path, &r->map, &r->qry, e);
}

static void mt_tick(void *ctx, size_t done)
{
    progress_add(ctx, done);
}

/* --listed: the scored queries are the rows of the results file. */
static int mt_listed(struct mt_run *r, struct err *e)
{
    if (r->o.only) return err_set(e, "revisit metrics: give --only or --listed, not both");
    if (!r->csv.n_rows)
        return err_set(e, "revisit metrics: --listed: %s has no row, expected at least one query", r->o.results);
    r->only = malloc(r->csv.n_rows * sizeof *r->only);
    if (!r->only) return err_set(e, "revisit metrics: out of memory");
    memcpy(r->only, r->csv.query, r->csv.n_rows * sizeof *r->only);
    r->n_only = r->csv.n_rows;
    return 0;
}

/* Scored scans with no row in the results file (each counts as a query that
 * returned no candidate); a row for a scan left out of the subset is not one. */
static size_t mt_without_row(const struct mt_run *r)
{
    size_t n = r->g->n_query, missing = 0;
    unsigned char *has = calloc(n ? n : 1, 1);
    if (!has) return 0;
    for (size_t k = 0; k < r->csv.n_rows; k++)
        if (r->csv.query[k] < n) has[r->csv.query[k]] = 1;
    for (size_t i = 0; i < n; i++) missing += r->g->q[i].used && !has[i];
    free(has);
    return missing;
}

static int mt_score(struct mt_run *r, struct err *e)
{
    struct gt_poses mp = {r->map.xyz, r->map.t, r->map.n}, qp = {r->qry.xyz, r->qry.t, r->qry.n};
    int reloc = r->p.mode == PROTOCOL_RELOC;
    if (reloc && !r->qry.n && !r->o.poses && !r->o.rec)
        return err_set(e, "revisit metrics: reloc mode, but the results folder's poses.csv has no query rows");
    if (queries_csv_read(r->o.results, &r->csv, e)) return -1;
    if (r->o.listed ? mt_listed(r, e) : r->o.only && mt_load_only(r->o.only, &r->only, &r->n_only, e)) return -1;
    if (gt_build(&r->p, &mp, reloc ? &qp : NULL, r->only, r->n_only, &r->g, e))
        return err_wrap(e, "revisit metrics: ground truth");
    if (queries_csv_lists(&r->csv, r->g, &r->off, &r->cand, e)) return -1;
    r->without_row = mt_without_row(r);
    if (r->without_row && !r->o.quiet)
        fprintf(stderr, "revisit metrics: %zu of %zu scored scans %s no row in %s; %s as %s that returned no "
                "candidate (--listed scores only the rows present)\n", r->without_row, r->g->n_used,
                r->without_row == 1 ? "has" : "have", r->o.results, r->without_row == 1 ? "it counts" : "they count",
                r->without_row == 1 ? "a query" : "queries");
    struct pr_lists l = {r->g->n_query, r->off, r->cand};
    if (pr_set_build(r->g, &l, &r->set, e) || pr_curve_build(r->set, &r->curve, e))
        return err_wrap(e, "%s", r->o.results);
    if (r->o.bootstrap <= 0) {
        pr_scalars_compute(r->set, NULL, &r->br.point);
        return 0;
    }
    struct progress pg;
    progress_start(&pg, "bootstrap", (size_t)r->o.bootstrap, r->o.quiet);
    struct boot_tick tk = {mt_tick, &pg};
    int rc = boot_percentile_ticked(r->set, (int)r->o.bootstrap, r->o.seed, 0.95,
                                    pool_threads((int)r->o.jobs), &tk, &r->br, e);
    progress_end(&pg);
    return rc;
}

/* --tuned-on DIR: choose the threshold on DIR's outcomes (same protocol),
 * score the results at it; the op_ rows of the table hold the scores. */
static int mt_oppoint(struct mt_run *r, struct err *e)
{
    struct pr_set *ref = NULL;
    struct oppoint_drive dr;
    int reloc = r->p.mode == PROTOCOL_RELOC;
    const struct mt_set *scored = reloc ? &r->qry : &r->map;
    struct oppoint_drive da = cell_set_drive(scored->xyz, scored->t, scored->n);
    if (cell_set_load(r->o.tuned_on, &r->p, &ref, &dr, e)) return err_wrap(e, "revisit metrics: --tuned-on %s", r->o.tuned_on);
    int rc = oppoint_carry(ref, r->set, &r->rule, &dr, &da, (int)r->o.bootstrap, r->o.seed, 0.95, &r->op, e);
    pr_set_free(ref);
    if (rc) return err_wrap(e, "revisit metrics: --tuned-on %s", r->o.tuned_on);
    if (r->o.bootstrap <= 0)
        for (int m = 0; m < PR_N_METRICS; m++) r->br.lo[m] = r->br.hi[m] = NAN;
    result_metrics_oppoint(&r->op, &r->br.point, r->br.lo, r->br.hi);
    r->set->op_tau = r->op.tau;
    r->set->km = da.km;
    r->set->hours = da.hours;
    r->has_op = 1;
    return 0;
}

/* Score --against on the same ground truth; paired bootstrap of the difference. */
static int mt_against(struct mt_run *r, struct err *e)
{
    if (queries_csv_read(r->o.against, &r->csv2, e) ||
        queries_csv_lists(&r->csv2, r->g, &r->off2, &r->cand2, e))
        return -1;
    struct pr_lists l = {r->g->n_query, r->off2, r->cand2};
    if (pr_set_build(r->g, &l, &r->set2, e)) return err_wrap(e, "%s", r->o.against);
    r->set2->op_tau = r->set->op_tau;   /* --tuned-on: both at the one carried threshold */
    r->set2->km = r->set->km;
    r->set2->hours = r->set->hours;
    pr_scalars_compute(r->set2, NULL, &r->point2);
    if (r->o.bootstrap <= 0) {
        for (int m = 0; m < PR_N_METRICS; m++) r->bp.diff[m] = r->br.point.v[m] - r->point2.v[m];
        return 0;
    }
    return boot_paired_diff(r->set, r->set2, (int)r->o.bootstrap, r->o.seed, 0.95,
                            pool_threads((int)r->o.jobs), &r->bp, e);
}

static void mt_print_against(const struct mt_run *r)
{
    int ci = r->o.bootstrap > 0;
    printf("\nagainst %s (difference = results - against, paired over the same queries)\n", r->o.against);
    printf("%-*s %9s %9s%s\n", MT_KEY_W(r), "metric", "against", "diff", ci ? "  95% interval of diff  first better" : "");
    for (int m = 0; m < PR_N_METRICS; m++) {
        if (pr_metric_def((enum pr_metric)m)->at_op && !r->has_op) continue;
        printf("%-*s %9.4f %+9.4f", MT_KEY_W(r), pr_metric_name((enum pr_metric)m), r->point2.v[m], r->bp.diff[m]);
        if (ci) printf("  [%+8.4f, %+8.4f]  %6.1f%%", r->bp.lo[m], r->bp.hi[m], 100 * r->bp.share_better[m]);
        printf("\n");
    }
}

static cJSON *mt_against_json(const struct mt_run *r)
{
    cJSON *o = cJSON_CreateObject(), *ms = NULL;
    cJSON_AddStringToObject(o, "results", r->o.against);
    ms = cJSON_AddObjectToObject(o, "metrics");
    for (int m = 0; m < PR_N_METRICS; m++) {
        cJSON *v = cJSON_AddObjectToObject(ms, pr_metric_name((enum pr_metric)m));
        int ci = r->o.bootstrap > 0;
        cJSON_AddNumberToObject(v, "value", r->point2.v[m]);
        cJSON_AddNumberToObject(v, "diff", r->bp.diff[m]);
        if (ci) {
            cJSON_AddNumberToObject(v, "diff_lo", r->bp.lo[m]);
            cJSON_AddNumberToObject(v, "diff_hi", r->bp.hi[m]);
            cJSON_AddNumberToObject(v, "share_better", r->bp.share_better[m]);
        } else {
            cJSON_AddNullToObject(v, "diff_lo");
            cJSON_AddNullToObject(v, "diff_hi");
            cJSON_AddNullToObject(v, "share_better");
        }
    }
    return o;
}

static void mt_print(const struct mt_run *r)
{
    const struct boot_result *b = &r->br;
    int ci = r->o.bootstrap > 0;
    printf("queries %zu, revisits %zu, curve points %zu", r->set->n, r->g->n_revisits, r->curve->n);
    if (r->set->n_excluded) printf(", %zu listed candidates inside the exclusion window ignored", r->set->n_excluded);
    if (r->has_op) {
        char nb[NUMFMT_LEN];
        printf("operating point: threshold %s chosen on %s by %s", numfmt(nb, r->op.tau), r->o.tuned_on,
               oppoint_rule_name(r->rule.rule));
        if (ci) printf(" (95%% interval of the choice [%.4f, %.4f])", r->op.tau_lo, r->op.tau_hi);
        printf("\n");
    }
    printf("\n%-*s %9s%s  threshold\n", MT_KEY_W(r), "metric", "value", ci ? "  95% interval        " : "");
    for (int m = 0; m < PR_N_METRICS; m++) {
        char line[160], nb[NUMFMT_LEN];
        if (pr_metric_def((enum pr_metric)m)->at_op && !r->has_op) continue;
        int at = snprintf(line, sizeof line, "%-*s %9.4f", MT_KEY_W(r), pr_metric_name((enum pr_metric)m), b->point.v[m]);
        if (ci) at += snprintf(line + at, sizeof line - (size_t)at, "  [%8.4f, %8.4f]", b->lo[m], b->hi[m]);
        if (m == PR_F1MAX || m == PR_R100P) {
            double t = m == PR_F1MAX ? b->point.f1max_threshold : b->point.r100p_threshold;
            if (isnan(t)) snprintf(line + at, sizeof line - (size_t)at, "  -");
            else snprintf(line + at, sizeof line - (size_t)at, "  %s", numfmt(nb, t));   /* as in the JSON */
        }
        puts(line);
    }
}

static int mt_json(const struct mt_run *r, int argc, char **argv, struct err *e)
{
    char cmdline[4096] = "revisit";
    for (int k = 0; k < argc; k++) {
        size_t at = strlen(cmdline);
        snprintf(cmdline + at, sizeof cmdline - at, " %s", argv[k]);
    }
    cJSON *root = cJSON_CreateObject();
    char format[64];
    results_format_json_name(format, sizeof format, "result");
    cJSON_AddStringToObject(root, "format", format);
    cJSON_AddStringToObject(root, "software", "revisit " RV_VERSION);
    cJSON_AddStringToObject(root, "command", cmdline);
    cJSON_AddStringToObject(root, "results", r->o.results);
    cJSON_AddItemToObject(root, "protocol", result_metrics_protocol(&r->p));
    cJSON *bs = cJSON_AddObjectToObject(root, "bootstrap");
    cJSON_AddNumberToObject(bs, "resamples", r->o.bootstrap > 0 ? (double)r->o.bootstrap : 0);
    cJSON_AddNumberToObject(bs, "seed", (double)r->o.seed);
    cJSON_AddNumberToObject(bs, "level", 0.95);
    cJSON_AddNumberToObject(root, "excluded_candidates", (double)r->set->n_excluded);
    int rc = result_metrics_add(root, &r->br.point, r->o.bootstrap > 0 ? &r->br : NULL, r->curve,
                                r->set->n, r->g->n_revisits, e);
    cJSON *counts = cJSON_GetObjectItemCaseSensitive(root, "counts");
    if (!rc && counts) {
        cJSON_AddNumberToObject(counts, "rows", (double)r->csv.n_rows);
        cJSON_AddNumberToObject(counts, "without_row", (double)r->without_row);
    }
    if (!rc && r->set2) cJSON_AddItemToObject(root, "against", mt_against_json(r));
    if (!rc && r->has_op) cJSON_AddItemToObject(root, "operating_point", oppoint_json(&r->op, r->o.tuned_on));
    cJSON_AddStringToObject(root, "status", "ok");
    char *txt = rc ? NULL : numfmt_json_print(root);
    if (!rc && !txt) rc = err_set(e, "out of memory printing %s", r->o.json);
    if (!rc) {
        size_t len = strlen(txt);
        txt[len] = '\n';   /* the NUL becomes the final newline */
        rc = fileio_write(r->o.json, txt, len + 1, e);
    }
    free(txt);
    cJSON_Delete(root);
    return rc;
}

int cmd_metrics(int argc, char **argv)
{
    struct mt_run r;
    memset(&r, 0, sizeof r);
    r.o.bootstrap = 1000;
    r.o.seed = 1;
    r.o.jobs = 0;
    struct opt_protocol op;
    opt_protocol_init(&op);
    const struct opt opts[] = {
        {"--results", OPT_STR, &r.o.results, "FILE", "per-query results CSV to score; required"},
        {"--poses", OPT_STR, &r.o.poses, "FILE", "pose file of the map (loop: the one recording)"},
        {"--rec", OPT_STR, &r.o.rec, "REC", "recording (folder or recording.json) whose poses to use"},
        {"--query-poses", OPT_STR, &r.o.qposes, "FILE", "reloc: pose file of the queries"},
        {"--query-rec", OPT_STR, &r.o.qrec, "REC", "reloc: recording of the queries"},
        OPT_PROTOCOL_ROWS(op),
        {"--only", OPT_STR, &r.o.only, "FILE", "score only the query indices listed (one per line)"},
        {"--listed", OPT_FLAG, &r.o.listed, NULL, "score only the queries with a row in the results file"},
        {"--against", OPT_STR, &r.o.against, "FILE", "a second results CSV on the same queries: paired differences"},
        {"--tuned-on", OPT_STR, &r.o.tuned_on, "DIR", "results folder whose threshold is carried over (see --operating-point)"},
        {"--operating-point", OPT_STR, &r.o.op_rule, "RULE", "f1max (default), precision:P, recall:R or fixed:D, chosen on --tuned-on"},
        {"--bootstrap", OPT_INT, &r.o.bootstrap, "N", "bootstrap resamples for the intervals (default 1000; 0 = none)"},
        {"--seed", OPT_U64, &r.o.seed, "S", "bootstrap seed (default 1)"},
        {"--jobs", OPT_COUNT, &r.o.jobs, "N", "threads for the bootstrap (default: online cores)"},
        {"--json", OPT_STR, &r.o.json, "OUT", "write counts, every scalar with its interval, and the curve"},
        {"--quiet", OPT_FLAG, &r.o.quiet, NULL, "no progress bar"},
        {0}};
    struct opt_args a;
    struct err e;
    int go = cmd_parse("metrics", about, argc, argv, opts, &a, &e);
    if (go != CMD_GO_ON) return go;
    if (a.n) return err_set(&e, "revisit metrics: unexpected argument '%s'", a.v[0]), cmd_report(&e);
    if (!r.o.results) return err_set(&e, "revisit metrics: option '--results' is required"), cmd_report(&e);
    if (r.o.bootstrap < 0 || r.o.bootstrap > 1000000)
        return err_set(&e, "revisit metrics: --bootstrap expects 0 to 1000000 resamples, got %ld", r.o.bootstrap),
               cmd_report(&e);
    r.rule = (struct oppoint_choice){OPPOINT_F1MAX, 0};
    if (r.o.op_rule && !r.o.tuned_on)
        return err_set(&e, "revisit metrics: --operating-point needs --tuned-on, the results folder that chooses the "
                       "threshold"), cmd_report(&e);
    if (r.o.op_rule && oppoint_parse(r.o.op_rule, &r.rule, &e))
        return err_wrap(&e, "revisit metrics: --operating-point"), cmd_report(&e);
    if (!op.mode && (r.o.qposes || r.o.qrec)) op.mode = protocol_mode_name(PROTOCOL_RELOC);
    int from_folder = 0;
    if (!r.o.poses && !r.o.rec && mt_folder_protocol(r.o.results, &op, &from_folder, &e))
        return cmd_report(&e);
    if (from_folder && !r.o.quiet)
        fprintf(stderr, "revisit metrics: protocol of the results folder (its result.json), options given override it\n");
    int rc = opt_protocol_finish(&op, "metrics", &r.p, &e) || mt_poses(&r, &e) || mt_score(&r, &e) ||
             (r.o.tuned_on && mt_oppoint(&r, &e)) ||
             (r.o.against && mt_against(&r, &e)) || (r.o.json && mt_json(&r, argc, argv, &e));
    if (!rc) mt_print(&r);
    if (!rc && r.o.against) mt_print_against(&r);
    mt_free(&r);
    return rc ? cmd_report(&e) : CMD_OK;
}
