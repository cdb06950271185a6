/* test_gjk_boxes.c: hull distances worked by hand for boxes, separated,
 * touching, overlapping and rotated; plus points, segments and flat hulls.
 * Every expected value below is plain Euclidean geometry worked by hand
 * (common practice, no source). */
#include "harness/plugins/sop/gjk.c"
#include "tests/check.h"

/* The 8 corners of an axis-aligned box [lo, hi], turned by ang about axis
 * (0 = x, 2 = z) around the box centre, then moved by shift. */
static void box(double *v, const double lo[3], const double hi[3], int axis, double ang,
                const double shift[3])
{
    double c[3];
    for (int k = 0; k < 3; k++)
        c[k] = 0.5 * (lo[k] + hi[k]);
    for (int k = 0; k < 8; k++) {
        double p[3] = {(k & 1 ? hi : lo)[0] - c[0], (k & 2 ? hi : lo)[1] - c[1],
                       (k & 4 ? hi : lo)[2] - c[2]};
        int i = axis == 0 ? 1 : 0, j = axis == 0 ? 2 : 1;
        double pi = cos(ang) * p[i] - sin(ang) * p[j], pj = sin(ang) * p[i] + cos(ang) * p[j];
        p[i] = pi, p[j] = pj;
        for (int a = 0; a < 3; a++)
            v[3 * k + a] = p[a] + c[a] + shift[a];
    }
}

static double box_dist(const double alo[3], const double ahi[3], int aax, double aang,
                       const double blo[3], const double bhi[3], int bax, double bang)
{
    double a[24], b[24];
    const double z[3] = {0, 0, 0};
    box(a, alo, ahi, aax, aang, z);
    box(b, blo, bhi, bax, bang, z);
    double d1 = gjk_distance(a, 8, b, 8), d2 = gjk_distance(b, 8, a, 8);
    return fabs(d1 - d2) < 1e-12 ? d1 : -1;  /* -1 flags an asymmetric answer */
}

int main(void)
{
    const double o[3] = {0, 0, 0}, one[3] = {1, 1, 1};
    const double q = M_PI / 4, r2 = sqrt(2.0);
    CHECK_NEAR(box_dist(o, one, 2, 0, (double[]){3, 0, 0}, (double[]){4, 1, 1}, 2, 0), 2.0, 1e-12,
               "unit cubes 2 apart along x: face to face");
    CHECK_NEAR(box_dist(o, one, 2, 0, (double[]){2, 3, 0}, (double[]){3, 4, 1}, 2, 0),
               sqrt(5.0), 1e-12, "cubes offset by gaps 1 in x and 2 in y: edge to edge, sqrt 5");
    CHECK_NEAR(box_dist(o, one, 2, 0, (double[]){2, 2, 2}, (double[]){3, 3, 3}, 2, 0),
               sqrt(3.0), 1e-12, "cubes corner to corner across gaps of 1: sqrt 3");
    CHECK_NEAR(box_dist(o, one, 2, 0, (double[]){1, 0, 0}, (double[]){2, 1, 1}, 2, 0), 0.0, 1e-12,
               "cubes sharing a face are 0 apart");
    CHECK_NEAR(box_dist(o, one, 2, 0, (double[]){1, 1, 1}, (double[]){2, 2, 2}, 2, 0), 0.0, 1e-12,
               "cubes sharing a corner are 0 apart");
    CHECK_NEAR(box_dist(o, one, 2, 0, (double[]){0.5, 0.5, 0.5}, (double[]){1.5, 1.5, 1.5}, 2, 0),
               0.0, 1e-12, "overlapping cubes are 0 apart");
    CHECK_NEAR(box_dist(o, one, 2, 0, (double[]){0.2, 0.2, 0.2}, (double[]){0.8, 0.8, 0.8}, 2, 0),
               0.0, 1e-12, "a cube inside another is 0 apart");
    const double m1[3] = {-1, -1, -1}, p1[3] = {1, 1, 1};
    /* a 2 m cube turned 45 deg about z reaches x = sqrt 2 with a vertical edge */
    CHECK_NEAR(box_dist(m1, p1, 2, q, (double[]){3, -1, -1}, (double[]){4, 1, 1}, 2, 0),
               3.0 - r2, 1e-12, "cube turned 45 deg about z, edge to face: 3 - sqrt 2");
    CHECK_NEAR(box_dist(m1, p1, 2, q, (double[]){4, -1, -1}, (double[]){6, 1, 1}, 2, q),
               5.0 - 2 * r2, 1e-12, "two turned cubes edge to edge: 5 - 2 sqrt 2");
    /* turned 45 deg about x, a horizontal edge reaches z = sqrt 2 */
    CHECK_NEAR(box_dist(m1, p1, 0, q, (double[]){-1, -1, 3}, (double[]){1, 1, 5}, 2, 0),
               3.0 - r2, 1e-12, "cube turned 45 deg about x under a slab: 3 - sqrt 2");
    CHECK_NEAR(box_dist(m1, p1, 2, q, (double[]){1.2, -1, -1}, (double[]){3, 1, 1}, 2, 0), 0.0,
               1e-12, "turned cube poking into a box is 0 apart");

    double pt[3] = {0.5, 0.5, 3}, cube[24];
    box(cube, o, one, 2, 0, o);
    CHECK_NEAR(gjk_distance(pt, 1, cube, 8), 2.0, 1e-12, "a point 2 above a cube's top face");
    double pt2[3] = {3, 3, 0.5};
    CHECK_NEAR(gjk_distance(pt2, 1, cube, 8), 2 * r2, 1e-12, "a point beside a vertical edge");
    double sq[12] = {-1, -1, 0, 1, -1, 0, 1, 1, 0, -1, 1, 0}, up[3] = {0.25, -0.5, 1.5};
    CHECK_NEAR(gjk_distance(up, 1, sq, 4), 1.5, 1e-12, "a point above a flat square");
    double in[3] = {0.25, -0.5, 0};
    CHECK_NEAR(gjk_distance(in, 1, sq, 4), 0.0, 1e-12, "a point in a flat square is on it");
    double s1[6] = {-1, 0, 0, 1, 0, 0}, s2[6] = {0, -1, 1, 0, 1, 1}, s3[6] = {3, 0, 0, 5, 0, 0};
    CHECK_NEAR(gjk_distance(s1, 2, s2, 2), 1.0, 1e-12, "crossing skew segments 1 apart");
    CHECK_NEAR(gjk_distance(s1, 2, s3, 2), 2.0, 1e-12, "collinear segments end to end");
    double line3[9] = {3, 0, 0, 4, 0, 0, 5, 0, 0};
    CHECK_NEAR(gjk_distance(sq, 4, line3, 3), 2.0, 1e-12, "collinear points against a square");
    return check_done();
}
