/* rstat.h: the numbers a report shows that result.json does not hold
 * directly: scalars aggregated over seeds, per-query outcomes at a
 * threshold for the trajectory view, top-1 distance histograms, the kinds
 * of revisit, and the headline findings.  No file I/O.
 *
 * Aggregation over seeds (one group = one method label x condition name):
 * mean = mean of the per-seed values; lo, hi = mean of the per-seed
 * bootstrap bounds (a typical interval, not an interval of the mean);
 * sd = sample standard deviation over seeds (NaN with one seed).
 *
 * Outcomes at threshold tau (query i, top candidate j1 at descriptor
 * distance D, pose distance d = d(i, j1)):
 *     accepted = j1 exists and D <= tau
 *     correct  = accepted and d <= r_pos
 *     wrong    = accepted and d >  r_neg          (drawn with a segment i -> j1)
 *     missed   = a revisit (some candidate within r_pos) that is not accepted
 *     band     = accepted, r_pos < d <= r_neg     (counted as neither)
 * Worked case, r_pos = r_neg = 3, tau = 0.5: D = 0.4, d = 1 -> correct;
 * D = 0.4, d = 9 -> wrong; D = 0.7 on a revisit -> missed; D = 0.7 on a
 * non-revisit -> none.
 *
 * Allocating functions return 0 or -1 with e set and leave nothing
 * allocated on -1; the caller frees with free().
 */
#ifndef RV_RSTAT_H
#define RV_RSTAT_H

#include <stddef.h>
#include "reports/rdata.h"

struct rstat_group {
    size_t method;               /* index into the method list */
    size_t cond;                 /* index into the condition list */
    size_t first_cell;           /* lowest cell index of the group */
    size_t n_seeds, n_failed;
    int present[RDATA_NMETRIC];  /* some seed had the metric */
    double mean[RDATA_NMETRIC], lo[RDATA_NMETRIC], hi[RDATA_NMETRIC], sd[RDATA_NMETRIC];
};

#define RSTAT_COND_MAX 384  /* cond (255) + " (" + axis key (63) + "=" + %g + ")" always fits */

struct rstat_table {
    size_t n_methods, n_conds, n_groups;
    const char **labels;         /* full method labels (name and settings), borrowed */
    const char **methods;        /* short names for tables and plots: the plugin
                                  * name when no other label shares it, else the label */
    const char **conds;          /* condition names, "NAME (KEY=VALUE)" for a swept
                                  * axis value; "" shows as "none" */
    char (*cond_keys)[RSTAT_COND_MAX];  /* storage of conds, one per cell */
    size_t *cell_method, *cell_cond;    /* per cell: its method and condition */
    size_t *cond_cell;           /* a cell of each condition (for chain, axis) */
    size_t *ref_cond;            /* per method: its reference condition */
    struct rstat_group *groups;  /* sorted by method, then axis value, then name */
};

/* Build the table from the cells.  The reference condition of a method is
 * its unperturbed condition (empty chain) when one finished, else the first
 * that finished. */
int rstat_table_build(const struct rdata_set *s, struct rstat_table *t, struct err *e);
void rstat_table_free(struct rstat_table *t);
/* The group of (method, cond), or NULL. */
const struct rstat_group *rstat_find(const struct rstat_table *t, size_t method, size_t cond);

enum rstat_class { RSTAT_NONE = 0, RSTAT_CORRECT, RSTAT_WRONG, RSTAT_MISSED, RSTAT_BAND };
enum rstat_kind { RSTAT_SAME = 0, RSTAT_REVERSE, RSTAT_CROSSING, RSTAT_NKIND };

struct rstat_outcome {
    long query, cand;            /* cand -1: no candidate */
    double qx, qy, cx, cy;       /* positions (cx, cy NaN without candidate) */
    double dist;                 /* descriptor distance of the top candidate */
    double pose_d;               /* d(query, cand), NaN without candidate */
    int revisit, kind;           /* kind valid when revisit */
    enum rstat_class cls;
};

struct rstat_outcomes {
    size_t n;
    struct rstat_outcome *o;
    size_t kinds[RSTAT_NKIND];   /* revisits by kind */
    size_t by_class[5];
};

/* Classify every query of queries.csv at threshold tau (NaN: nothing is
 * accepted).  Revisits are found with a grid of cell r_pos over the map
 * positions.  The kind compares the travel headings at the query and at
 * its nearest true candidate: below 45 deg same, above 135 deg reverse,
 * else crossing.  -1 when a scan lacks a pose. */
int rstat_outcomes(const struct rdata_poses *p, const struct rdata_queries *q,
                   const struct protocol *pr, double tau, struct rstat_outcomes *out,
                   struct err *e);
void rstat_outcomes_free(struct rstat_outcomes *o);

/* 1 when map scan j is a candidate of query scan i under the protocol and
 * lies within r_pos of it (a true revisit pair); 0 otherwise, also when a
 * pose is missing. */
int rstat_true_pair(const struct rdata_poses *p, const struct protocol *pr, long i, long j);

/* Histogram of the top-1 descriptor distance of queries whose top
 * candidate is within r_pos (correct), beyond r_neg on a query that has a
 * revisit (wrong) and beyond r_neg on a query with none (norev), over
 * nbins equal bins from the smallest to the largest top-1 distance (the
 * last bin closed, as numpy.histogram).  lo == hi gives one bin. */
struct rstat_hist {
    size_t nbins;
    double lo, hi;
    size_t *correct, *wrong, *norev;
};
int rstat_hist(const struct rstat_outcomes *o, const struct protocol *pr, size_t nbins,
               struct rstat_hist *h, struct err *e);
void rstat_hist_free(struct rstat_hist *h);

/* Travel length (m) and duration (s) of a track's present scans in order. */
void rstat_track_length(const struct rdata_track *t, double *len_m, double *dur_s);

#endif
