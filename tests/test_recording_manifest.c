/* test_recording_manifest.c: recording.json reading and writing, scan lists,
 * pairing of scans with poses, and the manifest bad-input catalogue. */
#include <math.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>
#include <sys/stat.h>
#include <unistd.h>

#include "harness/base/fileio.h"
#include "harness/base/pool.h"
#include "harness/io/poses_io.h"
#include "harness/io/recording.h"
#include "tests/check.h"

static void puts_file(const char *path, const char *text)
{
    FILE *f = fopen(path, "w");
    fputs(text, f);
    fclose(f);
}

/* A folder of n raw scans named by name_fmt (index or time) and poses.txt. */
static void make_folder(const char *dir, int n, const char *name_fmt, double t0)
{
    struct err e;
    char p[512];
    snprintf(p, sizeof p, "%s/scans", dir);
    fileio_mkdirs(p, &e);
    struct cloud c;
    cloud_init(&c);
    struct pose *v = calloc((size_t)n, sizeof *v);
    for (int k = 0; k < n; k++) {
        c.n = 0;
        for (int j = 0; j <= k; j++) cloud_push(&c, (float)j, (float)k, 0, 1);
        char name[64];
        if (!strchr(name_fmt, 'f')) snprintf(name, sizeof name, name_fmt, k);
        else snprintf(name, sizeof name, name_fmt, t0 + 0.1 * k);
        snprintf(p, sizeof p, "%s/scans/%s", dir, name);
        scan_write_raw(p, &c, &e);
        double q[4] = {0, 0, 0, 1}, pos[3] = {k * 2.0, 0, 0};
        pose_from_quat(&v[k], t0 + 0.1 * k, pos, q, &e);
    }
    snprintf(p, sizeof p, "%s/poses.txt", dir);
    poses_write(p, POSES_TEXT, v, (size_t)n, NULL, &e);
    free(v);
    cloud_free(&c);
}

static const char *manifest_ok =
    "{\"format\": \"revisit-recording-1\",\n"
    " \"sensor\": {\"channels\": 16, \"vertical_fov_deg\": [-15, 15], \"range_max_m\": 100,\n"
    "            \"mount\": {\"xyz_m\": [0, 0, 1.7], \"rpy_deg\": [0, 0, 90]}, \"notes\": \"roof\"},\n"
    " \"scans\": {\"dir\": \"scans\", \"pattern\": \"*.bin\"},\n"
    " \"scan_layout\": \"raw\",\n"
    " \"poses\": {\"file\": \"poses.txt\", \"layout\": \"text\"}}\n";

static void test_load(void)
{
    struct err e;
    struct recording r;
    make_folder("r1", 12, "%d.bin", 100);  /* unpadded: 10.bin must sort after 9.bin */
    puts_file("r1/recording.json", manifest_ok);
    CHECK(!recording_load("r1", 0, &r, &e), "a folder with recording.json loads");
    if (check_failed) fprintf(stderr, "%s\n", e.msg);
    CHECK(r.n == 12 && r.layout == SCAN_RAW && r.sensor.channels == 16 && r.sensor.vfov_deg[1] == 15 &&
          r.sensor.range_max_m == 100 && r.sensor.has_mount && r.sensor.mount_xyz_m[2] == 1.7 &&
          r.sensor.mount_rpy_deg[2] == 90 && r.sensor.notes && !strcmp(r.sensor.notes, "roof") &&
          !r.perturbation.present, "every sensor field is read");
    CHECK(strstr(r.scan_paths[9], "/9.bin") && strstr(r.scan_paths[10], "/10.bin"),
          "numeric names sort by value, not bytewise");
    struct cloud c;
    cloud_init(&c);
    size_t bad = 7;
    CHECK(!recording_load_scan(&r, 10, &c, &bad, &e) && c.n == 11 && bad == 0 && CLOUD_Y(&c, 0) == 10,
          "scan 10 is the eleventh file");
    CHECK(fabs(r.poses[10].t - 101.0) < 1e-9 && r.poses[10].p[0] == 20, "pose 10 pairs with scan 10");
    CHECK(recording_load_scan(&r, 12, &c, &bad, &e) == -1, "a scan index past the end is refused");
    CHECK_MSG(e.msg, "scan 12 does not exist", "the message names the index");
    /* A non-finite point is dropped and counted. */
    float nanrec[8] = {NAN, 0, 0, 0, 1, 2, 3, 4};
    fileio_write(r.scan_paths[0], nanrec, sizeof nanrec, &e);
    CHECK(!recording_load_scan(&r, 0, &c, &bad, &e) && c.n == 1 && bad == 1 && CLOUD_X(&c, 0) == 1,
          "non-finite points are dropped and counted");
    fileio_write(r.scan_paths[1], nanrec, 12, &e);
    CHECK(recording_load_scan(&r, 1, &c, &bad, &e) == -1, "an unreadable scan is an error");
    CHECK_MSG(e.msg, "scan 1: ", "the message names the scan index");
    CHECK_MSG(e.msg, "not a multiple of 16", "and the reason");
    recording_free(&r);
    CHECK(!recording_load("r1/recording.json", 0, &r, &e) && r.n == 12, "the manifest path itself also loads");
    recording_free(&r);
    cloud_free(&c);
}

/* Load dir with the manifest text; return the message (empty on success). */
static const char *load_msg(const char *dir, const char *text, int allow)
{
    static struct err e;
    char p[512];
    snprintf(p, sizeof p, "%s/recording.json", dir);
    puts_file(p, text);
    struct recording r;
    e.msg[0] = 0;
    if (!recording_load(dir, allow, &r, &e)) recording_free(&r);
    return e.msg;
}

/* The manifest with one substring replaced. */
static const char *edit(const char *from, const char *to)
{
    static char buf[4096];
    const char *s = strstr(manifest_ok, from);
    if (!s) { snprintf(buf, sizeof buf, "%s", manifest_ok); return buf; }
    snprintf(buf, sizeof buf, "%.*s%s%s", (int)(s - manifest_ok), manifest_ok, to, s + strlen(from));
    return buf;
}

static void test_bad_manifests(void)
{
    make_folder("r2", 5, "%06d.bin", 0);
    const char *m;
    m = load_msg("r2", edit("\"format\": \"revisit-recording-1\",", ""), 0);
    CHECK_MSG(m, "r2/recording.json: $.format: missing key", "a missing format key is named by its path");
    m = load_msg("r2", edit("revisit-recording-1", "revisit-recording-9"), 0);
    CHECK_MSG(m, "$.format: 'revisit-recording-9' is not a format this version reads, expected \"revisit-recording-1\"",
              "a wrong format version is refused with the version expected");
    m = load_msg("r2", edit("\"channels\": 16", "\"chanels\": 16"), 0);
    CHECK_MSG(m, "$.sensor.chanels: unknown key", "an unknown key is refused with its JSON path");
    m = load_msg("r2", edit("\"channels\": 16, ", ""), 0);
    CHECK_MSG(m, "$.sensor.channels: missing key", "a missing channels key is named");
    m = load_msg("r2", edit("\"channels\": 16", "\"channels\": 16.5"), 0);
    CHECK_MSG(m, "$.sensor.channels: not a whole number", "a fractional channel count is refused");
    m = load_msg("r2", edit("\"scan_layout\": \"raw\",", "\"scan_layout\": \"raw\", \"extra\": 1,"), 0);
    CHECK_MSG(m, "$.extra: unknown key", "an unknown top-level key is refused");
    m = load_msg("r2", edit("\"poses.txt\"", "\"../outside.txt\""), 0);
    CHECK_MSG(m, "$.poses.file", "a path escaping the folder names its key");
    puts_file("outside.txt", "");
    m = load_msg("r2", edit("\"poses.txt\"", "\"../outside.txt\""), 0);
    CHECK_MSG(m, "'../outside.txt' leads outside the manifest's folder", "an existing file outside is refused");
    CHECK_MSG(m, "--allow-outside", "the message tells how to allow it");
    make_folder("r2b", 5, "%06d.bin", 0);
    m = load_msg("r2", edit("\"poses.txt\"", "\"../r2b/poses.txt\""), 1);
    CHECK(m[0] == 0, "with allow_outside a path outside the folder loads");
    symlink("../r2b/scans", "r2/linked");
    m = load_msg("r2", edit("\"dir\": \"scans\"", "\"dir\": \"linked\""), 0);
    CHECK_MSG(m, "$.scans.dir: 'linked' leads outside", "a symbolic link out of the folder is refused");
    symlink("../../r2b/scans/000000.bin", "r2/scans/000005.bin");
    m = load_msg("r2", manifest_ok, 0);
    CHECK_MSG(m, "$.scans.pattern: '000005.bin' leads outside",
              "a scan that is a symbolic link out of the folder is refused");
    unlink("r2/scans/000005.bin");
    m = load_msg("r2", edit("\"layout\": \"text\"", "\"layout\": \"zigzag\""), 0);
    CHECK_MSG(m, "$.poses.layout: unknown pose layout 'zigzag'", "an unknown pose layout is refused");
    m = load_msg("r2", edit("\"pattern\": \"*.bin\"", "\"pattern\": \"*.pcd\""), 0);
    CHECK_MSG(m, "$.scans: no scan files", "a pattern matching nothing is refused");
    m = load_msg("r2", edit("\"dir\": \"scans\", \"pattern\": \"*.bin\"", "\"dir\": \"scans\""), 0);
    CHECK_MSG(m, "$.scans: missing key pattern", "a dir without pattern is refused");
    m = load_msg("r2", "{\"format\": \"revisit-recording-1\",\n  \"sensor\": {\"channels\": 16,,}}\n", 0);
    CHECK_MSG(m, "r2/recording.json:2:30: invalid JSON", "a JSON syntax error gives line and column");
    m = load_msg("r2", edit("\"channels\": 16", "\"channels\": \"16\""), 0);
    CHECK_MSG(m, "$.sensor.channels: wrong type, expected a number", "a wrong JSON type is named");
    m = load_msg("r2", edit("\"vertical_fov_deg\": [-15, 15]", "\"vertical_fov_deg\": [-15]"), 0);
    CHECK_MSG(m, "$.sensor.vertical_fov_deg: 1 entries, expected 2 numbers", "a short array is refused");
    m = load_msg("r2", edit("{\"dir\": \"scans\", \"pattern\": \"*.bin\"}",
                            "{\"files\": [\"scans/000000.bin\", 3]}"), 0);
    CHECK_MSG(m, "$.scans.files[1]: not a string", "a non-string file entry is named by index");
}

static void test_pairing(void)
{
    char buf_ns[96];
    struct err e;
    struct recording r;
    make_folder("r3", 6, "%06d.bin", 50);
    unlink("r3/scans/000005.bin");
    const char *m = load_msg("r3", manifest_ok, 0);
    CHECK_MSG(m, "r3/recording.json: 5 scans but 6 poses, expected one pose per scan",
              "scans and poses that do not pair up are refused with both counts");
    /* Scans named by time: a mismatch names the scan and both times. */
    make_folder("r4", 4, "%.6f.bin", 1000);
    CHECK(load_msg("r4", manifest_ok, 0)[0] == 0, "scans named by their times pair with the poses");
    rename("r4/scans/1000.300000.bin", "r4/scans/1000.400000.bin");
    m = load_msg("r4", manifest_ok, 0);
    CHECK_MSG(m, "scan 3 (r4/scans/1000.400000.bin) is named for time 1000.400000 s but pose 3 has time 1000.300000 s",
              "a scan time that does not match its pose is named");
    /* Scans named by nanosecond times (numbers above 1e15) pair by time too. */
    make_folder("r7", 3, "%06d.bin", 1700000000.5);
    for (int k = 0; k < 3; k++) {
        char from[64], to[96];
        snprintf(from, sizeof from, "r7/scans/%06d.bin", k);
        snprintf(to, sizeof to, "r7/scans/%lld.bin", 1700000000500000000LL + 100000000LL * k);
        rename(from, to);
    }
    CHECK(load_msg("r7", manifest_ok, 0)[0] == 0, "nanosecond scan names pair with pose times in seconds");
    snprintf(buf_ns, sizeof buf_ns, "r7/scans/%lld.bin", 1700000000700000000LL);
    rename(buf_ns, "r7/scans/1700000000750000000.bin");
    m = load_msg("r7", manifest_ok, 0);
    CHECK_MSG(m, "scan 2 (r7/scans/1700000000750000000.bin) is named for time 1700000000.750000 s but pose 2 has "
              "time 1700000000.700000 s", "a nanosecond name off by 50 ms is named");
    /* A non-monotonic pose file, through the manifest. */
    make_folder("r5", 3, "%06d.bin", 0);
    puts_file("r5/poses.txt", "0 0 0 0 0 0 0 1\n0.2 0 0 0 0 0 0 1\n0.1 0 0 0 0 0 0 1\n");
    m = load_msg("r5", manifest_ok, 0);
    CHECK_MSG(m, "r5/poses.txt:3: time 0.10000000000000001 is not after the previous pose's 0.20000000000000001",
              "non-monotonic timestamps are refused with file and line");
    puts_file("r5/poses.txt", "0 0 0 0 0 0 0 1\n0.1 0 0 0 0 0 1\n0.2 0 0 0 0 0 0 1\n");
    m = load_msg("r5", manifest_ok, 0);
    CHECK_MSG(m, "r5/poses.txt:2: found 7 numbers, expected 8", "a pose line with a wrong column count names line 2");
    puts_file("r5/poses.txt", "0 0 0 0 0 0 0 1\n0.1 0 0 0 0 0 0 0\n0.2 0 0 0 0 0 0 1\n");
    m = load_msg("r5", manifest_ok, 0);
    CHECK_MSG(m, "r5/poses.txt:2: quaternion (0 0 0 0) has zero norm", "a zero quaternion names file and line");
    /* Frame-numbered scans with a dropped frame: the names are not times. */
    make_folder("r8", 4, "%06d.bin", 0);
    rename("r8/scans/000003.bin", "r8/scans/000004.bin");
    m = load_msg("r8", manifest_ok, 0);
    CHECK(m[0] == 0, "frame numbers with a gap (0 1 2 4) are not taken for times");
    /* Pose times in nanoseconds at 10 Hz are read as nanoseconds, in the
     * manifest's unit when it names one, and an implausible unit is refused. */
    make_folder("r9", 5, "%06d.bin", 0);
    puts_file("r9/poses.txt", "0 0 0 0 0 0 0 1\n100000000 2 0 0 0 0 0 1\n200000000 4 0 0 0 0 0 1\n"
                              "300000000 6 0 0 0 0 0 1\n400000000 8 0 0 0 0 0 1\n");
    puts_file("r9/recording.json", manifest_ok);
    int loaded = !recording_load("r9", 0, &r, &e);
    CHECK(loaded && r.time_unit == POSES_UNIT_NS && !r.time_unit_named &&
          fabs(r.poses[1].t - 0.1) < 1e-12 && fabs(r.poses[4].t - 0.4) < 1e-12,
          "10 Hz pose times in ns are detected and read as seconds 0, 0.1, ... 0.4");
    if (loaded) recording_free(&r);
    m = load_msg("r9", edit("\"layout\": \"text\"", "\"layout\": \"text\", \"time_unit\": \"ms\""), 0);
    CHECK_MSG(m, "r9/poses.txt: pose times have a median step of 1e+08 and reach 4e+08: in ms that is 1e-05 Hz",
              "a named unit giving an implausible rate is refused with the rate");
    m = load_msg("r9", edit("\"layout\": \"text\"", "\"layout\": \"text\", \"time_unit\": \"days\""), 0);
    CHECK_MSG(m, "r9/recording.json: $.poses.time_unit: unknown time unit 'days'", "an unknown unit word is named");
    puts_file("r9/poses.txt", "0 0 0 0 0 0 0 1\n0.00001 2 0 0 0 0 0 1\n0.00002 4 0 0 0 0 0 1\n"
                              "0.00003 6 0 0 0 0 0 1\n0.00004 8 0 0 0 0 0 1\n");
    m = load_msg("r9", manifest_ok, 0);
    CHECK_MSG(m, "r9/poses.txt: pose times have a median step of 1e-05", "a rate no unit explains is refused");
    CHECK_MSG(m, "(name the unit: poses.time_unit, or index --time-unit)", "the message says how to name the unit");
}

static void test_writer(void)
{
    struct err e;
    struct recording_sensor s;
    recording_sensor_init(&s);
    s.channels = 4;
    double vert[4] = {-3, -1, 1, 3};
    s.vertical_deg = vert;
    s.notes = "synthetic";
    struct recording_writer w;
    CHECK(!recording_writer_begin(&w, "out/rec", &s, SCAN_PCD, &e), "a writer starts in a new folder");
    CHECK(!recording_writer_perturbation(&w, "yaw:deg=random+dropout:p=0.3", 12345678901234567ULL, "both",
                                         "in/recording.json", &e), "a perturbation block is recorded");
    struct cloud c;
    cloud_init(&c);
    cloud_enable_ring(&c);
    cloud_enable_time(&c);
    struct pose v[3];
    for (int k = 0; k < 3; k++) {
        c.n = 0;
        for (int j = 0; j < 10; j++) { cloud_push(&c, (float)j, (float)k, 1, 0); c.ring[j] = (uint16_t)(j % 4); c.time[j] = 0.01f * j; }
        CHECK(!recording_writer_scan(&w, (size_t)(2 - k), &c, &e), "scans are written in any order");
        double q[4] = {0, 0, 0, 1}, p[3] = {k, 0, 0};
        pose_from_quat(&v[k], 10 + k, p, q, &e);
    }
    CHECK(recording_writer_finish(&w, &e) == -1, "finish without poses is refused");
    CHECK_MSG(e.msg, "no poses written", "the message says the poses are missing");
    struct pose bad[2] = {v[1], v[0]};
    CHECK(recording_writer_poses(&w, bad, 2, &e) == -1, "poses out of time order are refused");
    CHECK_MSG(e.msg, "pose 1 has time 10", "the message names the pose");
    CHECK(!recording_writer_poses(&w, v, 3, &e) && !recording_writer_finish(&w, &e), "poses then finish succeed");
    recording_writer_free(&w);
    struct recording r;
    CHECK(!recording_load("out/rec", 0, &r, &e), "the written recording loads");
    CHECK(r.n == 3 && r.layout == SCAN_PCD && r.sensor.channels == 4 && r.sensor.vertical_deg &&
          r.sensor.vertical_deg[3] == 3 && !strcmp(r.sensor.notes, "synthetic"), "sensor survives the round trip");
    CHECK(r.perturbation.present && r.perturbation.seed == 12345678901234567ULL &&
          !strcmp(r.perturbation.chain, "yaw:deg=random+dropout:p=0.3") && !strcmp(r.perturbation.on, "both") &&
          !strcmp(r.perturbation.source, "in/recording.json"), "the perturbation block survives, a large seed exactly");
    CHECK(!recording_load_scan(&r, 2, &c, NULL, &e) && c.n == 10 && CLOUD_Y(&c, 0) == 0 && c.ring &&
          c.ring[5] == 1 && c.time && fabs(c.time[9] - 0.09) < 1e-7, "PCD scans keep ring and time");
    struct recording_sensor copy;
    CHECK(!recording_sensor_copy(&copy, &r.sensor, &e) && copy.vertical_deg != r.sensor.vertical_deg &&
          copy.vertical_deg[0] == -3 && strcmp(copy.notes, "synthetic") == 0, "a sensor copy is deep");
    recording_sensor_free(&copy);
    CHECK(r.poses[2].t == 12 && r.poses[2].p[0] == 2, "poses survive the round trip");
    recording_free(&r);
    /* A rewrite stages a fresh folder: the old recording stays whole until
     * finish, and scans not written again are missing, not taken over. */
    CHECK(!recording_writer_begin(&w, "out/rec", &s, SCAN_PCD, &e), "a writer restarts on the folder");
    struct stat st;
    CHECK(stat("out/rec/recording.json", &st) == 0, "a restarted writer leaves the old recording whole");
    CHECK(!recording_writer_poses(&w, v, 2, &e), "two poses");
    CHECK(recording_writer_finish(&w, &e) == -1, "scans not written again are refused at finish");
    CHECK_MSG(e.msg, "out/rec/scans/000000.pcd: scan 0 of 2 was not written",
              "the message names the missing scan at its place in the recording");
    recording_writer_free(&w);
    CHECK(stat("out/rec/recording.json", &st) == 0 && !recording_load("out/rec", 0, &r, &e) && r.n == 3,
          "after the failed rewrite the old recording loads, whole");
    recording_free(&r);
    CHECK(recording_writer_begin(&w, "out/r2", &s, SCAN_TEXT, &e) == -1, "a text-layout writer is refused");
    CHECK_MSG(e.msg, "raw, pcd, ply or pcd-compressed", "the message lists the writable layouts");
    recording_writer_free(&w);
    cloud_free(&c);
}

/* Several threads loading scans of one recording at once get what a single
 * thread gets. */
struct par_ctx { const struct recording *r; struct cloud *clouds; double *sum; size_t *n; };

static int par_task(void *vctx, size_t i, int worker, struct err *e)
{
    struct par_ctx *x = vctx;
    struct cloud *c = &x->clouds[worker];
    if (recording_load_scan(x->r, i, c, NULL, e)) return -1;
    double s = 0;
    for (size_t k = 0; k < c->n; k++) s += CLOUD_X(c, k) * (double)(k + 1) + CLOUD_Y(c, k);
    x->sum[i] = s;
    x->n[i] = c->n;
    return 0;
}

static void test_threads(void)
{
    struct err e;
    make_folder("r6", 40, "%06d.bin", 0);
    puts_file("r6/recording.json", manifest_ok);
    struct recording r;
    CHECK(!recording_load("r6", 0, &r, &e), "a 40-scan recording loads");
    double seq[40], par[40];
    size_t nseq[40], npar[40];
    struct cloud cl[4];
    for (int k = 0; k < 4; k++) cloud_init(&cl[k]);
    struct par_ctx a = {&r, cl, seq, nseq}, b = {&r, cl, par, npar};
    CHECK(!pool_run(r.n, 1, par_task, &a, &e), "one thread loads every scan");
    CHECK(!pool_run(r.n, 4, par_task, &b, &e), "four threads load every scan at once");
    CHECK(!memcmp(seq, par, sizeof seq) && !memcmp(nseq, npar, sizeof nseq) && npar[39] == 40,
          "threads get exactly what one thread gets");
    for (int k = 0; k < 4; k++) cloud_free(&cl[k]);
    recording_free(&r);
}

int main(void)
{
    test_threads();
    test_load();
    test_bad_manifests();
    test_pairing();
    test_writer();
    return check_done();
}
