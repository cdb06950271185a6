/* matrix_csv.h: matrix.csv of a results folder, descriptor distances
 * between evenly spaced queries (rows) and map scans (columns), for the
 * report's distance picture: one reader and one writer.
 *
 *   # revisit distance matrix, format 1
 *   #rows,0,4,8
 *   #cols,0,4
 *   0.12,0.93
 *   0.88,0.10
 *   0.91,nan
 *
 * The version line is optional (harness/results/format.h); then the
 * `#rows` and `#cols` lines give the scan index of each row and column,
 * and one line of distances per row follows ("nan" or an empty entry reads
 * as NaN).
 *
 *     struct matrix_csv m;
 *     if (matrix_csv_read("out/matrix.csv", &m, e)) return -1;
 *     ... m.d[r * m.cols + c] ...
 *     matrix_csv_free(&m);
 *
 * Failure contract: 0, or -1 with e set as "FILE:LINE: what was wrong,
 * expected what" and nothing left allocated.  Thread-safe.
 */
#ifndef RV_MATRIX_CSV_H
#define RV_MATRIX_CSV_H

#include <stddef.h>
#include "harness/base/err.h"

struct matrix_csv {
    size_t rows, cols;
    long *row_idx, *col_idx;
    double *d;                 /* rows * cols, row-major */
};

int matrix_csv_read(const char *path, struct matrix_csv *m, struct err *e);
void matrix_csv_free(struct matrix_csv *m);

/* Write rows x cols distances d (row-major) with their scan indices,
 * atomically, every number in round-trip form (harness/base/numfmt.h). 0 or -1. */
int matrix_csv_write(const char *path, const size_t *row_idx, size_t rows, const size_t *col_idx,
                     size_t cols, const double *d, struct err *e);

#endif
