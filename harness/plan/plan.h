/* plan.h: the sweep scenario file (format "revisit-sweep-1") and its grid.
 *
 * A scenario file names the recording(s), the protocol, methods with setting
 * variants, conditions (a named chain, optionally with one stage parameter
 * swept over a list of values), seeds and acceptance criteria.  plan_load
 * checks every key (unknown keys are refused) and expands the grid
 *
 *     methods x variants  x  conditions x axis values  x  seeds
 *
 * into cells in one fixed order, each with a stable id such as
 *     scan-context_rings-20__sector_width-90__s2
 * so that shards, resumed runs and merges agree on what a cell is.
 *
 * Errors carry the line, column and JSON path of the bad value:
 *     sweep.json:14:21: conditions[2].axis.values[3]: expected a number
 *
 *     struct plan p;
 *     if (plan_load(&p, "scenarios/demo.json", e)) return -1;
 *     for (size_t k = 0; k < p.n_cells; k++) ... p.cells[k].id ...
 *     plan_free(&p);
 *
 * plan_load leaves p empty (safe to plan_free) on failure.
 */
#ifndef RV_PLAN_H
#define RV_PLAN_H

#include <stddef.h>
#include <stdint.h>
#include "harness/base/err.h"
#include "harness/base/keyset.h"
#include "metrics/oppoint.h"
#include "metrics/protocol.h"
#include "perturb/chain.h"

#define PLAN_FORMAT "revisit-sweep-1"
#define PLAN_ID_MAX 160

struct plan_method {
    char *label;          /* "name" or "name:key=value,...", what eval_run takes */
    char *name;           /* what the method is called in cell ids, tables, criteria and
                           * verdicts: its "alias" in the scenario, else the label */
    int has_alias;        /* name is an alias given in the scenario */
};

struct plan_cond {
    char *name;
    char *chain;          /* the chain as the user wrote it; NULL: none besides the axis stage */
    struct chain *parsed; /* chain parsed at load (perturb/chain.h); NULL when chain is */
    char *on;             /* "query" | "map" | "both" | NULL (eval's default) */
    char *axis_stage, *axis_key;  /* NULL when the condition has no axis */
    size_t n_values;
    double *values;
    size_t n_seeds;
    uint64_t *seeds;
    int stages_alone;     /* the scenario asked for each stage of the chain alone */
    int is_part;          /* this condition is one stage of a compound condition run alone */
    size_t part_of;       /* is_part: index of that compound condition */
};

struct plan_cell {
    char id[PLAN_ID_MAX];
    size_t method, cond;  /* indices into methods / conds */
    int has_axis;
    double axis_value;
    uint64_t seed;
    char *chain;          /* the cell's chain, or NULL: the condition's text as written, or
                           * for an axis cell the normalised text (chain_format) of the
                           * parsed chain with the axis parameter set */
};

enum plan_target { PLAN_MEAN, PLAN_LO, PLAN_HI, PLAN_DIFF, PLAN_DIFF_LO, PLAN_DIFF_HI };
enum plan_cmp { PLAN_GE, PLAN_GT, PLAN_LE, PLAN_LT };

struct plan_criterion {
    char *text;           /* what the criterion says, in the user's words */
    char *metric;         /* result.json metrics key: "f1max", "r100p", ... */
    long method;          /* index into methods, or -1 = every method */
    size_t cond;          /* index into conds */
    int has_value;        /* axis value selected (conditions with an axis) */
    double value;
    long baseline;        /* index into conds for PLAN_DIFF*, else -1 */
    int has_base_value;
    double base_value;
    enum plan_target target;
    enum plan_cmp cmp;
    double threshold;
    long tuned_on;        /* index into conds whose cells choose the operating point, or -1 */
    int has_tuned_value;  /* axis value of tuned_on (a condition with an axis) */
    double tuned_value;
    struct oppoint_choice op;   /* how (tuned_on >= 0); metric is then a metrics/oppoint.h score */
};

/* The scenario's "operating_point": the threshold every cell is scored at
 * for the PR_OP_* metrics (metrics/pr.h), chosen by rule on the cell of
 * condition tuned_on with the same method and seed (a tuned_on with one
 * seed serves every seed). */
struct plan_op {
    int on;               /* 0: the scenario has no operating point (the rest unused) */
    size_t tuned_on;      /* index into conds */
    int has_value;        /* axis value of tuned_on (a condition with an axis) */
    double value;
    struct oppoint_choice rule;
};

struct plan {
    char *path;           /* the scenario file as given */
    char hash[17];        /* FNV-1a 64 of the file bytes, hex */
    char *name;
    char *map_rec, *query_rec;  /* resolved against the file's folder; query may be NULL */
    struct protocol protocol;
    int bootstrap;        /* resamples per cell (default 1000) */
    uint64_t bootstrap_seed;
    struct plan_op op;
    size_t n_methods, n_conds, n_cells, n_criteria;
    size_t cap_methods, cap_conds;  /* room in methods and conds (harness/base/grow.h) */
    struct plan_method *methods;
    struct plan_cond *conds;
    struct plan_cell *cells;
    struct plan_criterion *criteria;
    struct keyset ids;    /* cell id -> index into cells (plan_find_cell) */
};

/* Read, check and expand a scenario file. 0 or -1 (e: "FILE:LINE:COL: JSON.PATH: ..."). */
int plan_load(struct plan *p, const char *path, struct err *e);
/* The same from text in memory; path names it in messages and anchors
 * relative recording paths. 0 or -1. */
int plan_parse(struct plan *p, const char *text, size_t len, const char *path, struct err *e);
/* Free everything; accepts a zeroed or failed plan. */
void plan_free(struct plan *p);

/* Look up a cell by id; returns its index or -1 (expected constant time). */
long plan_find_cell(const struct plan *p, const char *id);
/* "i/n" with 0 <= i < n into *i, *n. 0 or -1. */
int plan_parse_shard(const char *s, int *i, int *n, struct err *e);
/* Cell k belongs to shard i of n (round robin over the fixed order). */
int plan_in_shard(size_t k, int i, int n);
/* Round-trip decimal text of v ("90", "0.25"; harness/base/numfmt.h). */
void plan_format_number(char *out, size_t n, double v);
/* Names of the comparator and target as written in scenario files. */
const char *plan_cmp_name(enum plan_cmp c);
const char *plan_target_name(enum plan_target t);
/* FNV-1a 64 of a buffer as 16 hex digits into out[17]. */
void plan_hash_hex(const void *data, size_t len, char out[17]);

#endif
