/* synth.c: district + route + sensor -> a recording on disk. */
#include "scenarios/synth.h"

#include <math.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>
#include <unistd.h>

#include "harness/base/fileio.h"
#include "harness/base/pool.h"
#include "harness/io/poses_io.h"
#include "harness/base/progress.h"
#include "harness/io/recording.h"
#include "scenarios/district.h"
#include "scenarios/route.h"
#include "scenarios/synrng.h"

struct synth_job {
    const struct synconf *c;
    const struct world *w;
    const struct route *r;
    const struct recording_writer *wr;
    const double *times;
    struct cloud *clouds;     /* one per worker */
    size_t *points;           /* per scan */
    struct progress *prog;
};

static void synth_motion(const struct synth_job *j, double t, struct lidar_motion *m, int *leg)
{
    struct route_state a, b;
    route_at(j->r, t, &a);
    route_at(j->r, t + 1.0 / j->c->sensor.spin_hz, &b);
    m->p0[0] = a.x; m->p0[1] = a.y; m->p0[2] = world_ground_z(j->w, a.x, a.y);
    m->p1[0] = b.x; m->p1[1] = b.y; m->p1[2] = world_ground_z(j->w, b.x, b.y);
    m->yaw0 = a.yaw;
    m->yaw1 = b.yaw;
    *leg = a.leg;
}

static int synth_task(void *ctx, size_t i, int worker, struct err *e)
{
    const struct synth_job *j = ctx;
    struct lidar_motion m;
    int leg;
    synth_motion(j, j->times[i], &m, &leg);
    struct cloud *cl = &j->clouds[worker];
    if (lidar_scan(&j->c->sensor, j->w, &m, leg, j->times[i], j->c->seed, i, cl, NULL, e) ||
        recording_writer_scan(j->wr, i, cl, e))
        return err_wrap(e, "scan %zu", i);
    j->points[i] = cl->n;
    progress_add(j->prog, 1);
    return 0;
}

/* Scan start times: at rate_hz over [0, drive], or spread over it. */
static int synth_times(const struct synconf *c, const struct synth_run *r, const struct route *rt,
                       double **out, size_t *n_out, struct err *e)
{
    double drive = rt->duration_s - 1.0 / c->sensor.spin_hz;
    if (drive <= 0) return err_set(e, "%s: the drive lasts %.1f s, shorter than one sweep", c->path, rt->duration_s);
    size_t natural = (size_t)floor(drive * c->rate_hz) + 1, n = natural;
    double dt = 1.0 / c->rate_hz;
    if (r->duration_s > 0) {
        if (r->duration_s > drive)
            return err_set(e, "--duration %g is longer than the %.1f s drive of scenario '%s'",
                           r->duration_s, drive, c->name);
        n = (size_t)floor(r->duration_s * c->rate_hz) + 1;
    }
    if (r->scans > 0) {
        if ((size_t)r->scans > natural)
            return err_set(e, "--scans %ld is more than the %zu scans the %.1f s drive holds at %g Hz "
                           "(a longer drive: a scenario file whose route has more legs)",
                           r->scans, natural, drive, c->rate_hz);
        n = (size_t)r->scans;
        dt = n > 1 ? drive / (double)(n - 1) : 0;
    }
    double *t = malloc(n * sizeof *t);
    if (!t) return err_set(e, "out of memory for %zu scan times", n);
    for (size_t i = 0; i < n; i++) t[i] = (double)i * dt;
    *out = t;
    *n_out = n;
    return 0;
}

/* Sensor-to-world pose of each scan; noisy copies when pose noise is on. */
static int synth_poses(const struct synth_job *j, size_t n, struct pose *exact, struct pose *noisy,
                       double *yaw, struct err *e)
{
    const struct synconf *c = j->c;
    for (size_t i = 0; i < n; i++) {
        struct lidar_motion m;
        int leg;
        synth_motion(j, j->times[i], &m, &leg);
        double R[9], o[3], q[4];
        yaw[i] = m.yaw0;
        lidar_sensor_pose(&c->sensor, m.p0, m.yaw0, R, o);
        pose_mat_to_quat(R, q);
        if (pose_from_quat(&exact[i], j->times[i], o, q, e)) return -1;
        if (!noisy) continue;
        uint64_t k = synrng_hash3(c->seed, SYNRNG_POSE, i);
        double dyaw = c->pose_sigma_deg * M_PI / 180 * synrng_normal_h(synrng_mix(k ^ 7), synrng_mix(k ^ 8));
        double p[3];
        for (int a = 0; a < 3; a++)
            p[a] = o[a] + c->pose_sigma_m * synrng_normal_h(synrng_mix(k ^ (2 * a + 1)), synrng_mix(k ^ (2 * a + 2)));
        lidar_sensor_pose(&c->sensor, m.p0, m.yaw0 + dyaw, R, o);
        pose_mat_to_quat(R, q);
        if (pose_from_quat(&noisy[i], j->times[i], p, q, e)) return -1;
    }
    return 0;
}

static void synth_json_legs(FILE *f, const struct synconf *c, const struct route *rt,
                            const struct district *d)
{
    fprintf(f, "  \"legs\": [\n");
    for (int l = 0; l < c->route.n_legs; l++) {
        const struct route_leg *g = &c->route.leg[l];
        double t0 = -1, t1 = 0;
        for (size_t k = 0; k < rt->n; k++)
            if (rt->leg[k] == l) { if (t0 < 0) t0 = rt->t[k]; t1 = rt->t[k]; }
        fprintf(f, "    {\"epoch\": %d, \"lane_m\": %.3f, \"t_start\": %.3f, \"t_end\": %.3f, \"path\": [",
                l, g->lane_m, t0 < 0 ? 0 : t0, t1);
        for (int k = 0; k < g->n; k++)
            fprintf(f, "%s[%d, %d]", k ? ", " : "", g->node[k] % d->nx, g->node[k] / d->nx);
        fprintf(f, "]}%s\n", l + 1 < c->route.n_legs ? "," : "");
    }
    fprintf(f, "  ],\n");
}

static int synth_route_json(const char *out_dir, const struct synconf *c, const struct route *rt,
                            const struct district *d, const struct pose *exact, const double *yaw,
                            size_t n, struct synth_summary *s, struct err *e)
{
    double *x = malloc(n * sizeof *x), *y = malloc(n * sizeof *y), *t = malloc(n * sizeof *t);
    struct route_revisit *rv = NULL;
    size_t nrv = 0;
    int rc = -1;
    if (!x || !y || !t) { err_set(e, "out of memory for %zu poses", n); goto done; }
    for (size_t i = 0; i < n; i++) { x[i] = exact[i].p[0]; y[i] = exact[i].p[1]; t[i] = exact[i].t; }
    if (route_revisits(x, y, yaw, t, n, 3.0, 30.0, &rv, &nrv, &s->never, e)) goto done;
    for (size_t k = 0; k < nrv; k++) s->revisits[rv[k].kind] += rv[k].scans;
    char path[4096];
    fileio_join(path, sizeof path, out_dir, "route.json");
    struct afile a;
    if (afile_open(&a, path, e)) goto done;
    FILE *f = a.f;
    fprintf(f, "{\n  \"format\": \"revisit-route-1\",\n  \"scenario\": \"%s\",\n  \"sensor\": \"%s\",\n",
            c->name, c->sensor_name);
    fprintf(f, "  \"seed\": %llu,\n  \"scans\": %zu,\n  \"rate_hz\": %.6f,\n  \"duration_s\": %.3f,\n"
               "  \"length_m\": %.1f,\n  \"radius_m\": 3,\n  \"exclusion_s\": 30,\n",
            (unsigned long long)c->seed, n, s->rate_hz, n ? exact[n - 1].t : 0.0, rt->length_m);
    fprintf(f, "  \"poses_exact\": %s,\n", c->pose_sigma_m > 0 || c->pose_sigma_deg > 0 ? "\"poses_exact.csv\"" : "null");
    synth_json_legs(f, c, rt, d);
    fprintf(f, "  \"counts\": {\"same\": %zu, \"reverse\": %zu, \"crossing\": %zu, \"never_revisited\": %zu},\n",
            s->revisits[0], s->revisits[1], s->revisits[2], s->never);
    fprintf(f, "  \"revisits\": [\n");
    for (size_t k = 0; k < nrv; k++)
        fprintf(f, "    {\"kind\": \"%s\", \"first\": %zu, \"last\": %zu, \"match_first\": %zu, "
                   "\"match_last\": %zu, \"t_first\": %.3f, \"t_last\": %.3f, \"scans\": %zu, "
                   "\"d_min_m\": %.3f, \"d_max_m\": %.3f}%s\n",
                route_kind_name(rv[k].kind), rv[k].first, rv[k].last, rv[k].match_first,
                rv[k].match_last, rv[k].t_first, rv[k].t_last, rv[k].scans, rv[k].d_min_m,
                rv[k].d_max_m, k + 1 < nrv ? "," : "");
    fprintf(f, "  ]\n}\n");
    rc = afile_commit(&a, e);
done:
    free(x); free(y); free(t); free(rv);
    return rc;
}

static void synth_sensor_desc(const struct synconf *c, struct recording_sensor *rs, char *notes, size_t nn)
{
    const struct lidar *L = &c->sensor;
    recording_sensor_init(rs);
    rs->channels = L->channels;
    rs->vfov_deg[0] = L->elev_deg[0];
    rs->vfov_deg[1] = L->elev_deg[L->channels - 1];
    rs->range_max_m = L->range_max_m;
    rs->has_mount = 1;
    memcpy(rs->mount_xyz_m, L->mount_xyz_m, sizeof rs->mount_xyz_m);
    memcpy(rs->mount_rpy_deg, L->mount_rpy_deg, sizeof rs->mount_rpy_deg);
    snprintf(notes, nn, "synthetic: scenario %s, sensor %s, seed %llu, azimuth step %g deg",
             c->name, c->sensor_name, (unsigned long long)c->seed, L->az_step_deg);
    rs->notes = notes;
}

/* Refuse, before any work, a folder holding more scans than this run makes
 * (the manifest would not match the folder). */
static int synth_fresh(const char *out_dir, size_t n, struct err *e)
{
    char path[4096], name[32];
    snprintf(name, sizeof name, "scans/%06zu.pcd", n);
    fileio_join(path, sizeof path, out_dir, name);
    if (!access(path, F_OK))
        return err_set(e, "%s: holds scans of a longer recording, expected an empty or new folder", out_dir);
    return 0;
}

/* Cast and write every scan, then the poses, route.json and the manifest. */
static int synth_write(const struct synconf *c, const struct synth_run *r, struct synth_job *j,
                       size_t n, const struct district *d, struct synth_summary *s, struct err *e)
{
    struct recording_writer wr;
    struct recording_sensor rs;
    char notes[512];
    double vert[LIDAR_MAX_CHANNELS];
    synth_sensor_desc(c, &rs, notes, sizeof notes);
    memcpy(vert, c->sensor.elev_deg, sizeof vert);
    rs.vertical_deg = vert;
    memset(&wr, 0, sizeof wr);
    if (recording_writer_begin(&wr, r->out_dir, &rs, SCAN_PCD, e)) return -1;
    int threads = pool_threads(r->jobs), rc = -1, noisy = c->pose_sigma_m > 0 || c->pose_sigma_deg > 0;
    struct progress prog;
    j->wr = &wr;
    j->prog = &prog;
    j->clouds = calloc((size_t)threads, sizeof *j->clouds);
    j->points = calloc(n, sizeof *j->points);
    struct pose *exact = malloc(n * sizeof *exact), *np = noisy ? malloc(n * sizeof *np) : NULL;
    double *yaw = malloc(n * sizeof *yaw);
    if (!j->clouds || !j->points || !exact || !yaw || (noisy && !np)) {
        err_set(e, "out of memory for %zu scans", n);
        goto done;
    }
    if (synth_poses(j, n, exact, np, yaw, e)) goto done;
    progress_start(&prog, "synth", n, r->quiet);
    int prc = pool_run(n, r->jobs, synth_task, j, e);
    progress_end(&prog);
    if (pool_stop_requested()) { s->interrupted = 1; err_set(e, "interrupted"); goto done; }
    if (prc) goto done;
    for (size_t i = 0; i < n; i++) s->points += j->points[i];
    char path[4096];
    fileio_join(path, sizeof path, wr.dir, "poses_exact.csv");
    if (recording_writer_poses(&wr, noisy ? np : exact, n, e)) goto done;
    if (noisy && poses_write(path, POSES_CSV, exact, n, NULL, e)) goto done;
    if (synth_route_json(wr.dir, c, j->r, d, exact, yaw, n, s, e)) goto done;
    rc = recording_writer_finish(&wr, e);
done:
    for (int k = 0; j->clouds && k < threads; k++) cloud_free(&j->clouds[k]);
    free(j->clouds);
    free(j->points);
    free(exact);
    free(np);
    free(yaw);
    recording_writer_free(&wr);
    return rc;
}

int synth_make(const struct synconf *c, const struct synth_run *r, struct synth_summary *s,
               struct err *e)
{
    memset(s, 0, sizeof *s);
    struct world w;
    struct district d;
    struct route rt;
    double *times = NULL;
    size_t n = 0;
    int rc = -1;
    world_init(&w);
    memset(&d, 0, sizeof d);
    memset(&rt, 0, sizeof rt);
    struct district_params wp = c->world;
    wp.seed = c->seed;
    if (district_build(&d, &w, &wp, e) || world_finish(&w, e)) goto done;
    if (route_build(&rt, &d, &c->route, e)) { err_wrap(e, "%s", c->path); goto done; }
    if (synth_times(c, r, &rt, &times, &n, e) || synth_fresh(r->out_dir, n, e)) goto done;
    s->scans = n;
    s->primitives = w.n_prims;
    s->movers = w.n_movers;
    s->length_m = rt.length_m;
    s->duration_s = times[n - 1];
    s->rate_hz = n > 1 ? (double)(n - 1) / times[n - 1] : c->rate_hz;
    struct synth_job j = {c, &w, &rt, NULL, times, NULL, NULL, NULL};
    rc = synth_write(c, r, &j, n, &d, s, e);
done:
    free(times);
    route_free(&rt);
    district_free(&d);
    world_free(&w);
    return rc;
}
