/* eval.h: one evaluation cell, end to end (recording -> perturbation ->
 * descriptors -> retrieval -> metrics -> files).  `revisit eval` and the
 * sweep runner both call eval_run; see DEVELOPERS.md "Results folder" for
 * the files it writes.
 *
 *     struct eval_spec s; eval_spec_defaults(&s);
 *     s.map_rec = "rec/recording.json"; s.method = "scan-context:rings=20";
 *     s.out_dir = "out/cell";
 *     struct eval_summary sum;
 *     if (eval_run(&s, &sum, e)) ...   // 0 or -1; nothing half-written under out_dir
 */
#ifndef RV_EVAL_H
#define RV_EVAL_H

#define EVAL_MEM_LIMIT_MB ((size_t)4096)  /* default --mem-limit */
#define EVAL_MATRIX_SCANS 4000L           /* default --matrix-scans */

#include <stdint.h>
#include "harness/base/err.h"
#include "metrics/kinds.h"
#include "metrics/oppoint.h"
#include "metrics/protocol.h"

struct eval_spec {
    const char *map_rec;       /* recording.json (or its folder) */
    const char *query_rec;     /* NULL: loop mode on map_rec */
    const char *method;        /* "name[:key=value,...]" or a path to a .so / external program */
    const char *alias;         /* the method's short name in a scenario (result.json method.alias), or NULL */
    const char *plugin_path;   /* extra plugin search folders, ':'-separated, or NULL */
    const char *chain;         /* perturbation chain or NULL */
    const char *on;            /* "query" | "map" | "both" (default "query" in reloc, "both" in loop) */
    uint64_t seed;             /* perturbation seed */
    struct protocol protocol;
    const char *out_dir;       /* where result.json, queries.csv, ... go */
    const char *cache_dir;     /* descriptor cache folder, NULL = no cache */
    const char *condition;     /* condition name recorded in result.json, or NULL */
    const char *scenario_hash; /* sweep: hash of the scenario file, or NULL */
    int bootstrap;             /* resamples (default 1000; 0 = no intervals) */
    uint64_t bootstrap_seed;   /* default 1 */
    int jobs;                  /* threads (default: online cores) */
    int quiet;                 /* no progress bar */
    int isolate;               /* run the method in a child process */
    /* added with issue 6; zero means "not given" so a memset spec still works */
    const char *command;       /* command line recorded in result.json, or NULL */
    int top_c;                 /* custom distance: candidates kept by the key prefilter (0 = 50) */
    int has_axis;              /* 1: condition.axis is written from the three below */
    const char *axis_stage, *axis_key;
    double axis_value;
    int crash_notice;          /* 1: a fatal signal prints the in-process methods open (plugin_crash_notice) */
    /* added with issue 10 (isolation) */
    double time_limit_s;       /* per-scan limit (0 = 60 s in-process or isolated, 10 s for an external
                                  program); isolated and external methods are stopped when they hang */
    size_t mem_limit_mb;       /* address space an isolated child may add, or an external program may
                                  use (0 = EVAL_MEM_LIMIT_MB) */
    /* operating point carried from another results folder */
    const char *tuned_on;      /* results folder (queries.csv, poses.csv) choosing the threshold, or NULL */
    struct oppoint_choice op;  /* the rule (zero: F1max) */
    struct kind_rule kinds;    /* revisit kinds by heading difference (zero: 45 and 135 degrees) */
    long matrix_scans;         /* the distance matrix holds every scan when map and queries have at most
                                  this many each (0: EVAL_MATRIX_SCANS for a dense distance, a sample only
                                  for a custom one; negative: never, a sample only) */
};

struct eval_summary {
    double f1max, r100p, ep, ap, recall1;
    size_t queries, revisits;
    double describe_s, retrieval_s, metrics_s;
    size_t described;          /* scans actually described (not read from cache) */
    /* added with issue 6 */
    double p_r0, recall1pct;
    size_t cache_hits;         /* descriptor sets read from the cache */
    size_t cache_rejected;     /* cache files found corrupt or not matching, rebuilt */
    size_t cache_stale;        /* cache files of another recording content or method build, rebuilt */
    size_t scans_hashed;       /* scan files read to update the recordings' digests */
    double matrix_s;           /* the distances of matrix.csv (and matrix.bin) */
    /* operating point (spec.tuned_on) */
    int has_op;
    double op_tau, op_precision, op_recall, op_fp;
};

void eval_spec_defaults(struct eval_spec *s);
/* The `revisit eval` command line that runs what s describes (every option
 * that changes the results; --jobs and --quiet left out), each word quoted
 * for a POSIX shell; out_dir in place of s->out_dir when not NULL.  Writes
 * at most n bytes (NUL included) like snprintf and returns the length the
 * whole line needs. */
size_t eval_spec_command(const struct eval_spec *s, const char *out_dir, char *out, size_t n);
int eval_run(const struct eval_spec *s, struct eval_summary *out, struct err *e);

#endif
