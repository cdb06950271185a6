/* rdata.h: the results folder as the report writer sees it.
 *
 * A results folder is either one `revisit eval --out DIR` output (result.json,
 * queries.csv, poses.csv, matrix.csv) or a sweep folder (scenario.json,
 * cells/ID/ each such an output).  rdata_load reads every result.json into
 * cells; the large per-cell files are read on demand, one cell at a time,
 * by rdata_poses_load, rdata_queries_load and matrix_csv_read, each over
 * the one reader of its file in harness/results/.  See DEVELOPERS.md
 * "Results folder" for the schema.
 *
 *     struct rdata_set s;
 *     if (rdata_load("runs/sweep1", &s, e)) return -1;   // s untouched on -1
 *     ... s.cells[k].m[RDATA_F1MAX].value ...
 *     rdata_free(&s);
 *
 * Ownership: every *_load fills a struct the caller releases with the
 * matching *_free, which accepts a zeroed struct.  On -1 nothing is left
 * allocated.  Unknown keys are ignored; missing optional keys read as absent.
 */
#ifndef RV_RDATA_H
#define RV_RDATA_H

#include <stddef.h>
#include "harness/base/err.h"
#include "harness/results/matrix_csv.h"
#include "metrics/protocol.h"

/* The scalars the tables show, in table order. */
enum { RDATA_F1MAX, RDATA_R100P, RDATA_EP, RDATA_AP, RDATA_R1, RDATA_NMETRIC };

struct rdata_metric {
    int present;          /* 0 when result.json lacks it */
    double value, lo, hi; /* lo, hi NaN when no interval was computed */
    double threshold;     /* descriptor distance; NaN when absent */
};

struct rdata_cell {
    char id[256];              /* folder name under cells/, or "." */
    char dir[4096];            /* folder holding result.json */
    char method[256], label[1024], alias[256];   /* alias: the scenario's short name, or "" */
    char cond[256], chain[512], on[32];
    unsigned long long seed;
    int has_axis;              /* condition.axis present */
    char axis_stage[64], axis_key[64];
    double axis_value;
    char software[128], command[2048], scenario_hash[128];
    char rec_map[1024], rec_query[1024];
    struct protocol proto;
    size_t queries, revisits;
    double describe_s, described;  /* timing: seconds describing, scans described (NaN: absent) */
    double desc_bytes;         /* method.descriptor_bytes; NaN when absent */
    int ok;                    /* status "ok" */
    char error[512];           /* status "failed": the message */
    struct rdata_metric m[RDATA_NMETRIC];
    size_t curve_n;            /* PR curve points (0 when absent) */
    double *curve_t, *curve_p, *curve_r;
    int has_op;                /* "operating_point": the threshold carried from the cell op_tuned_on */
    char *op_tuned_on, *op_rule;   /* sized to their text ("" when absent) */
    double op_target, op_tau;  /* NaN when absent */
    int has_kinds;             /* "kinds" present: per kind of revisit (same, reverse, crossing) */
    double kind_revisits[3], kind_recall1[3], kind_r100p[3];
};

/* One acceptance criterion result (see rdata_load for the file read). */
/* From DIR/verdicts.json as `revisit check` writes it (harness/results/summary.h). */
struct rdata_verdict {
    char *text, *metric, *method, *cond, *cmp, *target;  /* sized to their text; "" when absent */
    double value, lo, hi, threshold;
    double measured;           /* what the comparator judged; value when absent */
    int pass;
    int has_axis;              /* "axis_value": cond ends in " at VALUE" after cond_len bytes */
    size_t cond_len;
    double axis_value;
    int has_op;                /* "operating_point": the threshold carried from tuned_on */
    char *tuned_on, *rule;     /* "" when absent */
    double op_target, op_tau, op_tau_lo, op_tau_hi;
};

/* One row of DIR/sensitivity.csv (harness/results/sensitivity.h). */
struct rdata_sens {
    int stage;                 /* 0: a swept parameter, 1: a stage of a compound condition run alone */
    char method[256], cond[256], parameter[256], unit[16], compound[256];
    double from, to, per_unit, per_unit_lo, per_unit_hi, loss, loss_lo, loss_hi, compound_loss, share;
    int rank;
};

struct rdata_set {
    int is_sweep;
    char root[4096];
    char scenario_name[256];
    char description[2048];    /* scenario.json "description"; "" when absent */
    double boot_resamples, boot_seed;  /* scenario.json "bootstrap"; NaN when absent */
    char verdict_file[64];     /* file the verdicts came from, "" when none */
    size_t n;                  /* cells, sorted by id */
    struct rdata_cell *cells;
    size_t n_verdicts;
    struct rdata_verdict *verdicts;
    size_t n_sens;             /* rows of sensitivity.csv (0 when absent) */
    struct rdata_sens *sens;
};

/* Read DIR/sensitivity.csv into s->sens when it exists (rdata_sens.c).
 * 0, or -1 with e naming the file and line of a malformed row. */
int rdata_sens_read(struct rdata_set *s, struct err *e);

/* The display name and the result.json key of metric k. */
const char *rdata_metric_name(int k);
const char *rdata_metric_key(int k);

/* Read a results folder.  0 or -1 ("DIR: not a results folder, expected
 * result.json or cells/"; JSON errors as "FILE:LINE:COL: ...").  Criteria
 * results are read from DIR/verdicts.json when present. */
int rdata_load(const char *dir, struct rdata_set *s, struct err *e);
void rdata_free(struct rdata_set *s);

/* Read s->root/verdicts.json (called by rdata_load).  No file: 0 and no
 * verdicts.  A bad file: -1 with its position. */
int rdata_verdicts_read(struct rdata_set *s, struct err *e);
/* Release the verdicts (called by rdata_free). */
void rdata_verdicts_free(struct rdata_set *s);

/* Parse one result.json text (path is used in messages only). 0 or -1. */
int rdata_cell_parse(const char *text, const char *path, struct rdata_cell *c, struct err *e);
void rdata_cell_free(struct rdata_cell *c);

/* poses.csv: `set,index,t,x,y,z`.  Each set is indexed by scan index;
 * has[i] is 0 for an index that no row gave. */
struct rdata_track {
    size_t n;                  /* largest index + 1 */
    unsigned char *has;
    double *t, *x, *y, *z;
};
struct rdata_poses {
    struct rdata_track map, query;
};
int rdata_poses_load(const char *path, struct rdata_poses *p, struct err *e);
void rdata_poses_free(struct rdata_poses *p);

/* queries.csv: one row per query; only the top candidate is kept
 * (cand -1 when the row has none). */
struct rdata_top1 {
    long query, cand;
    double dist;
};
struct rdata_queries {
    size_t n;
    struct rdata_top1 *q;
};
int rdata_queries_load(const char *path, struct rdata_queries *q, struct err *e);
void rdata_queries_free(struct rdata_queries *q);

/* matrix.csv is read by harness/results/matrix_csv.h (matrix_csv_read). */

#endif
