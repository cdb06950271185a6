/* gjk.c: distance between two convex hulls given by their vertices
 * (Gilbert, Johnson & Keerthi, "A fast procedure for computing the distance
 * between complex objects in three-dimensional space", IEEE J. Robotics and
 * Automation, 1988).
 *
 * The hulls are never built: the support point of a hull in a direction is
 * the vertex with the largest dot product, found by a scan over its vertices.
 * GJK walks simplices (1 to 4 points) of the Minkowski difference A − B
 * towards the origin; the closest point of each simplex to the origin is
 * found by Voronoi-region tests (point, edge, triangle, tetrahedron), and
 * the simplex is cut down to the points that support that closest point.
 *
 * Stop rules: the gap |v|² − v·w between the current distance and the lower
 * bound from the new support point w falls below 1e-12 |v|² (relative error
 * of the distance about 1e-12), w repeats a simplex point, |v| stops
 * shrinking, or the origin lies in the tetrahedron / within 1e-10 of the
 * simplex (distance 0: the hulls intersect or touch).
 */
#include <math.h>
#include <string.h>
#include "harness/plugins/sop/sop.h"

#define GJK_MAX_ITER 64
#define GJK_REL_EPS 1e-12
#define GJK_ZERO2 1e-20

static double gjk_dot(const double a[3], const double b[3])
{
    return a[0] * b[0] + a[1] * b[1] + a[2] * b[2];
}

static void gjk_sub(const double a[3], const double b[3], double out[3])
{
    out[0] = a[0] - b[0];
    out[1] = a[1] - b[1];
    out[2] = a[2] - b[2];
}

static const double *gjk_support(const double *p, int n, const double d[3])
{
    int best = 0;
    double bd = gjk_dot(p, d);
    for (int k = 1; k < n; k++) {
        double s = gjk_dot(p + 3 * k, d);
        if (s > bd)
            bd = s, best = k;
    }
    return p + 3 * best;
}

/* Keep simplex points listed in keep[0..nk) (indices into s), in that order. */
static int gjk_keep(double s[4][3], const int *keep, int nk)
{
    double t[4][3];
    for (int k = 0; k < nk; k++)
        memcpy(t[k], s[keep[k]], sizeof t[k]);
    memcpy(s, t, sizeof(double[3]) * (size_t)nk);
    return nk;
}

/* Closest point to the origin on segment s[i]s[j]; writes v, returns the kept count. */
static int gjk_edge(double s[4][3], int i, int j, double v[3])
{
    double ab[3];
    gjk_sub(s[j], s[i], ab);
    double den = gjk_dot(ab, ab), t = den > 0 ? -gjk_dot(s[i], ab) / den : 0;
    if (t <= 0) {
        memcpy(v, s[i], sizeof(double[3]));
        return gjk_keep(s, (int[]){i}, 1);
    }
    if (t >= 1) {
        memcpy(v, s[j], sizeof(double[3]));
        return gjk_keep(s, (int[]){j}, 1);
    }
    for (int c = 0; c < 3; c++)
        v[c] = s[i][c] + t * ab[c];
    return gjk_keep(s, (int[]){i, j}, 2);
}

/* Closest point to the origin on triangle s[0]s[1]s[2] (the Voronoi-region
 * walk of the point-triangle test, with the query point at the origin). */
static int gjk_triangle(double s[4][3], double v[3])
{
    double ab[3], ac[3], bc[3];
    gjk_sub(s[1], s[0], ab);
    gjk_sub(s[2], s[0], ac);
    gjk_sub(s[2], s[1], bc);
    double d1 = -gjk_dot(ab, s[0]), d2 = -gjk_dot(ac, s[0]);
    if (d1 <= 0 && d2 <= 0)
        return memcpy(v, s[0], sizeof(double[3])), gjk_keep(s, (int[]){0}, 1);
    double d3 = -gjk_dot(ab, s[1]), d4 = -gjk_dot(ac, s[1]);
    if (d3 >= 0 && d4 <= d3)
        return memcpy(v, s[1], sizeof(double[3])), gjk_keep(s, (int[]){1}, 1);
    double vc = d1 * d4 - d3 * d2;
    if (vc <= 0 && d1 >= 0 && d3 <= 0)
        return gjk_edge(s, 0, 1, v);
    double d5 = -gjk_dot(ab, s[2]), d6 = -gjk_dot(ac, s[2]);
    if (d6 >= 0 && d5 <= d6)
        return memcpy(v, s[2], sizeof(double[3])), gjk_keep(s, (int[]){2}, 1);
    double vb = d5 * d2 - d1 * d6;
    if (vb <= 0 && d2 >= 0 && d6 <= 0)
        return gjk_edge(s, 0, 2, v);
    double va = d3 * d6 - d5 * d4;
    if (va <= 0 && d4 - d3 >= 0 && d5 - d6 >= 0)
        return gjk_edge(s, 1, 2, v);
    double sum = va + vb + vc;
    /* va + vb + vc is |ab x ac|^2: near zero for a sliver */
    if (!(sum > 1e-14 * gjk_dot(ab, ab) * gjk_dot(ac, ac))) {
        /* collinear points: the best of the three edges */
        double t[4][3], w[3], best = INFINITY;
        int pairs[3][2] = {{0, 1}, {0, 2}, {1, 2}}, pick = 0;
        for (int k = 0; k < 3; k++) {
            memcpy(t, s, sizeof t);
            gjk_edge(t, pairs[k][0], pairs[k][1], w);
            if (gjk_dot(w, w) < best)
                best = gjk_dot(w, w), pick = k;
        }
        return gjk_edge(s, pairs[pick][0], pairs[pick][1], v);
    }
    double bv = vb / sum, cw = vc / sum;
    for (int c = 0; c < 3; c++)
        v[c] = s[0][c] + ab[c] * bv + ac[c] * cw;
    return 3;
}

/* Closest point to the origin on tetrahedron s[0..3].  Faces that have the
 * origin on their outer side are tried (all four when the tetrahedron is
 * flat); returns 4 when the origin is inside. */
static int gjk_tetra(double s[4][3], double v[3])
{
    static const int face[4][4] = {{0, 1, 2, 3}, {0, 2, 3, 1}, {0, 3, 1, 2}, {1, 3, 2, 0}};
    double e1[3], e2[3], e3[3], n[3];
    gjk_sub(s[1], s[0], e1);
    gjk_sub(s[2], s[0], e2);
    gjk_sub(s[3], s[0], e3);
    n[0] = e1[1] * e2[2] - e1[2] * e2[1];
    n[1] = e1[2] * e2[0] - e1[0] * e2[2];
    n[2] = e1[0] * e2[1] - e1[1] * e2[0];
    double vol = gjk_dot(n, e3), scale = sqrt(gjk_dot(e1, e1) * gjk_dot(e2, e2) * gjk_dot(e3, e3));
    int flat = !(fabs(vol) > 1e-12 * scale);
    double best = INFINITY, t[4][3], bt[4][3], w[3];
    int bn = 0;
    for (int f = 0; f < 4; f++) {
        const double *a = s[face[f][0]], *b = s[face[f][1]], *c = s[face[f][2]], *d = s[face[f][3]];
        double ab[3], ac[3], ad[3], fn[3];
        gjk_sub(b, a, ab);
        gjk_sub(c, a, ac);
        gjk_sub(d, a, ad);
        fn[0] = ab[1] * ac[2] - ab[2] * ac[1];
        fn[1] = ab[2] * ac[0] - ab[0] * ac[2];
        fn[2] = ab[0] * ac[1] - ab[1] * ac[0];
        double so = -gjk_dot(fn, a), sd = gjk_dot(fn, ad);
        if (!flat && so * sd >= 0)
            continue;  /* origin on the same side as the fourth point */
        memcpy(t[0], a, sizeof t[0]);
        memcpy(t[1], b, sizeof t[1]);
        memcpy(t[2], c, sizeof t[2]);
        int k = gjk_triangle(t, w);
        if (gjk_dot(w, w) < best)
            best = gjk_dot(w, w), bn = k, memcpy(bt, t, sizeof t), memcpy(v, w, sizeof w);
    }
    if (bn == 0) {
        v[0] = v[1] = v[2] = 0;
        return 4;
    }
    memcpy(s, bt, sizeof(double[3]) * (size_t)bn);
    return bn;
}

double gjk_distance(const double *a, int na, const double *b, int nb)
{
    double s[4][3], v[3], w[3], nv[3];
    int ns = 1;
    gjk_sub(a, b, v);
    memcpy(s[0], v, sizeof v);  /* the start point is the first simplex */
    double vv = gjk_dot(v, v);
    for (int it = 0; it < GJK_MAX_ITER; it++) {
        if (vv <= GJK_ZERO2)
            return 0;
        nv[0] = -v[0], nv[1] = -v[1], nv[2] = -v[2];
        gjk_sub(gjk_support(a, na, nv), gjk_support(b, nb, v), w);
        if (vv - gjk_dot(v, w) <= GJK_REL_EPS * vv)
            break;
        int seen = 0;
        for (int k = 0; k < ns; k++)
            seen |= s[k][0] == w[0] && s[k][1] == w[1] && s[k][2] == w[2];
        if (seen)
            break;
        memcpy(s[ns++], w, sizeof w);
        double nvec[3];
        ns = ns == 2 ? gjk_edge(s, 0, 1, nvec)
           : ns == 3 ? gjk_triangle(s, nvec) : gjk_tetra(s, nvec);
        if (ns == 4)
            return 0;
        double nvv = gjk_dot(nvec, nvec);
        if (nvv >= vv)
            break;
        memcpy(v, nvec, sizeof v);
        vv = nvv;
    }
    return vv <= GJK_ZERO2 ? 0 : sqrt(vv);
}
