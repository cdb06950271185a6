/* report.h: `revisit report`: a results folder in, a Markdown and a
 * self-contained HTML report out (tables with intervals, plots, verdicts,
 * the safety caution and a reproducibility block).
 *
 *     struct report_opts o; report_opts_defaults(&o);
 *     o.in_dir = "runs/sweep1"; o.out_dir = "runs/sweep1/report";
 *     struct report_result r;
 *     if (report_run(&o, &r, e)) ...     // 0 or -1 with e set
 *
 * Files under out_dir: report.md, report.html, scalars.csv and plots/
 * (NAME.dat, NAME.gp and, with gnuplot, NAME.png, NAME.svg, NAME.log).
 * Without gnuplot every table and data file is written and the report lists
 * the plots it skipped.  Every file is written atomically.
 */
#ifndef RV_REPORT_H
#define RV_REPORT_H

#include <stddef.h>
#include "harness/base/err.h"

struct report_opts {
    const char *in_dir;        /* results folder (eval output or sweep) */
    const char *out_dir;       /* NULL: IN/report */
    const char *title;         /* NULL: a title from the scenario or method */
    int md, html;              /* which documents to write (both by default) */
    int quiet;                 /* no progress bar */
    const char *command;       /* the exact command line, for the reproducibility block */
};

struct report_result {
    size_t cells, plots, drawn;
    int have_gnuplot;
    char out_dir[4096];
};

void report_opts_defaults(struct report_opts *o);
/* Parse "md,html" (any order, either alone) into o->md, o->html. 0 or -1. */
int report_formats(const char *list, struct report_opts *o, struct err *e);
int report_run(const struct report_opts *o, struct report_result *r, struct err *e);

#endif
