/* test_pose_algebra.c: quaternion / matrix conversion, compose, inverse, apply. */
#include <math.h>
#include <stdlib.h>

#include "harness/base/pose.h"
#include "tests/check.h"

static double mat_diff(const double *a, const double *b, int n)
{
    double d = 0;
    for (int k = 0; k < n; k++) d = fmax(d, fabs(a[k] - b[k]));
    return d;
}

static void test_known_rotations(void)
{
    struct err e;
    struct pose a;
    /* 90 degrees about z: q = (0, 0, sin 45, cos 45) maps x to y.
     * Common practice, no source (the axis-angle form of a unit quaternion). */
    double q[4] = {0, 0, sqrt(0.5), sqrt(0.5)}, p[3] = {1, 2, 3};
    CHECK(!pose_from_quat(&a, 5, p, q, &e), "a unit quaternion is accepted");
    const double Rz[9] = {0, -1, 0, 1, 0, 0, 0, 0, 1};
    CHECK(mat_diff(a.R, Rz, 9) < 1e-15, "90 deg about z gives the textbook matrix");
    double x[3] = {1, 0, 0}, y[3];
    pose_apply(&a, x, y);
    CHECK(fabs(y[0] - 1) < 1e-15 && fabs(y[1] - 3) < 1e-15 && fabs(y[2] - 3) < 1e-15,
          "apply rotates x onto y then translates");
    /* 180 degrees about x: q = (1, 0, 0, 0), R = diag(1, -1, -1); common practice, no source. */
    double qx[4] = {2, 0, 0, 0};
    CHECK(!pose_from_quat(&a, 0, p, qx, &e), "a non-unit quaternion is accepted");
    const double Rx[9] = {1, 0, 0, 0, -1, 0, 0, 0, -1};
    CHECK(mat_diff(a.R, Rx, 9) < 1e-15 && fabs(a.q[0] - 1) < 1e-15, "the quaternion is normalised first");
    double qn[4] = {0, 0, -sqrt(0.5), -sqrt(0.5)};
    CHECK(!pose_from_quat(&a, 0, p, qn, &e) && a.q[3] > 0 && fabs(a.q[2] - sqrt(0.5)) < 1e-15,
          "q and -q give one rotation, stored with w >= 0");
}

static void test_rejects(void)
{
    struct err e;
    struct pose a;
    pose_identity(&a, 7);
    double p[3] = {0, 0, 0}, zero[4] = {0, 0, 0, 0}, nanq[4] = {NAN, 0, 0, 1};
    CHECK(pose_from_quat(&a, 1, p, zero, &e) == -1, "a zero quaternion is refused");
    CHECK_MSG(e.msg, "zero norm", "the message says the quaternion has zero norm");
    CHECK(a.t == 7 && a.q[3] == 1, "a refused quaternion leaves the pose unchanged");
    CHECK(pose_from_quat(&a, 1, p, nanq, &e) == -1, "a NaN quaternion is refused");
    CHECK_MSG(e.msg, "not finite", "the message says it is not finite");
    double inf_p[3] = {INFINITY, 0, 0}, unit[4] = {0, 0, 0, 1};
    CHECK(pose_from_quat(&a, 1, inf_p, unit, &e) == -1, "an infinite position is refused");
    CHECK_MSG(e.msg, "position", "the message names the position");
    CHECK(pose_from_quat(&a, NAN, p, unit, &e) == -1, "a NaN time is refused");
    CHECK_MSG(e.msg, "time", "the message names the time");
    double shear[12] = {1, 0.5, 0, 0, 0, 1, 0, 0, 0, 0, 1, 0};
    CHECK(pose_from_matrix(&a, 0, shear, &e) == -1, "a shear matrix is refused");
    CHECK_MSG(e.msg, "not a rotation", "the message says it is not a rotation");
    double mirror[12] = {-1, 0, 0, 0, 0, 1, 0, 0, 0, 0, 1, 0};
    CHECK(pose_from_matrix(&a, 0, mirror, &e) == -1, "a reflection (det -1) is refused");
    CHECK_MSG(e.msg, "det", "the message names the determinant");
}

static void rand_pose(struct pose *a, unsigned *seed)
{
    double q[4], p[3];
    for (int k = 0; k < 4; k++) q[k] = rand_r(seed) / (double)RAND_MAX - 0.5;
    for (int k = 0; k < 3; k++) p[k] = 10 * (rand_r(seed) / (double)RAND_MAX - 0.5);
    struct err e;
    pose_from_quat(a, 1, p, q, &e);
}

static void test_algebra(void)
{
    unsigned seed = 12345;
    double worst_inv = 0, worst_rt = 0, worst_assoc = 0;
    for (int it = 0; it < 500; it++) {
        struct pose a, b, c, ai, id, ab, ab_c, bc, a_bc;
        rand_pose(&a, &seed);
        rand_pose(&b, &seed);
        rand_pose(&c, &seed);
        pose_inverse(&a, &ai);
        pose_compose(&a, &ai, &id);
        const double I[9] = {1, 0, 0, 0, 1, 0, 0, 0, 1};
        worst_inv = fmax(worst_inv, fmax(mat_diff(id.R, I, 9), fmax(fabs(id.p[0]), fmax(fabs(id.p[1]), fabs(id.p[2])))));
        double q[4];
        pose_mat_to_quat(a.R, q);
        worst_rt = fmax(worst_rt, mat_diff(q, a.q, 4));
        pose_compose(&a, &b, &ab);
        pose_compose(&ab, &c, &ab_c);
        pose_compose(&b, &c, &bc);
        pose_compose(&a, &bc, &a_bc);
        worst_assoc = fmax(worst_assoc, fmax(mat_diff(ab_c.R, a_bc.R, 9), mat_diff(ab_c.p, a_bc.p, 3)));
        /* compose applied to a point equals applying b then a */
        double x[3] = {0.3, -1.2, 2.5}, y1[3], y2[3];
        pose_apply(&b, x, y1);
        pose_apply(&a, y1, y1);
        pose_apply(&ab, x, y2);
        if (mat_diff(y1, y2, 3) > 1e-12) CHECK(0, "compose equals applying b then a");
    }
    CHECK(worst_inv < 1e-12, "a composed with its inverse is the identity");
    CHECK(worst_rt < 1e-12, "matrix -> quaternion gives back the quaternion (w >= 0)");
    CHECK(worst_assoc < 1e-12, "composition is associative");
    /* A matrix from a rotation built by hand: 30 degrees about y. */
    double c30 = cos(M_PI / 6), s30 = sin(M_PI / 6);
    double m[12] = {c30, 0, s30, 4, 0, 1, 0, 5, -s30, 0, c30, 6};
    struct pose a, b;
    struct err e;
    CHECK(!pose_from_matrix(&a, 2, m, &e), "a rotation matrix is accepted");
    CHECK(fabs(a.q[1] - sin(M_PI / 12)) < 1e-15 && fabs(a.q[3] - cos(M_PI / 12)) < 1e-15,
          "30 deg about y gives q = (0, sin 15, 0, cos 15)");
    CHECK(a.p[0] == 4 && a.p[1] == 5 && a.p[2] == 6 && a.t == 2, "the translation column and time are kept");
    pose_identity(&b, 0);
    CHECK(fabs(pose_angle(&a, &b) - M_PI / 6) < 1e-12, "the angle to identity is 30 degrees");
    CHECK(fabs(pose_distance(&a, &b, 0) - sqrt(77)) < 1e-12, "3D distance");
    CHECK(fabs(pose_distance(&a, &b, 1) - sqrt(41)) < 1e-12, "planar distance ignores z");
    /* Every branch of the matrix -> quaternion pivot: 180 deg turns about each axis. */
    const double flips[3][9] = {{1, 0, 0, 0, -1, 0, 0, 0, -1}, {-1, 0, 0, 0, 1, 0, 0, 0, -1},
                                {-1, 0, 0, 0, -1, 0, 0, 0, 1}};
    for (int k = 0; k < 3; k++) {
        double q[4], R[9];
        pose_mat_to_quat(flips[k], q);
        pose_quat_to_mat(q, R);
        CHECK(mat_diff(R, flips[k], 9) < 1e-15 && fabs(fabs(q[k]) - 1) < 1e-15, "a half turn about an axis converts both ways");
    }
}

int main(void)
{
    test_known_rotations();
    test_rejects();
    test_algebra();
    return check_done();
}
