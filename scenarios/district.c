/* district.c: the procedural district generator. */
#include "scenarios/district.h"

#include <math.h>
#include <stdlib.h>
#include <string.h>

#include "scenarios/synrng.h"

static const char *const district_styles[] = {"port", "campus", "suburb", NULL};

int district_style_parse(const char *name)
{
    for (int k = 0; district_styles[k]; k++)
        if (!strcmp(name, district_styles[k])) return k;
    return -1;
}

const char *district_style_name(int style)
{
    return style >= 0 && style <= DISTRICT_SUBURB ? district_styles[style] : "?";
}

void district_defaults(struct district_params *p, int style)
{
    memset(p, 0, sizeof *p);
    p->seed = 1;
    p->style = style;
    p->nx = 6; p->ny = 4;
    p->block_m[0] = 50; p->block_m[1] = 80;
    p->jitter_m = 4;
    p->street_width_m = 12;
    p->slope[0] = 0.004; p->slope[1] = -0.002;
    p->roundabouts = 1; p->diagonals = 1;
    p->repeat_share = 0.5;
    p->parked_per_100m = 6;
    p->change_share = 0.4;
    p->traffic = 6;
    p->trees_per_100m = style == DISTRICT_PORT ? 1 : 6;
    p->poles_per_100m = 3;
    p->epochs = 1;
}

/* Everything the fill functions share. */
struct dctx {
    struct world *w;
    const struct district_params *p;
    struct district *d;
    struct synrng r;           /* the current stream (per block or per street) */
    uint32_t all;              /* mask of every epoch */
    struct err *e;
};

/* A block: its four corners counter-clockwise from (i, j), and its diagonal. */
struct dblock {
    double c[4][2];
    int diag;
    double margin;             /* content keeps this far from every street centre */
};

static double dground(const struct dctx *c, double x, double y)
{
    return world_ground_z(c->w, x, y);
}

/* Add a box from z0 above the ground, 2 hz tall; a box on the ground is sunk
 * 0.3 m so a slope leaves no gap under it. */
static int dbox(struct dctx *c, double x, double y, double z0, double hx, double hy, double hz,
                double yaw, float refl, uint32_t mask)
{
    double g = dground(c, x, y), bot = z0 > 0 ? g + z0 : g - 0.3, top = g + z0 + 2 * hz;
    struct geom_prim p = geom_box(x, y, 0.5 * (bot + top), hx, hy, 0.5 * (top - bot), yaw);
    p.refl = refl;
    p.epochs = mask;
    return world_add(c->w, p, c->e);
}

static int dcyl(struct dctx *c, double x, double y, double z0, double z1, double r, float refl)
{
    double g = dground(c, x, y);
    struct geom_prim p = geom_cyl(x, y, g + z0 - (z0 > 0 ? 0 : 0.3), g + z1, r);
    p.refl = refl;
    return world_add(c->w, p, c->e);
}

static int dtree(struct dctx *c, double x, double y)
{
    double h = synrng_range(&c->r, 2.5, 4.5), cr = synrng_range(&c->r, 1.8, 3.2);
    if (dcyl(c, x, y, 0, h + 0.5, synrng_range(&c->r, 0.15, 0.3), 0.35f)) return -1;
    struct geom_prim p = geom_ellipsoid(x, y, dground(c, x, y) + h + cr * 0.8, cr, cr * 0.85);
    p.refl = 0.3f;
    return world_add(c->w, p, c->e);
}

/* Signed distance of q to the left of the line a->b. */
static double dleft(const double a[2], const double b[2], double qx, double qy)
{
    double dx = b[0] - a[0], dy = b[1] - a[1], l = hypot(dx, dy);
    return (dx * (qy - a[1]) - dy * (qx - a[0])) / l;
}

/* Point inside the block at least m from its edges and its diagonal. */
static int dinside(const struct dblock *b, double x, double y, double m)
{
    for (int k = 0; k < 4; k++)
        if (dleft(b->c[k], b->c[(k + 1) & 3], x, y) < m) return 0;
    if (b->diag) {
        const double *a = b->diag == 1 ? b->c[0] : b->c[1], *z = b->diag == 1 ? b->c[2] : b->c[3];
        if (fabs(dleft(a, z, x, y)) < m) return 0;
    }
    return 1;
}

/* An oriented footprint fits when its corners are inside with margin m. */
static int dfits(const struct dblock *b, double x, double y, double hx, double hy, double yaw,
                 double m)
{
    double cs = cos(yaw), sn = sin(yaw);
    for (int k = 0; k < 4; k++) {
        double u = (k & 1) ? hx : -hx, v = (k & 2) ? hy : -hy;
        if (!dinside(b, x + cs * u - sn * v, y + sn * u + cs * v, m)) return 0;
    }
    return 1;
}

/* Frame of block side s: origin at corner s, unit direction u, inward n, length. */
static double dside(const struct dblock *b, int s, double o[2], double u[2], double n[2])
{
    const double *a = b->c[s], *z = b->c[(s + 1) & 3];
    double l = hypot(z[0] - a[0], z[1] - a[1]);
    o[0] = a[0]; o[1] = a[1];
    u[0] = (z[0] - a[0]) / l; u[1] = (z[1] - a[1]) / l;
    n[0] = -u[1]; n[1] = u[0];
    return l;
}

#define DFILL_QUAY_EDGE_M (-34.0)   /* water starts this far south of the lowest node */
#define DFILL_OUTER_M 48.0          /* depth of the blocks outside the street grid */

/* A stack of k containers (12.2 x 2.44 x 2.59 m each), one box per stack. */
static int dstack(struct dctx *c, double x, double y, double yaw, int k)
{
    float refl = (float)synrng_range(&c->r, 0.25, 0.75);
    return dbox(c, x, y, 0, 6.1, 1.22, 1.295 * k, yaw, refl, c->all);
}

static int dfill_containers(struct dctx *c, const struct dblock *b)
{
    double o[2], u[2], n[2], len = dside(b, 0, o, u, n), yaw = atan2(u[1], u[0]);
    /* Bays of five rows of stacks, a 10 m lane between bays. */
    for (int row = 0; row < 60; row++) {
        double y = b->margin + 3 + row * 2.74 + (row / 5) * 10;
        if (y > 200) break;
        for (double x = b->margin + 2; x < len; x += 13.2) {
            double px = o[0] + u[0] * (x + 6.1) + n[0] * (y + 1.22);
            double py = o[1] + u[1] * (x + 6.1) + n[1] * (y + 1.22);
            int k = 1 + (int)(synrng_uniform(&c->r) * 4);
            if (synrng_uniform(&c->r) < 0.1) continue;   /* a gap in the row */
            if (!dfits(b, px, py, 6.1, 1.22, yaw, b->margin)) continue;
            if (dstack(c, px, py, yaw, k)) return -1;
        }
    }
    return 0;
}

/* Posts every 3 m along the inside of each block side, with gates. */
static int dfence(struct dctx *c, const struct dblock *b, double inset, double h)
{
    for (int s = 0; s < 4; s++) {
        double o[2], u[2], n[2], len = dside(b, s, o, u, n);
        double gate = synrng_range(&c->r, 0.2, 0.8) * len;
        for (double x = 0; x < len; x += 3) {
            if (fabs(x - gate) < 5) continue;
            double px = o[0] + u[0] * x + n[0] * inset, py = o[1] + u[1] * x + n[1] * inset;
            if (!dinside(b, px, py, inset - 0.5)) continue;
            if (dcyl(c, px, py, 0, h, 0.06, 0.4f)) return -1;
        }
    }
    return 0;
}

/* A row of identical warehouse modules along side s, with loading docks. */
static int dfill_warehouses(struct dctx *c, const struct dblock *b, int s)
{
    double o[2], u[2], n[2], len = dside(b, s, o, u, n), yaw = atan2(u[1], u[0]);
    double L = synrng_range(&c->r, 30, 45), D = synrng_range(&c->r, 16, 22);
    double H = synrng_range(&c->r, 8, 12), set = b->margin + 4;
    for (double x = b->margin + 2; x + L < len; x += L + 8) {
        double cx = x + L / 2, cy = set + D / 2;
        double px = o[0] + u[0] * cx + n[0] * cy, py = o[1] + u[1] * cx + n[1] * cy;
        if (!dfits(b, px, py, L / 2, D / 2, yaw, b->margin)) continue;
        if (dbox(c, px, py, 0, L / 2, D / 2, H / 2, yaw, 0.55f, c->all)) return -1;
        for (double dx = 4; dx < L - 3; dx += 6.5) {   /* dock shelters on the street face */
            double qx = o[0] + u[0] * (x + dx) + n[0] * (set - 0.6);
            double qy = o[1] + u[1] * (x + dx) + n[1] * (set - 0.6);
            if (dbox(c, qx, qy, 0, 1.6, 0.6, 1.6, yaw, 0.2f, c->all)) return -1;
        }
        double rx = o[0] + u[0] * (x + L * 0.3) + n[0] * cy, ry = o[1] + u[1] * (x + L * 0.3) + n[1] * cy;
        if (dbox(c, rx, ry, H, 2, 1.5, 1.2, yaw, 0.5f, c->all)) return -1;
    }
    return 0;
}

static int dfill_yard(struct dctx *c, const struct dblock *b)
{
    double o[2], u[2], n[2];
    dside(b, 0, o, u, n);
    double yaw0 = atan2(u[1], u[0]);
    for (int k = 0; k < 40; k++) {
        double x = synrng_range(&c->r, 0, 90), y = synrng_range(&c->r, 0, 90);
        double px = o[0] + u[0] * x + n[0] * y, py = o[1] + u[1] * x + n[1] * y;
        double yaw = yaw0 + (synrng_uniform(&c->r) < 0.5 ? 0 : M_PI / 2);
        if (!dfits(b, px, py, 6.1, 1.22, yaw, b->margin)) continue;
        if (dstack(c, px, py, yaw, 1 + (int)(synrng_uniform(&c->r) * 2))) return -1;
    }
    for (int k = 0; k < 3; k++) {
        double x = synrng_range(&c->r, 10, 60), y = synrng_range(&c->r, 10, 60);
        double px = o[0] + u[0] * x + n[0] * y, py = o[1] + u[1] * x + n[1] * y;
        if (dinside(b, px, py, b->margin) && dcyl(c, px, py, 0, 25, 0.4, 0.5f)) return -1;
    }
    return 0;
}

static int dfill_port(struct dctx *c, const struct dblock *b)
{
    double u = synrng_uniform(&c->r);
    if (dfence(c, b, b->margin - 1, 2.4)) return -1;
    if (u < 0.55) return dfill_containers(c, b);
    if (u < 0.85) return dfill_warehouses(c, b, 0) || dfill_warehouses(c, b, 2);
    return dfill_yard(c, b);
}

/* Campus: a few buildings of varied size among trees and lawns. */
static int dfill_campus(struct dctx *c, const struct dblock *b)
{
    double o[2], u[2], n[2];
    dside(b, 0, o, u, n);
    double yaw0 = atan2(u[1], u[0]), bx[4][5];
    int nb = 0;
    for (int k = 0; k < 30 && nb < 3; k++) {
        double hx = synrng_range(&c->r, 8, 22), hy = synrng_range(&c->r, 6, 14);
        double x = synrng_range(&c->r, 0, 100), y = synrng_range(&c->r, 0, 100);
        double yaw = yaw0 + (synrng_uniform(&c->r) < 0.3 ? synrng_range(&c->r, -0.4, 0.4) : 0);
        double px = o[0] + u[0] * x + n[0] * y, py = o[1] + u[1] * x + n[1] * y;
        if (!dfits(b, px, py, hx, hy, yaw, b->margin + 3)) continue;
        int clash = 0;
        for (int q = 0; q < nb; q++)
            if (hypot(px - bx[q][0], py - bx[q][1]) < hypot(hx, hy) + hypot(bx[q][2], bx[q][3]) + 4) clash = 1;
        if (clash) continue;
        double h = synrng_range(&c->r, 4, 12.5);
        if (dbox(c, px, py, 0, hx, hy, h, yaw, 0.5f, c->all)) return -1;
        if (synrng_uniform(&c->r) < 0.5 &&   /* a lower wing */
            dbox(c, px + cos(yaw) * hx, py + sin(yaw) * hx, 0, hx * 0.4, hy * 1.3, h * 0.5, yaw, 0.45f, c->all))
            return -1;
        bx[nb][0] = px; bx[nb][1] = py; bx[nb][2] = hx * 1.4; bx[nb][3] = hy * 1.3; nb++;
    }
    for (int k = 0; k < 40; k++) {
        double x = synrng_range(&c->r, 0, 100), y = synrng_range(&c->r, 0, 100);
        double px = o[0] + u[0] * x + n[0] * y, py = o[1] + u[1] * x + n[1] * y;
        if (!dinside(b, px, py, b->margin)) continue;
        int clash = 0;
        for (int q = 0; q < nb; q++)
            if (hypot(px - bx[q][0], py - bx[q][1]) < hypot(bx[q][2], bx[q][3]) + 3) clash = 1;
        if (!clash && dtree(c, px, py)) return -1;
    }
    if (synrng_uniform(&c->r) < 0.6) {   /* a low wall along one side */
        double ls = dside(b, 1, o, u, n), m = b->margin + 1;
        double px = o[0] + u[0] * ls / 2 + n[0] * m, py = o[1] + u[1] * ls / 2 + n[1] * m;
        if (dbox(c, px, py, 0, ls / 2 - b->margin - 2, 0.2, 0.45, atan2(u[1], u[0]), 0.4f, c->all))
            return -1;
    }
    return 0;
}

/* Suburb: lots along each side, each a house, a front fence or hedge, a
 * side hedge, a tree and perhaps a car in the drive. */
static int dlot(struct dctx *c, const struct dblock *b, const double o[2], const double u[2],
                const double n[2], double x, double W, int fence)
{
    double yaw = atan2(u[1], u[0]), m = b->margin;
    double hx = 5, hy = 4, set = m + 5.5;
    double px = o[0] + u[0] * (x + W / 2) + n[0] * (set + hy), py = o[1] + u[1] * (x + W / 2) + n[1] * (set + hy);
    if (!dfits(b, px, py, W / 2, hy + 6, yaw, m - 0.5)) return 0;
    if (dbox(c, px, py, 0, hx, hy, 1.6, yaw, 0.5f, c->all)) return -1;
    if (dbox(c, px, py, 3.2, hx * 0.9, hy * 0.6, 1.0, yaw, 0.35f, c->all)) return -1;
    double fx = o[0] + u[0] * (x + W / 2 + 2) + n[0] * (m + 0.5), fy = o[1] + u[1] * (x + W / 2 + 2) + n[1] * (m + 0.5);
    if (fence) {
        for (double t = 0.5; t < W - 4; t += 2.0) {
            double qx = o[0] + u[0] * (x + 4 + t) + n[0] * (m + 0.5), qy = o[1] + u[1] * (x + 4 + t) + n[1] * (m + 0.5);
            if (dcyl(c, qx, qy, 0, 1.2, 0.05, 0.45f)) return -1;
        }
        if (dbox(c, fx, fy, 1.0, (W - 4) / 2, 0.04, 0.1, yaw, 0.45f, c->all)) return -1;
    } else if (dbox(c, fx, fy, 0, (W - 4) / 2, 0.35, 0.7, yaw, 0.3f, c->all)) {
        return -1;
    }
    double sx = o[0] + u[0] * x + n[0] * (m + 9), sy = o[1] + u[1] * x + n[1] * (m + 9);
    if (dbox(c, sx, sy, 0, 0.3, 8, 0.8, yaw, 0.3f, c->all)) return -1;
    double tx = o[0] + u[0] * (x + W * 0.7) + n[0] * (set + 2 * hy + 4), ty = o[1] + u[1] * (x + W * 0.7) + n[1] * (set + 2 * hy + 4);
    if (dinside(b, tx, ty, m) && dtree(c, tx, ty)) return -1;
    uint32_t mask = c->all;
    if (synrng_uniform(&c->r) < c->p->change_share) mask &= (uint32_t)synrng_next(&c->r);
    double cx = o[0] + u[0] * (x + 2) + n[0] * (m + 4), cy = o[1] + u[1] * (x + 2) + n[1] * (m + 4);
    if (mask && dbox(c, cx, cy, 0, 0.9, 2.2, 0.75, yaw + M_PI / 2, 0.6f, mask)) return -1;
    return 0;
}

static int dfill_suburb(struct dctx *c, const struct dblock *b, int repeated)
{
    double W = repeated ? 18 : synrng_range(&c->r, 15, 22);
    for (int s = 0; s < 4; s++) {
        double o[2], u[2], n[2], len = dside(b, s, o, u, n);
        int fence = synrng_uniform(&c->r) < 0.5;
        for (double x = b->margin; x + W < len - b->margin; x += W)
            if (dlot(c, b, o, u, n, x, W, fence)) return -1;
    }
    return 0;
}

static int dfill_block(struct dctx *c, const struct dblock *b, int i, int j, int repeated)
{
    (void)i; (void)j;
    switch (c->p->style) {
    case DISTRICT_PORT: return dfill_port(c, b);
    case DISTRICT_CAMPUS: return dfill_campus(c, b);
    default: return dfill_suburb(c, b, repeated);
    }
}

/* One parked vehicle at distance x along a street side. */
static int dparked(struct dctx *c, const double a[2], const double u[2], const double n[2],
                   double x, double side)
{
    double kind = synrng_uniform(&c->r), hl = 2.25, hw = 0.9, hh = 0.75;
    double trucks = c->p->style == DISTRICT_PORT ? 0.35 : 0.08;
    if (kind < trucks) { hl = 4.5; hw = 1.25; hh = 1.8; }
    else if (kind < trucks + 0.2) { hl = 2.7; hw = 1.0; hh = 1.1; }
    double off = side * (c->d->half_width_m - 1.1);
    double px = a[0] + u[0] * x + n[0] * off, py = a[1] + u[1] * x + n[1] * off;
    uint32_t mask = c->all;
    if (synrng_uniform(&c->r) < c->p->change_share) {
        mask &= (uint32_t)synrng_next(&c->r);   /* moved, added or removed between visits */
        px += u[0] * synrng_range(&c->r, -1.5, 1.5);
        py += u[1] * synrng_range(&c->r, -1.5, 1.5);
    }
    if (!mask) return 0;
    return dbox(c, px, py, 0, hl, hw, hh, atan2(u[1], u[0]), (float)synrng_range(&c->r, 0.3, 0.8), mask);
}

static int dfill_street(struct dctx *c, int ia, int ib)
{
    const struct district *d = c->d;
    const double *a = d->node[ia], *z = d->node[ib];
    double L = hypot(z[0] - a[0], z[1] - a[1]), hw = d->half_width_m;
    double u[2] = {(z[0] - a[0]) / L, (z[1] - a[1]) / L}, n[2] = {-u[1], u[0]};
    double t0 = hw + 3 + (d->round[ia] ? d->island_r_m + 3 : 0);
    double t1 = L - hw - 3 - (d->round[ib] ? d->island_r_m + 3 : 0);
    if (t1 - t0 < 4) return 0;
    double yaw = atan2(u[1], u[0]), mid = 0.5 * (t0 + t1);
    for (int s = -1; s <= 1; s += 2) {
        double off = s * (hw + 0.15);
        if (dbox(c, a[0] + u[0] * mid + n[0] * off, a[1] + u[1] * mid + n[1] * off, 0,
                 0.5 * (t1 - t0), 0.15, 0.08, yaw, 0.3f, c->all))
            return -1;
        double pitch = 7.0, p = c->p->parked_per_100m * pitch / 100;
        for (double x = t0 + 3; x < t1 - 3; x += pitch)
            if (synrng_uniform(&c->r) < p && dparked(c, a, u, n, x, s)) return -1;
        int trees = (int)(c->p->trees_per_100m * (t1 - t0) / 100 + synrng_uniform(&c->r));
        for (int k = 0; k < trees; k++) {
            double x = synrng_range(&c->r, t0, t1), o2 = s * (hw + 1.8);
            if (dtree(c, a[0] + u[0] * x + n[0] * o2, a[1] + u[1] * x + n[1] * o2)) return -1;
        }
        int poles = (int)(c->p->poles_per_100m * (t1 - t0) / 100 + synrng_uniform(&c->r));
        for (int k = 0; k < poles; k++) {
            double x = synrng_range(&c->r, t0, t1), o2 = s * (hw + 1.0);
            double px = a[0] + u[0] * x + n[0] * o2, py = a[1] + u[1] * x + n[1] * o2;
            if (dcyl(c, px, py, 0, synrng_range(&c->r, 5, 8), 0.1, 0.6f)) return -1;
            if (synrng_uniform(&c->r) < 0.4 && dbox(c, px, py, 2.2, 0.3, 0.05, 0.4, yaw, 0.9f, c->all))
                return -1;
        }
    }
    return 0;
}

static int dfill_island(struct dctx *c, int ia)
{
    const double *a = c->d->node[ia];
    double r = c->d->island_r_m;
    if (dcyl(c, a[0], a[1], 0, 0.25, r, 0.3f)) return -1;
    if (dcyl(c, a[0], a[1], 0, 4, 1.0, 0.6f)) return -1;
    for (int k = 0; k < 3; k++) {
        double ang = 2 * M_PI * k / 3 + synrng_uniform(&c->r);
        if (dtree(c, a[0] + 3 * cos(ang), a[1] + 3 * sin(ang))) return -1;
    }
    return 0;
}

/* The quay (port only): apron, identical gantry cranes, bollards. */
static int dfill_quay(struct dctx *c)
{
    const struct district *d = c->d;
    double xlo = INFINITY, xhi = -INFINITY, ylo = INFINITY;
    for (int i = 0; i < d->nx; i++) {
        if (d->node[i][0] < xlo) xlo = d->node[i][0];
        if (d->node[i][0] > xhi) xhi = d->node[i][0];
        if (d->node[i][1] < ylo) ylo = d->node[i][1];
    }
    double edge = ylo + DFILL_QUAY_EDGE_M;
    for (double x = xlo - 20; x < xhi + 20; x += 48) {   /* one crane module, repeated */
        for (int k = 0; k < 4; k++) {
            double lx = x + ((k & 1) ? 8 : -8), ly = (k & 2) ? edge + 3 : ylo - 14;
            if (dbox(c, lx, ly, 0, 0.6, 0.6, 13, 0, 0.5f, c->all)) return -1;
        }
        double gy0 = ylo - 12, gy1 = edge - 30;
        for (int k = 0; k < 2; k++)
            if (dbox(c, x + (k ? 8 : -8), 0.5 * (gy0 + gy1), 26, 0.8, 0.5 * (gy0 - gy1), 1.2, 0, 0.5f, c->all))
                return -1;
        if (dbox(c, x, ylo - 18, 28.4, 8.5, 3, 2, 0, 0.6f, c->all)) return -1;
    }
    for (double x = xlo - 40; x < xhi + 40; x += 12)
        if (dcyl(c, x, edge + 0.8, 0, 0.8, 0.3, 0.5f)) return -1;
    for (double x = xlo - 40; x < xhi + 40; x += 13.5)   /* a row of single containers on the apron */
        if (synrng_uniform(&c->r) < 0.6 && dstack(c, x, ylo - 24, 0, 1)) return -1;
    return 0;
}

/* Extended intersection (i, j) for i in -1..nx, j in -1..ny: outside the
 * grid, the border intersection pushed out by DFILL_OUTER_M. */
static void dnode_ext(const struct district *d, int i, int j, double out[2])
{
    int ci = i < 0 ? 0 : i >= d->nx ? d->nx - 1 : i, cj = j < 0 ? 0 : j >= d->ny ? d->ny - 1 : j;
    out[0] = d->node[cj * d->nx + ci][0] + (i < 0 ? -DFILL_OUTER_M : i >= d->nx ? DFILL_OUTER_M : 0);
    out[1] = d->node[cj * d->nx + ci][1] + (j < 0 ? -DFILL_OUTER_M : j >= d->ny ? DFILL_OUTER_M : 0);
}

/* The ring of blocks outside the grid (and the quay in the port). */
static int dfill_edges(struct dctx *c)
{
    const struct district *d = c->d;
    for (int j = -1; j < d->ny; j++)
        for (int i = -1; i < d->nx; i++) {
            if (i >= 0 && j >= 0 && i < d->nx - 1 && j < d->ny - 1) continue;
            if (j < 0 && c->p->style == DISTRICT_PORT) continue;
            struct dblock b;
            dnode_ext(d, i, j, b.c[0]);
            dnode_ext(d, i + 1, j, b.c[1]);
            dnode_ext(d, i + 1, j + 1, b.c[2]);
            dnode_ext(d, i, j + 1, b.c[3]);
            b.diag = 0;
            b.margin = d->half_width_m + 2.5;
            synrng_init(&c->r, c->p->seed, synrng_hash3(0xed, (uint64_t)(i + 1), (uint64_t)(j + 1)));
            if (dfill_block(c, &b, i, j, 0)) return -1;
        }
    if (c->p->style == DISTRICT_PORT) {
        synrng_init(&c->r, c->p->seed, 0x9a7);
        return dfill_quay(c);
    }
    return 0;
}

static int dtraffic(struct dctx *c)
{
    const struct district *d = c->d;
    synrng_init(&c->r, c->p->seed, SYNRNG_ROUTE ^ 0x7aff1c);
    int n = d->nx * d->ny, made = 0;
    for (int tries = 0; made < c->p->traffic && tries < 100 * (c->p->traffic + 1); tries++) {
        int a = (int)(synrng_uniform(&c->r) * n), b = (int)(synrng_uniform(&c->r) * n);
        if (!district_street(d, a, b)) continue;
        struct world_mover m;
        memset(&m, 0, sizeof m);
        memcpy(m.a, d->node[a], sizeof m.a);
        memcpy(m.b, d->node[b], sizeof m.b);
        m.speed_mps = synrng_range(&c->r, 4, 10);
        m.phase_m = synrng_range(&c->r, 0, 100);
        m.offset_m = 0.5 * d->half_width_m;
        int truck = synrng_uniform(&c->r) < 0.25;
        m.half[0] = truck ? 4.5 : 2.3; m.half[1] = truck ? 1.25 : 0.9; m.half[2] = truck ? 1.7 : 0.75;
        m.refl = (float)synrng_range(&c->r, 0.3, 0.8);
        if (world_add_mover(c->w, &m, c->e)) return -1;
        made++;
    }
    return 0;
}

static int dnodes(struct dctx *c)
{
    const struct district_params *p = c->p;
    struct district *d = c->d;
    double xs[16], ys[16];
    xs[0] = ys[0] = 0;
    for (int i = 1; i < p->nx; i++) xs[i] = xs[i - 1] + synrng_range(&c->r, p->block_m[0], p->block_m[1]);
    for (int j = 1; j < p->ny; j++) ys[j] = ys[j - 1] + synrng_range(&c->r, p->block_m[0], p->block_m[1]);
    for (int j = 0; j < p->ny; j++)
        for (int i = 0; i < p->nx; i++) {
            d->node[j * p->nx + i][0] = xs[i] + synrng_range(&c->r, -p->jitter_m, p->jitter_m);
            d->node[j * p->nx + i][1] = ys[j] + synrng_range(&c->r, -p->jitter_m, p->jitter_m);
        }
    int inner = (p->nx - 2) * (p->ny - 2);
    for (int k = 0; k < p->roundabouts && inner > 0; k++) {
        int q = (int)(synrng_uniform(&c->r) * inner);
        int i = 1 + q % (p->nx - 2), j = 1 + q / (p->nx - 2);
        d->round[j * p->nx + i] = 1;
    }
    int blocks = (p->nx - 1) * (p->ny - 1);
    for (int k = 0; k < p->diagonals && blocks > 0; k++) {
        int q = (int)(synrng_uniform(&c->r) * blocks);
        d->diag[q] = (uint8_t)(1 + (synrng_next(&c->r) & 1));
    }
    return 0;
}

int district_street(const struct district *d, int a, int b)
{
    int ai = a % d->nx, aj = a / d->nx, bi = b % d->nx, bj = b / d->nx;
    int di = abs(ai - bi), dj = abs(aj - bj);
    if (di + dj == 1) return 1;
    if (di != 1 || dj != 1) return 0;
    int i = ai < bi ? ai : bi, j = aj < bj ? aj : bj;
    int kind = d->diag[j * (d->nx - 1) + i];
    int rising = (bi - ai) * (bj - aj) > 0;
    return kind == (rising ? 1 : 2);
}

static int dblocks(struct dctx *c)
{
    const struct district_params *p = c->p;
    struct district *d = c->d;
    uint64_t module_seed = synrng_hash3(p->seed, 0xb10c, 0);
    for (int j = 0; j + 1 < p->ny; j++)
        for (int i = 0; i + 1 < p->nx; i++) {
            struct dblock b;
            int id[4] = {j * p->nx + i, j * p->nx + i + 1, (j + 1) * p->nx + i + 1, (j + 1) * p->nx + i};
            for (int k = 0; k < 4; k++) memcpy(b.c[k], d->node[id[k]], sizeof b.c[k]);
            b.diag = d->diag[j * (p->nx - 1) + i];
            b.margin = d->half_width_m + 2.5;
            struct synrng pick;
            synrng_init(&pick, p->seed, synrng_hash3(0xb1, (uint64_t)i, (uint64_t)j));
            int repeated = synrng_uniform(&pick) < p->repeat_share;
            uint64_t bs = repeated ? module_seed : synrng_hash3(p->seed, (uint64_t)i, (uint64_t)j);
            synrng_init(&c->r, bs, SYNRNG_WORLD);
            if (dfill_block(c, &b, i, j, repeated)) return -1;
        }
    return 0;
}

static int dstreets(struct dctx *c)
{
    struct district *d = c->d;
    int n = d->nx * d->ny;
    for (int a = 0; a < n; a++)
        for (int b = a + 1; b < n; b++) {
            if (!district_street(d, a, b)) continue;
            synrng_init(&c->r, c->p->seed, synrng_hash3(0x57, (uint64_t)a, (uint64_t)b));
            if (dfill_street(c, a, b)) return -1;
        }
    for (int a = 0; a < n; a++)
        if (d->round[a] && dfill_island(c, a)) return -1;
    return 0;
}

int district_build(struct district *d, struct world *w, const struct district_params *p,
                   struct err *e)
{
    memset(d, 0, sizeof *d);
    if (p->nx < 2 || p->ny < 2 || p->nx > 16 || p->ny > 16)
        return err_set(e, "world.grid: %d x %d intersections, expected 2 to 16 each", p->nx, p->ny);
    d->nx = p->nx;
    d->ny = p->ny;
    d->half_width_m = 0.5 * p->street_width_m;
    d->island_r_m = 5;
    d->node = calloc((size_t)p->nx * p->ny, sizeof *d->node);
    d->round = calloc((size_t)p->nx * p->ny, 1);
    d->diag = calloc((size_t)(p->nx - 1) * (p->ny - 1), 1);
    if (!d->node || !d->round || !d->diag) {
        district_free(d);
        return err_set(e, "district: out of memory");
    }
    struct dctx c = {w, p, d, {0}, p->epochs >= 32 ? 0xffffffffu : (1u << p->epochs) - 1, e};
    synrng_init(&c.r, p->seed, SYNRNG_WORLD);
    dnodes(&c);
    double lo[2] = {INFINITY, INFINITY}, hi[2] = {-INFINITY, -INFINITY};
    for (int k = 0; k < p->nx * p->ny; k++)
        for (int a = 0; a < 2; a++) {
            if (d->node[k][a] < lo[a]) lo[a] = d->node[k][a];
            if (d->node[k][a] > hi[a]) hi[a] = d->node[k][a];
        }
    double wlo[2] = {lo[0] - 150, lo[1] - 150}, whi[2] = {hi[0] + 150, hi[1] + 150};
    if (p->style == DISTRICT_PORT) wlo[1] = lo[1] + DFILL_QUAY_EDGE_M;
    world_set_ground(w, 0, p->slope[0], p->slope[1], wlo, whi);
    if (dblocks(&c) || dstreets(&c) || dfill_edges(&c) || dtraffic(&c)) {
        district_free(d);
        return -1;
    }
    return 0;
}

void district_free(struct district *d)
{
    if (!d) return;
    free(d->node);
    free(d->round);
    free(d->diag);
    memset(d, 0, sizeof *d);
}
