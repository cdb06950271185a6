/* world.c: storage of a synthetic world and the cast of one ray into it. */
#include "scenarios/world.h"

#include <math.h>
#include <stdlib.h>
#include <string.h>

void world_init(struct world *w)
{
    memset(w, 0, sizeof *w);
    /* No ground until world_set_ground: an empty rectangle. */
    w->ground_lo[0] = w->ground_lo[1] = INFINITY;
    w->ground_hi[0] = w->ground_hi[1] = -INFINITY;
    w->ground_refl = 0.25f;
}

void world_free(struct world *w)
{
    if (!w) return;
    bvh_free(&w->bvh);
    free(w->prims);
    free(w->movers);
    world_init(w);
}

int world_add(struct world *w, struct geom_prim p, struct err *e)
{
    if (w->frozen) return err_set(e, "world: internal: add after finish");
    if (w->n_prims == w->cap) {
        size_t nc = w->cap ? 2 * w->cap : 1024;
        struct geom_prim *np = realloc(w->prims, nc * sizeof *np);
        if (!np) return err_set(e, "world: out of memory at %zu primitives", w->n_prims);
        w->prims = np;
        w->cap = nc;
    }
    w->prims[w->n_prims++] = p;
    return 0;
}

int world_add_mover(struct world *w, const struct world_mover *m, struct err *e)
{
    if (w->n_movers == w->cap_movers) {
        size_t nc = w->cap_movers ? 2 * w->cap_movers : 16;
        struct world_mover *nm = realloc(w->movers, nc * sizeof *nm);
        if (!nm) return err_set(e, "world: out of memory at %zu moving vehicles", w->n_movers);
        w->movers = nm;
        w->cap_movers = nc;
    }
    w->movers[w->n_movers++] = *m;
    return 0;
}

void world_set_ground(struct world *w, double g0, double gx, double gy, const double lo[2],
                      const double hi[2])
{
    w->ground[0] = g0; w->ground[1] = gx; w->ground[2] = gy;
    w->ground_lo[0] = lo[0]; w->ground_lo[1] = lo[1];
    w->ground_hi[0] = hi[0]; w->ground_hi[1] = hi[1];
}

int world_finish(struct world *w, struct err *e)
{
    if (bvh_build(&w->bvh, w->prims, w->n_prims, e)) return -1;
    w->frozen = 1;
    return 0;
}

double world_ground_z(const struct world *w, double x, double y)
{
    return w->ground[0] + w->ground[1] * x + w->ground[2] * y;
}

size_t world_movers_at(const struct world *w, double t_s, double cx, double cy, double cz,
                       double radius_m, struct geom_prim *out, size_t max)
{
    size_t n = 0;
    for (size_t k = 0; k < w->n_movers && n < max; k++) {
        const struct world_mover *m = &w->movers[k];
        double dx = m->b[0] - m->a[0], dy = m->b[1] - m->a[1], len = hypot(dx, dy);
        if (!(len > 0)) continue;
        double s = fmod(m->phase_m + m->speed_mps * t_s, len);
        double ux = dx / len, uy = dy / len;
        double x = m->a[0] + s * ux + m->offset_m * uy, y = m->a[1] + s * uy - m->offset_m * ux;
        if (hypot(x - cx, y - cy) > radius_m) continue;
        double z = world_ground_z(w, x, y) + m->half[2];
        struct geom_prim p = geom_box(x, y, z, m->half[0], m->half[1], m->half[2], atan2(uy, ux));
        p.refl = m->refl;
        /* Skip a vehicle that would hold the sensor (the lanes overlap). */
        double lx = p.cs * (cx - x) + p.sn * (cy - y), ly = -p.sn * (cx - x) + p.cs * (cy - y);
        if (fabs(lx) < m->half[0] + 1 && fabs(ly) < m->half[1] + 1 && fabs(cz - z) < m->half[2] + 1)
            continue;
        out[n++] = p;
    }
    return n;
}

/* Ground plane z = g0 + gx x + gy y: solve o_z + t d_z = g(o + t d). */
static int world_ground_hit(const struct world *w, const double o[3], const double d[3],
                            double tmax, struct world_hit *h)
{
    double den = d[2] - w->ground[1] * d[0] - w->ground[2] * d[1];
    if (den >= 0) return 0;   /* parallel or rising away from the ground */
    double t = (world_ground_z(w, o[0], o[1]) - o[2]) / den;
    if (!(t > 0 && t <= tmax)) return 0;
    double x = o[0] + t * d[0], y = o[1] + t * d[1];
    if (x < w->ground_lo[0] || x > w->ground_hi[0] || y < w->ground_lo[1] || y > w->ground_hi[1])
        return 0;
    double l = sqrt(1 + w->ground[1] * w->ground[1] + w->ground[2] * w->ground[2]);
    h->t = t;
    h->n[0] = -w->ground[1] / l; h->n[1] = -w->ground[2] / l; h->n[2] = 1 / l;
    h->prim = WORLD_GROUND_PRIM;
    h->refl = w->ground_refl;
    return 1;
}

int world_cast(const struct world *w, const double o[3], const double d[3], double tmax,
               int epoch, const struct geom_prim *extra, size_t n_extra, struct world_hit *h)
{
    int hit = world_ground_hit(w, o, d, tmax, h);
    if (hit) tmax = h->t;
    struct bvh_hit bh;
    uint32_t mask = 1u << (epoch & 31);
    if (bvh_cast(&w->bvh, o, d, tmax, mask, &bh)) {
        hit = 1;
        tmax = bh.t;
        h->t = bh.t;
        memcpy(h->n, bh.n, sizeof bh.n);
        h->prim = bh.prim;
        h->refl = w->prims[bh.prim].refl;
    }
    if (n_extra && bvh_cast_brute(extra, n_extra, o, d, tmax, mask, &bh)) {
        hit = 1;
        h->t = bh.t;
        memcpy(h->n, bh.n, sizeof bh.n);
        h->prim = WORLD_MOVER_PRIM;
        h->refl = extra[bh.prim].refl;
    }
    return hit;
}
