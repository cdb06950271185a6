/* summary.h: read a sweep folder's cells, write the summary tables, and
 * judge the acceptance criteria.
 *
 *     struct summary s;
 *     if (summary_load(&s, &plan, "out", e)) return -1;   // every done cell read
 *     summary_write(&s, e);        // out/summary.csv, summary_seeds.csv, summary.json
 *     struct summary_verdict *v; size_t n;
 *     if (summary_judge(&s, &v, &n, e)) ...               // -1: incomplete or unreadable
 *     summary_write_verdicts(&s, v, n, e);                // out/verdicts.json
 *     summary_verdicts_free(v, n); summary_free(&s);
 *
 * Files written (all atomically):
 *   summary.csv        one row per cell: cell, method, condition, axis_stage,
 *                      axis_key, axis_value, seed, status, queries, revisits,
 *                      then METRIC, METRIC_lo, METRIC_hi for every metric of
 *                      the table (metrics/pr.h; the op_ ones empty without
 *                      the scenario's operating point)
 *   summary_seeds.csv  one row per method x condition x axis value over its
 *                      seeds: ..., seeds, ok, then METRIC_mean, _sd, _min, _max
 *   summary.json       both, as "cells" and "groups"
 *   verdicts.json      a list of {criterion, metric, method, condition,
 *                      axis_value, baseline, target, comparator, threshold,
 *                      value, lo, hi, measured, seeds, pass}
 *
 * Targets (plan.h): "mean" judges the mean over seeds; "lo" / "hi" judge the
 * lowest lower / highest upper CI bound over seeds (the cautious side);
 * "diff", "diff_lo", "diff_hi" judge the paired difference condition minus
 * baseline, seed by seed on the same queries (paired bootstrap over the
 * queries of both cells, metrics/boot.h), as its mean over seeds, lowest
 * lower bound or highest upper bound.  A baseline with one seed pairs with
 * every seed of the condition.
 */
#ifndef RV_SUMMARY_H
#define RV_SUMMARY_H

#include <stddef.h>
#include "harness/base/err.h"
#include "harness/plan/plan.h"

struct cJSON;

struct summary_cell {
    int done;              /* result.json exists */
    int ok;                /* its status is "ok" */
    struct cJSON *result;  /* parsed result.json, NULL when not done */
    int has_op;            /* scored at the scenario's operating point (summary_op_fill) */
    int op_cleared;        /* its result held operating-point rows no cell can back now: cleared */
    double op_tau;         /* that threshold (NaN when its rule found none) */
    struct oppoint_drive drive;   /* km and hours of the cell's scored recording */
};

struct summary {
    const struct plan *p;  /* borrowed */
    char dir[4096];
    size_t n_done, n_ok, n_failed;
    struct summary_cell *cells;   /* p->n_cells entries, plan order */
};

struct summary_verdict {
    size_t criterion;      /* index into p->criteria */
    size_t method;         /* index into p->methods */
    size_t seeds;          /* cells (or cell pairs) it rests on */
    double value, lo, hi;  /* mean over seeds and the cautious interval */
    double measured;       /* what the comparator judged */
    int pass;
    double tau, tau_lo, tau_hi;   /* operating-point criteria: the threshold carried (mean over
                                   * seeds) and the widest interval of its choice; else NaN */
};

/* Read DIR/cells/ID/result.json of every cell of the plan.  A result with
 * another scenario hash, or one that does not parse, is an error.  With the
 * scenario's operating point, summary_op_fill then scores every cell at it.
 * 0 or -1. */
int summary_load(struct summary *s, const struct plan *p, const char *dir, struct err *e);
void summary_free(struct summary *s);

/* Metric key of cell k: value and interval (NaN when the result lacks lo/hi).
 * 0, or -1 when the cell is not done, failed, or lacks the metric. */
int summary_metric(const struct summary *s, size_t k, const char *metric,
                   double *value, double *lo, double *hi);

/* The scenario's operating point (plan.h struct plan_op) carried to every
 * ok cell whose tuned_on cell (same method; same seed, or the one seed of
 * tuned_on) is ok: the threshold chosen there, the PR_OP_* metrics of the
 * cell at it with intervals, put into the cell's parsed result ("metrics"
 * rows and an "operating_point" object, as eval --tuned-on writes them).
 * Other cells have those rows null (rows left
 * from an earlier run whose tuned_on cell is gone are cleared).  0, or -1 when a cell's queries.csv or
 * poses.csv cannot be read. */
int summary_op_fill(struct summary *s, struct err *e);

/* The cell choosing cell k's threshold: same method, the operating point's
 * tuned_on condition (at its axis value), the same seed or tuned_on's only
 * seed; -1 when there is none (or the plan has no operating point). */
long summary_op_partner(const struct plan *p, size_t k);

/* summary.csv, summary_seeds.csv and summary.json in s->dir; and the
 * result.json of every cell summary_op_fill scored, rewritten with its
 * operating-point rows. 0 or -1. */
int summary_write(const struct summary *s, struct err *e);

/* Judge every criterion (one verdict per criterion and method).  -1 when a
 * cell it needs is not done ("incomplete sweep"), failed, or cannot be read;
 * the caller frees *out with summary_verdicts_free. */
int summary_judge(const struct summary *s, struct summary_verdict **out, size_t *n, struct err *e);
void summary_verdicts_free(struct summary_verdict *v, size_t n);

/* s->dir/verdicts.json. 0 or -1. */
int summary_write_verdicts(const struct summary *s, const struct summary_verdict *v, size_t n,
                           struct err *e);

/* Read verdicts.json at path back: {"format": "revisit-verdicts-1",
 * "criteria": [...]} or the bare list written before the format key.  0
 * with *root (the caller deletes it) and *list (inside root, each entry an
 * object); 1 when there is no file (nothing set); -1 with e set as
 * "FILE:LINE:COL: ..." for broken JSON, "FILE: ..." for the rest. */
int summary_verdicts_read(const char *path, struct cJSON **root, const struct cJSON **list, struct err *e);

/* 1 when value passes "value CMP threshold". */
int summary_compare(enum plan_cmp c, double value, double threshold);

#endif
