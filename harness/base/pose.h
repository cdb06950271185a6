/* pose.h: a timestamped rigid-body pose (sensor to world) and its algebra.
 *
 * A pose keeps both forms of its rotation, kept in agreement by the
 * constructors: a unit quaternion q = (x, y, z, w) and the row-major 3x3
 * matrix R.  p is the translation in metres, t the time in seconds.  A point
 * x in the sensor frame is R x + p in the world frame.
 *
 *     struct pose a;
 *     double q[4] = {0, 0, 0.7071, 0.7071}, p[3] = {1, 2, 0};
 *     if (pose_from_quat(&a, 12.5, p, q, e)) return -1;   // normalises q
 *     pose_apply(&a, x, y);                               // y = R x + p
 *
 * Failure contract: the constructors return 0, or -1 with a message in e
 * (zero, non-finite or non-rotation input) and leave *out unchanged.  The
 * other functions cannot fail.  No state; every function is thread-safe.
 */
#ifndef RV_POSE_H
#define RV_POSE_H

#include "harness/base/err.h"

struct pose {
    double t;       /* seconds */
    double q[4];    /* x y z w, unit norm, w >= 0 */
    double R[9];    /* row-major rotation, equal to the matrix of q */
    double p[3];    /* translation, metres */
};

/* Identity rotation, zero translation, time t. */
void pose_identity(struct pose *out, double t);

/* Build from a translation and a quaternion (x y z w, any non-zero norm:
 * it is normalised; the sign is fixed so that w >= 0).  Refuses a quaternion
 * of norm below 1e-12 or with a non-finite entry, and a non-finite t or p. */
int pose_from_quat(struct pose *out, double t, const double p[3], const double q[4],
                   struct err *e);

/* Build from a row-major 3x4 matrix [R | p] (12 numbers).  R must be a
 * rotation within 1e-3 (|R^T R - I| per entry, det > 0); it is snapped to the
 * nearest rotation through its quaternion.  Refuses non-finite entries. */
int pose_from_matrix(struct pose *out, double t, const double m[12], struct err *e);

/* Matrix of a unit quaternion (x y z w), row-major. */
void pose_quat_to_mat(const double q[4], double R[9]);

/* Unit quaternion (x y z w, w >= 0) of a rotation matrix (row-major);
 * numerically stable on every branch (largest-diagonal pivot). */
void pose_mat_to_quat(const double R[9], double q[4]);

/* out = a * b (apply b, then a): R = Ra Rb, p = Ra pb + pa; out->t = b->t.
 * out may alias a or b. */
void pose_compose(const struct pose *a, const struct pose *b, struct pose *out);

/* out = a^-1: R = Ra^T, p = -Ra^T pa; out->t = a->t.  out may alias a. */
void pose_inverse(const struct pose *a, struct pose *out);

/* y = R x + p.  y may alias x. */
void pose_apply(const struct pose *a, const double x[3], double y[3]);

/* Distance between the two positions, metres; planar != 0 ignores z. */
double pose_distance(const struct pose *a, const struct pose *b, int planar);

/* Rotation angle between the two orientations, radians in [0, pi]. */
double pose_angle(const struct pose *a, const struct pose *b);

/* The pose at time t between a and b (a->t <= t <= b->t): position linear
 * in time, rotation by slerp along the shorter arc; out->t = t.  a->t ==
 * b->t gives a.  out may alias a or b. */
void pose_interpolate(const struct pose *a, const struct pose *b, double t, struct pose *out);

#endif
