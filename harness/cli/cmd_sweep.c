/* cmd_sweep.c: `revisit sweep SCENARIO --out DIR`: run a scenario's grid. */
#include <signal.h>
#include <cjson/cJSON.h>
#include <math.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>
#include <unistd.h>

#include "harness/cli/cmd.h"
#include "harness/run/eval.h"
#include "harness/run/plugin_host.h"
#include "harness/base/opt.h"
#include "harness/base/numfmt.h"
#include "harness/plan/plan.h"
#include "harness/base/pool.h"
#include "harness/io/recording.h"
#include "harness/results/summary.h"
#include "harness/run/sweep.h"

static const char about[] =
    "Expand a scenario file (methods x setting variants x conditions x axis values\n"
    "x seeds) into cells and run them, each cell written atomically into\n"
    "DIR/cells/ID/.  A rerun skips finished cells, so an interrupted sweep loses\n"
    "only the cells in flight.  Ctrl-C lets running cells finish and exits 130\n"
    "(a second Ctrl-C drops them).  At the end DIR/summary.csv, summary_seeds.csv\n"
    "and summary.json cover every finished cell.\n"
    "Before any cell runs (--dry-run too), every chain must parse, every method\n"
    "must load and the recordings must read; otherwise nothing runs and the\n"
    "message names it (a dry run prints its plan first, then fails).\n\n";

/* The one piece of state a signal handler may touch. */
static volatile sig_atomic_t sweep_stop;

static void sweep_on_sigint(int sig)
{
    (void)sig;
    if (sweep_stop) pool_request_stop();
    sweep_stop = 1;
}


/* Every method must load before any cell runs (else each of its cells would
 * fail alike).  Under --isolate a method's own code runs only in children,
 * so only its file is looked up here. */
static int sweep_check_methods(const struct plan *p, const struct sweep_opts *o, struct err *e)
{
    for (size_t k = 0; k < p->n_methods; k++) {
        const char *label = p->methods[k].label;
        int rc;
        if (o->isolate) {
            char path[4096], head[4096];
            size_t hl = strcspn(label, ":");
            int w = snprintf(head, sizeof head, "%.*s", (int)hl, label);
            if (w < 0 || (size_t)w >= sizeof head) rc = err_set(e, "method name too long");
            else if (strchr(head, '/')) rc = access(head, R_OK) ? err_set(e, "method '%s': no such file", head) : 0;
            else rc = plugin_find(head, o->plugin_path, path, sizeof path, e);
        } else {
            struct plugin pl;
            rc = plugin_open(&pl, label, o->plugin_path, e);
            if (!rc) plugin_close(&pl);
        }
        if (rc) return err_wrap(e, "%s: no cell was run", p->path);
    }
    return 0;
}

/* The recordings must open before any cell runs (else every cell would fail alike). */
static int sweep_check_recordings(const struct plan *p, struct err *e)
{
    const char *paths[2] = {p->map_rec, p->query_rec}, *keys[2] = {"map", "query"};
    for (int k = 0; k < 2; k++) {
        struct recording r;
        if (!paths[k]) continue;
        if (recording_load(paths[k], 1, &r, e)) return err_wrap(e, "%s: recordings.%s", p->path, keys[k]);
        recording_free(&r);
    }
    return 0;
}

static size_t sweep_scans(const char *path)
{
    struct recording r;
    struct err e;
    if (!path || recording_load(path, 1, &r, &e)) return 0;
    size_t n = r.n;
    recording_free(&r);
    return n;
}

static int sweep_finish(const struct plan *p, const struct sweep_opts *o, const struct sweep_stats *st,
                        struct err *e)
{
    struct summary s;
    if (summary_load(&s, p, o->out_dir, e)) return cmd_report(e);
    int rc = summary_write(&s, e);
    size_t failed = 0, missing = 0;
    char first[ERR_MSG_MAX + 256] = "";
    for (size_t k = 0; k < p->n_cells; k++) {
        if (!plan_in_shard(k, o->shard_i, o->shard_n)) continue;
        missing += !s.cells[k].done;
        if (!s.cells[k].done || s.cells[k].ok) continue;
        if (!failed++) {
            const cJSON *m = cJSON_GetObjectItemCaseSensitive(s.cells[k].result, "error");
            snprintf(first, sizeof first, "; the first, %s: %s", p->cells[k].id,
                     cJSON_IsString(m) ? m->valuestring : "no message");
        }
    }
    summary_free(&s);
    if (rc) return cmd_report(e);
    if (!o->quiet)
        fprintf(stderr, "revisit sweep: %zu %s in this shard: %zu run now, %zu done before, %zu failed, %zu left\n",
                st->in_shard, numfmt_noun(st->in_shard, "cell", "cells"), st->ran, st->skipped, failed, st->left);
    if (st->stale)
        fprintf(stderr, "revisit sweep: %zu finished %s made from another content of the recordings or "
                "another build of %s method; %s run again\n", st->stale, numfmt_noun(st->stale, "cell was", "cells were"),
                numfmt_noun(st->stale, "its", "their"), numfmt_noun(st->stale, "it was", "they were"));
    if (st->interrupted) {
        fprintf(stderr, "revisit sweep: interrupted; finished cells are kept, run the same command to go on\n");
        return CMD_INTERRUPTED;
    }
    if (missing) {
        /* Every cell of the shard ran, yet some have no result: the folder
         * was deleted or changed under the sweep. */
        fprintf(stderr, "revisit: sweep: %zu %s of this shard %s no result in %s/cells although %s "
                "ran; was the folder deleted or changed while the sweep ran? run the same command again "
                "to redo %s\n", missing, numfmt_noun(missing, "cell", "cells"), numfmt_noun(missing, "has", "have"),
                o->out_dir, numfmt_noun(missing, "it", "they"), numfmt_noun(missing, "it", "them"));
        return CMD_ERROR;
    }
    if (failed) {
        fprintf(stderr, "revisit: sweep: %zu %s failed (status in %s/summary.csv, message in each "
                "cell's result.json)%s; once the cause is fixed, run again with --retry-failed\n",
                failed, numfmt_noun(failed, "cell", "cells"), o->out_dir, first);
        return CMD_ERROR;
    }
    return CMD_OK;
}

int cmd_sweep(int argc, char **argv)
{
    struct sweep_opts o;
    sweep_opts_defaults(&o);
    const char *shard = NULL;
    long jobs = 0, cell_jobs = 1, mem_mb = 0;
    double time_s = NAN;   /* not given */
    int dry = 0;
    const struct opt opts[] = {
        {"--out", OPT_STR, &o.out_dir, "DIR", "sweep folder (cells, summary); required"},
        {"--shard", OPT_STR, &shard, "I/N", "run only cells k with k mod N = I (0 <= I < N)"},
        {"--jobs", OPT_COUNT, &jobs, "N", "cells run at once (default: online cores)"},
        {"--cell-jobs", OPT_COUNT, &cell_jobs, "N", "threads inside each cell (default 1)"},
        {"--plugin-path", OPT_STR, &o.plugin_path, "DIRS", "extra plugin folders, ':'-separated"},
        {"--isolate", OPT_FLAG, &o.isolate, NULL, "run each method in a child process"},
        {"--time-limit", OPT_SECONDS, &time_s, "S",
         "most seconds per scan (default 60; external programs 10); isolated and external methods are stopped"},
        {"--mem-limit", OPT_COUNT, &mem_mb, "MiB", "memory an isolated method or external program may take (default 4096)"},
        {"--retry-failed", OPT_FLAG, &o.retry_failed, NULL, "run again the cells that failed before"},
        {"--dry-run", OPT_FLAG, &dry, NULL, "print the cells and the estimated work, run nothing"},
        {"--quiet", OPT_FLAG, &o.quiet, NULL, "no progress bar or totals"},
        {0}};
    struct opt_args a;
    struct err e;
    int go = cmd_parse("sweep", about, argc, argv, opts, &a, &e);
    if (go != CMD_GO_ON) return go;
    if (a.n != 1) err_set(&e, "revisit sweep: expected one scenario file, got %d arguments", a.n);
    else if (!o.out_dir && !dry) err_set(&e, "revisit sweep: option '--out' is required");
    else if (shard && plan_parse_shard(shard, &o.shard_i, &o.shard_n, &e)) err_wrap(&e, "revisit sweep: --shard");
    else if (jobs > 256 || cell_jobs > 256)
        err_set(&e, "revisit sweep: --jobs and --cell-jobs expect 1 to 256");
    else if (!isnan(time_s) && !(time_s > 0 && time_s <= 1e6))
        err_set(&e, "revisit sweep: --time-limit expects seconds above 0, up to 1000000, got %g", time_s);
    else if (mem_mb > (1L << 24))
        err_set(&e, "revisit sweep: --mem-limit expects MiB from 1 to 16777216, got %ld", mem_mb);
    else e.msg[0] = 0;
    if (e.msg[0]) return cmd_report(&e);
    o.jobs = (int)jobs;
    o.cell_jobs = (int)cell_jobs;
    if (!isnan(time_s)) o.time_limit_s = time_s;
    o.mem_limit_mb = (size_t)mem_mb;
    o.run = eval_run;
    o.stop = &sweep_stop;
    struct plan p;
    if (plan_load(&p, a.v[0], &e) || sweep_check_methods(&p, &o, &e)) {   /* every chain and axis value checked */
        plan_free(&p);
        return cmd_report(&e);
    }
    if (dry) {
        struct sweep_speed *sp = calloc(p.n_methods + 1, sizeof *sp);
        if (sp) sweep_speeds(&p, &o, sp);
        sweep_print_plan(stdout, &p, &o, sweep_scans(p.map_rec), sweep_scans(p.query_rec), sp);
        free(sp);
        /* a plan that could not run is no good plan: the dry run fails where the run would */
        int rc = sweep_check_recordings(&p, &e) ? cmd_report(&e) : CMD_OK;
        plan_free(&p);
        return rc;
    }
    if (sweep_check_recordings(&p, &e)) {
        plan_free(&p);
        return cmd_report(&e);
    }
    struct sigaction sa, old;
    memset(&sa, 0, sizeof sa);
    sa.sa_handler = sweep_on_sigint;
    sigemptyset(&sa.sa_mask);
    sigaction(SIGINT, &sa, &old);
    struct sweep_stats st;
    int rc = sweep_run(&p, &o, &st, &e) ? cmd_report(&e) : sweep_finish(&p, &o, &st, &e);
    sigaction(SIGINT, &old, NULL);
    plan_free(&p);
    return rc;
}
