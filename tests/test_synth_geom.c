/* test_synth_geom.c: ray tests of the synthetic world's primitives and the
 * hierarchy that accelerates them. */
#include <math.h>
#include <stdlib.h>

#include "scenarios/bvh.h"
#include "scenarios/geom.h"
#include "scenarios/synrng.h"
#include "tests/check.h"

static void slab_cases(void)
{
    /* Worked slab-method cases (Kay & Kajiya, "Ray tracing complex scenes",
     * SIGGRAPH 1986, section on bounding slabs; Williams, Barrus, Morley and
     * Shirley, "An Efficient and Robust Ray-Box Intersection Algorithm",
     * JGT 2005, section 3: 1/d with IEEE infinities for axis-parallel rays).
     * Values worked by hand from t = (plane - o) / d. */
    double lo[3] = {1, -1, -1}, hi[3] = {3, 1, 1}, t0, t1;
    double o[3] = {0, 0, 0}, inv[3] = {1, INFINITY, INFINITY};   /* d = (1, 0, 0) */
    CHECK(geom_ray_aabb(o, inv, lo, hi, 0, 100, &t0, &t1), "axis ray hits the box ahead");
    CHECK_NEAR(t0, 1, 1e-12, "entry at the near x plane");
    CHECK_NEAR(t1, 3, 1e-12, "exit at the far x plane");
    double o2[3] = {0, 2, 0};  /* parallel to x, outside the y slab: 1/d = inf gives no overlap */
    CHECK(!geom_ray_aabb(o2, inv, lo, hi, 0, 100, &t0, &t1), "parallel ray outside a slab misses");
    double inv_neg[3] = {-1, INFINITY, INFINITY};  /* d = (-1, 0, 0): box behind */
    CHECK(!geom_ray_aabb(o, inv_neg, lo, hi, 0, 100, &t0, &t1), "box behind the origin is missed");
    double o3[3] = {2, 0, 0};  /* origin inside: entry clipped to tmin */
    CHECK(geom_ray_aabb(o3, inv, lo, hi, 0, 100, &t0, &t1) && t0 == 0 && fabs(t1 - 1) < 1e-12,
          "origin inside gives entry 0 and exit at the far plane");
    /* Diagonal d = (1,1,0)/sqrt2 from (0,-2,0) against [1,3]x[-1,1]: x slab
     * gives t in [sqrt2, 3 sqrt2], y slab [sqrt2, 3 sqrt2]: overlap [sqrt2, 3 sqrt2]. */
    double s = sqrt(2.0), o4[3] = {0, -2, 0}, inv4[3] = {s, s, INFINITY};
    CHECK(geom_ray_aabb(o4, inv4, lo, hi, 0, 100, &t0, &t1), "diagonal ray hits");
    CHECK_NEAR(t0, s, 1e-12, "diagonal entry at sqrt 2");
    CHECK_NEAR(t1, 3 * s, 1e-12, "diagonal exit at 3 sqrt 2");
    /* Same direction from (0,-3,0): x slab [sqrt2, 3 sqrt2], y slab [2 sqrt2,
     * 4 sqrt2]: overlap [2 sqrt2, 3 sqrt2]. */
    double o5[3] = {0, -3, 0};
    CHECK(geom_ray_aabb(o5, inv4, lo, hi, 0, 100, &t0, &t1) && fabs(t0 - 2 * s) < 1e-12 &&
          fabs(t1 - 3 * s) < 1e-12, "overlap of two slab intervals");
    double o6[3] = {0, -5, 0};  /* y slab [4 sqrt2, 6 sqrt2] after x slab ends: miss */
    CHECK(!geom_ray_aabb(o6, inv4, lo, hi, 0, 100, &t0, &t1), "disjoint slab intervals miss");
    CHECK(!geom_ray_aabb(o, inv, lo, hi, 0, 0.5, &t0, &t1), "box beyond tmax is missed");
}

static void box_cases(void)
{
    double o[3] = {0, 0, 0}, d[3] = {1, 0, 0}, t, n[3];
    struct geom_prim b = geom_box(5, 0, 0, 1, 1, 1, 0);
    CHECK(geom_ray_prim(&b, o, d, 0, 100, &t, n) && fabs(t - 4) < 1e-12 && n[0] == -1,
          "box face at x = 4 facing the ray");
    /* Rotated 45 degrees: the corner points at the origin, at 5 - sqrt 2. */
    struct geom_prim r = geom_box(5, 0, 0, 1, 1, 1, M_PI / 4);
    CHECK(geom_ray_prim(&r, o, d, 0, 100, &t, n), "rotated box is hit");
    CHECK_NEAR(t, 5 - sqrt(2.0), 1e-9, "rotated box corner at 5 - sqrt 2");
}

static void cyl_cases(void)
{
    /* Ray-cylinder against the analytic quadratic (common practice, no
     * source): |o_xy + t d_xy - c|^2 = r^2 gives a t^2 + 2 b t + c = 0. */
    struct geom_prim c = geom_cyl(3, 1, -2, 2, 0.5);
    double o[3] = {0, 0, 0.3}, d[3], t, n[3];
    double L = sqrt(9 + 1 + 0.01);
    d[0] = 3 / L; d[1] = 1 / L; d[2] = -0.1 / L;
    double a = d[0] * d[0] + d[1] * d[1], bb = -3 * d[0] - 1 * d[1], cc = 9 + 1 - 0.25;
    double want = (-bb - sqrt(bb * bb - a * cc)) / a;
    CHECK(geom_ray_prim(&c, o, d, 0, 100, &t, n), "ray toward the axis hits the cylinder");
    CHECK_NEAR(t, want, 1e-9, "side hit equals the smaller quadratic root");
    double hx = o[0] + t * d[0] - 3, hy = o[1] + t * d[1] - 1;
    CHECK_NEAR(n[0] * hx + n[1] * hy, 0.5, 1e-9, "side normal is radial");
    double od[3] = {3, 1, 5}, dd[3] = {0, 0, -1};
    CHECK(geom_ray_prim(&c, od, dd, 0, 100, &t, n) && fabs(t - 3) < 1e-12 && n[2] == 1,
          "vertical ray hits the top cap at z = 2");
    double om[3] = {0, 2, 0}, dm[3] = {1, 0, 0};  /* passes 1 m from the axis, r = 0.5 */
    CHECK(!geom_ray_prim(&c, om, dm, 0, 100, &t, n), "ray passing beside the cylinder misses");
    double oh[3] = {0, 1, 3}, dh[3] = {1, 0, 0};  /* above the top */
    CHECK(!geom_ray_prim(&c, oh, dh, 0, 100, &t, n), "ray above the cylinder misses");
}

static void ellipsoid_cases(void)
{
    struct geom_prim s = geom_ellipsoid(0, 0, 10, 2, 2);
    double o[3] = {0, 0, 0}, d[3] = {0, 0, 1}, t, n[3];
    CHECK(geom_ray_prim(&s, o, d, 0, 100, &t, n) && fabs(t - 8) < 1e-12, "sphere hit at 8");
    struct geom_prim e = geom_ellipsoid(5, 0, 0, 1, 3);
    double dx[3] = {1, 0, 0};
    CHECK(geom_ray_prim(&e, o, dx, 0, 100, &t, n) && fabs(t - 4) < 1e-12,
          "ellipsoid horizontal radius 1 gives a hit at 4");
}

static void bvh_agrees(void)
{
    enum { N = 3000, RAYS = 4000 };
    struct geom_prim *p = malloc(N * sizeof *p);
    struct synrng r;
    synrng_init(&r, 42, SYNRNG_WORLD);
    for (int k = 0; k < N; k++) {
        double x = synrng_range(&r, -100, 100), y = synrng_range(&r, -100, 100);
        int kind = k % 3;
        if (kind == 0) p[k] = geom_box(x, y, 2, synrng_range(&r, 0.2, 4), synrng_range(&r, 0.2, 4),
                                       synrng_range(&r, 0.5, 3), synrng_range(&r, 0, 3));
        else if (kind == 1) p[k] = geom_cyl(x, y, 0, synrng_range(&r, 1, 8), synrng_range(&r, 0.1, 1));
        else p[k] = geom_ellipsoid(x, y, 5, synrng_range(&r, 0.5, 3), synrng_range(&r, 0.5, 3));
        p[k].epochs = (k % 7 == 0) ? 2u : GEOM_ALWAYS;
    }
    struct bvh b;
    struct err e;
    CHECK(!bvh_build(&b, p, N, &e), "hierarchy builds");
    CHECK(b.n_nodes > 1 && b.n_nodes < 2 * N, "hierarchy has inner nodes and fewer than 2n");
    int agree = 0, hits = 0;
    for (int k = 0; k < RAYS; k++) {
        double o[3] = {synrng_range(&r, -50, 50), synrng_range(&r, -50, 50), 1.8};
        double az = synrng_range(&r, 0, 6.283185307179586), el = synrng_range(&r, -0.3, 0.3);
        double d[3] = {cos(el) * cos(az), cos(el) * sin(az), sin(el)};
        uint32_t mask = (k & 1) ? 1u : 2u;
        struct bvh_hit h1, h2;
        int a = bvh_cast(&b, o, d, 80, mask, &h1), c = bvh_cast_brute(p, N, o, d, 80, mask, &h2);
        hits += a;
        if (a == c && (!a || (h1.prim == h2.prim && h1.t == h2.t))) agree++;
    }
    CHECK(agree == RAYS, "hierarchy and brute force give the same nearest hit for every ray");
    CHECK(hits > RAYS / 4, "the random scene is hit by a fair share of rays");
    bvh_free(&b);
    struct bvh b0;
    CHECK(!bvh_build(&b0, p, 0, &e), "an empty hierarchy builds");
    double o[3] = {0, 0, 0}, d[3] = {1, 0, 0};
    struct bvh_hit h;
    CHECK(!bvh_cast(&b0, o, d, 10, 1, &h), "an empty hierarchy is never hit");
    bvh_free(&b0);
    free(p);
}

int main(void)
{
    slab_cases();
    box_cases();
    cyl_cases();
    ellipsoid_cases();
    bvh_agrees();
    return check_done();
}
