/* lidar.h: a spinning multi-channel range sensor cast by ray into a world.
 *
 * The sensor turns once per sweep; a column of rays (one per channel) fires
 * every azimuth step, counter-clockwise from the sensor's +x axis.  Column c
 * fires at time c / (columns * spin_hz) after the sweep starts; channel k
 * points at elevation elev_deg[k] (channel 0 lowest).  A point is kept in
 * the sensor frame of its firing time, with its channel in `ring` and its
 * firing time in `time`.  Rays are lost when they hit nothing within
 * range_max_m, when the return is closer than range_min_m, when a
 * self-occlusion mask blocks them, or (with chance weak_loss) when the
 * return intensity is below weak_level.
 *
 *     struct lidar L; lidar_defaults(&L);  L.channels = 32; ...
 *     if (lidar_check(&L, "sensor", e)) return -1;
 *     struct lidar_motion m = {{x, y, z}, yaw, {x1, y1, z1}, yaw1};
 *     if (lidar_scan(&L, &world, &m, epoch, t0, seed, i, &cloud, &stats, e)) ...
 *
 * Intensity = reflectivity * |cos incidence| / (1 + (range / falloff_m)^2).
 * Range noise is Gaussian with sigma range_sigma_m along the ray; every
 * random draw is a hash of (seed, scan index, ray index), so a scan is the
 * same whatever thread casts it.
 */
#ifndef RV_LIDAR_H
#define RV_LIDAR_H

#include <stddef.h>
#include <stdint.h>
#include "harness/base/cloud.h"
#include "harness/base/err.h"
#include "scenarios/world.h"

#define LIDAR_MAX_CHANNELS 256
#define LIDAR_MAX_MASKS 8
#define LIDAR_MAX_MOVERS 64

/* Rays with azimuth in [az_from_deg, az_to_deg] (wrapping through 360) and
 * elevation at most elev_max_deg are blocked by the vehicle body. */
struct lidar_mask {
    double az_from_deg, az_to_deg, elev_max_deg;
};

struct lidar {
    int channels;
    double elev_deg[LIDAR_MAX_CHANNELS];  /* strictly increasing */
    double az_step_deg;
    double range_min_m, range_max_m, range_sigma_m;
    double weak_loss, weak_level, falloff_m;
    double spin_hz;
    double mount_xyz_m[3];   /* x forward, y left, z up from the ground contact */
    double mount_rpy_deg[3];
    int motion;              /* 1: the vehicle moves during the sweep */
    int n_masks;
    struct lidar_mask mask[LIDAR_MAX_MASKS];
};

/* Vehicle position (on the ground) and heading at the start and end of the
 * sweep; with motion off only the start is used. */
struct lidar_motion {
    double p0[3], yaw0, p1[3], yaw1;
};

struct lidar_stats {
    size_t rays, missed, masked, lost_weak, kept;
};

/* 32 channels over [-25, 15] degrees, 0.4 degree step, 10 Hz, 0.5..80 m. */
void lidar_defaults(struct lidar *L);
/* Spread channels uniformly over [lo_deg, hi_deg]. */
void lidar_uniform(struct lidar *L, int channels, double lo_deg, double hi_deg);
/* Refuse impossible settings; messages name what (e.g. "sensor.channels"). */
int lidar_check(const struct lidar *L, const char *what, struct err *e);
/* Columns per sweep: round(360 / az_step_deg). */
int lidar_columns(const struct lidar *L);

/* Cast one sweep starting at world time t0_s.  out is replaced (ring and
 * time enabled); stats may be NULL.  0, or -1 (out of memory). */
int lidar_scan(const struct lidar *L, const struct world *w, const struct lidar_motion *m,
               int epoch, double t0_s, uint64_t seed, uint64_t scan, struct cloud *out,
               struct lidar_stats *stats, struct err *e);

/* World-from-sensor transform for a vehicle at p, yaw: rotation R (row
 * major) and sensor origin o. */
void lidar_sensor_pose(const struct lidar *L, const double p[3], double yaw, double R[9],
                       double o[3]);

#endif
