/* plot_int.h: helpers shared by plot.c and plot_kinds.c (not for callers
 * outside reports/plot*). */
#ifndef RV_PLOT_INT_H
#define RV_PLOT_INT_H

#include "harness/base/fileio.h"
#include "reports/plot.h"

/* Open ps->dir/NAME.EXT for an atomic write. 0 or -1. */
int plot_open(struct plot_set *ps, struct afile *a, const char *name, const char *ext, struct err *e);
/* Commit, or abort on an earlier write error. 0 or -1. */
int plot_commit(struct afile *a, struct err *e);
/* Script start: the PNG terminal, the escaped title, the line styles 1..6. */
void plot_head(FILE *f, const char *name, const char *title);
/* Script end: the SVG terminal and a replot. */
void plot_tail(FILE *f, const char *name);
/* Add the item to ps and draw it when gnuplot is present. 0 or -1. */
int plot_finish(struct plot_set *ps, const char *name, const char *title, enum plot_kind kind,
                struct err *e);

#endif
