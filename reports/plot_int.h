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
#define PLOT_W_PX 960u       /* canvas width */
#define PLOT_H_PX 600u       /* canvas height of a plot with its key beside the graph */
#define PLOT_GRAPH_PX 500u   /* the canvas above the x axis of a plot with its key under it */

/* Script start: the PNG terminal (PLOT_W_PX x h), the escaped title, the
 * line styles 1..6. */
void plot_head(FILE *f, const char *name, const char *title, unsigned h);
/* Script end: the SVG terminal of the same size and a replot. */
void plot_tail(FILE *f, const char *name, unsigned h);
/* The same for a canvas of w x h pixels. */
void plot_head_size(FILE *f, const char *name, const char *title, unsigned w, unsigned h);
void plot_tail_size(FILE *f, const char *name, unsigned w, unsigned h);

/* A legend entry: at most PLOT_KEY_MAX bytes of the name (cut before a
 * UTF-8 continuation byte), then "...", so a long label cannot push the
 * key over the plot.  The tables carry the full name. */
#define PLOT_KEY_MAX 80
/* The bytes plot_key_title draws of name. */
size_t plot_key_len(const char *name);
/* name as a gnuplot string, cut as above. */
void plot_key_title(FILE *f, const char *name);

/* A key under the graph, placed by hand rather than by gnuplot's "key
 * below", which leaves the x label too little room: as many columns of
 * entries as fit the width (longest: the longest entry in bytes), a bottom
 * margin that holds the tic labels, the x label and the key's rows, and the
 * canvas height h that makes room for them. */
struct plot_under {
    unsigned h, rows, bottom_px;
};
struct plot_under plot_under_layout(size_t entries, size_t longest);
/* The margin and key commands of u (after plot_head). */
void plot_under_write(FILE *f, const struct plot_under *u);
/* Add the item to ps and draw it when gnuplot is present. 0 or -1. */
int plot_finish(struct plot_set *ps, const char *name, const char *title, enum plot_kind kind,
                struct err *e);

#endif
