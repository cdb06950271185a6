/* gt.h: ground truth from poses: which queries are revisits, and how any
 * (query, candidate) pair counts.
 *
 * Two sets of scans take part: the map (the candidates) and the queries.
 * In loop mode they are one recording (pass query = NULL); candidate j of
 * query i must satisfy j < i and, with a time exclusion, t_j <= t_i - excl_s,
 * or with an index window (protocol.exclusion_scans = N >= 0) j <= i - N
 * (j < i holds in both, so N = 0 behaves as N = 1).
 * In reloc mode every map scan is a candidate of every query.
 *
 * d(i, j) is the distance between the sensor positions, 3D or planar (x, y)
 * as the protocol says.  A pair is GT_POS when d <= r_pos, GT_NEG when
 * d > r_neg, GT_BAND in between (only when r_neg > r_pos).  Query i is a
 * revisit when some candidate is GT_POS.  The nearest candidate and the
 * count within r_pos come from a k-d tree whose nodes also carry the
 * smallest index and time below them, so subtrees made only of excluded
 * (recent) scans are skipped: no all-pairs pass.
 *
 *     struct gt_poses map = {xyz, t, n};
 *     struct gt *g;
 *     if (gt_build(&proto, &map, NULL, NULL, 0, &g, e)) return -1;
 *     if (g->q[i].revisit) ... g->q[i].nearest, g->q[i].nearest_m ...
 *     enum gt_class c = gt_pair(g, i, j);
 *     gt_free(g);
 *
 * Ownership: gt_build copies what it needs; the caller's arrays may go away
 * afterwards.  The caller frees the result with gt_free (accepts NULL).
 * A built struct gt is read-only, so any number of threads may query it.
 * Links against libc, libm and harness/base/ (errors through err_set).
 */
#ifndef RV_GT_H
#define RV_GT_H

#include <stddef.h>
#include "harness/base/err.h"
#include "metrics/protocol.h"

enum gt_class {
    GT_NEG = 0,   /* d > r_neg: an accepted match is a false positive */
    GT_POS = 1,   /* d <= r_pos: a correct match */
    GT_BAND = 2   /* r_pos < d <= r_neg: counted as neither */
};

struct gt_poses {
    const double *xyz;   /* 3 doubles per scan: x, y, z in metres */
    const double *t;     /* seconds, one per scan; may be NULL in reloc mode or
                            with an index window */
    size_t n;
};

struct gt_query {
    int used;            /* 1: in the scored subset (all queries by default) */
    int revisit;         /* 1: some candidate lies within r_pos */
    long nearest;        /* nearest candidate (map index), -1 when there is none */
    double nearest_m;    /* its distance in metres, INFINITY when there is none */
    size_t n_within;     /* candidates within r_pos */
};

struct gt {
    struct protocol p;   /* copy of the protocol used */
    size_t n_query, n_map;
    size_t n_used;       /* queries in the subset */
    size_t n_revisits;   /* used queries that are revisits */
    struct gt_query *q;  /* n_query records */
    double *map_xyz;     /* copies; z is 0 when planar */
    double *query_xyz;   /* == map_xyz in loop mode */
    double *map_t, *query_t;  /* NULL when not given */
};

/* Build the ground truth.  query is NULL in loop mode and required in reloc
 * mode.  subset (n_subset indices into the queries) restricts which queries
 * are scored; NULL scores them all.  Returns 0 with *out set, or -1 with a
 * message in e and *out untouched: bad protocol, loop mode given a query set
 * or reloc mode without one, missing timestamps for a time exclusion, a
 * non-finite position or time (naming the scan), a subset index out of
 * range, out of memory. */
int gt_build(const struct protocol *p, const struct gt_poses *map,
             const struct gt_poses *query, const size_t *subset, size_t n_subset,
             struct gt **out, struct err *e);

void gt_free(struct gt *g);

/* d(qi, mj) in metres under the protocol's planar flag.  Cannot fail;
 * indices must be in range (asserted). */
double gt_dist(const struct gt *g, size_t qi, size_t mj);

/* GT_POS / GT_NEG / GT_BAND for the pair, whether or not mj is a candidate. */
enum gt_class gt_pair(const struct gt *g, size_t qi, size_t mj);

/* 1 when map scan mj is a candidate of query qi under the protocol. */
int gt_is_candidate(const struct gt *g, size_t qi, size_t mj);

/* Loop mode only: 1 when mj is the query itself or a later scan (j >= i),
 * which no retrieval may return; 0 otherwise and always 0 in reloc mode. */
int gt_is_future(const struct gt *g, size_t qi, size_t mj);

#endif
