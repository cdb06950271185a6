/* test_synth_sensor.c: the spinning sensor model against plane geometry. */
#include <math.h>
#include <stdlib.h>

#include "scenarios/lidar.h"
#include "scenarios/world.h"
#include "tests/check.h"

static void quiet_sensor(struct lidar *L, int channels, double lo, double hi)
{
    lidar_defaults(L);
    lidar_uniform(L, channels, lo, hi);
    L->range_sigma_m = 0;
    L->weak_loss = 0;
    L->motion = 0;
    L->range_max_m = 200;
    L->range_min_m = 0.1;
    L->az_step_deg = 2;
}

static void ground_range(void)
{
    /* Range to flat ground from height h at elevation -theta is h / sin theta
     * (plane geometry, common practice, no source). */
    struct world w;
    struct err e;
    world_init(&w);
    double lo[2] = {-1e4, -1e4}, hi[2] = {1e4, 1e4};
    world_set_ground(&w, 0, 0, 0, lo, hi);
    CHECK(!world_finish(&w, &e), "empty world with ground builds");
    struct lidar L;
    quiet_sensor(&L, 4, -30, -5);
    const double h = 1.9;
    struct lidar_motion m = {{0, 0, 0}, 0.3, {0, 0, 0}, 0.3};
    struct cloud c;
    cloud_init(&c);
    struct lidar_stats st;
    CHECK(!lidar_scan(&L, &w, &m, 0, 0, 1, 0, &c, &st, &e), "scan of flat ground");
    CHECK(c.n == (size_t)(4 * lidar_columns(&L)), "every downward ray returns from the ground");
    double worst = 0;
    for (size_t k = 0; k < c.n; k++) {
        double th = -L.elev_deg[c.ring[k]] * M_PI / 180;
        double r = sqrt(CLOUD_X(&c, k) * CLOUD_X(&c, k) + CLOUD_Y(&c, k) * CLOUD_Y(&c, k) +
                        CLOUD_Z(&c, k) * CLOUD_Z(&c, k));
        double d = fabs(r - h / sin(th));
        if (d > worst) worst = d;
    }
    CHECK(worst < 1e-4, "ground range equals h / sin theta on every channel");
    CHECK_NEAR(CLOUD_Z(&c, 0), -h, 1e-5, "ground points lie at -h in the level sensor frame");
    /* A sensor pointing up sees nothing. */
    quiet_sensor(&L, 2, 5, 10);
    CHECK(!lidar_scan(&L, &w, &m, 0, 0, 1, 0, &c, &st, &e) && c.n == 0 &&
          st.missed == st.rays, "upward rays over open ground all miss");
    cloud_free(&c);
    world_free(&w);
}

static void wall_range(void)
{
    /* A vertical wall at distance w straight ahead returns range w / cos theta
     * at elevation theta (plane geometry, common practice, no source). */
    struct world w;
    struct err e;
    world_init(&w);
    const double dist = 12;
    /* The sensor is 1.9 m up at the origin facing +x; the wall's face is at x = 12. */
    CHECK(!world_add(&w, geom_box(dist + 0.5, 0, 0, 0.5, 50, 50, 0), &e), "wall added");
    CHECK(!world_finish(&w, &e), "wall world builds");
    struct lidar L;
    quiet_sensor(&L, 8, -20, 20);
    struct lidar_motion m = {{0, 0, 0}, 0, {0, 0, 0}, 0};
    struct cloud c;
    cloud_init(&c);
    CHECK(!lidar_scan(&L, &w, &m, 0, 0, 1, 0, &c, NULL, &e), "scan of a wall");
    int found = 0;
    for (size_t k = 0; k < c.n; k++) {
        if (c.time[k] != 0) continue;    /* column 0 looks straight along +x */
        double th = L.elev_deg[c.ring[k]] * M_PI / 180;
        double r = sqrt(CLOUD_X(&c, k) * CLOUD_X(&c, k) + CLOUD_Y(&c, k) * CLOUD_Y(&c, k) +
                        CLOUD_Z(&c, k) * CLOUD_Z(&c, k));
        if (fabs(r - dist / cos(th)) < 1e-4) found++;
    }
    CHECK(found == 8, "wall range equals w / cos theta on each of the 8 channels");
    /* Intensity = reflectivity x |cos incidence| / (1 + (r / falloff)^2): the
     * wall's normal is -x, so the incidence angle is the elevation. */
    int inten_ok = 0;
    for (size_t k = 0; k < c.n; k++) {
        if (c.time[k] != 0) continue;
        double th = L.elev_deg[c.ring[k]] * M_PI / 180, r = dist / cos(th), q = r / L.falloff_m;
        if (fabs(CLOUD_I(&c, k) - 0.5 * cos(th) / (1 + q * q)) < 1e-6) inten_ok++;
    }
    CHECK(inten_ok == 8, "intensity follows reflectivity, incidence and range fall-off");
    /* Turning the vehicle by 90 degrees moves the wall to azimuth 270. */
    struct lidar_motion mt = {{0, 0, 0}, M_PI / 2, {0, 0, 0}, M_PI / 2};
    CHECK(!lidar_scan(&L, &w, &mt, 0, 0, 1, 0, &c, NULL, &e), "scan turned by 90 degrees");
    int at270 = 0;
    for (size_t k = 0; k < c.n; k++)
        if (fabs(CLOUD_Y(&c, k) + dist) < 1e-3 && fabs(CLOUD_X(&c, k)) < 1e-3) at270++;
    CHECK(at270 == 8, "heading turns the scene the other way in the sensor frame");
    cloud_free(&c);
    world_free(&w);
}

static void motion(void)
{
    /* Driving at v toward a wall during a sweep of period T: the ray fired at
     * fraction f of the sweep starts v f T further on, so straight ahead the
     * range shrinks by v f T (common practice, no source). */
    struct world w;
    struct err e;
    world_init(&w);
    CHECK(!world_add(&w, geom_box(30.5, 0, 0, 0.5, 50, 50, 0), &e) && !world_finish(&w, &e),
          "wall world for motion builds");
    struct lidar L;
    quiet_sensor(&L, 3, -1, 1);
    L.motion = 1;
    const double v = 10, T = 1 / L.spin_hz;
    struct lidar_motion m = {{0, 0, 0}, 0, {v * T, 0, 0}, 0};
    struct cloud c;
    cloud_init(&c);
    CHECK(!lidar_scan(&L, &w, &m, 0, 0, 1, 0, &c, NULL, &e), "moving scan");
    int cols = lidar_columns(&L);
    double first = -1, last = -1, tlast = 0;
    for (size_t k = 0; k < c.n; k++) {
        if (c.ring[k] != 1) continue;            /* the level channel */
        double az = atan2(CLOUD_Y(&c, k), CLOUD_X(&c, k));
        if (c.time[k] == 0) first = CLOUD_X(&c, k);
        if (fabs(az + 2 * M_PI / cols) < 1e-6) { last = CLOUD_X(&c, k); tlast = c.time[k]; }
    }
    CHECK_NEAR(first, 30, 1e-5, "the first column sees the wall 30 m ahead");
    double f = (double)(cols - 1) / cols, want = 30 - v * f * T;   /* x to the wall plane */
    CHECK_NEAR(last, want, 1e-4, "the last column sees it v f T closer");
    CHECK_NEAR(tlast, f * T, 1e-7, "the last column fires at f T");
    L.motion = 0;
    CHECK(!lidar_scan(&L, &w, &m, 0, 0, 1, 0, &c, NULL, &e), "scan from one pose");
    for (size_t k = 0; k < c.n; k++)
        if (c.ring[k] == 1 && fabs(atan2(CLOUD_Y(&c, k), CLOUD_X(&c, k)) + 2 * M_PI / cols) < 1e-6)
            last = CLOUD_X(&c, k);
    CHECK_NEAR(last, 30, 1e-4, "with motion off the whole sweep is cast from the start pose");
    cloud_free(&c);
    world_free(&w);
}

static void accounting(void)
{
    /* Points = channels x azimuth steps - misses - masked - lost weak returns,
     * and channel and time agree with each point's angles. */
    struct world w;
    struct err e;
    world_init(&w);
    double lo[2] = {-30, -1e4}, hi[2] = {1e4, 1e4};   /* no ground west of x = -30 */
    world_set_ground(&w, 0, 0, 0, lo, hi);
    CHECK(!world_add(&w, geom_box(20, 5, 3, 2, 4, 3, 0.4), &e), "box added");
    CHECK(!world_add(&w, geom_cyl(-5, 8, 0, 6, 0.4), &e), "pole added");
    CHECK(!world_finish(&w, &e), "world builds");
    struct lidar L;
    quiet_sensor(&L, 16, -24, 6);
    L.az_step_deg = 1;
    L.range_max_m = 40;
    L.weak_loss = 0.7;
    L.weak_level = 0.2;
    L.range_sigma_m = 0.05;
    L.n_masks = 1;
    L.mask[0] = (struct lidar_mask){170, 190, -10};
    struct lidar_motion m = {{0, 0, 0}, 0, {0, 0, 0}, 0};
    struct cloud c;
    cloud_init(&c);
    struct lidar_stats st;
    CHECK(!lidar_scan(&L, &w, &m, 0, 0, 7, 3, &c, &st, &e), "mixed scan");
    CHECK(st.rays == 16 * 360, "rays = channels x azimuth steps");
    CHECK(c.n == st.rays - st.missed - st.masked - st.lost_weak, "points = rays - misses - masked - lost");
    CHECK(st.missed > 0 && st.masked > 0 && st.lost_weak > 0 && c.n > 1000,
          "every kind of loss happens in the mixed scene");
    int bad_ring = 0, bad_time = 0, masked_pts = 0;
    for (size_t k = 0; k < c.n; k++) {
        double x = CLOUD_X(&c, k), y = CLOUD_Y(&c, k), z = CLOUD_Z(&c, k);
        double el = atan2(z, hypot(x, y)) * 180 / M_PI;
        if (fabs(el - L.elev_deg[c.ring[k]]) > 1e-3) bad_ring++;
        double az = atan2(y, x) * 180 / M_PI;
        if (az < -1e-3) az += 360;
        if (fabs(az / 360 * 0.1 - c.time[k]) > 1e-5) bad_time++;
        if (az >= 170 - 1e-6 && az <= 190 + 1e-6 && L.elev_deg[c.ring[k]] <= -10) masked_pts++;
    }
    CHECK(!bad_ring, "each point's elevation matches its channel's angle");
    CHECK(!bad_time, "each point's time is its azimuth's share of the 0.1 s sweep");
    CHECK(!masked_pts, "no point comes from inside the self-occlusion mask");
    struct cloud c2;
    cloud_init(&c2);
    CHECK(!lidar_scan(&L, &w, &m, 0, 0, 7, 3, &c2, NULL, &e) && c2.n == c.n &&
          !memcmp(c.pts, c2.pts, c.n * 16), "the same seed and scan give the same points");
    CHECK(!lidar_scan(&L, &w, &m, 0, 0, 7, 4, &c2, NULL, &e) &&
          (c2.n != c.n || memcmp(c.pts, c2.pts, c.n * 16)), "another scan index draws other noise");
    cloud_free(&c);
    cloud_free(&c2);
    world_free(&w);
}

static void bad_sensor(void)
{
    struct lidar L;
    struct err e;
    lidar_defaults(&L);
    CHECK(!lidar_check(&L, "sensor", &e), "the default sensor is valid");
    L.channels = 0;
    CHECK(lidar_check(&L, "sensor", &e) == -1, "zero channels refused");
    CHECK_MSG(e.msg, "sensor.channels: 0 channels, expected 1 to", "zero channels message");
    lidar_defaults(&L);
    L.range_max_m = 0.2;
    CHECK(lidar_check(&L, "sensor", &e) == -1, "max range below min refused");
    CHECK_MSG(e.msg, "sensor.range_max_m: 0.2 is not above range_min_m 0.5", "range message");
    lidar_defaults(&L);
    L.elev_deg[3] = L.elev_deg[2];
    CHECK(lidar_check(&L, "sensor", &e) == -1, "repeated angle refused");
    CHECK_MSG(e.msg, "angles must increase strictly (channel 3)", "angle order message");
    lidar_defaults(&L);
    L.az_step_deg = 0;
    CHECK(lidar_check(&L, "sensor", &e) == -1 && strstr(e.msg, "azimuth_step_deg"),
          "zero azimuth step refused");
}

int main(void)
{
    ground_range();
    wall_range();
    motion();
    accounting();
    bad_sensor();
    return check_done();
}
