/* cmd_inspect.c: `revisit inspect REC`: what a user checks first about a
 * recording (counts, duration, points per scan, path length, revisits at the
 * default protocol, unreadable or suspicious scans), as text or JSON. */
#include <cjson/cJSON.h>
#include <math.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>

#include "harness/cli/cmd.h"
#include "harness/base/opt.h"
#include "harness/base/numfmt.h"
#include "harness/base/pool.h"
#include "harness/base/progress.h"
#include "harness/io/recording.h"
#include "metrics/gt.h"
#include "metrics/protocol.h"

/* A scan with fewer points than this share of the median is suspicious. */
#define INSPECT_FEW_SHARE 0.1
/* Defaults of the pose checks: a speed no road vehicle reaches (70 m/s is
 * 252 km/h), and an interval ten times the median one. */
#define INSPECT_SPEED_MAX 70.0
#define INSPECT_GAP_MEDIANS 10.0
#define INSPECT_SHOW 20

static const char about[] =
    "Read every scan of a recording (a folder holding recording.json, or the\n"
    "manifest itself) and print what to check before an evaluation: scan count,\n"
    "duration, points per scan (min / median / max), path length, how many scans\n"
    "are revisits under the default protocol (a candidate within 3 m, the previous\n"
    "30 s excluded; counted with a k-d tree, not all pairs), points dropped for\n"
    "non-finite coordinates, and suspicious scans: unreadable, empty, all points\n"
    "non-finite, or under a tenth of the median point count.  The poses are\n"
    "checked too, since both faults corrupt the ground truth: jumps (two\n"
    "consecutive poses further apart than --max-speed allows in their interval)\n"
    "and time gaps (an interval longer than --max-gap).  The findings that fail\n"
    "the check (exit 1) are an unreadable scan, a pose jump and a time gap; the\n"
    "other suspicious scans are listed only.\n\n";

struct inspect_scan {
    size_t points, dropped;
    char *error;     /* NULL when the scan read */
};

struct inspect_ctx {
    const struct recording *rec;
    struct inspect_scan *scans;
    struct cloud *clouds;   /* one per worker */
    struct progress *prog;
};

static int inspect_task(void *vctx, size_t k, int worker, struct err *e)
{
    (void)e;
    struct inspect_ctx *x = vctx;
    struct err le;
    struct inspect_scan *s = &x->scans[k];
    if (recording_load_scan(x->rec, k, &x->clouds[worker], &s->dropped, &le)) {
        s->error = strdup(le.msg);
        if (!s->error) return err_set(e, "out of memory");
    } else {
        s->points = x->clouds[worker].n;
    }
    progress_add(x->prog, 1);
    return 0;
}

static int inspect_read_all(const struct recording *rec, struct inspect_scan *scans, int jobs, int quiet,
                            struct err *e)
{
    int nt = pool_threads(jobs);
    struct cloud *clouds = calloc((size_t)nt, sizeof *clouds);
    if (!clouds) return err_set(e, "out of memory");
    for (int k = 0; k < nt; k++) cloud_init(&clouds[k]);
    struct progress prog;
    progress_start(&prog, "inspect", rec->n, quiet);
    struct inspect_ctx x = {rec, scans, clouds, &prog};
    int rc = pool_run(rec->n, jobs, inspect_task, &x, e);
    progress_end(&prog);
    for (int k = 0; k < nt; k++) cloud_free(&clouds[k]);
    free(clouds);
    return rc;
}

struct inspect_stats {
    size_t n, unreadable, empty, all_nonfinite, few, dropped_points, dropped_scans, readable;
    size_t pts_min, pts_median, pts_max;
    double duration_s, rate_hz, path_m;
    size_t revisits;
    struct protocol proto;
    double speed_max, gap_s;   /* the pose checks' limits (gap_s resolved from the median) */
    size_t jumps, gaps;
};

static int inspect_cmp_size(const void *a, const void *b)
{
    size_t x = *(const size_t *)a, y = *(const size_t *)b;
    return x < y ? -1 : x > y;
}

/* Point-count statistics over the scans that read. */
static int inspect_points(const struct inspect_scan *s, size_t n, struct inspect_stats *st, struct err *e)
{
    size_t *v = malloc((n ? n : 1) * sizeof *v), m = 0;
    if (!v) return err_set(e, "out of memory");
    for (size_t k = 0; k < n; k++) {
        if (s[k].error) { st->unreadable++; continue; }
        v[m++] = s[k].points;
        st->dropped_points += s[k].dropped;
        st->dropped_scans += s[k].dropped > 0;
        st->empty += s[k].points == 0 && s[k].dropped == 0;
        st->all_nonfinite += s[k].points == 0 && s[k].dropped > 0;
    }
    st->readable = m;
    if (m) {
        qsort(v, m, sizeof *v, inspect_cmp_size);
        st->pts_min = v[0];
        st->pts_max = v[m - 1];
        st->pts_median = m % 2 ? v[m / 2] : (v[m / 2 - 1] + v[m / 2]) / 2;
    }
    free(v);
    for (size_t k = 0; k < n; k++)
        st->few += !s[k].error && s[k].points > 0 && (double)s[k].points < INSPECT_FEW_SHARE * (double)st->pts_median;
    return 0;
}

/* Duration, path length and revisits (metrics/gt.h k-d tree). */
static int inspect_poses(const struct recording *rec, struct inspect_stats *st, struct err *e)
{
    size_t n = rec->n;
    double *xyz = malloc(3 * n * sizeof *xyz), *t = malloc(n * sizeof *t);
    if (!xyz || !t) { free(xyz); free(t); return err_set(e, "out of memory"); }
    for (size_t k = 0; k < n; k++) {
        memcpy(xyz + 3 * k, rec->poses[k].p, 3 * sizeof *xyz);
        t[k] = rec->poses[k].t;
        if (k) st->path_m += pose_distance(&rec->poses[k], &rec->poses[k - 1], 0);
    }
    st->duration_s = n > 1 ? t[n - 1] - t[0] : 0;
    st->rate_hz = st->duration_s > 0 ? (double)(n - 1) / st->duration_s : 0;
    struct gt_poses map = {xyz, t, n};
    struct gt *g = NULL;
    int rc = gt_build(&st->proto, &map, NULL, NULL, 0, &g, e);
    if (!rc) st->revisits = g->n_revisits;
    gt_free(g);
    free(xyz);
    free(t);
    return rc;
}

static int inspect_cmp_double(const void *a, const void *b)
{
    double x = *(const double *)a, y = *(const double *)b;
    return x < y ? -1 : x > y;
}

/* A jump: the step from pose k-1 to k is faster than the limit. */
static int inspect_is_jump(const struct recording *rec, size_t k, const struct inspect_stats *st)
{
    double dt = rec->poses[k].t - rec->poses[k - 1].t;
    return pose_distance(&rec->poses[k], &rec->poses[k - 1], st->proto.planar) > st->speed_max * dt;
}

/* Count jumps and gaps; a gap limit below 0 becomes INSPECT_GAP_MEDIANS
 * times the median interval. */
static int inspect_pose_checks(const struct recording *rec, struct inspect_stats *st, struct err *e)
{
    size_t n = rec->n;
    if (n < 2) return 0;
    if (st->gap_s < 0) {
        double *dt = malloc((n - 1) * sizeof *dt);
        if (!dt) return err_set(e, "out of memory");
        for (size_t k = 1; k < n; k++) dt[k - 1] = rec->poses[k].t - rec->poses[k - 1].t;
        qsort(dt, n - 1, sizeof *dt, inspect_cmp_double);
        st->gap_s = INSPECT_GAP_MEDIANS * dt[(n - 1) / 2];
        free(dt);
    }
    for (size_t k = 1; k < n; k++) {
        st->jumps += inspect_is_jump(rec, k, st);
        st->gaps += rec->poses[k].t - rec->poses[k - 1].t > st->gap_s;
    }
    return 0;
}

static void inspect_print_pose_checks(const struct recording *rec, const struct inspect_stats *st)
{
    printf("pose jumps   %zu (faster than %g m/s between consecutive poses)\n", st->jumps, st->speed_max);
    size_t shown = 0;
    for (size_t k = 1; k < rec->n && shown < INSPECT_SHOW; k++) {
        if (!inspect_is_jump(rec, k, st)) continue;
        double dt = rec->poses[k].t - rec->poses[k - 1].t;
        double d = pose_distance(&rec->poses[k], &rec->poses[k - 1], st->proto.planar);
        printf("  scans %zu -> %zu: %.3f m in %.3f s (%.1f m/s)\n", k - 1, k, d, dt, d / dt);
        shown++;
    }
    printf("time gaps    %zu (intervals longer than %g s)\n", st->gaps, st->gap_s);
    shown = 0;
    for (size_t k = 1; k < rec->n && shown < INSPECT_SHOW; k++) {
        double dt = rec->poses[k].t - rec->poses[k - 1].t;
        if (dt <= st->gap_s) continue;
        printf("  scans %zu -> %zu: %.3f s without a scan (t %.6f .. %.6f)\n", k - 1, k, dt, rec->poses[k - 1].t,
               rec->poses[k].t);
        shown++;
    }
}

static void inspect_json_pose_checks(cJSON *o, const struct recording *rec, const struct inspect_stats *st)
{
    cJSON *j = cJSON_AddObjectToObject(o, "pose_jumps");
    cJSON_AddNumberToObject(j, "speed_max_m_s", st->speed_max);
    cJSON *ja = cJSON_AddArrayToObject(j, "steps");
    cJSON *g = cJSON_AddObjectToObject(o, "time_gaps");
    cJSON_AddNumberToObject(g, "gap_max_s", st->gap_s);
    cJSON *ga = cJSON_AddArrayToObject(g, "steps");
    for (size_t k = 1; k < rec->n; k++) {
        double dt = rec->poses[k].t - rec->poses[k - 1].t;
        int jump = inspect_is_jump(rec, k, st), gap = dt > st->gap_s;
        if (!jump && !gap) continue;
        cJSON *it = cJSON_CreateObject();
        cJSON_AddNumberToObject(it, "from", (double)(k - 1));
        cJSON_AddNumberToObject(it, "to", (double)k);
        cJSON_AddNumberToObject(it, "dt_s", dt);
        cJSON_AddNumberToObject(it, "distance_m", pose_distance(&rec->poses[k], &rec->poses[k - 1], st->proto.planar));
        cJSON_AddItemToArray(jump ? ja : ga, jump && gap ? cJSON_Duplicate(it, 1) : it);
        if (jump && gap) cJSON_AddItemToArray(ga, it);
    }
}

/* Why scan k is suspicious, or NULL. */
static const char *inspect_why(const struct inspect_scan *s, const struct inspect_stats *st)
{
    if (s->error) return "unreadable";
    if (s->points == 0) return s->dropped ? "all points non-finite" : "empty";
    if ((double)s->points < INSPECT_FEW_SHARE * (double)st->pts_median) return "under a tenth of the median points";
    return NULL;
}

static void inspect_print_text(const struct recording *rec, const struct inspect_scan *sc,
                               const struct inspect_stats *st)
{
    const struct recording_sensor *s = &rec->sensor;
    printf("recording    %s\n", rec->manifest);
    printf("scans        %zu (%s layout)\n", st->n, scan_layout_name(rec->layout));
    printf("duration     %.3f s (t %.6f .. %.6f), %.2f scans/s, pose times in %s (%s)\n", st->duration_s,
           rec->poses[0].t, rec->poses[st->n - 1].t, st->rate_hz, poses_unit_name(rec->time_unit),
           rec->time_unit_named ? "named in the manifest" : "detected");
    printf("points       min %zu / median %zu / max %zu per scan (%zu scans read)\n", st->pts_min, st->pts_median,
           st->pts_max, st->readable);
    printf("path length  %.1f m\n", st->path_m);
    printf("revisits     %zu of %zu scans (%.1f%%) have a scan within %g m, the previous %g s excluded\n",
           st->revisits, st->n, st->n ? 100.0 * (double)st->revisits / (double)st->n : 0.0, st->proto.r_pos_m,
           st->proto.exclusion_s);
    printf("sensor       %d channels", s->channels);
    if (isfinite(s->vfov_deg[0])) printf(", vertical %g..%g deg", s->vfov_deg[0], s->vfov_deg[1]);
    if (isfinite(s->range_max_m)) printf(", range %g m", s->range_max_m);
    if (s->has_mount) printf(", mounted at %g %g %g m", s->mount_xyz_m[0], s->mount_xyz_m[1], s->mount_xyz_m[2]);
    printf("\n");
    if (rec->perturbation.present)
        printf("perturbed    %s (seed %llu, on %s)\n", rec->perturbation.chain,
               (unsigned long long)rec->perturbation.seed, rec->perturbation.on[0] ? rec->perturbation.on : "-");
    if (rec->has_extrinsic)
        printf("extrinsic    sensor at %g %g %g m, quaternion %g %g %g %g in the poses' frame (applied)\n",
               rec->extrinsic.p[0], rec->extrinsic.p[1], rec->extrinsic.p[2], rec->extrinsic.q[0], rec->extrinsic.q[1],
               rec->extrinsic.q[2], rec->extrinsic.q[3]);
    printf("non-finite   %zu %s dropped in %zu %s\n", st->dropped_points, numfmt_noun(st->dropped_points, "point", "points"),
           st->dropped_scans, numfmt_noun(st->dropped_scans, "scan", "scans"));
    size_t bad = st->unreadable + st->empty + st->all_nonfinite + st->few, shown = 0;
    printf("suspicious   %zu %s\n", bad, numfmt_noun(bad, "scan", "scans"));
    for (size_t k = 0; k < st->n && shown < 20; k++) {
        const char *why = inspect_why(&sc[k], st);
        if (!why) continue;
        shown++;
        if (sc[k].error) printf("  scan %zu: unreadable: %s\n", k, sc[k].error);
        else printf("  scan %zu (%s): %s, %zu points\n", k, rec->scan_paths[k], why, sc[k].points);
    }
    if (bad > shown) printf("  ... and %zu more (--json lists them all)\n", bad - shown);
    inspect_print_pose_checks(rec, st);
}

static int inspect_print_json(const struct recording *rec, const struct inspect_scan *sc,
                              const struct inspect_stats *st, struct err *e)
{
    cJSON *o = cJSON_CreateObject();
    cJSON_AddStringToObject(o, "recording", rec->manifest);
    cJSON_AddNumberToObject(o, "scans", (double)st->n);
    cJSON_AddStringToObject(o, "scan_layout", scan_layout_name(rec->layout));
    cJSON_AddNumberToObject(o, "duration_s", st->duration_s);
    cJSON_AddNumberToObject(o, "t_first", rec->poses[0].t);
    cJSON_AddNumberToObject(o, "t_last", rec->poses[st->n - 1].t);
    cJSON_AddNumberToObject(o, "rate_hz", st->rate_hz);
    cJSON_AddStringToObject(o, "pose_time_unit", poses_unit_name(rec->time_unit));
    cJSON_AddBoolToObject(o, "pose_time_unit_named", rec->time_unit_named);
    cJSON *p = cJSON_AddObjectToObject(o, "points_per_scan");
    cJSON_AddNumberToObject(p, "min", (double)st->pts_min);
    cJSON_AddNumberToObject(p, "median", (double)st->pts_median);
    cJSON_AddNumberToObject(p, "max", (double)st->pts_max);
    cJSON_AddNumberToObject(o, "path_length_m", st->path_m);
    cJSON *r = cJSON_AddObjectToObject(o, "revisits");
    cJSON_AddNumberToObject(r, "count", (double)st->revisits);
    cJSON_AddNumberToObject(r, "radius_m", st->proto.r_pos_m);
    cJSON_AddNumberToObject(r, "exclusion_s", st->proto.exclusion_s);
    cJSON_AddBoolToObject(r, "planar", st->proto.planar);
    cJSON_AddNumberToObject(o, "channels", rec->sensor.channels);
    cJSON *d = cJSON_AddObjectToObject(o, "nonfinite_dropped");
    cJSON_AddNumberToObject(d, "points", (double)st->dropped_points);
    cJSON_AddNumberToObject(d, "scans", (double)st->dropped_scans);
    cJSON *a = cJSON_AddArrayToObject(o, "suspicious");
    for (size_t k = 0; k < st->n; k++) {
        const char *why = inspect_why(&sc[k], st);
        if (!why) continue;
        cJSON *it = cJSON_CreateObject();
        cJSON_AddNumberToObject(it, "scan", (double)k);
        cJSON_AddStringToObject(it, "file", rec->scan_paths[k]);
        cJSON_AddStringToObject(it, "reason", why);
        cJSON_AddNumberToObject(it, "points", (double)sc[k].points);
        if (sc[k].error) cJSON_AddStringToObject(it, "error", sc[k].error);
        cJSON_AddItemToArray(a, it);
    }
    inspect_json_pose_checks(o, rec, st);
    char *text = numfmt_json_print(o);
    cJSON_Delete(o);
    if (!text) return err_set(e, "out of memory");
    printf("%s\n", text);
    free(text);
    return 0;
}

struct inspect_opts {
    const char *rec;
    int json, allow_outside, quiet, planar;
    long jobs;
    double radius, exclude_s, speed_max, gap_s;
};

static int inspect_run(const struct inspect_opts *o, int *failed, struct err *e)
{
    struct recording rec;
    if (recording_load(o->rec, o->allow_outside, &rec, e)) return -1;
    struct inspect_stats st;
    memset(&st, 0, sizeof st);
    st.n = rec.n;
    protocol_defaults(&st.proto);
    st.proto.r_pos_m = st.proto.r_neg_m = o->radius;
    st.proto.exclusion_s = o->exclude_s;
    st.proto.planar = o->planar;
    st.speed_max = o->speed_max;
    st.gap_s = o->gap_s;
    if (!(o->speed_max > 0) || !(o->gap_s > 0 || o->gap_s == -1)) {
        recording_free(&rec);
        return err_set(e, "revisit inspect: --max-speed and --max-gap take a number above 0");
    }
    char msg[256];
    if (protocol_check(&st.proto, msg, sizeof msg)) {
        recording_free(&rec);
        return err_set(e, "revisit inspect: %s", msg);
    }
    struct inspect_scan *sc = calloc(rec.n, sizeof *sc);
    int rc = sc ? 0 : err_set(e, "out of memory");
    if (!rc) rc = inspect_read_all(&rec, sc, (int)o->jobs, o->quiet, e);
    if (!rc) rc = inspect_points(sc, rec.n, &st, e);
    if (!rc) rc = inspect_poses(&rec, &st, e);
    if (!rc) rc = inspect_pose_checks(&rec, &st, e);
    if (!rc) {
        if (o->json) rc = inspect_print_json(&rec, sc, &st, e);
        else inspect_print_text(&rec, sc, &st);
    }
    *failed = st.unreadable > 0 || st.jumps > 0 || st.gaps > 0;
    for (size_t k = 0; sc && k < rec.n; k++) free(sc[k].error);
    free(sc);
    recording_free(&rec);
    return rc;
}

int cmd_inspect(int argc, char **argv)
{
    struct inspect_opts o = {NULL, 0, 0, 0, 0, 0, 3.0, 30.0, INSPECT_SPEED_MAX, -1};
    const struct opt opts[] = {
        {"--json", OPT_FLAG, &o.json, NULL, "print the same facts as JSON"},
        {"--radius", OPT_METRES, &o.radius, "M", "revisit radius, metres: 3 or 3m (default 3)"},
        {"--exclude-s", OPT_SECONDS, &o.exclude_s, "S", "skip candidates from the last S seconds: 30 or 30s (default 30)"},
        {"--planar", OPT_FLAG, &o.planar, NULL, "measure pose distances in the world's x, y only"},
        {"--max-speed", OPT_SPEED, &o.speed_max, "M/S", "flag consecutive poses faster apart than this: 70 or 70m/s (default 70)"},
        {"--max-gap", OPT_SECONDS, &o.gap_s, "S", "flag intervals longer than this (default 10 x the median)"},
        {"--jobs", OPT_COUNT, &o.jobs, "N", "threads reading scans (default: online cores)"},
        {"--allow-outside", OPT_FLAG, &o.allow_outside, NULL, "allow manifest paths outside its folder"},
        {"--quiet", OPT_FLAG, &o.quiet, NULL, "no progress bar"},
        {0}};
    struct opt_args a;
    struct err e;
    int go = cmd_parse("inspect", about, argc, argv, opts, &a, &e);
    if (go != CMD_GO_ON) return go;
    if (a.n != 1) return err_set(&e, "revisit inspect: expected one recording, got %d arguments", a.n), cmd_report(&e);
    o.rec = a.v[0];
    int failed = 0;
    if (inspect_run(&o, &failed, &e)) return cmd_report(&e);
    return failed ? CMD_FAIL : CMD_OK;
}
