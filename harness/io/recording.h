/* recording.h: a recording (scans + poses + sensor) and its manifest,
 * recording.json (format "revisit-recording-1").
 *
 * MANIFEST (every key is checked; an unknown key is refused with its JSON
 * path, e.g. "recording.json: $.sensor.chanels: unknown key")
 *
 *   {
 *     "format": "revisit-recording-1",                       required
 *     "sensor": {                                             required
 *       "channels": 32,                                       required, 1..65535
 *       "vertical_deg": [-25.0, ..., 15.0],                   optional, channels entries
 *       "vertical_fov_deg": [-25.0, 15.0],                    optional, [lowest, highest]
 *       "range_max_m": 120,                                   optional, > 0
 *       "mount": {"xyz_m": [0, 0, 1.8], "rpy_deg": [0, 0, 0]},optional
 *       "notes": "free text"                                  optional
 *     },
 *     "scans": {"dir": "scans", "pattern": "*.bin"}           required: dir + pattern
 *           | {"files": ["a.bin", "b.bin", ...]},               (a glob, sorted bytewise) or files
 *     "scan_layout": "raw" | "pcd" | "ply" | "text" | "auto", required
 *     "poses": {"file": "poses.csv",                          required
 *               "layout": "csv" | "text" | "matrix" | "auto", optional, default auto
 *               "times": "times.txt",                         optional (matrix layout)
 *               "time_unit": "s" | "ms" | "us" | "ns" | "auto"},  optional, default auto
 *     "perturbation": {"chain": "...", "seed": 7,             optional: written by
 *                      "on": "query", "source": "..."}          `revisit perturb`
 *     "extrinsic": {"xyz_m": [x, y, z],                       optional: the sensor in
 *                   "quat_xyzw": [qx, qy, qz, qw]},             the poses' frame
 *     "log": {"file": "/abs/drive.bag", "kind": "bag",        optional: written by
 *             "bytes": N, "sha256": "hex", ...}                 `revisit log`
 *   }
 *
 * With an extrinsic E, each pose P read from the pose file becomes P * E
 * (the sensor's pose in the world) before anything else uses it, so
 * distances and --planar (the world frame's horizontal plane) see sensor
 * positions.  "log" is provenance: its keys are checked, not used.
 *
 * Relative paths resolve against the manifest's folder.  A path that leads
 * outside that folder (after following symbolic links) is refused unless
 * allow_outside is set.  Scans and poses must pair up: as many poses as scans,
 * and when every scan file name is a number that is not a frame number (a
 * whole number below a million, or whole numbers counting up by one), it
 * must match the pose time within 1 ms (seconds, or nanoseconds when the
 * numbers are above 1e15).  Pose times are scaled to seconds from
 * poses.time_unit; "auto" detects the unit by magnitude and the rate the
 * median step implies (poses_apply_unit), and an implausible rate is refused.
 * More than RECORDING_MAX_SCANS scans is refused before allocating.
 *
 * READING
 *     struct recording r;
 *     if (recording_load("data/run1", 0, &r, e)) return -1;  // folder or manifest
 *     struct cloud c; cloud_init(&c); size_t bad;
 *     for (size_t i = 0; i < r.n; i++) {
 *         if (recording_load_scan(&r, i, &c, &bad, e)) ...;  // bad: non-finite points dropped
 *         ... r.poses[i] ...
 *     }
 *     cloud_free(&c); recording_free(&r);
 * recording_load_scan is thread-safe: several threads may load different
 * (or the same) scans of one recording at once, each into its own cloud.
 *
 * WRITING (the synthetic generator, `revisit perturb`)
 *     struct recording_writer w;
 *     if (recording_writer_begin(&w, "out/rec", &sensor, SCAN_PCD, e)) return -1;
 *     recording_writer_perturbation(&w, "yaw:deg=random", 7, "both", src, e);  // optional
 *     for (i...) recording_writer_scan(&w, i, &cloud, e);   // any order, any thread
 *     recording_writer_poses(&w, poses, n, e);
 *     if (recording_writer_finish(&w, e)) ...               // writes recording.json last
 *     recording_writer_free(&w);                             // always
 * Scans go to DIR/scans/NNNNNN.bin (raw: x y z i) or .pcd (PCD binary: x y
 * z intensity ring time) or .ply; poses to DIR/poses.csv; the manifest is
 * written atomically by finish, after checking that scans 0..n-1 all exist,
 * so a folder with a recording.json is always complete.
 */
#ifndef RV_RECORDING_H
#define RV_RECORDING_H

#include <stddef.h>
#include <stdint.h>

#include "harness/base/cloud.h"
#include "harness/base/err.h"
#include "harness/base/fileio.h"
#include "harness/base/pose.h"
#include "harness/io/poses_io.h"
#include "harness/io/scan_io.h"

#define RECORDING_FORMAT "revisit-recording-1"
#define RECORDING_MAX_SCANS ((size_t)10000000)
#define RECORDING_PATH_MAX 4096

struct recording_sensor {
    int channels;              /* rings / beams, >= 1 */
    double *vertical_deg;      /* channels angles (malloc'ed) or NULL */
    double vfov_deg[2];        /* lowest, highest elevation; NAN when unknown */
    double range_max_m;        /* NAN when unknown */
    int has_mount;             /* mount below given */
    double mount_xyz_m[3];     /* sensor position on the vehicle */
    double mount_rpy_deg[3];   /* roll pitch yaw of the sensor on the vehicle */
    char *notes;               /* malloc'ed or NULL */
};

struct recording_perturbation {
    int present;               /* 0: the recording is not a perturbed copy */
    char *chain;               /* malloc'ed */
    uint64_t seed;
    char on[16];               /* "query" | "map" | "both" or "" */
    char *source;              /* manifest it was made from, or NULL */
};

struct recording {
    char manifest[RECORDING_PATH_MAX];  /* path of recording.json as opened */
    char dir[RECORDING_PATH_MAX];       /* its folder */
    size_t n;                           /* scans */
    char **scan_paths;                  /* n resolved paths */
    enum scan_layout layout;            /* from scan_layout (SCAN_AUTO: by extension) */
    struct pose *poses;                 /* n poses, poses[i] belongs to scan i; times in seconds */
    enum poses_unit time_unit;          /* unit the pose file's times were read in */
    int time_unit_named;                /* 1: named by poses.time_unit, 0: detected */
    struct recording_sensor sensor;
    struct recording_perturbation perturbation;
    int has_extrinsic;                  /* poses were multiplied by extrinsic */
    struct pose extrinsic;
};

/* An extrinsic from text: 7 numbers "x y z qx qy qz qw" or 12 (a row-major
 * 3x4 [R | p]), separated by commas or spaces, or the name of a file holding
 * either.  0 or -1 with e saying what was found. */
int recording_extrinsic_parse(const char *text, struct pose *out, struct err *e);

/* Sensor description: init to "unknown" (channels 0, NANs, NULLs), deep copy
 * (dst is overwritten; free it first if it held data), free (NULL-safe). */
void recording_sensor_init(struct recording_sensor *s);
int recording_sensor_copy(struct recording_sensor *dst, const struct recording_sensor *src,
                          struct err *e);
void recording_sensor_free(struct recording_sensor *s);

/* Load a manifest (path to a .json file, or a folder holding recording.json),
 * its scan list and its poses.  0, or -1 with e set and *rec empty. */
int recording_load(const char *path, int allow_outside, struct recording *rec, struct err *e);
void recording_free(struct recording *rec);

/* The content digest of rec: the manifest's bytes, the poses as read and
 * every scan file's content hash (recording_digest.c). Scan hashes are kept
 * in MANIFEST.digest beside the manifest; a scan whose size, mtime, inode
 * and ctime match its stored line is not read again. *hashed (may be NULL) gets the number
 * of scans read and hashed now. 0, or -1 with e naming the file. */
int recording_digest(const struct recording *rec, uint64_t *digest, size_t *hashed, struct err *e);

/* Read scan i into c (contents replaced), drop points with a non-finite
 * coordinate and count them in *n_dropped (may be NULL).  Errors name the
 * scan index and file. */
int recording_load_scan(const struct recording *rec, size_t i, struct cloud *c,
                        size_t *n_dropped, struct err *e);

/* Write a manifest for the given pieces (used by `revisit index` and the
 * writer).  scans_dir/pattern or files (n_files) give the scan list, paths as
 * they should appear in the file (relative to the manifest's folder);
 * poses_times may be NULL.  perturbation may be NULL.  Atomic. */
struct recording_manifest {
    const struct recording_sensor *sensor;
    const char *scans_dir, *scans_pattern;  /* or NULL */
    const char *const *files;               /* or NULL */
    size_t n_files;
    enum scan_layout layout;
    const char *poses_file;
    const char *poses_layout;               /* "csv" | "text" | "matrix" | "auto" */
    const char *poses_times;                /* or NULL */
    const char *poses_time_unit;            /* "s" | "ms" | "us" | "ns", or NULL (auto) */
    const struct recording_perturbation *perturbation;  /* or NULL */
    const struct pose *extrinsic;           /* or NULL */
    const char *log_json;                   /* the "log" object as JSON text, or NULL */
};
int recording_write_manifest(const char *path, const struct recording_manifest *m,
                             struct err *e);

struct recording_writer {
    char dir[RECORDING_PATH_MAX];     /* the staged folder files go to until finish */
    struct fileio_stage stage;        /* dir is stage.tmp; the recording's place is stage.path */
    enum scan_layout layout;          /* SCAN_RAW, SCAN_PCD or SCAN_PLY */
    struct recording_sensor sensor;   /* owned copy */
    struct recording_perturbation perturbation;  /* owned copy */
    struct pose *poses;               /* owned copy, n_poses */
    size_t n_poses;
    int has_extrinsic;
    struct pose extrinsic;
    char *log_json;                   /* owned copy or NULL */
};

/* Start a recording at dir, written as a whole: everything goes into a
 * staged folder beside it (w->dir) and appears at dir only when finish
 * succeeds (fileio_stage_*: one sync, then a rename), so a failed or killed
 * run never leaves a half-written recording there.  Remembers the sensor
 * (copied). */
int recording_writer_begin(struct recording_writer *w, const char *dir,
                           const struct recording_sensor *sensor, enum scan_layout layout,
                           struct err *e);
/* Record that this recording is src_manifest perturbed by chain with seed,
 * applied on "query", "map" or "both" (on and src_manifest may be NULL). */
int recording_writer_perturbation(struct recording_writer *w, const char *chain,
                                  uint64_t seed, const char *on, const char *src_manifest,
                                  struct err *e);
/* Record where the recording came from (log_json: the manifest's "log"
 * object as JSON text, copied) and the extrinsic (copied); either may be NULL. */
int recording_writer_source(struct recording_writer *w, const char *log_json, const struct pose *extrinsic,
                            struct err *e);
/* Write scan i into the staged folder.  Thread-safe for distinct i. */
int recording_writer_scan(const struct recording_writer *w, size_t i, const struct cloud *c,
                          struct err *e);
/* Path scan i is written to (out of size n). */
void recording_writer_scan_path(const struct recording_writer *w, size_t i, char *out, size_t n);
/* Keep the poses (copied; times strictly increasing) and write poses.csv. */
int recording_writer_poses(struct recording_writer *w, const struct pose *v, size_t n,
                           struct err *e);
/* Check scans 0..n_poses-1 exist, write recording.json, then put the
 * staged folder in place at the dir given to begin. */
int recording_writer_finish(struct recording_writer *w, struct err *e);
void recording_writer_free(struct recording_writer *w);

#endif
