/* matrix_csv.h: matrix.csv of a results folder and its binary companion
 * matrix.bin, descriptor distances between queries (rows) and map scans
 * (columns) for the report's distance picture: one reader and one writer
 * of each, and one loader that takes the larger.
 *
 * matrix.csv holds at most MATRIX_CSV_MAX rows and columns (every scan, or
 * an evenly spaced sample of them); a matrix larger than that (every scan
 * of a recording of up to a few thousand) goes to matrix.bin, and
 * matrix.csv then holds an evenly spaced sample of it.  Why binary: 4,000 x
 * 4,000 distances are about 290 MB as round-trip text but 64 MB as float32,
 * read in one pass with no parsing, and float32 is finer than any picture.
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
 * matrix.bin: the format line, one text line "#binary,ROWS,COLS", then
 * ROWS row indices and COLS column indices as little-endian uint32, then
 * ROWS x COLS distances as little-endian IEEE float32, row-major (NaN: no
 * distance):
 *
 *   # revisit distance matrix, format 1\n#binary,2,3\n<2 x u32><3 x u32><6 x f32>
 *
 * Failure contract: 0, or -1 with e set as "FILE:LINE: what was wrong,
 * expected what" (matrix.bin: "FILE: ..." with the byte offset) and nothing
 * left allocated.  Thread-safe.
 */
#ifndef RV_MATRIX_CSV_H
#define RV_MATRIX_CSV_H

#include <stddef.h>
#include "harness/base/err.h"

#define MATRIX_CSV_MAX 400      /* rows and columns matrix.csv holds at most */
#define MATRIX_BIN_MAX 20000    /* rows and columns matrix.bin holds at most */

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

/* matrix.bin: the same, binary, distances rounded to float32. */
int matrix_csv_bin_write(const char *path, const size_t *row_idx, size_t rows, const size_t *col_idx,
                         size_t cols, const double *d, struct err *e);
int matrix_csv_bin_read(const char *path, struct matrix_csv *m, struct err *e);

/* DIR/matrix.bin when it exists, else DIR/matrix.csv.  0, 1 when the folder
 * holds neither (m zeroed), or -1 (e set by the reader). */
int matrix_csv_load(const char *dir, struct matrix_csv *m, struct err *e);

#endif
