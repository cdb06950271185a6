/* queries_csv.h: the per-query results CSV (queries.csv of a results
 * folder, the input of `revisit metrics`): reader, checker and writer.
 *
 *   # revisit per-query results, format 1
 *   query,cand,dist,cand,dist,...
 *   42,3,0.412,7,0.533
 *   43
 *
 * Lines starting with '#' and blank lines are skipped (a format line of
 * another kind or version before the data is refused, harness/results/
 * format.h); the `query,...`
 * header is optional (first data line only).  A row is a query scan index,
 * then (candidate map index, descriptor distance) pairs, best first.  A
 * query with no candidate is its index alone; a query with no row has no
 * candidate either.
 *
 *     struct queries_csv q;
 *     if (queries_csv_read("out/queries.csv", &q, e)) return -1;
 *     size_t *off; struct pr_cand *c;
 *     if (queries_csv_lists(&q, g, &off, &c, e)) ...   // checked against ground truth
 *     struct pr_lists l = {g->n_query, off, c};
 *     ... free(off); free(c); queries_csv_free(&q);
 *
 * Failure contract: every function returns 0, or -1 with e set as
 * "FILE:LINE: what was wrong, expected what" and its outputs untouched.
 * Nothing global; thread-safe.
 */
#ifndef RV_QUERIES_CSV_H
#define RV_QUERIES_CSV_H

#include <stddef.h>
#include "harness/base/err.h"
#include "metrics/gt.h"
#include "metrics/pr.h"

struct queries_csv {
    char path[4096];
    size_t n_rows;          /* rows in file order */
    size_t *query;          /* query index per row */
    long *line;             /* 1-based line number per row */
    size_t *off;            /* n_rows + 1 offsets into c */
    struct pr_cand *c;      /* candidates, row after row */
};

/* Parse path.  Refuses, naming the line: a field that is not a number, a
 * negative or fractional index, a non-finite distance, a candidate without a
 * distance.  *out is filled on success; free it with queries_csv_free. */
int queries_csv_read(const char *path, struct queries_csv *out, struct err *e);

void queries_csv_free(struct queries_csv *q);

/* Check the rows against the ground truth and gather them by query index
 * into *off (g->n_query + 1 entries) and *c (caller frees both).  Refuses,
 * naming the line: a query index out of range, a query listed twice, a
 * candidate index out of range, a query that lists itself or a later scan
 * (loop mode), distances not in increasing order. */
int queries_csv_lists(const struct queries_csv *q, const struct gt *g, size_t **off,
                      struct pr_cand **c, struct err *e);

/* Write l (rows 0..l->n_query-1, every row, empty ones as the index alone)
 * atomically, distances in round-trip form (harness/base/numfmt.h) so a read
 * gives back the same doubles. */
int queries_csv_write(const char *path, const struct pr_lists *l, struct err *e);

#endif
