/* pose.c: quaternion / matrix conversion, composition, inverse. */
#include "harness/base/pose.h"

#include <math.h>
#include <string.h>

#define POSE_QUAT_MIN_NORM 1e-12
#define POSE_ROT_TOL 1e-3

void pose_identity(struct pose *out, double t)
{
    memset(out, 0, sizeof *out);
    out->t = t;
    out->q[3] = 1;
    out->R[0] = out->R[4] = out->R[8] = 1;
}

void pose_quat_to_mat(const double q[4], double R[9])
{
    double x = q[0], y = q[1], z = q[2], w = q[3];
    R[0] = 1 - 2 * (y * y + z * z);
    R[1] = 2 * (x * y - z * w);
    R[2] = 2 * (x * z + y * w);
    R[3] = 2 * (x * y + z * w);
    R[4] = 1 - 2 * (x * x + z * z);
    R[5] = 2 * (y * z - x * w);
    R[6] = 2 * (x * z - y * w);
    R[7] = 2 * (y * z + x * w);
    R[8] = 1 - 2 * (x * x + y * y);
}

/* Scale to unit norm and pick the sign with w >= 0 (q and -q are one rotation). */
static void pose_quat_canon(double q[4])
{
    double n = sqrt(q[0] * q[0] + q[1] * q[1] + q[2] * q[2] + q[3] * q[3]);
    double s = (q[3] < 0 ? -1.0 : 1.0) / n;
    for (int k = 0; k < 4; k++) q[k] *= s;
}

void pose_mat_to_quat(const double R[9], double q[4])
{
    double tr = R[0] + R[4] + R[8];
    if (tr > 0) {
        double s = 2 * sqrt(tr + 1);
        q[3] = s / 4;
        q[0] = (R[7] - R[5]) / s;
        q[1] = (R[2] - R[6]) / s;
        q[2] = (R[3] - R[1]) / s;
    } else if (R[0] > R[4] && R[0] > R[8]) {
        double s = 2 * sqrt(1 + R[0] - R[4] - R[8]);
        q[3] = (R[7] - R[5]) / s;
        q[0] = s / 4;
        q[1] = (R[1] + R[3]) / s;
        q[2] = (R[2] + R[6]) / s;
    } else if (R[4] > R[8]) {
        double s = 2 * sqrt(1 + R[4] - R[0] - R[8]);
        q[3] = (R[2] - R[6]) / s;
        q[0] = (R[1] + R[3]) / s;
        q[1] = s / 4;
        q[2] = (R[5] + R[7]) / s;
    } else {
        double s = 2 * sqrt(1 + R[8] - R[0] - R[4]);
        q[3] = (R[3] - R[1]) / s;
        q[0] = (R[2] + R[6]) / s;
        q[1] = (R[5] + R[7]) / s;
        q[2] = s / 4;
    }
    pose_quat_canon(q);
}

static int pose_finite(const double *v, int n)
{
    for (int k = 0; k < n; k++)
        if (!isfinite(v[k])) return 0;
    return 1;
}

int pose_from_quat(struct pose *out, double t, const double p[3], const double q[4],
                   struct err *e)
{
    if (!isfinite(t)) return err_set(e, "time is not a finite number, expected seconds");
    if (!pose_finite(p, 3)) return err_set(e, "position is not finite, expected 3 finite numbers");
    if (!pose_finite(q, 4)) return err_set(e, "quaternion is not finite, expected 4 finite numbers");
    double n = sqrt(q[0] * q[0] + q[1] * q[1] + q[2] * q[2] + q[3] * q[3]);
    if (n < POSE_QUAT_MIN_NORM)
        return err_set(e, "quaternion (%g %g %g %g) has zero norm, expected a rotation",
                       q[0], q[1], q[2], q[3]);
    struct pose r;
    r.t = t;
    memcpy(r.p, p, sizeof r.p);
    memcpy(r.q, q, sizeof r.q);
    pose_quat_canon(r.q);
    pose_quat_to_mat(r.q, r.R);
    *out = r;
    return 0;
}

/* Largest |R^T R - I| entry, and the determinant. */
static void pose_rot_defect(const double R[9], double *off, double *det)
{
    double worst = 0;
    for (int a = 0; a < 3; a++)
        for (int b = 0; b < 3; b++) {
            double s = 0;
            for (int k = 0; k < 3; k++) s += R[3 * k + a] * R[3 * k + b];
            double d = fabs(s - (a == b ? 1.0 : 0.0));
            if (d > worst) worst = d;
        }
    *off = worst;
    *det = R[0] * (R[4] * R[8] - R[5] * R[7]) - R[1] * (R[3] * R[8] - R[5] * R[6]) +
           R[2] * (R[3] * R[7] - R[4] * R[6]);
}

int pose_from_matrix(struct pose *out, double t, const double m[12], struct err *e)
{
    if (!isfinite(t)) return err_set(e, "time is not a finite number, expected seconds");
    if (!pose_finite(m, 12)) return err_set(e, "matrix has a non-finite entry, expected 12 finite numbers");
    double R[9] = {m[0], m[1], m[2], m[4], m[5], m[6], m[8], m[9], m[10]};
    double off, det;
    pose_rot_defect(R, &off, &det);
    if (off > POSE_ROT_TOL || det <= 0)
        return err_set(e, "rotation part is not a rotation (|R^T R - I| = %.3g, det = %.3g), "
                       "expected orthonormal with det +1", off, det);
    struct pose r;
    r.t = t;
    r.p[0] = m[3]; r.p[1] = m[7]; r.p[2] = m[11];
    pose_mat_to_quat(R, r.q);
    pose_quat_to_mat(r.q, r.R);
    *out = r;
    return 0;
}

static void pose_matmul(const double A[9], const double B[9], double C[9])
{
    double T[9];
    for (int i = 0; i < 3; i++)
        for (int j = 0; j < 3; j++)
            T[3 * i + j] = A[3 * i] * B[j] + A[3 * i + 1] * B[3 + j] + A[3 * i + 2] * B[6 + j];
    memcpy(C, T, sizeof T);
}

void pose_apply(const struct pose *a, const double x[3], double y[3])
{
    const double *R = a->R;
    double r[3];
    for (int i = 0; i < 3; i++) r[i] = R[3 * i] * x[0] + R[3 * i + 1] * x[1] + R[3 * i + 2] * x[2] + a->p[i];
    memcpy(y, r, sizeof r);
}

void pose_compose(const struct pose *a, const struct pose *b, struct pose *out)
{
    struct pose r;
    r.t = b->t;
    pose_matmul(a->R, b->R, r.R);
    pose_apply(a, b->p, r.p);
    /* Hamilton product qa * qb, then renormalised; R is rebuilt from it so the
     * two forms stay in agreement after long chains. */
    const double *p = a->q, *q = b->q;
    r.q[0] = p[3] * q[0] + p[0] * q[3] + p[1] * q[2] - p[2] * q[1];
    r.q[1] = p[3] * q[1] - p[0] * q[2] + p[1] * q[3] + p[2] * q[0];
    r.q[2] = p[3] * q[2] + p[0] * q[1] - p[1] * q[0] + p[2] * q[3];
    r.q[3] = p[3] * q[3] - p[0] * q[0] - p[1] * q[1] - p[2] * q[2];
    pose_quat_canon(r.q);
    pose_quat_to_mat(r.q, r.R);
    *out = r;
}

void pose_inverse(const struct pose *a, struct pose *out)
{
    struct pose r;
    r.t = a->t;
    for (int i = 0; i < 3; i++)
        for (int j = 0; j < 3; j++) r.R[3 * i + j] = a->R[3 * j + i];
    for (int i = 0; i < 3; i++)
        r.p[i] = -(r.R[3 * i] * a->p[0] + r.R[3 * i + 1] * a->p[1] + r.R[3 * i + 2] * a->p[2]);
    r.q[0] = -a->q[0];
    r.q[1] = -a->q[1];
    r.q[2] = -a->q[2];
    r.q[3] = a->q[3];
    *out = r;
}

double pose_distance(const struct pose *a, const struct pose *b, int planar)
{
    double dx = a->p[0] - b->p[0], dy = a->p[1] - b->p[1];
    double dz = planar ? 0 : a->p[2] - b->p[2];
    return sqrt(dx * dx + dy * dy + dz * dz);
}

double pose_angle(const struct pose *a, const struct pose *b)
{
    double d = fabs(a->q[0] * b->q[0] + a->q[1] * b->q[1] + a->q[2] * b->q[2] + a->q[3] * b->q[3]);
    if (d > 1) d = 1;
    return 2 * acos(d);
}

void pose_interpolate(const struct pose *a, const struct pose *b, double t, struct pose *out)
{
    double span = b->t - a->t, u = span > 0 ? (t - a->t) / span : 0;
    double qa[4], qb[4], q[4], p[3];
    memcpy(qa, a->q, sizeof qa);
    memcpy(qb, b->q, sizeof qb);
    double d = qa[0] * qb[0] + qa[1] * qb[1] + qa[2] * qb[2] + qa[3] * qb[3];
    if (d < 0) {  /* the shorter arc: q and -q are one rotation */
        for (int k = 0; k < 4; k++) qb[k] = -qb[k];
        d = -d;
    }
    double wa = 1 - u, wb = u;
    if (d < 0.9999995) {
        double th = acos(d > 1 ? 1 : d), s = sin(th);
        wa = sin((1 - u) * th) / s;
        wb = sin(u * th) / s;
    }
    double nq = 0;
    for (int k = 0; k < 4; k++) {
        q[k] = wa * qa[k] + wb * qb[k];
        nq += q[k] * q[k];
    }
    nq = sqrt(nq);
    for (int k = 0; k < 4; k++) q[k] /= nq;
    if (q[3] < 0) for (int k = 0; k < 4; k++) q[k] = -q[k];
    for (int k = 0; k < 3; k++) p[k] = a->p[k] + u * (b->p[k] - a->p[k]);
    out->t = t;
    memcpy(out->q, q, sizeof q);
    memcpy(out->p, p, sizeof p);
    pose_quat_to_mat(out->q, out->R);
}
