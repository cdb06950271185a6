/* route.c: laying a drive out on the streets, its speed profile, revisits. */
#include "scenarios/route.h"

#include <math.h>
#include <stdlib.h>
#include <string.h>

#define ROUTE_DS 0.5          /* sample spacing, metres */
#define ROUTE_CORNER_M 9.0    /* largest corner rounding */

void route_defaults(struct route_params *p)
{
    memset(p, 0, sizeof *p);
    p->cruise_mps = 8;
    p->lateral_mps2 = 1.5;
    p->accel_mps2 = 1.2;
}

/* A growable polyline with a leg tag per vertex. */
struct rpoly {
    double (*p)[2];
    int *leg;
    size_t n, cap;
};

static int rpoly_add(struct rpoly *q, double x, double y, int leg)
{
    if (q->n == q->cap) {
        size_t nc = q->cap ? 2 * q->cap : 256;
        double (*np)[2] = realloc(q->p, nc * sizeof *np);
        if (!np) return -1;
        q->p = np;
        int *nl = realloc(q->leg, nc * sizeof *nl);
        if (!nl) return -1;
        q->leg = nl;
        q->cap = nc;
    }
    q->p[q->n][0] = x;
    q->p[q->n][1] = y;
    q->leg[q->n++] = leg;
    return 0;
}

static void rpoly_free(struct rpoly *q)
{
    free(q->p);
    free(q->leg);
    memset(q, 0, sizeof *q);
}

/* The flattened stops: node per stop and the leg of the segment leaving it. */
struct rstops {
    int node[ROUTE_MAX_LEGS * ROUTE_MAX_STOPS];
    int leg[ROUTE_MAX_LEGS * ROUTE_MAX_STOPS];
    int n;
};

static int rstops_make(const struct district *d, const struct route_params *p, struct rstops *s,
                       struct err *e)
{
    s->n = 0;
    if (p->n_legs < 1) return err_set(e, "$.route.legs: no legs, expected at least one");
    for (int l = 0; l < p->n_legs; l++) {
        const struct route_leg *g = &p->leg[l];
        if (g->n < 2) return err_set(e, "$.route.legs[%d].path: %d stops, expected at least 2", l, g->n);
        if (l && g->node[0] != p->leg[l - 1].node[p->leg[l - 1].n - 1])
            return err_set(e, "$.route.legs[%d].path[0]: does not start where legs[%d] ends", l, l - 1);
        for (int k = l ? 1 : 0; k < g->n; k++) {
            int a = g->node[k];
            if (a < 0 || a >= d->nx * d->ny)
                return err_set(e, "$.route.legs[%d].path[%d]: no such intersection", l, k);
            if (k == 0) { s->node[s->n] = a; s->leg[s->n++] = l; continue; }
            /* A run along one row or column passes every intersection on it. */
            int p = g->node[k - 1], pi = p % d->nx, pj = p / d->nx, ai = a % d->nx, aj = a / d->nx;
            int steps = pi == ai ? abs(aj - pj) : pj == aj ? abs(ai - pi) : 1;
            for (int q = 1; q <= steps; q++) {
                int b = steps == 1 ? a : (pj + (aj - pj) * q / steps) * d->nx + pi + (ai - pi) * q / steps;
                int from = s->node[s->n - 1];
                if (!district_street(d, from, b))
                    return err_set(e, "$.route.legs[%d].path[%d]: no street from (%d, %d) to (%d, %d)", l, k,
                                   from % d->nx, from / d->nx, b % d->nx, b / d->nx);
                if (s->n >= ROUTE_MAX_LEGS * ROUTE_MAX_STOPS)
                    return err_set(e, "$.route.legs[%d]: more than %d intersections in the drive", l,
                                   ROUTE_MAX_LEGS * ROUTE_MAX_STOPS);
                s->node[s->n] = b;
                s->leg[s->n++] = l;
            }
        }
    }
    return 0;
}

static void runit(const double a[2], const double b[2], double u[2])
{
    double l = hypot(b[0] - a[0], b[1] - a[1]);
    u[0] = (b[0] - a[0]) / l;
    u[1] = (b[1] - a[1]) / l;
}

/* Counter-clockwise arc around roundabout B from the entry to the exit lane. */
static int rarc(struct rpoly *q, const struct district *d, const double B[2], const double u1[2],
                double lane1, const double u2[2], double lane2, int leg)
{
    double R = d->island_r_m + 2.5 + 0.5 * (lane1 + lane2);
    double s1 = sqrt(R * R - lane1 * lane1), s2 = sqrt(R * R - lane2 * lane2);
    /* right of u is (u_y, -u_x) */
    double E[2] = {-u1[0] * s1 + u1[1] * lane1, -u1[1] * s1 - u1[0] * lane1};
    double X[2] = {u2[0] * s2 + u2[1] * lane2, u2[1] * s2 - u2[0] * lane2};
    double a0 = atan2(E[1], E[0]), a1 = atan2(X[1], X[0]);
    double da = fmod(a1 - a0 + 4 * M_PI, 2 * M_PI);
    if (da < 0.3) da += 2 * M_PI;
    int steps = 1 + (int)(da / 0.12);
    for (int k = 0; k <= steps; k++) {
        double a = a0 + da * k / steps;
        if (rpoly_add(q, B[0] + R * cos(a), B[1] + R * sin(a), leg)) return -1;
    }
    return 0;
}

/* Vertices of the lane-offset path through the stops. */
static int rvertices(const struct district *d, const struct route_params *p,
                     const struct rstops *s, struct rpoly *q, struct err *e)
{
    for (int k = 0; k < s->n; k++) {
        const double *B = d->node[s->node[k]];
        double u1[2] = {0, 0}, u2[2] = {0, 0};
        double l1 = k ? p->leg[s->leg[k - 1]].lane_m : 0, l2 = p->leg[s->leg[k]].lane_m;
        if (k) runit(d->node[s->node[k - 1]], B, u1);
        if (k + 1 < s->n) runit(B, d->node[s->node[k + 1]], u2);
        int rc = 0, leg = s->leg[k];
        if (k == 0) {
            rc = rpoly_add(q, B[0] + u2[1] * l2, B[1] - u2[0] * l2, leg);
        } else if (k + 1 == s->n) {
            rc = rpoly_add(q, B[0] + u1[1] * l1, B[1] - u1[0] * l1, leg);
        } else if (d->round[s->node[k]]) {
            rc = rarc(q, d, B, u1, l1, u2, l2, leg);
        } else {
            double cr = u1[0] * u2[1] - u1[1] * u2[0], dot = u1[0] * u2[0] + u1[1] * u2[1];
            if (dot < -0.85)
                return err_set(e, "route: u-turn at (%d, %d) (stop %d), expected a turn of at most 150 degrees",
                               s->node[k] % d->nx, s->node[k] / d->nx, k);
            double P1[2] = {B[0] + u1[1] * l1, B[1] - u1[0] * l1};
            double P2[2] = {B[0] + u2[1] * l2, B[1] - u2[0] * l2};
            if (fabs(cr) < 0.05) {
                rc = rpoly_add(q, 0.5 * (P1[0] + P2[0]), 0.5 * (P1[1] + P2[1]), leg);
            } else {
                /* P1 + a u1 = P2 + b u2 */
                double dx = P2[0] - P1[0], dy = P2[1] - P1[1];
                double a = (dx * u2[1] - dy * u2[0]) / cr;
                rc = rpoly_add(q, P1[0] + a * u1[0], P1[1] + a * u1[1], leg);
            }
        }
        if (rc) return err_set(e, "route: out of memory");
    }
    return 0;
}

/* Replace each inner vertex by a quadratic Bezier over its corner. */
static int rround(const struct rpoly *v, struct rpoly *q)
{
    if (rpoly_add(q, v->p[0][0], v->p[0][1], v->leg[0])) return -1;
    for (size_t k = 1; k + 1 < v->n; k++) {
        const double *P = v->p[k - 1], *V = v->p[k], *N = v->p[k + 1];
        double lp = hypot(P[0] - V[0], P[1] - V[1]), ln = hypot(N[0] - V[0], N[1] - V[1]);
        double r = fmin(ROUTE_CORNER_M, 0.45 * fmin(lp, ln));
        if (!(r > 1e-6)) { if (rpoly_add(q, V[0], V[1], v->leg[k])) return -1; continue; }
        double A[2] = {V[0] + r * (P[0] - V[0]) / lp, V[1] + r * (P[1] - V[1]) / lp};
        double C[2] = {V[0] + r * (N[0] - V[0]) / ln, V[1] + r * (N[1] - V[1]) / ln};
        for (int s = 0; s <= 8; s++) {
            double f = s / 8.0, g = 1 - f;
            if (rpoly_add(q, g * g * A[0] + 2 * g * f * V[0] + f * f * C[0],
                          g * g * A[1] + 2 * g * f * V[1] + f * f * C[1], s < 4 ? v->leg[k - 1] : v->leg[k]))
                return -1;
        }
    }
    return rpoly_add(q, v->p[v->n - 1][0], v->p[v->n - 1][1], v->leg[v->n - 1]);
}

static int ralloc(struct route *r, size_t n)
{
    r->x = malloc(n * sizeof *r->x);
    r->y = malloc(n * sizeof *r->y);
    r->yaw = malloc(n * sizeof *r->yaw);
    r->t = malloc(n * sizeof *r->t);
    r->v = malloc(n * sizeof *r->v);
    r->leg = malloc(n * sizeof *r->leg);
    return r->x && r->y && r->yaw && r->t && r->v && r->leg ? 0 : -1;
}

/* Samples every ROUTE_DS metres along the rounded polyline. */
static int rsample(const struct rpoly *q, struct route *r)
{
    double total = 0;
    for (size_t k = 1; k < q->n; k++) total += hypot(q->p[k][0] - q->p[k - 1][0], q->p[k][1] - q->p[k - 1][1]);
    size_t n = (size_t)(total / ROUTE_DS) + 1;
    if (n < 3 || ralloc(r, n)) return -1;
    size_t seg = 1;
    double seg_start = 0, seg_len = hypot(q->p[1][0] - q->p[0][0], q->p[1][1] - q->p[0][1]);
    for (size_t i = 0; i < n; i++) {
        double s = i * ROUTE_DS;
        while (s > seg_start + seg_len && seg + 1 < q->n) {
            seg_start += seg_len;
            seg++;
            seg_len = hypot(q->p[seg][0] - q->p[seg - 1][0], q->p[seg][1] - q->p[seg - 1][1]);
        }
        double f = seg_len > 0 ? (s - seg_start) / seg_len : 0;
        if (f > 1) f = 1;
        r->x[i] = q->p[seg - 1][0] + f * (q->p[seg][0] - q->p[seg - 1][0]);
        r->y[i] = q->p[seg - 1][1] + f * (q->p[seg][1] - q->p[seg - 1][1]);
        r->leg[i] = q->leg[seg - 1];
    }
    r->n = n;
    r->length_m = (n - 1) * ROUTE_DS;
    return 0;
}

/* Heading, bend-limited speed and time of each sample. */
static void rspeed(struct route *r, const struct route_params *p)
{
    size_t n = r->n;
    for (size_t i = 0; i < n; i++) {
        size_t a = i ? i - 1 : 0, b = i + 1 < n ? i + 1 : n - 1;
        r->yaw[i] = atan2(r->y[b] - r->y[a], r->x[b] - r->x[a]);
    }
    for (size_t i = 0; i < n; i++) {
        double kmax = 0;
        for (size_t j = i > 6 ? i - 6 : 1; j <= i + 6 && j + 1 < n; j++) {
            double k = fabs(remainder(r->yaw[j + 1] - r->yaw[j - 1], 2 * M_PI)) / (2 * ROUTE_DS);
            if (k > kmax) kmax = k;
        }
        double v = p->cruise_mps;
        if (kmax > 1e-9 && sqrt(p->lateral_mps2 / kmax) < v) v = sqrt(p->lateral_mps2 / kmax);
        r->v[i] = v < 2 ? 2 : v;
    }
    for (size_t i = 1; i < n; i++) {
        double lim = sqrt(r->v[i - 1] * r->v[i - 1] + 2 * p->accel_mps2 * ROUTE_DS);
        if (r->v[i] > lim) r->v[i] = lim;
    }
    for (size_t i = n - 1; i-- > 0;) {
        double lim = sqrt(r->v[i + 1] * r->v[i + 1] + 2 * p->accel_mps2 * ROUTE_DS);
        if (r->v[i] > lim) r->v[i] = lim;
    }
    r->t[0] = 0;
    for (size_t i = 1; i < n; i++) r->t[i] = r->t[i - 1] + 2 * ROUTE_DS / (r->v[i] + r->v[i - 1]);
    r->duration_s = r->t[n - 1];
}

int route_build(struct route *r, const struct district *d, const struct route_params *p,
                struct err *e)
{
    memset(r, 0, sizeof *r);
    for (int l = 0; l < p->n_legs; l++)
        if (!(p->leg[l].lane_m >= 0 && p->leg[l].lane_m <= 3))
            return err_set(e, "$.route.legs[%d].lane_m: %g, expected 0 to 3", l, p->leg[l].lane_m);
    if (!(p->cruise_mps > 0.5 && p->cruise_mps <= 40))
        return err_set(e, "$.route.speed_mps: %g, expected above 0.5 and at most 40", p->cruise_mps);
    struct rstops *s = malloc(sizeof *s);
    struct rpoly v = {0}, q = {0};
    int rc = -1;
    if (!s) return err_set(e, "route: out of memory");
    if (rstops_make(d, p, s, e) || rvertices(d, p, s, &v, e)) goto done;
    if (rround(&v, &q) || rsample(&q, r)) {
        err_set(e, "route: out of memory, or a route shorter than 1 m");
        goto done;
    }
    rspeed(r, p);
    rc = 0;
done:
    if (rc) route_free(r);
    free(s);
    rpoly_free(&v);
    rpoly_free(&q);
    return rc;
}

void route_free(struct route *r)
{
    if (!r) return;
    free(r->x); free(r->y); free(r->yaw); free(r->t); free(r->v); free(r->leg);
    memset(r, 0, sizeof *r);
}

void route_at(const struct route *r, double t, struct route_state *s)
{
    size_t lo = 0, hi = r->n - 1;
    if (t <= r->t[0]) hi = 0;
    else if (t >= r->t[hi]) lo = hi;
    while (hi - lo > 1) {
        size_t mid = (lo + hi) / 2;
        if (r->t[mid] <= t) lo = mid; else hi = mid;
    }
    double f = hi > lo ? (t - r->t[lo]) / (r->t[hi] - r->t[lo]) : 0;
    s->x = r->x[lo] + f * (r->x[hi] - r->x[lo]);
    s->y = r->y[lo] + f * (r->y[hi] - r->y[lo]);
    s->yaw = r->yaw[lo] + f * remainder(r->yaw[hi] - r->yaw[lo], 2 * M_PI);
    s->v = r->v[lo] + f * (r->v[hi] - r->v[lo]);
    s->leg = r->leg[lo];
}

const char *route_kind_name(int kind)
{
    static const char *const names[] = {"same", "reverse", "crossing"};
    return kind >= 0 && kind <= 2 ? names[kind] : "?";
}

static int rkind(double yaw_a, double yaw_b)
{
    double d = fabs(remainder(yaw_a - yaw_b, 2 * M_PI)) * 180 / M_PI;
    return d < 45 ? ROUTE_SAME : d > 135 ? ROUTE_REVERSE : ROUTE_CROSSING;
}

int route_revisits(const double *x, const double *y, const double *yaw, const double *t,
                   size_t n, double radius_m, double exclusion_s, struct route_revisit **out,
                   size_t *n_out, size_t *never, struct err *e)
{
    *out = NULL;
    *n_out = 0;
    *never = 0;
    size_t cap = 0;
    double r2 = radius_m * radius_m;
    for (size_t i = 0; i < n; i++) {
        size_t best = n;
        double bd = INFINITY;
        int other = 0;
        for (size_t j = 0; j < n; j++) {
            if (fabs(t[j] - t[i]) < exclusion_s) continue;
            double d2 = (x[i] - x[j]) * (x[i] - x[j]) + (y[i] - y[j]) * (y[i] - y[j]);
            if (d2 > r2) continue;
            other = 1;
            if (t[j] <= t[i] - exclusion_s && d2 < bd) { bd = d2; best = j; }
        }
        if (!other) (*never)++;
        if (best == n) continue;
        int kind = rkind(yaw[i], yaw[best]);
        struct route_revisit *lr = *n_out ? &(*out)[*n_out - 1] : NULL;
        if (lr && lr->kind == kind && lr->last + 1 == i) {
            lr->last = i; lr->match_last = best; lr->t_last = t[i]; lr->scans++;
            if (sqrt(bd) < lr->d_min_m) lr->d_min_m = sqrt(bd);
            if (sqrt(bd) > lr->d_max_m) lr->d_max_m = sqrt(bd);
            continue;
        }
        if (*n_out == cap) {
            size_t nc = cap ? 2 * cap : 16;
            struct route_revisit *nr = realloc(*out, nc * sizeof *nr);
            if (!nr) { free(*out); *out = NULL; *n_out = 0; return err_set(e, "route: out of memory"); }
            *out = nr;
            cap = nc;
        }
        struct route_revisit v = {kind, i, i, best, best, t[i], t[i], sqrt(bd), sqrt(bd), 1};
        (*out)[(*n_out)++] = v;
    }
    return 0;
}
