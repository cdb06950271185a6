/* report_int.h: what report.c gathers and the document builder reads. */
#ifndef RV_REPORT_INT_H
#define RV_REPORT_INT_H

#include "reports/plot.h"
#include "reports/rdata.h"
#include "reports/report.h"
#include "reports/rstat.h"

#define REPORT_NOTES_MAX 64
#define REPORT_FINDINGS_MAX 8
#define REPORT_FINDINGS_ITEMS 64  /* methods listed in one finding */

/* The recording as seen through the reference cell's poses.csv. */
struct report_overview {
    int have;
    char cell_id[256];
    size_t map_scans, query_scans, queries, revisits;
    double map_len_m, map_dur_s, query_len_m, query_dur_s;
    size_t kinds[RSTAT_NKIND];
};

struct report_doc {
    const struct report_opts *opts;
    char title[512];
    const struct rdata_set *set;
    const struct rstat_table *table;
    const struct plot_set *plots;
    struct report_overview ov;
    size_t n_findings, n_notes;
    char findings[REPORT_FINDINGS_MAX][8192];  /* raw text; writers escape */
    char notes[REPORT_NOTES_MAX][1024];        /* plots not made and why; raw */
};

/* The three headline findings into d->findings (raw text): the condition
 * that hurts each method most, the best method per condition family, the
 * criterion nearest its threshold.  Cannot fail. */
void report_findings(struct report_doc *d);
/* "0.812 [0.770, 0.840]" (plus " sd 0.012" over several seeds) into out. */
void report_cell_text(const struct rstat_group *g, int metric, char *out, size_t n);
/* A plot's file stem named after what it shows: "KIND-INDEX-WHAT" with
 * WHAT cut to its first 32 letters and digits, lower case, every other run
 * as one '-' ("pr-3-sector-width-90"); the index keeps stems apart, and no
 * character of the user's beyond [a-z0-9-] reaches a file name. */
void report_plot_name(char *out, size_t n, const char *kind, size_t index, const char *what);
/* Condition label: "name" or "none" for the unperturbed one. */
const char *report_cond_name(const struct rstat_table *t, size_t c);
/* Distinct non-empty values of the char array at offset in each cell
 * (e.g. offsetof(struct rdata_cell, command)), first-seen order, at most max. */
size_t report_distinct(const struct rdata_set *s, size_t offset, const char **out, size_t max);
/* Distinct perturbation seeds, first-seen order, at most max. */
size_t report_seeds(const struct rdata_set *s, unsigned long long *out, size_t max);
#define REPORT_LIST_MAX 32
/* The caution every report carries (plain text, no markup). */
extern const char report_caution[];

/* Add a note (printf format) about a plot not made; dropped past the limit. */
void report_note(struct report_doc *d, const char *fmt, ...) __attribute__((format(printf, 2, 3)));
/* The first cell of (method m, condition c) that finished, or -1. */
long report_ok_cell(const struct rdata_set *s, const struct rstat_table *t, size_t m, size_t c);
/* Trajectory, matrix and histogram plots of each method's reference cell,
 * and the overview from the first of them.  0 or -1. */
struct progress;
int report_cell_plots(struct report_doc *d, struct plot_set *ps, struct progress *pg, struct err *e);

/* The summary chart (report_summary.c): per condition and method the F1max
 * and R@100P point and interval against the method's reference.  0 or -1. */
int report_summary_plot(struct report_doc *d, struct plot_set *ps, struct progress *pg, struct err *e);

/* The whole report as one document tree (report_build.c), which report.c
 * renders to Markdown and HTML; the caller frees it with rdoc_free.  NULL
 * when out of memory (a tree that ran out later says so in rdoc_oom). */
struct rdoc;
struct rdoc *report_build(const struct report_doc *d);
/* Sections of report_deploy.c: verdicts at a carried threshold, and scores
 * per kind of revisit; each adds nothing when the folder has none. */
void report_sec_oppoints(struct rdoc *r, const struct report_doc *d);
/* The short name of a full method label (the label itself when no method has it). */
const char *report_short_name(const struct rstat_table *t, const char *label);
/* A table cell holding a verdict: its colour, a mark and the word. */
void report_verdict_mark(struct rdoc *r, int pass);
/* A chain with every value, defaults included (the text as given when it
 * does not parse); "none (unperturbed)" for "". */
void report_chain_cell(struct rdoc *r, const char *text);
void report_sec_kinds(struct rdoc *r, const struct report_doc *d);
/* The sensitivity ranking: its table (a section) and its chart (a plot). */
void report_sec_sens(struct rdoc *r, const struct report_doc *d);
int report_sens_plot(struct report_doc *d, struct plot_set *ps, struct err *e);

#endif
