/* cell_set.h: the scored query set of a results folder, rebuilt from its
 * poses.csv and queries.csv (what eval writes, what every sweep cell holds).
 *
 *     struct pr_set *s; struct oppoint_drive d;
 *     if (cell_set_load("runs/clean", &protocol, &s, &d, e)) return -1;
 *     ... pr_set_free(s);
 *
 * Failure contract: 0 with *out set (freed by pr_set_free), or -1 with e
 * naming the file and line (a bad poses.csv row, an index out of order, a
 * bad queries.csv, results that do not fit the poses) and *out untouched.
 */
#ifndef RV_CELL_SET_H
#define RV_CELL_SET_H

#include "harness/base/err.h"
#include "metrics/oppoint.h"
#include "metrics/pr.h"
#include "metrics/protocol.h"

/* drive (may be NULL) gets the km and hours of the scored recording (the
 * query set in reloc mode, the one recording in loop mode). */
int cell_set_load(const char *dir, const struct protocol *p, struct pr_set **out,
                  struct oppoint_drive *drive, struct err *e);

/* Kilometres and hours driven along n poses (xyz: 3 per scan, t seconds). */
struct oppoint_drive cell_set_drive(const double *xyz, const double *t, size_t n);

#endif
