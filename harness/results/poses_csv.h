/* poses_csv.h: poses.csv of a results folder, the positions of the scans an
 * evaluation scored: one reader and one writer.
 *
 *   # revisit scan poses, format 1
 *   set,index,t,x,y,z
 *   map,0,0,12.5,-3.25,0.5
 *   map,1,0.1,12.75,-3.25,0.5
 *   query,0,...
 *
 * The version line is optional (harness/results/format.h); comment lines
 * ('#') and blank lines are passed over; the header line is required and
 * comes first.  A row is the set (map or query), the scan index, the time
 * in seconds and the position in metres.  Within each set the indices run
 * 0, 1, 2, ... in file order, so row i of a set is scan i.  Loop mode writes
 * its one recording as the map set.
 *
 *     struct poses_csv p;
 *     if (poses_csv_read("out/poses.csv", &p, e)) return -1;
 *     ... p.set[POSES_CSV_MAP].xyz[3 * i + 1] ...
 *     poses_csv_free(&p);
 *
 * Failure contract: 0, or -1 with e set as "FILE:LINE: what was wrong,
 * expected what" and *out untouched (nothing left allocated).  Refused:
 * no header, a row that is not exactly six fields, an unknown set, an
 * index out of order, a field that is not a finite number (trailing text
 * included), a file without rows.  Thread-safe.
 */
#ifndef RV_POSES_CSV_H
#define RV_POSES_CSV_H

#include <stddef.h>
#include "harness/base/err.h"

enum { POSES_CSV_MAP, POSES_CSV_QUERY };

struct poses_csv_set {
    size_t n;
    double *t;      /* n times, seconds */
    double *xyz;    /* 3 n coordinates, metres, scan after scan */
};

struct poses_csv {
    struct poses_csv_set set[2];   /* POSES_CSV_MAP, POSES_CSV_QUERY */
};

int poses_csv_read(const char *path, struct poses_csv *out, struct err *e);

/* Frees both sets; accepts a zeroed struct. */
void poses_csv_free(struct poses_csv *p);

/* Write the map set, then the query set (NULL or empty: no query rows),
 * atomically, in round-trip form (harness/base/numfmt.h) so a read gives the same doubles
 * back.  0 or -1. */
int poses_csv_write(const char *path, const struct poses_csv_set *map, const struct poses_csv_set *query,
                    struct err *e);

#endif
