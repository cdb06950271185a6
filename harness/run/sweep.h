/* sweep.h: run the cells of a plan into a sweep folder, resumably.
 *
 * Layout of a sweep folder DIR:
 *     DIR/scenario.json          byte copy of the scenario file (its hash ties
 *                                every cell to it; another file is refused)
 *     DIR/cache/                 descriptor cache shared by every cell
 *     DIR/cells/ID/cell.json     what the cell is (method, condition, axis, seed)
 *     DIR/cells/ID/result.json   the eval result; written last (see below)
 *     DIR/cells/.part-ID/        a cell in flight
 *
 * A cell runs into DIR/cells/.part-ID and is renamed to DIR/cells/ID when
 * every file is written, so a cell is done iff DIR/cells/ID/result.json
 * exists, and a crash (even kill -9) loses only the cells in flight.  A rerun
 * skips done cells and clears stale .part-* folders.  A cell whose method
 * fails gets a result.json with "status": "failed" and the sweep goes on;
 * such a cell counts as done until a run with retry_failed set.
 *
 *     struct sweep_opts o; sweep_opts_defaults(&o);
 *     o.out_dir = "out"; o.run = eval_run;
 *     struct sweep_stats st;
 *     if (sweep_run(&plan, &o, &st, e)) ...      // -1: could not run at all
 *     if (st.interrupted) ...                    // a stop was requested
 */
#ifndef RV_SWEEP_H
#define RV_SWEEP_H

#include <signal.h>
#include <stdio.h>
#include <stddef.h>
#include "harness/base/err.h"
#include "harness/run/eval.h"
#include "harness/plan/plan.h"

/* Same contract as eval_run; tests hand in a stand-in. */
typedef int (*sweep_run_fn)(const struct eval_spec *s, struct eval_summary *out, struct err *e);

struct sweep_opts {
    const char *out_dir;
    int shard_i, shard_n;        /* run cells k with k % n == i (n = 1: all) */
    int jobs;                    /* cells at once (<= 0: online cores) */
    int cell_jobs;               /* threads inside one cell (default 1) */
    int quiet;
    int isolate;                 /* eval_spec.isolate */
    double time_limit_s;         /* eval_spec.time_limit_s */
    size_t mem_limit_mb;         /* eval_spec.mem_limit_mb */
    int retry_failed;            /* run again the cells whose result says "failed" */
    const char *plugin_path;
    sweep_run_fn run;            /* eval_run in the command */
    volatile sig_atomic_t *stop; /* set (by a signal handler): start no new cell; may be NULL */
};

struct sweep_stats {
    size_t total;       /* cells in the plan */
    size_t in_shard;    /* cells this shard owns */
    size_t skipped;     /* already done before this run */
    size_t stale;       /* done before from another recording content or method build: run again */
    size_t ran, failed; /* finished in this run; failed of them */
    size_t left;        /* not started because of a stop request */
    int interrupted;
};

void sweep_opts_defaults(struct sweep_opts *o);

/* Create DIR, DIR/cells, DIR/cache and DIR/scenario.json (or check that an
 * existing one has the plan's hash). 0 or -1. */
int sweep_prepare(const struct plan *p, const char *out_dir, struct err *e);

/* Run every cell of the shard that is not done.  Returns -1 only when the
 * sweep could not go on (folder not writable, out of memory); failed cells
 * are counted in st->failed.  Writes nothing outside o->out_dir. */
int sweep_run(const struct plan *p, const struct sweep_opts *o, struct sweep_stats *st, struct err *e);

/* A method's speed for the dry run's estimate. */
struct sweep_speed {
    double s_per_scan;   /* seconds to describe one scan; NaN when unknown */
    double other_s;      /* a cell's seconds besides describing (0 when measured) */
    int cells;           /* finished cells it comes from; 0 when measured */
    int measured;        /* scans described to measure it (cells == 0) */
    double describe_s, described;   /* the sums behind s_per_scan */
    char why[ERR_MSG_MAX];   /* why it is unknown */
};

/* Speeds of every method (sp has p->n_methods entries): from the timings of
 * its finished cells in o->out_dir, else measured by describing three map
 * scans on one thread.  Cannot fail: an unknown speed is NaN with why set. */
void sweep_speeds(const struct plan *p, const struct sweep_opts *o, struct sweep_speed *sp);

/* Print the cells still to run (finished ones are left out and counted)
 * with the estimated work (scan descriptions) and, when sp is given, the
 * estimated time to f.  n_map, n_query: scans in the recordings (0 when
 * unknown). */
void sweep_print_plan(FILE *f, const struct plan *p, const struct sweep_opts *o,
                      size_t n_map, size_t n_query, const struct sweep_speed *sp);

/* Fill an eval_spec for cell k (strings borrow from p and o). */
void sweep_cell_spec(const struct plan *p, size_t k, const struct sweep_opts *o,
                     const char *cell_dir, const char *cache_dir, struct eval_spec *s);

#endif
