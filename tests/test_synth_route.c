/* test_synth_route.c: the district's streets, the route laid on them, and
 * the revisits found from poses. */
#include <math.h>
#include <stdlib.h>
#include <string.h>

#include "scenarios/district.h"
#include "scenarios/route.h"
#include "scenarios/synconf.h"
#include "tests/check.h"

static void flat_params(struct district_params *p, int roundabouts)
{
    district_defaults(p, DISTRICT_SUBURB);
    p->nx = 3; p->ny = 3;
    p->block_m[0] = p->block_m[1] = 50;
    p->jitter_m = 0;
    p->slope[0] = p->slope[1] = 0;
    p->roundabouts = roundabouts;
    p->diagonals = 0;
    p->epochs = 2;
}

static void leg(struct route_params *rp, int l, const int *nodes, int n, double lane)
{
    rp->leg[l].n = n;
    memcpy(rp->leg[l].node, nodes, n * sizeof *nodes);
    rp->leg[l].lane_m = lane;
    if (rp->n_legs < l + 1) rp->n_legs = l + 1;
}

static void straight_and_corner(void)
{
    struct district_params p;
    flat_params(&p, 0);
    struct world w;
    struct district d;
    struct err e;
    world_init(&w);
    CHECK(!district_build(&d, &w, &p, &e), "a flat 3 x 3 district builds");
    CHECK(w.n_prims > 50, "the district holds houses, fences, kerbs and trees");
    struct route_params rp;
    route_defaults(&rp);
    int a[] = {0, 2, 8};   /* (0,0) -> (2,0) -> (2,2): a run along row 0, then north */
    leg(&rp, 0, a, 3, 1.0);
    struct route r;
    CHECK(!route_build(&r, &d, &rp, &e), "route along a row and up a column builds");
    double worst = 0, vmin = 1e9, vmax = 0;
    int mono = 1;
    for (size_t i = 0; i < r.n; i++) {
        if (r.x[i] > 15 && r.x[i] < 85 && r.y[i] < 0) worst = fmax(worst, fabs(r.y[i] + 1.0));
        vmin = fmin(vmin, r.v[i]);
        vmax = fmax(vmax, r.v[i]);
        if (i && !(r.t[i] > r.t[i - 1])) mono = 0;
    }
    CHECK(worst < 1e-9, "on a straight the car keeps 1 m right of the centre line");
    CHECK(mono, "sample times increase strictly");
    CHECK(vmax <= rp.cruise_mps + 1e-9 && vmin >= 2 - 1e-9, "speed stays within [2 m/s, cruise]");
    CHECK(vmin < 0.8 * rp.cruise_mps, "the car slows for the corner");
    /* Offset path: 101 m east then 101 m north; the corner is a quadratic
     * Bezier over legs of 9 m, of length 18 * integral_0^1 sqrt(t^2 + (1-t)^2) dt
     * = 18 * 0.8114 (worked by hand, common practice, no source). */
    CHECK_NEAR(r.length_m, 202 - 18 + 18 * 0.8114, 0.6, "length is both offset streets less the cut corner");
    struct route_state s;
    route_at(&r, r.duration_s * 0.25, &s);
    CHECK(fabs(s.yaw) < 1e-6 && s.leg == 0, "heading along +x on the first street");
    route_at(&r, r.duration_s, &s);
    CHECK(fabs(s.yaw - M_PI / 2) < 1e-6, "heading +y at the end of the column");
    route_free(&r);
    int bad[] = {0, 4};
    rp.n_legs = 0;
    leg(&rp, 0, bad, 2, 1);
    CHECK(route_build(&r, &d, &rp, &e) == -1, "a step with no street refused");
    CHECK_MSG(e.msg, "$.route.legs[0].path[1]: no street from (0, 0) to (1, 1)", "no-street message");
    int ut[] = {0, 1, 0};
    leg(&rp, 0, ut, 3, 1);
    CHECK(route_build(&r, &d, &rp, &e) == -1, "a u-turn refused");
    CHECK_MSG(e.msg, "u-turn at (1, 0)", "u-turn message names the intersection");
    int l0[] = {0, 1}, l1[] = {2, 5};
    rp.n_legs = 0;
    leg(&rp, 0, l0, 2, 1);
    leg(&rp, 1, l1, 2, 1);
    CHECK(route_build(&r, &d, &rp, &e) == -1, "legs that do not join refused");
    CHECK_MSG(e.msg, "$.route.legs[1].path[0]: does not start where legs[0] ends", "join message");
    district_free(&d);
    world_free(&w);
}

static void roundabout(void)
{
    struct district_params p;
    flat_params(&p, 1);
    struct world w;
    struct district d;
    struct err e;
    world_init(&w);
    CHECK(!district_build(&d, &w, &p, &e), "a district with a roundabout builds");
    CHECK(d.round[4] == 1, "the one inner intersection is the roundabout");
    struct route_params rp;
    route_defaults(&rp);
    int a[] = {3, 5};   /* (0,1) -> (2,1) straight through (1,1) */
    leg(&rp, 0, a, 2, 1.0);
    struct route r;
    CHECK(!route_build(&r, &d, &rp, &e), "route through the roundabout builds");
    double dmin = 1e9, ymax_near = -1e9;
    for (size_t i = 0; i < r.n; i++) {
        double dx = r.x[i] - d.node[4][0], dy = r.y[i] - d.node[4][1];
        dmin = fmin(dmin, hypot(dx, dy));
        if (fabs(dx) < 1) ymax_near = fmax(ymax_near, dy);
    }
    CHECK(dmin > d.island_r_m + 1, "the drive keeps off the island");
    CHECK(ymax_near < 0, "straight through, the car passes the island on its right (counter-clockwise)");
    route_free(&r);
    district_free(&d);
    world_free(&w);
}

static void revisit_kinds(void)
{
    /* A hand-made drive: east along y = 0 (t 0..100), east again 1 m to the
     * side (same), west back along y = 2 (reverse), north across x = 50
     * (crossing).  1 m and 1 s per scan. */
    enum { N = 400 };
    static double x[N], y[N], yaw[N], t[N];
    for (int i = 0; i < N; i++) {
        int seg = i / 100, k = i % 100;
        t[i] = i;
        if (seg == 0) { x[i] = k; y[i] = 0; yaw[i] = 0; }
        if (seg == 1) { x[i] = k; y[i] = 1; yaw[i] = 0; }
        if (seg == 2) { x[i] = 99 - k; y[i] = 2; yaw[i] = M_PI; }
        if (seg == 3) { x[i] = 50; y[i] = k - 50; yaw[i] = M_PI / 2; }
    }
    struct route_revisit *rv;
    size_t n, never;
    struct err e;
    CHECK(!route_revisits(x, y, yaw, t, N, 3, 30, &rv, &n, &never, &e), "revisits found");
    size_t by[3] = {0, 0, 0};
    for (size_t k = 0; k < n; k++) by[rv[k].kind] += rv[k].scans;
    CHECK(by[ROUTE_SAME] == 100, "every scan of the second pass is a same-direction revisit");
    CHECK(by[ROUTE_REVERSE] == 100, "every scan of the way back is a reverse revisit");
    /* Crossing: scans with |y - {0,1,2}| <= 3 on x = 50 near earlier passes,
     * i.e. y in [-3, 5] -> 9 scans (y = -3 .. 5). */
    CHECK(by[ROUTE_CROSSING] == 9, "nine scans of the crossing are within 3 m of the earlier passes");
    CHECK(n == 3 && rv[0].kind == ROUTE_SAME && rv[0].first == 100 && rv[0].last == 199,
          "the same-direction stretch spans scans 100 to 199");
    CHECK(rv[0].match_first == 0 && fabs(rv[0].d_min_m - 1) < 1e-12, "its first match is scan 0 at 1 m");
    CHECK(never == 0 + 91, "the crossing's far ends are never revisited");
    free(rv);
    /* Nothing closer than 30 s counts: a single pass has no revisits. */
    CHECK(!route_revisits(x, y, yaw, t, 100, 3, 30, &rv, &n, &never, &e) && n == 0 && never == 100,
          "one pass has no revisits");
    free(rv);
}

/* Field by field: the struct has padding bytes. */
static int same_prims(const struct world *a, const struct world *b)
{
    for (size_t k = 0; k < a->n_prims; k++) {
        const struct geom_prim *p = &a->prims[k], *q = &b->prims[k];
        if (memcmp(p->c, q->c, sizeof p->c) || memcmp(p->h, q->h, sizeof p->h) || p->cs != q->cs ||
            p->sn != q->sn || p->refl != q->refl || p->kind != q->kind || p->epochs != q->epochs)
            return 0;
    }
    return 1;
}

static void determinism(void)
{
    struct district_params p;
    district_defaults(&p, DISTRICT_PORT);
    p.nx = 3; p.ny = 3;
    p.change_share = 1;
    p.epochs = 3;
    struct world a, b, c;
    struct district da, db, dc;
    struct err e;
    world_init(&a); world_init(&b); world_init(&c);
    CHECK(!district_build(&da, &a, &p, &e) && !district_build(&db, &b, &p, &e), "two builds");
    CHECK(a.n_prims == b.n_prims && same_prims(&a, &b), "the same seed builds the same district");
    p.seed = 99;
    CHECK(!district_build(&dc, &c, &p, &e), "another seed builds");
    CHECK(c.n_prims != a.n_prims || !same_prims(&a, &c), "another seed builds another district");
    size_t changing = 0;
    for (size_t k = 0; k < a.n_prims; k++) changing += a.prims[k].epochs != GEOM_ALWAYS && a.prims[k].epochs != 7u;
    CHECK(changing > 5, "with change everywhere, parked vehicles come and go between epochs");
    district_free(&da); district_free(&db); district_free(&dc);
    world_free(&a); world_free(&b); world_free(&c);
}

/* The demo's promise: the default port drive holds at least 1,500 scans of
 * a 32-channel sensor at 10 Hz. */
static void demo_size(void)
{
    struct synconf c;
    struct err e;
    struct world w;
    struct district d;
    struct route r;
    world_init(&w);
    CHECK(!synconf_load("port", NULL, &c, &e), "port loads");
    struct district_params p = c.world;
    p.seed = c.seed;
    CHECK(!district_build(&d, &w, &p, &e) && !route_build(&r, &d, &c.route, &e), "port drive builds");
    size_t scans = (size_t)floor((r.duration_s - 1 / c.sensor.spin_hz) * c.rate_hz) + 1;
    CHECK(scans >= 1500 && c.sensor.channels == 32 && c.rate_hz == 10,
          "the port drive holds at least 1,500 scans of 32 channels at 10 Hz");
    route_free(&r);
    district_free(&d);
    world_free(&w);
}

int main(void)
{
    demo_size();
    straight_and_corner();
    roundabout();
    revisit_kinds();
    determinism();
    return check_done();
}
