/* gt.c: ground truth from poses through a k-d tree with candidacy pruning.
 *
 * Tree layout: perm[] holds map indices; node k covers perm[begin, end) and
 * stores its bounding box plus the smallest/largest map index and time below
 * it.  A query's candidates are {j : j <= idx_max, t_j <= t_max}, so a node
 * whose min index or min time is past the limits holds no candidate and is
 * skipped; one whose max values are inside the limits holds only candidates.
 *
 *   node: [lo xyz | hi xyz | min_t max_t | min_idx max_idx | begin end | l r]
 */
#include "metrics/gt.h"

#include <assert.h>
#include <math.h>
#include <stdint.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>

#include "harness/base/err.h"

#define GT_LEAF 32

struct kd_node {
    double lo[3], hi[3];
    double min_t, max_t;
    size_t min_idx, max_idx;
    size_t begin, end;
    long left, right;          /* -1 for a leaf */
};

struct kd_tree {
    const double *xyz;         /* map positions, 3 per scan */
    const double *t;           /* map times or NULL */
    size_t *perm;
    double *pts;               /* positions in perm order, for locality */
    double *tk;                /* times in perm order, or NULL */
    int t_mono;                /* times never decrease with the index */
    struct kd_node *nodes;
    size_t n_nodes, cap;
};

/* Candidate limits of one query: j is a candidate iff j <= idx_max and
 * (no time limit or t_j <= t_max).  idx_max < 0 means no candidate. */
struct gt_limits {
    long idx_max;
    double t_max;
};

static double dist3(const double *a, const double *b)
{
    double dx = a[0] - b[0], dy = a[1] - b[1], dz = a[2] - b[2];
    return sqrt(dx * dx + dy * dy + dz * dz);
}

/* ---- tree build ---------------------------------------------------------- */

static void kd_select(const double *xyz, size_t *perm, size_t lo, size_t hi,
                      size_t k, int dim)
{
    /* Quickselect perm[lo, hi) so that perm[k] holds the k-th coordinate and
     * everything before it is not greater (Hoare partition, signed indices). */
    long l = (long)lo, h = (long)hi - 1, kk = (long)k;
    while (l < h) {
        double pivot = xyz[3 * perm[l + (h - l) / 2] + dim];
        long i = l, j = h;
        while (i <= j) {
            while (xyz[3 * perm[i] + dim] < pivot) i++;
            while (xyz[3 * perm[j] + dim] > pivot) j--;
            if (i <= j) {
                size_t s = perm[i]; perm[i] = perm[j]; perm[j] = s;
                i++;
                j--;
            }
        }
        if (kk <= j) h = j;
        else if (kk >= i) l = i;
        else return;
    }
}

static void kd_bounds(const struct kd_tree *t, struct kd_node *nd)
{
    for (int d = 0; d < 3; d++) { nd->lo[d] = INFINITY; nd->hi[d] = -INFINITY; }
    nd->min_t = t->t ? INFINITY : -INFINITY;
    nd->max_t = -INFINITY;
    nd->min_idx = SIZE_MAX;
    nd->max_idx = 0;
    for (size_t k = nd->begin; k < nd->end; k++) {
        size_t j = t->perm[k];
        const double *p = t->xyz + 3 * j;
        for (int d = 0; d < 3; d++) {
            if (p[d] < nd->lo[d]) nd->lo[d] = p[d];
            if (p[d] > nd->hi[d]) nd->hi[d] = p[d];
        }
        if (t->t) {
            if (t->t[j] < nd->min_t) nd->min_t = t->t[j];
            if (t->t[j] > nd->max_t) nd->max_t = t->t[j];
        }
        if (j < nd->min_idx) nd->min_idx = j;
        if (j > nd->max_idx) nd->max_idx = j;
    }
}

static long kd_build_node(struct kd_tree *t, size_t begin, size_t end)
{
    assert(t->n_nodes < t->cap);
    long id = (long)t->n_nodes++;
    struct kd_node *nd = &t->nodes[id];
    nd->begin = begin;
    nd->end = end;
    nd->left = nd->right = -1;
    kd_bounds(t, nd);
    if (end - begin <= GT_LEAF) return id;
    int dim = 0;
    for (int d = 1; d < 3; d++)
        if (nd->hi[d] - nd->lo[d] > nd->hi[dim] - nd->lo[dim]) dim = d;
    size_t mid = begin + (end - begin) / 2;
    kd_select(t->xyz, t->perm, begin, end, mid, dim);
    long l = kd_build_node(t, begin, mid);
    long r = kd_build_node(t, mid, end);
    t->nodes[id].left = l;     /* t->nodes does not move: allocated up front */
    t->nodes[id].right = r;
    return id;
}

static int kd_build(struct kd_tree *t, const double *xyz, const double *times, size_t n)
{
    t->xyz = xyz;
    t->t = times;
    t->n_nodes = 0;
    t->perm = malloc((n ? n : 1) * sizeof *t->perm);
    /* A split node has more than GT_LEAF points and halves them, so every
     * leaf below it keeps at least GT_LEAF/2: at most n/(GT_LEAF/2) leaves
     * and twice as many nodes. */
    t->cap = 2 * (n / (GT_LEAF / 2)) + 1;
    t->nodes = malloc(t->cap * sizeof *t->nodes);
    t->pts = malloc((n ? n : 1) * 3 * sizeof *t->pts);
    if (!t->perm || !t->nodes || !t->pts) return -1;
    for (size_t j = 0; j < n; j++) t->perm[j] = j;
    if (n) kd_build_node(t, 0, n);
    /* Within a leaf, scans in index order, so the leaf loops of kd_nearest
     * and kd_count stop at the first scan past the query's index limit. */
    for (size_t id = 0; id < t->n_nodes; id++) {
        const struct kd_node *nd = &t->nodes[id];
        if (nd->left >= 0) continue;
        for (size_t k = nd->begin + 1; k < nd->end; k++)
            for (size_t m = k; m > nd->begin && t->perm[m - 1] > t->perm[m]; m--) {
                size_t sw = t->perm[m]; t->perm[m] = t->perm[m - 1]; t->perm[m - 1] = sw;
            }
    }
    for (size_t k = 0; k < n; k++) memcpy(t->pts + 3 * k, xyz + 3 * t->perm[k], 3 * sizeof *xyz);
    if (times) {
        t->tk = malloc((n ? n : 1) * sizeof *t->tk);
        if (!t->tk) return -1;
        for (size_t k = 0; k < n; k++) t->tk[k] = times[t->perm[k]];
        t->t_mono = 1;
        for (size_t j = 1; j < n && t->t_mono; j++) t->t_mono = times[j] >= times[j - 1];
    }
    return 0;
}

static void kd_free(struct kd_tree *t)
{
    free(t->perm);
    free(t->pts);
    free(t->tk);
    free(t->nodes);
}

/* ---- tree queries -------------------------------------------------------- */

/* Squared distances to a box: box_near2 never exceeds the squared distance
 * of a point inside, box_far2 is never below it (same operations, monotone
 * rounding), so pruning on them is exact. */
static double box_near2(const struct kd_node *nd, const double *x)
{
    double s = 0;
    for (int d = 0; d < 3; d++) {
        double e = x[d] < nd->lo[d] ? nd->lo[d] - x[d] : x[d] > nd->hi[d] ? x[d] - nd->hi[d] : 0;
        s += e * e;
    }
    return s;
}

static double box_far2(const struct kd_node *nd, const double *x)
{
    double s = 0;
    for (int d = 0; d < 3; d++) {
        double a = fabs(x[d] - nd->lo[d]), b = fabs(nd->hi[d] - x[d]);
        double e = a > b ? a : b;
        s += e * e;
    }
    return s;
}

static double dist2(const double *a, const double *b)
{
    double dx = a[0] - b[0], dy = a[1] - b[1], dz = a[2] - b[2];
    return dx * dx + dy * dy + dz * dz;
}

static int node_none(const struct kd_node *nd, const struct gt_limits *lim)
{
    return lim->idx_max < 0 || nd->min_idx > (size_t)lim->idx_max || nd->min_t > lim->t_max;
}

static int node_all(const struct kd_node *nd, const struct gt_limits *lim)
{
    return nd->max_idx <= (size_t)lim->idx_max && nd->max_t <= lim->t_max;
}

/* Leaf slots are in index order: once slot k is past the index limit (or,
 * with times that never decrease, past the time limit) so are the rest. */
static int leaf_go(const struct kd_tree *t, size_t k, const struct gt_limits *lim)
{
    return (long)t->perm[k] <= lim->idx_max && (!t->t_mono || t->tk[k] <= lim->t_max);
}

/* Tree slot k (map scan perm[k]) is a candidate. */
static int point_ok(const struct kd_tree *t, size_t k, const struct gt_limits *lim)
{
    return (long)t->perm[k] <= lim->idx_max && (!t->tk || t->tk[k] <= lim->t_max);
}

struct kd_best {
    long j;
    double s;      /* squared distance */
};

static void kd_nearest(const struct kd_tree *t, long id, const double *x,
                       const struct gt_limits *lim, double box2, struct kd_best *best)
{
    const struct kd_node *nd = &t->nodes[id];
    if (box2 > best->s || node_none(nd, lim)) return;
    if (nd->left < 0) {
        for (size_t k = nd->begin; k < nd->end && leaf_go(t, k, lim); k++) {
            if (!point_ok(t, k, lim)) continue;
            size_t j = t->perm[k];
            double s = dist2(t->pts + 3 * k, x);
            if (s < best->s || (s == best->s && (long)j < best->j)) {
                best->s = s;
                best->j = (long)j;
            }
        }
        return;
    }
    long a = nd->left, b = nd->right;
    double da = box_near2(&t->nodes[a], x), db = box_near2(&t->nodes[b], x);
    if (db < da) {
        long tmp = a; a = b; b = tmp;
        double td = da; da = db; db = td;
    }
    kd_nearest(t, a, x, lim, da, best);
    kd_nearest(t, b, x, lim, db, best);
}

/* Count candidates with sqrt(d2) <= r (the test gt_pair applies; r2 = r * r)
 * and keep the nearest of those seen in best.  A node wholly inside the ball
 * is counted without visiting its points; *skipped is then set, and best may
 * miss the true nearest. */
struct kd_ball {
    const double *x;
    double r, r2;
    const struct gt_limits *lim;
    struct kd_best best;
    int skipped;
};

static size_t kd_count(const struct kd_tree *t, long id, struct kd_ball *b)
{
    const struct kd_node *nd = &t->nodes[id];
    /* margins keep the squared-space pruning on the safe side of sqrt() <= r */
    if (node_none(nd, b->lim) || box_near2(nd, b->x) > b->r2 * (1 + 1e-12)) return 0;
    if (node_all(nd, b->lim) && box_far2(nd, b->x) <= b->r2 * (1 - 1e-12)) {
        b->skipped = 1;
        return nd->end - nd->begin;
    }
    if (nd->left >= 0) return kd_count(t, nd->left, b) + kd_count(t, nd->right, b);
    size_t c = 0;
    for (size_t k = nd->begin; k < nd->end && leaf_go(t, k, b->lim); k++) {
        double s = dist2(t->pts + 3 * k, b->x);
        if (s > b->r2 * (1 + 1e-12) || !point_ok(t, k, b->lim)) continue;
        if (s > b->r2 * (1 - 1e-12) && !(sqrt(s) <= b->r)) continue;   /* sqrt only near the rim */
        c++;
        long j = (long)t->perm[k];
        if (s < b->best.s || (s == b->best.s && j < b->best.j)) { b->best.s = s; b->best.j = j; }
    }
    return c;
}

/* ---- ground truth -------------------------------------------------------- */

static struct gt_limits gt_limits_of(const struct gt *g, size_t qi)
{
    struct gt_limits lim = {(long)g->n_map - 1, INFINITY};
    if (g->p.mode == PROTOCOL_RELOC) return lim;
    long gap = g->p.exclusion_scans >= 0 ? (g->p.exclusion_scans > 1 ? g->p.exclusion_scans : 1) : 1;
    lim.idx_max = (long)qi - gap;
    if (g->p.exclusion_scans < 0) lim.t_max = g->query_t[qi] - g->p.exclusion_s;
    return lim;
}

static int gt_check_input(const struct protocol *p, const struct gt_poses *map,
                          const struct gt_poses *query, struct err *e)
{
    char msg[256];
    if (protocol_check(p, msg, sizeof msg)) return err_set(e, "%s", msg);
    if (p->mode == PROTOCOL_LOOP && query)
        return err_set(e, "loop mode takes one recording, expected no separate query poses");
    if (p->mode == PROTOCOL_RELOC && !query)
        return err_set(e, "reloc mode needs query poses, expected a map and a query recording");
    if (p->mode == PROTOCOL_LOOP && p->exclusion_scans < 0 && !map->t)
        return err_set(e, "a time exclusion needs timestamps, expected one time per scan");
    const struct gt_poses *sets[2] = {map, query};
    for (int s = 0; s < 2; s++) {
        const struct gt_poses *ps = sets[s];
        if (!ps) continue;
        if (ps->n && !ps->xyz) return err_set(e, "%s poses have no positions", s ? "query" : "map");
        for (size_t i = 0; i < ps->n; i++) {
            const double *x = ps->xyz + 3 * i;
            if (!isfinite(x[0]) || !isfinite(x[1]) || !isfinite(x[2]))
                return err_set(e, "%s scan %zu has a non-finite position, expected finite x, y, z in metres",
                                s ? "query" : "map", i);
            if (ps->t && !isfinite(ps->t[i]))
                return err_set(e, "%s scan %zu has a non-finite time, expected seconds",
                                s ? "query" : "map", i);
        }
    }
    return 0;
}

static double *gt_copy_xyz(const struct gt_poses *ps, int planar)
{
    double *c = malloc((ps->n ? ps->n : 1) * 3 * sizeof *c);
    if (!c) return NULL;
    if (ps->n) memcpy(c, ps->xyz, ps->n * 3 * sizeof *c);
    if (planar)
        for (size_t i = 0; i < ps->n; i++) c[3 * i + 2] = 0;
    return c;
}

static double *gt_copy_t(const struct gt_poses *ps)
{
    if (!ps->t) return NULL;
    double *c = malloc((ps->n ? ps->n : 1) * sizeof *c);
    if (c && ps->n) memcpy(c, ps->t, ps->n * sizeof *c);
    return c;
}

static int gt_alloc(struct gt *g, const struct gt_poses *map, const struct gt_poses *query)
{
    const struct gt_poses *qs = query ? query : map;
    g->n_map = map->n;
    g->n_query = qs->n;
    g->q = calloc(qs->n ? qs->n : 1, sizeof *g->q);
    g->map_xyz = gt_copy_xyz(map, g->p.planar);
    g->query_xyz = query ? gt_copy_xyz(query, g->p.planar) : g->map_xyz;
    int need_t = g->p.mode == PROTOCOL_LOOP && g->p.exclusion_scans < 0;
    g->map_t = need_t ? gt_copy_t(map) : NULL;
    g->query_t = g->map_t;
    if (!g->q || !g->map_xyz || !g->query_xyz || (need_t && !g->map_t)) return -1;
    return 0;
}

static int gt_mark_subset(struct gt *g, const size_t *subset, size_t n_subset, struct err *e)
{
    if (!subset) {
        for (size_t i = 0; i < g->n_query; i++) g->q[i].used = 1;
        return 0;
    }
    for (size_t k = 0; k < n_subset; k++) {
        if (subset[k] >= g->n_query)
            return err_set(e, "query subset entry %zu is scan %zu, expected an index below %zu",
                            k, subset[k], g->n_query);
        g->q[subset[k]].used = 1;
    }
    return 0;
}

int gt_build(const struct protocol *p, const struct gt_poses *map,
             const struct gt_poses *query, const size_t *subset, size_t n_subset,
             struct gt **out, struct err *e)
{
    if (gt_check_input(p, map, query, e)) return -1;
    struct gt *g = calloc(1, sizeof *g);
    struct kd_tree tree = {0};
    if (!g) return err_set(e, "out of memory building ground truth");
    g->p = *p;
    if (gt_alloc(g, map, query) || kd_build(&tree, g->map_xyz, g->map_t, g->n_map)) {
        err_set(e, "out of memory building ground truth for %zu scans", map->n);
        goto fail;
    }
    if (gt_mark_subset(g, subset, n_subset, e)) goto fail;
    for (size_t i = 0; i < g->n_query; i++) {
        struct gt_query *q = &g->q[i];
        struct gt_limits lim = gt_limits_of(g, i);
        const double *x = g->query_xyz + 3 * i;
        struct kd_ball ball = {x, p->r_pos_m, p->r_pos_m * p->r_pos_m, &lim, {-1, INFINITY}, 0};
        if (g->n_map) {
            /* The ball pass finds the nearest when it lies within r_pos;
             * otherwise (or if a node was counted whole) search for it. */
            q->n_within = kd_count(&tree, 0, &ball);
            if (!q->n_within || ball.skipped)
                kd_nearest(&tree, 0, x, &lim, box_near2(&tree.nodes[0], x), &ball.best);
        }
        q->nearest = ball.best.j;
        q->nearest_m = sqrt(ball.best.s);
        q->revisit = q->n_within > 0;
        if (q->used) {
            g->n_used++;
            g->n_revisits += (size_t)q->revisit;
        }
    }
    kd_free(&tree);
    *out = g;
    return 0;
fail:
    kd_free(&tree);
    gt_free(g);
    return -1;
}

void gt_free(struct gt *g)
{
    if (!g) return;
    if (g->query_xyz != g->map_xyz) free(g->query_xyz);
    free(g->map_xyz);
    free(g->map_t);
    free(g->q);
    free(g);
}

double gt_dist(const struct gt *g, size_t qi, size_t mj)
{
    assert(qi < g->n_query && mj < g->n_map);
    return dist3(g->query_xyz + 3 * qi, g->map_xyz + 3 * mj);
}

enum gt_class gt_pair(const struct gt *g, size_t qi, size_t mj)
{
    double d = gt_dist(g, qi, mj);
    if (d <= g->p.r_pos_m) return GT_POS;
    return d > g->p.r_neg_m ? GT_NEG : GT_BAND;
}

int gt_is_candidate(const struct gt *g, size_t qi, size_t mj)
{
    struct gt_limits lim = gt_limits_of(g, qi);
    if (mj >= g->n_map || (long)mj > lim.idx_max) return 0;
    return !g->map_t || g->map_t[mj] <= lim.t_max;
}

int gt_is_future(const struct gt *g, size_t qi, size_t mj)
{
    return g->p.mode == PROTOCOL_LOOP && mj >= qi;
}
