/* test_recording_refusals.c: every refusal of the manifest reader and of the
 * recording writer, one edit of a good manifest each, checking the JSON path
 * and the expectation in the message. */
#include <math.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>
#include <sys/resource.h>

#include "harness/base/fileio.h"
#include "harness/io/poses_io.h"
#include "harness/io/recording.h"
#include "tests/check.h"

static const char *good =
    "{\"format\": \"revisit-recording-1\",\n"
    " \"sensor\": {\"channels\": 4, \"vertical_deg\": [-3, -1, 1, 3], \"vertical_fov_deg\": [-3, 3],\n"
    "            \"range_max_m\": 50, \"mount\": {\"xyz_m\": [0, 0, 2], \"rpy_deg\": [0, 0, 0]}, \"notes\": \"n\"},\n"
    " \"scans\": {\"dir\": \"scans\", \"pattern\": \"*.bin\"},\n"
    " \"scan_layout\": \"raw\",\n"
    " \"poses\": {\"file\": \"poses.txt\", \"layout\": \"auto\"},\n"
    " \"perturbation\": {\"chain\": \"dropout:p=0.5\", \"seed\": 3, \"on\": \"query\", \"source\": \"a.json\"}}\n";

struct edit { const char *from, *to, *frag; };

static const struct edit edits[] = {
    {"\"channels\": 4", "\"channels\": 0", "$.sensor.channels: not a whole number from 1 to 65535"},
    {"[-3, -1, 1, 3]", "[-3, -1, 1]", "$.sensor.vertical_deg: 3 entries, expected 4 numbers"},
    {"[-3, -1, 1, 3]", "[-3, -1, \"1\", 3]", "$.sensor.vertical_deg[2]: not a finite number"},
    {"[-3, 3]", "[3, -3]", "$.sensor.vertical_fov_deg: not an increasing pair within [-90, 90]"},
    {"\"range_max_m\": 50", "\"range_max_m\": -1", "$.sensor.range_max_m: not a positive number, expected metres > 0"},
    {"\"xyz_m\": [0, 0, 2]", "\"xyz_m\": [0, 2]", "$.sensor.mount.xyz_m: 2 entries, expected 3 numbers"},
    {"\"rpy_deg\"", "\"ypr_deg\"", "$.sensor.mount.ypr_deg: unknown key, expected xyz_m, rpy_deg"},
    {"\"notes\": \"n\"", "\"notes\": 5", "$.sensor.notes: wrong type, expected a string"},
    {"\"pattern\": \"*.bin\"", "\"pattern\": \"*.bin\", \"files\": [\"a\"]", "$.scans: both files and dir/pattern"},
    {"\"dir\": \"scans\", ", "", "$.scans: missing key dir, expected dir + pattern, or files"},
    {"\"pattern\": \"*.bin\"", "\"pattern\": \"x/*.bin\"", "$.scans.pattern: contains '/'"},
    {"\"dir\": \"scans\"", "\"dir\": \"\"", "$.scans.dir: empty path, expected a file or folder name"},
    {"\"dir\": \"scans\"", "\"dir\": \"nowhere\"", "$.scans.dir: 'r/nowhere' cannot be opened (No such file or directory)"},
    {"\"scan_layout\": \"raw\"", "\"scan_layout\": \"las\"", "$.scan_layout: unknown scan layout 'las'"},
    {"\"scan_layout\": \"raw\",\n", "", "$.scan_layout: missing key, expected a string"},
    {"\"file\": \"poses.txt\", ", "", "$.poses.file: missing key, expected a string"},
    {"\"layout\": \"auto\"", "\"layout\": \"auto\", \"times\": \"t.txt\"", "$.poses.times: 'r/t.txt' cannot be opened"},
    {"\"chain\": \"dropout:p=0.5\", ", "", "$.perturbation.chain: missing key"},
    {"\"seed\": 3", "\"seed\": 3.5", "$.perturbation.seed: not a whole number from 0 to 2^53"},
    {"\"seed\": 3", "\"seed\": \"-4\"", "$.perturbation.seed: not a decimal whole number"},
    {"\"on\": \"query\"", "\"on\": \"all\"", "$.perturbation.on: not query, map or both"},
    {"\"source\"", "\"origin\"", "$.perturbation.origin: unknown key, expected chain, seed, on, source"},
    {"\"channels\": 4,", "\"channels\": 4, \"channels\": 8,", "$.sensor.channels: key given twice, expected each key once"},
    {"\"scan_layout\": \"raw\",", "\"scan_layout\": \"raw\", \"scan_layout\": \"pcd\",",
     "$.scan_layout: key given twice, expected each key once"},
};

static void make_folder(void)
{
    struct err e;
    fileio_mkdirs("r/scans", &e);
    struct cloud c;
    cloud_init(&c);
    struct pose v[3];
    for (int k = 0; k < 3; k++) {
        cloud_push(&c, (float)k, 0, 0, 0);
        char p[64];
        snprintf(p, sizeof p, "r/scans/%06d.bin", k);
        scan_write_raw(p, &c, &e);
        double q[4] = {0, 0, 0, 1}, pos[3] = {k, 0, 0};
        pose_from_quat(&v[k], k, pos, q, &e);
    }
    poses_write("r/poses.txt", POSES_TEXT, v, 3, NULL, &e);
    cloud_free(&c);
}

static const char *load(const char *text)
{
    static struct err e;
    FILE *f = fopen("r/recording.json", "w");
    fputs(text, f);
    fclose(f);
    struct recording r;
    e.msg[0] = 0;
    if (!recording_load("r", 0, &r, &e)) recording_free(&r);
    return e.msg;
}

static void test_edits(void)
{
    make_folder();
    CHECK(load(good)[0] == 0, "the good manifest loads");
    for (size_t k = 0; k < sizeof edits / sizeof edits[0]; k++) {
        const struct edit *d = &edits[k];
        const char *at = strstr(good, d->from);
        char text[4096], desc[200];
        if (!at) { CHECK(0, d->from); continue; }
        snprintf(text, sizeof text, "%.*s%s%s", (int)(at - good), good, d->to, at + strlen(d->from));
        const char *m = load(text);
        snprintf(desc, sizeof desc, "refused with its JSON path: %s", d->frag);
        CHECK_MSG(m, "r/recording.json", "the message names the manifest");
        CHECK_MSG(m, d->frag, desc);
    }
    CHECK_MSG(load("[1, 2]\n"), "r/recording.json: $: not a JSON object, expected an object",
              "a JSON array is refused as not an object");
    struct recording r;
    struct err e;
    CHECK(recording_load("nothing-here", 0, &r, &e) == -1, "a missing path is refused");
    CHECK_MSG(e.msg, "nothing-here: cannot open", "the message names it");
    fileio_mkdirs("emptydir", &e);
    CHECK(recording_load("emptydir", 0, &r, &e) == -1, "a folder without recording.json is refused");
    CHECK_MSG(e.msg, "emptydir/recording.json: cannot open", "the message names the manifest expected");
}

static void test_writer_refusals(void)
{
    struct err e;
    struct recording_sensor s;
    recording_sensor_init(&s);
    struct recording_writer w;
    CHECK(recording_writer_begin(&w, "w1", &s, SCAN_RAW, &e) == -1, "a sensor with 0 channels is refused");
    CHECK_MSG(e.msg, "w1: sensor channels must be from 1 to 65535", "the message names the folder and the range");
    recording_writer_free(&w);
    s.channels = 2;
    CHECK(!recording_writer_begin(&w, "w1", &s, SCAN_RAW, &e), "a writer starts");
    CHECK(recording_writer_perturbation(&w, "yaw", 1, "everything", NULL, &e) == -1, "a bad 'on' word is refused");
    CHECK_MSG(e.msg, "applied on 'everything', expected query, map or both", "the message lists the words");
    struct cloud c;
    cloud_init(&c);
    CHECK(recording_writer_scan(&w, 0, &c, &e) == -1, "an empty raw scan is refused");
    CHECK_MSG(e.msg, "w1/scans/000000.bin: scan 0 has no points", "the message names the scan");
    cloud_push(&c, 1, 2, 3, 4);
    CHECK(!recording_writer_scan(&w, 0, &c, &e) && !recording_writer_scan(&w, 2, &c, &e), "scans 0 and 2 written");
    struct pose v[3];
    for (int k = 0; k < 3; k++) pose_identity(&v[k], k);
    CHECK(recording_writer_poses(&w, v, 0, &e) == -1, "no poses is refused");
    CHECK_MSG(e.msg, "w1: no poses, expected one pose per scan", "the message says so");
    CHECK(!recording_writer_poses(&w, v, 3, &e), "three poses");
    CHECK(recording_writer_finish(&w, &e) == -1, "a missing scan 1 is refused at finish");
    CHECK_MSG(e.msg, "w1/scans/000001.bin: scan 1 of 3 was not written", "the message names the missing scan");
    FILE *f = fopen("w1/recording.json", "r");
    CHECK(f == NULL, "no manifest is written for an incomplete recording");
    if (f) fclose(f);
    recording_writer_free(&w);
    cloud_free(&c);
}

/* A scan list over the bound is refused before the JSON parser builds it:
 * 10.2 million entries in a 20 MB file would cost about a gigabyte parsed. */
static void test_scan_bound(void)
{
    const size_t n = RECORDING_MAX_SCANS + 200000;
    FILE *f = fopen("r/recording.json", "w");
    fputs("{\"format\": \"revisit-recording-1\", \"scans\": {\"files\": [0", f);
    for (size_t k = 1; k < n; k++) fputs(",0", f);
    fputs("]}}\n", f);
    fclose(f);
    struct rusage before, after;
    getrusage(RUSAGE_SELF, &before);
    struct recording r;
    struct err e;
    e.msg[0] = 0;
    CHECK(recording_load("r", 0, &r, &e) == -1, "a manifest listing more than 10 million scans is refused");
    CHECK_MSG(e.msg, "r/recording.json: more than 10069631 JSON values, expected at most 10000000 scans",
              "the message names the manifest and the bound");
    getrusage(RUSAGE_SELF, &after);
    /* the file itself is read (20 MB); parsing it would add about 1 GB */
    CHECK(after.ru_maxrss - before.ru_maxrss < 200 * 1024, "the refusal comes before the parse allocates");
}

int main(void)
{
    test_edits();
    test_scan_bound();
    test_writer_refusals();
    return check_done();
}
