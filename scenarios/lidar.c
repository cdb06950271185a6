/* lidar.c: the spinning sensor model. */
#include "scenarios/lidar.h"

#include <math.h>
#include <stdlib.h>
#include <string.h>

#include "scenarios/synrng.h"

#define LIDAR_DEG (M_PI / 180.0)

void lidar_uniform(struct lidar *L, int channels, double lo_deg, double hi_deg)
{
    L->channels = channels;
    for (int k = 0; k < channels && k < LIDAR_MAX_CHANNELS; k++)
        L->elev_deg[k] = channels > 1 ? lo_deg + (hi_deg - lo_deg) * k / (channels - 1) : lo_deg;
}

void lidar_defaults(struct lidar *L)
{
    memset(L, 0, sizeof *L);
    lidar_uniform(L, 32, -25, 15);
    L->az_step_deg = 0.4;
    L->range_min_m = 0.5;
    L->range_max_m = 80;
    L->range_sigma_m = 0.02;
    L->weak_loss = 0.5;
    L->weak_level = 0.02;
    L->falloff_m = 60;
    L->spin_hz = 10;
    L->mount_xyz_m[2] = 1.9;
    L->motion = 1;
}

int lidar_columns(const struct lidar *L)
{
    return (int)floor(360.0 / L->az_step_deg + 0.5);
}

int lidar_check(const struct lidar *L, const char *what, struct err *e)
{
    if (L->channels < 1 || L->channels > LIDAR_MAX_CHANNELS)
        return err_set(e, "%s.channels: %d channels, expected 1 to %d", what, L->channels,
                       LIDAR_MAX_CHANNELS);
    for (int k = 0; k < L->channels; k++) {
        if (!(L->elev_deg[k] >= -90 && L->elev_deg[k] <= 90))
            return err_set(e, "%s.vertical_deg: angle %g outside [-90, 90]", what, L->elev_deg[k]);
        if (k && !(L->elev_deg[k] > L->elev_deg[k - 1]))
            return err_set(e, "%s.vertical_deg: angles must increase strictly (channel %d)", what, k);
    }
    if (!(L->az_step_deg >= 0.01 && L->az_step_deg <= 45))
        return err_set(e, "%s.azimuth_step_deg: %g, expected 0.01 to 45", what, L->az_step_deg);
    if (!(L->range_min_m >= 0))
        return err_set(e, "%s.range_min_m: %g, expected >= 0", what, L->range_min_m);
    if (!(L->range_max_m > L->range_min_m))
        return err_set(e, "%s.range_max_m: %g is not above range_min_m %g", what, L->range_max_m,
                       L->range_min_m);
    if (!(L->range_sigma_m >= 0 && L->range_sigma_m < 10))
        return err_set(e, "%s.range_sigma_m: %g, expected 0 to 10", what, L->range_sigma_m);
    if (!(L->weak_loss >= 0 && L->weak_loss <= 1))
        return err_set(e, "%s.weak_loss: %g, expected 0 to 1", what, L->weak_loss);
    if (!(L->weak_level >= 0 && L->weak_level <= 1))
        return err_set(e, "%s.weak_level: %g, expected 0 to 1", what, L->weak_level);
    if (!(L->falloff_m > 0))
        return err_set(e, "%s.falloff_m: %g, expected > 0", what, L->falloff_m);
    if (!(L->spin_hz > 0 && L->spin_hz <= 100))
        return err_set(e, "%s.spin_hz: %g, expected above 0 and at most 100", what, L->spin_hz);
    return 0;
}

static void lidar_mul(const double A[9], const double B[9], double C[9])
{
    for (int i = 0; i < 3; i++)
        for (int j = 0; j < 3; j++)
            C[3 * i + j] = A[3 * i] * B[j] + A[3 * i + 1] * B[3 + j] + A[3 * i + 2] * B[6 + j];
}

/* R = Rz(yaw) Ry(pitch) Rx(roll). */
static void lidar_rpy(double roll, double pitch, double yaw, double R[9])
{
    double cr = cos(roll), sr = sin(roll), cp = cos(pitch), sp = sin(pitch);
    double cy = cos(yaw), sy = sin(yaw);
    double Rz[9] = {cy, -sy, 0, sy, cy, 0, 0, 0, 1};
    double Ry[9] = {cp, 0, sp, 0, 1, 0, -sp, 0, cp};
    double Rx[9] = {1, 0, 0, 0, cr, -sr, 0, sr, cr}, T[9];
    lidar_mul(Ry, Rx, T);
    lidar_mul(Rz, T, R);
}

void lidar_sensor_pose(const struct lidar *L, const double p[3], double yaw, double R[9],
                       double o[3])
{
    double Rm[9], Rv[9];
    lidar_rpy(L->mount_rpy_deg[0] * LIDAR_DEG, L->mount_rpy_deg[1] * LIDAR_DEG,
              L->mount_rpy_deg[2] * LIDAR_DEG, Rm);
    lidar_rpy(0, 0, yaw, Rv);
    lidar_mul(Rv, Rm, R);
    const double *m = L->mount_xyz_m;
    for (int i = 0; i < 3; i++)
        o[i] = p[i] + Rv[3 * i] * m[0] + Rv[3 * i + 1] * m[1] + Rv[3 * i + 2] * m[2];
}

static int lidar_masked(const struct lidar *L, double az_deg, double el_deg)
{
    for (int k = 0; k < L->n_masks; k++) {
        const struct lidar_mask *m = &L->mask[k];
        int in = m->az_from_deg <= m->az_to_deg
                     ? az_deg >= m->az_from_deg && az_deg <= m->az_to_deg
                     : az_deg >= m->az_from_deg || az_deg <= m->az_to_deg;
        if (in && el_deg <= m->elev_max_deg) return 1;
    }
    return 0;
}

/* Sensor pose of column c (fraction f of the sweep). */
static void lidar_column_pose(const struct lidar *L, const struct lidar_motion *m, double f,
                              double R[9], double o[3])
{
    if (!L->motion) { lidar_sensor_pose(L, m->p0, m->yaw0, R, o); return; }
    double dy = remainder(m->yaw1 - m->yaw0, 2 * M_PI), p[3];
    for (int i = 0; i < 3; i++) p[i] = m->p0[i] + f * (m->p1[i] - m->p0[i]);
    lidar_sensor_pose(L, p, m->yaw0 + f * dy, R, o);
}

struct lidar_ray_ctx {
    const struct lidar *L;
    const struct world *w;
    const struct geom_prim *movers;
    size_t n_movers;
    int epoch;
    uint64_t seed, scan;
    struct lidar_stats st;
};

/* One ray: 1 with the kept range and intensity, 0 when lost. */
static int lidar_ray(struct lidar_ray_ctx *c, const double R[9], const double o[3],
                     const double ds[3], uint64_t ray, double *range, float *inten)
{
    const struct lidar *L = c->L;
    double d[3];
    for (int i = 0; i < 3; i++) d[i] = R[3 * i] * ds[0] + R[3 * i + 1] * ds[1] + R[3 * i + 2] * ds[2];
    struct world_hit h;
    if (!world_cast(c->w, o, d, L->range_max_m, c->epoch, c->movers, c->n_movers, &h)) {
        c->st.missed++;
        return 0;
    }
    double cosi = fabs(h.n[0] * d[0] + h.n[1] * d[1] + h.n[2] * d[2]);
    double q = h.t / L->falloff_m;
    double in = h.refl * cosi / (1 + q * q);
    uint64_t key = synrng_hash3(c->seed, c->scan, ray);
    if (in < L->weak_level && synrng_unit(synrng_mix(key ^ 0x77)) < L->weak_loss) {
        c->st.lost_weak++;
        return 0;
    }
    double r = h.t;
    if (L->range_sigma_m > 0)
        r += L->range_sigma_m * synrng_normal_h(synrng_mix(key ^ 1), synrng_mix(key ^ 2));
    if (r < L->range_min_m || r > L->range_max_m) {
        c->st.missed++;
        return 0;
    }
    *range = r;
    *inten = (float)in;
    return 1;
}

int lidar_scan(const struct lidar *L, const struct world *w, const struct lidar_motion *m,
               int epoch, double t0_s, uint64_t seed, uint64_t scan, struct cloud *out,
               struct lidar_stats *stats, struct err *e)
{
    int cols = lidar_columns(L);
    double step = 2 * M_PI / cols, period = 1.0 / L->spin_hz;
    double ce[LIDAR_MAX_CHANNELS], se[LIDAR_MAX_CHANNELS];
    for (int k = 0; k < L->channels; k++) {
        ce[k] = cos(L->elev_deg[k] * LIDAR_DEG);
        se[k] = sin(L->elev_deg[k] * LIDAR_DEG);
    }
    struct geom_prim movers[LIDAR_MAX_MOVERS];
    double R[9], o[3];
    lidar_sensor_pose(L, m->p0, m->yaw0, R, o);
    struct lidar_ray_ctx c = {L, w, movers, 0, epoch, seed, scan, {0, 0, 0, 0, 0}};
    c.n_movers = world_movers_at(w, t0_s, o[0], o[1], o[2], L->range_max_m + 20, movers,
                                 LIDAR_MAX_MOVERS);
    out->n = 0;
    if (cloud_enable_ring(out) || cloud_enable_time(out) ||
        cloud_reserve(out, (size_t)cols * L->channels))
        return err_set(e, "sensor: out of memory for %d x %d rays", cols, L->channels);
    for (int col = 0; col < cols; col++) {
        double f = (double)col / cols, a = col * step, ca = cos(a), sa = sin(a);
        lidar_column_pose(L, m, f, R, o);
        for (int k = 0; k < L->channels; k++) {
            c.st.rays++;
            if (L->n_masks && lidar_masked(L, col * 360.0 / cols, L->elev_deg[k])) {
                c.st.masked++;
                continue;
            }
            double ds[3] = {ce[k] * ca, ce[k] * sa, se[k]}, r;
            float in;
            if (!lidar_ray(&c, R, o, ds, (uint64_t)col * LIDAR_MAX_CHANNELS + k, &r, &in)) continue;
            size_t j = out->n++;
            out->pts[4 * j] = (float)(r * ds[0]);
            out->pts[4 * j + 1] = (float)(r * ds[1]);
            out->pts[4 * j + 2] = (float)(r * ds[2]);
            out->pts[4 * j + 3] = in;
            out->ring[j] = (uint16_t)k;
            out->time[j] = (float)(f * period);
        }
    }
    c.st.kept = out->n;
    if (stats) *stats = c.st;
    return 0;
}
