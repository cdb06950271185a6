/* cells.h: the names of a results folder's files and where a sweep folder
 * keeps its cells.
 *
 *     DIR/result.json, queries.csv, poses.csv, matrix.csv   one evaluation
 *     DIR/matrix.bin                    beside them, a matrix too large for matrix.csv
 *     DIR/scenario.json                 a sweep folder: its scenario
 *     DIR/cells/ID/                     a finished cell (an evaluation folder)
 *     DIR/cells/.part-ID/               a cell being written
 *     DIR/summary.csv, summary_seeds.csv, summary.json, verdicts.json
 *
 * The results module owns these paths: eval, the sweep runner, merge,
 * summary, check and the report ask here, so a change of layout is one edit.
 *
 *     char p[4096];
 *     if (results_cell_path(p, sizeof p, "out", "m__clean__s1", RESULTS_RESULT, e)) return -1;
 *
 * Failure contract: the path builders return 0, or -1 with e set ("path too
 * long") and out holding a cut path that must not be used.  Thread-safe.
 */
#ifndef RV_RESULTS_CELLS_H
#define RV_RESULTS_CELLS_H

#include <stddef.h>
#include "harness/base/err.h"

#define RESULTS_RESULT "result.json"
#define RESULTS_QUERIES "queries.csv"
#define RESULTS_POSES "poses.csv"
#define RESULTS_MATRIX "matrix.csv"
#define RESULTS_MATRIX_BIN "matrix.bin"      /* a matrix larger than matrix.csv holds */
#define RESULTS_SCENARIO "scenario.json"
#define RESULTS_VERDICTS "verdicts.json"
#define RESULTS_SUMMARY_CSV "summary.csv"
#define RESULTS_SUMMARY_SEEDS "summary_seeds.csv"
#define RESULTS_SUMMARY_JSON "summary.json"

/* DIR/FILE into out. */
int results_path(char *out, size_t n, const char *dir, const char *file, struct err *e);

/* DIR/cells (file NULL and id NULL), DIR/cells/ID (file NULL) or
 * DIR/cells/ID/FILE into out. */
int results_cell_path(char *out, size_t n, const char *sweep_dir, const char *id, const char *file,
                      struct err *e);

/* DIR/cells/.part-ID: where a cell is written before it is moved into place. */
int results_cell_part(char *out, size_t n, const char *sweep_dir, const char *id, struct err *e);

/* The cell id of a .part folder name (".part-ID" gives ID), NULL otherwise. */
const char *results_part_id(const char *name);

/* The hash of DIR/scenario.json (harness/plan/plan.h plan_hash_hex) into
 * out[17].  0, or -1 with "DIR is not a sweep folder" and the reason. */
int results_sweep_hash(const char *sweep_dir, char out[17], struct err *e);

/* 1 when DIR/cells/ID/result.json exists and is a regular file. */
int results_cell_done(const char *sweep_dir, const char *id);

#endif
