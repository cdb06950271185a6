/* rstat_traj.c: per-query outcomes at a threshold, revisit kinds, histograms. */
#include "reports/rstat.h"

#include <math.h>
#include <stdint.h>
#include <stdlib.h>
#include <string.h>

/* A hash grid over the map positions: cells of side r_pos in x, y; each
 * slot holds a cell key and the head of a chain through next[]. */
struct grid {
    double side;
    size_t mask;
    int64_t *kx, *ky;
    long *head, *next;
};

static size_t grid_hash(int64_t x, int64_t y, size_t mask)
{
    uint64_t h = (uint64_t)x * 0x9E3779B97F4A7C15ull ^ ((uint64_t)y + 0x632BE59BD9B4E019ull) * 0xC2B2AE3D27D4EB4Full;
    return (size_t)(h ^ (h >> 29)) & mask;
}

static size_t grid_slot(const struct grid *g, int64_t x, int64_t y)
{
    size_t s = grid_hash(x, y, g->mask);
    while (g->head[s] >= 0 && (g->kx[s] != x || g->ky[s] != y)) s = (s + 1) & g->mask;
    return s;
}

static void grid_free(struct grid *g)
{
    free(g->kx); free(g->ky); free(g->head); free(g->next);
}

static int grid_build(struct grid *g, const struct rdata_track *m, double side)
{
    memset(g, 0, sizeof *g);
    g->side = side;
    size_t cap = 16;
    while (cap < 2 * m->n + 2) cap *= 2;
    g->mask = cap - 1;
    g->kx = malloc(cap * sizeof *g->kx);
    g->ky = malloc(cap * sizeof *g->ky);
    g->head = malloc(cap * sizeof *g->head);
    g->next = malloc((m->n + 1) * sizeof *g->next);
    if (!g->kx || !g->ky || !g->head || !g->next) { grid_free(g); return -1; }
    for (size_t s = 0; s < cap; s++) g->head[s] = -1;
    for (size_t j = m->n; j-- > 0;) {
        if (!m->has[j]) continue;
        int64_t x = (int64_t)floor(m->x[j] / side), y = (int64_t)floor(m->y[j] / side);
        size_t s = grid_slot(g, x, y);
        g->kx[s] = x;
        g->ky[s] = y;
        g->next[j] = g->head[s];
        g->head[s] = (long)j;
    }
    return 0;
}

static int eligible(const struct protocol *pr, const struct rdata_track *q, long i,
                    const struct rdata_track *m, long j)
{
    if (pr->mode == PROTOCOL_RELOC) return 1;
    if (pr->exclusion_scans >= 0) return j <= i - pr->exclusion_scans;
    return m->t[j] <= q->t[i] - pr->exclusion_s;
}

static double pose_dist(const struct protocol *pr, const struct rdata_track *a, long i,
                        const struct rdata_track *b, long j)
{
    double dx = a->x[i] - b->x[j], dy = a->y[i] - b->y[j], dz = pr->planar ? 0 : a->z[i] - b->z[j];
    return sqrt(dx * dx + dy * dy + dz * dz);
}

/* The nearest eligible map scan within r_pos of query i, or -1. */
static long nearest_true(const struct grid *g, const struct protocol *pr,
                         const struct rdata_track *q, long i, const struct rdata_track *m)
{
    int64_t cx = (int64_t)floor(q->x[i] / g->side), cy = (int64_t)floor(q->y[i] / g->side);
    long best = -1;
    double bd = INFINITY;
    for (int64_t dx = -1; dx <= 1; dx++)
        for (int64_t dy = -1; dy <= 1; dy++) {
            size_t s = grid_slot(g, cx + dx, cy + dy);
            for (long j = g->head[s]; j >= 0; j = g->next[j]) {
                if (!eligible(pr, q, i, m, j)) continue;
                double d = pose_dist(pr, q, i, m, j);
                if (d <= pr->r_pos_m && (d < bd || (d == bd && j < best))) { bd = d; best = j; }
            }
        }
    return best;
}

/* Unit travel direction in x, y at scan i; 0 when the sensor stood still. */
static int heading(const struct rdata_track *t, long i, double *ux, double *uy)
{
    long a = i, b = i;
    for (int k = 0; k < 5 && a > 0; k++) if (t->has[--a]) break;
    for (int k = 0; k < 5 && b + 1 < (long)t->n; k++) if (t->has[++b]) break;
    if (!t->has[a]) a = i;
    if (!t->has[b]) b = i;
    double dx = t->x[b] - t->x[a], dy = t->y[b] - t->y[a], n = hypot(dx, dy);
    if (n < 1e-9) return 0;
    *ux = dx / n;
    *uy = dy / n;
    return 1;
}

static int revisit_kind(const struct rdata_track *q, long i, const struct rdata_track *m, long j)
{
    double ax, ay, bx, by;
    if (!heading(q, i, &ax, &ay) || !heading(m, j, &bx, &by)) return RSTAT_SAME;
    double c = ax * bx + ay * by;
    if (c > cos(M_PI / 4)) return RSTAT_SAME;
    if (c < -cos(M_PI / 4)) return RSTAT_REVERSE;
    return RSTAT_CROSSING;
}

static enum rstat_class classify(const struct rstat_outcome *o, const struct protocol *pr, double tau)
{
    int accepted = o->cand >= 0 && !isnan(tau) && o->dist <= tau;
    if (accepted && o->pose_d <= pr->r_pos_m) return RSTAT_CORRECT;
    if (accepted && o->pose_d > pr->r_neg_m) return RSTAT_WRONG;
    if (accepted) return RSTAT_BAND;
    return o->revisit ? RSTAT_MISSED : RSTAT_NONE;
}

static int outcome_one(const struct grid *g, const struct protocol *pr, const struct rdata_track *qt,
                       const struct rdata_track *mt, const struct rdata_top1 *r, double tau,
                       struct rstat_outcome *o, struct err *e)
{
    if ((size_t)r->query >= qt->n || !qt->has[r->query])
        return err_set(e, "poses.csv: no pose for query scan %ld, expected one row per scan used", r->query);
    if (r->cand >= 0 && ((size_t)r->cand >= mt->n || !mt->has[r->cand]))
        return err_set(e, "poses.csv: no pose for map scan %ld, expected one row per scan used", r->cand);
    memset(o, 0, sizeof *o);
    o->query = r->query;
    o->cand = r->cand;
    o->dist = r->dist;
    o->qx = qt->x[r->query];
    o->qy = qt->y[r->query];
    o->cx = r->cand >= 0 ? mt->x[r->cand] : NAN;
    o->cy = r->cand >= 0 ? mt->y[r->cand] : NAN;
    o->pose_d = r->cand >= 0 ? pose_dist(pr, qt, r->query, mt, r->cand) : NAN;
    long j = nearest_true(g, pr, qt, r->query, mt);
    o->revisit = j >= 0;
    if (o->revisit) o->kind = revisit_kind(qt, r->query, mt, j);
    o->cls = classify(o, pr, tau);
    return 0;
}

/* Loop mode scores one recording; poses.csv may list it as either set. */
static void tracks(const struct rdata_poses *p, const struct protocol *pr,
                   const struct rdata_track **qt, const struct rdata_track **mt)
{
    *mt = p->map.n ? &p->map : &p->query;
    *qt = p->query.n ? &p->query : &p->map;
    if (pr->mode == PROTOCOL_LOOP) *qt = *mt;
}

int rstat_true_pair(const struct rdata_poses *p, const struct protocol *pr, long i, long j)
{
    const struct rdata_track *qt, *mt;
    tracks(p, pr, &qt, &mt);
    if (i < 0 || j < 0 || (size_t)i >= qt->n || (size_t)j >= mt->n || !qt->has[i] || !mt->has[j]) return 0;
    return eligible(pr, qt, i, mt, j) && pose_dist(pr, qt, i, mt, j) <= pr->r_pos_m;
}

int rstat_outcomes(const struct rdata_poses *p, const struct rdata_queries *q,
                   const struct protocol *pr, double tau, struct rstat_outcomes *out,
                   struct err *e)
{
    memset(out, 0, sizeof *out);
    const struct rdata_track *qt, *mt;
    tracks(p, pr, &qt, &mt);
    struct grid g;
    if (grid_build(&g, mt, pr->r_pos_m)) return err_set(e, "out of memory for the pose grid");
    out->o = malloc((q->n ? q->n : 1) * sizeof *out->o);
    if (!out->o) { grid_free(&g); return err_set(e, "out of memory for %zu outcomes", q->n); }
    int rc = 0;
    for (size_t k = 0; !rc && k < q->n; k++) {
        rc = outcome_one(&g, pr, qt, mt, &q->q[k], tau, &out->o[k], e);
        if (rc) break;
        struct rstat_outcome *o = &out->o[k];
        out->by_class[o->cls]++;
        if (o->revisit) out->kinds[o->kind]++;
        out->n++;
    }
    grid_free(&g);
    if (rc) rstat_outcomes_free(out);
    return rc;
}

void rstat_outcomes_free(struct rstat_outcomes *o)
{
    free(o->o);
    memset(o, 0, sizeof *o);
}

/* The bin of x, placed the way numpy.histogram places it: a first guess
 * from the scaled offset, then moved so that edge[b] <= x < edge[b+1] with
 * edge[k] = lo + k * (hi - lo) / nbins and the last bin closed. */
static size_t hist_bin(const struct rstat_hist *h, double x)
{
    if (h->nbins == 1) return 0;
    double step = (h->hi - h->lo) / (double)h->nbins;
    long b = (long)((x - h->lo) * ((double)h->nbins / (h->hi - h->lo)));
    if (b < 0) b = 0;
    if (b > (long)h->nbins - 1) b = (long)h->nbins - 1;
    if (x < h->lo + (double)b * step && b > 0) b--;
    else if (b < (long)h->nbins - 1 && x >= h->lo + (double)(b + 1) * step) b++;
    return (size_t)b;
}

int rstat_hist(const struct rstat_outcomes *o, const struct protocol *pr, size_t nbins,
               struct rstat_hist *h, struct err *e)
{
    memset(h, 0, sizeof *h);
    h->lo = INFINITY;
    h->hi = -INFINITY;
    for (size_t k = 0; k < o->n; k++)
        if (o->o[k].cand >= 0 && isfinite(o->o[k].dist)) {
            h->lo = fmin(h->lo, o->o[k].dist);
            h->hi = fmax(h->hi, o->o[k].dist);
        }
    if (h->lo > h->hi) h->lo = h->hi = 0;
    h->nbins = h->lo == h->hi ? 1 : nbins;
    h->correct = calloc(h->nbins, sizeof *h->correct);
    h->wrong = calloc(h->nbins, sizeof *h->wrong);
    h->norev = calloc(h->nbins, sizeof *h->norev);
    if (!h->correct || !h->wrong || !h->norev) { rstat_hist_free(h); return err_set(e, "out of memory for a histogram"); }
    for (size_t k = 0; k < o->n; k++) {
        const struct rstat_outcome *r = &o->o[k];
        if (r->cand < 0 || !isfinite(r->dist)) continue;
        size_t b = hist_bin(h, r->dist);
        if (r->pose_d <= pr->r_pos_m) h->correct[b]++;
        else if (r->pose_d > pr->r_neg_m) (r->revisit ? h->wrong : h->norev)[b]++;
    }
    return 0;
}

void rstat_hist_free(struct rstat_hist *h)
{
    free(h->correct);
    free(h->wrong);
    free(h->norev);
    memset(h, 0, sizeof *h);
}

void rstat_track_length(const struct rdata_track *t, double *len_m, double *dur_s)
{
    double len = 0, t0 = NAN, t1 = NAN;
    long prev = -1;
    for (size_t i = 0; i < t->n; i++) {
        if (!t->has[i]) continue;
        if (prev >= 0) len += sqrt(pow(t->x[i] - t->x[prev], 2) + pow(t->y[i] - t->y[prev], 2) +
                                   pow(t->z[i] - t->z[prev], 2));
        else t0 = t->t[i];
        t1 = t->t[i];
        prev = (long)i;
    }
    *len_m = len;
    *dur_s = prev >= 0 ? t1 - t0 : 0;
}
