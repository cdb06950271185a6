/* plot.h: the report's plots, as gnuplot scripts and data files written
 * side by side in one folder, then drawn by gnuplot when it is installed.
 *
 * Every plot NAME leaves NAME.dat (numbers only, never user text), NAME.gp
 * (the script; it writes NAME.png with the pngcairo terminal and NAME.svg
 * with the svg terminal) and, once drawn, NAME.png, NAME.svg and NAME.log.
 * A reviewer can edit NAME.gp and run `gnuplot NAME.gp` in that folder.
 * Labels from user input go through esc_gp, and the terminals are
 * `noenhanced`, so a label is drawn literally and cannot run a command.
 *
 *     struct plot_set ps; plot_set_init(&ps, "out/plots");
 *     plot_pr(&ps, "pr-c0", title, curves, n, NULL, e);  // writes .dat + .gp, draws
 *     if (plot_set_wait(&ps, e)) ...           // every gnuplot finished, images checked
 *     ... ps.items[k].drawn ...
 *     plot_set_free(&ps);
 *
 * gnuplot runs in the background, as many at a time as the machine has
 * cores (at most PLOT_MAX_JOBS): a plot function starts it and returns;
 * plot_set_wait waits for all of them and sets `drawn`.
 *
 * Failure contract: a plot function returns -1 when a file cannot be
 * written or gnuplot cannot be started, or when an earlier plot's gnuplot
 * failed on our script and was waited for to make room (e names NAME.gp
 * and NAME.log); plot_set_wait returns -1 for the first plot whose
 * gnuplot failed or left no valid image, after waiting for all.  Without
 * gnuplot both return 0 and the items stay not drawn.  plot_set_free
 * waits for any gnuplot still running.
 */
#ifndef RV_PLOT_H
#define RV_PLOT_H

#include <stdio.h>
#include <sys/types.h>
#include "harness/base/err.h"
#include "reports/rstat.h"

enum plot_kind { PLOT_DEGRADATION, PLOT_PR, PLOT_TRAJ, PLOT_MATRIX, PLOT_HIST, PLOT_SUMMARY, PLOT_SENSITIVITY,
                 PLOT_NKIND };

struct plot_item {
    char name[64];               /* file stem in the plot folder */
    char caption[768];           /* raw text: writers escape it */
    enum plot_kind kind;
    int drawn;                   /* NAME.png and NAME.svg exist and are valid */
};

#define PLOT_MAX_JOBS 8

struct plot_set {
    char dir[4096];
    char gnuplot[4096];          /* path of the gnuplot program, "" when absent */
    size_t n, cap;
    struct plot_item *items;
    size_t jobs, n_run;          /* gnuplots allowed at once, running now */
    struct { pid_t pid; size_t item; } run[PLOT_MAX_JOBS];  /* in the order started */
};

/* The palette: PLOT_NCOLOURS line colours, dark to light (see plot.c). */
#define PLOT_NCOLOURS 6
const char *plot_colour(size_t k);

/* Find gnuplot on PATH (the folder list in path_env, NULL: $PATH).
 * Fills out (size n) with its path, or "" when absent. */
void plot_find_gnuplot(const char *path_env, char *out, size_t n);

void plot_set_init(struct plot_set *ps, const char *dir);
int plot_set_wait(struct plot_set *ps, struct err *e);
void plot_set_free(struct plot_set *ps);

/* Kind names for the skipped-plots list ("degradation curve", ...). */
const char *plot_kind_name(enum plot_kind k);

/* One series of a plot: a name (user text) and n points of up to four columns. */
struct plot_series {
    const char *name;
    size_t n;
    const double *x, *y, *lo, *hi;  /* lo, hi may be NULL */
};

/* 1. metric against a swept parameter, one line per series with a band. */
int plot_degradation(struct plot_set *ps, const char *name, const char *title, const char *xlabel,
                     const char *ylabel, const struct plot_series *s, size_t n, struct err *e);
/* 2. precision against recall, one line per series (x = recall, y =
 * precision) with its F1max point marked; behind (NULL, or n entries, an
 * entry with n == 0 for none) are the same methods' reference curves,
 * drawn first, thin and dotted (NAME-reference.dat, NAME-f1max.dat); ops
 * (n_ops, may be 0) are operating points, each a square in its series'
 * colour with its label beside it (NAME-oppoints.dat). */
struct plot_oppoint {
    size_t series;               /* the curve it lies on */
    double recall, precision;
    const char *label;           /* user text, drawn literally */
};
int plot_pr(struct plot_set *ps, const char *name, const char *title, const struct plot_series *s, size_t n,
            const struct plot_series *behind, const struct plot_oppoint *ops, size_t n_ops, struct err *e);
/* 3. top view: the path, correct, wrong (with segments) and missed queries. */
int plot_traj(struct plot_set *ps, const char *name, const char *title, const struct rdata_poses *p,
              const struct rstat_outcomes *o, struct err *e);
/* 4. the distance matrix as an image, a pixel or more per distance up to
 * 2,000 a side; true marks rows x cols (1 = true revisit).  NAME.bin holds
 * the image's distances, NAME.dat the true revisits (plot_matrix.c). */
int plot_matrix(struct plot_set *ps, const char *name, const char *title,
                const struct matrix_csv *m, const unsigned char *truth, struct err *e);
/* The f of a matrix shown with each pixel the smallest of f x f distances
 * (1: every distance its own pixel or more). */
size_t plot_matrix_pool(const struct matrix_csv *m);
/* 5. top-1 distance histograms with the two thresholds marked (NaN: not drawn). */
int plot_hist(struct plot_set *ps, const char *name, const char *title, const struct rstat_hist *h,
              double tau_f1, double tau_r100, struct err *e);

/* 6. the summary chart: n_rows rows (conditions, the first at the top),
 * n_panels panels (metrics) side by side, per panel n_series methods, each
 * a point with its interval and a dashed line at its baseline value.
 * d[p * n_series + s] is method s in panel p; x, lo, hi hold n_rows values
 * (NaN: no point).  Nothing is written when n_rows or the panels are 0. */
struct plot_dots {
    const char *name;            /* method (user text) */
    const char *panel;           /* metric name */
    size_t series;               /* method index, for the data file's comments */
    const double *x, *lo, *hi;
    double base;                 /* the baseline value; NaN: none */
};
int plot_summary(struct plot_set *ps, const char *name, const char *title, const char *const *rows, size_t n_rows,
                 const struct plot_dots *d, size_t n_panels, size_t n_series, struct err *e);

/* 6. loss across the swept range per parameter (x: parameters in rank
 * order, names[k]), one bar per series with its interval as an error bar. */
int plot_sensitivity(struct plot_set *ps, const char *name, const char *title, const char *const *names,
                     size_t n_names, const struct plot_series *s, size_t n, struct err *e);

/* 1 when path holds a PNG signature and an IHDR chunk of non-zero size. */
int plot_png_ok(const char *path, unsigned *w, unsigned *h);

#endif
