/* cmd_index.c: `revisit index DIR --poses FILE`: write recording.json for an
 * existing folder of scans and a pose file, after checking they pair up. */
#include <dirent.h>
#include <errno.h>
#include <fnmatch.h>
#include <math.h>
#include <limits.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>
#include <sys/stat.h>
#include <unistd.h>

#include "harness/cli/cmd.h"
#include "harness/base/fileio.h"
#include "harness/base/opt.h"
#include "harness/io/poses_io.h"
#include "harness/io/recording.h"
#include "harness/io/track.h"

static const char about[] =
    "Write a recording manifest for an existing folder of scans and a pose file,\n"
    "so that no one writes one by hand.  The scans are the files in DIR with the\n"
    "most common scan extension (.bin raw float32 x y z i, .pcd, .ply, .txt), or\n"
    "those matching --pattern; they are taken in name order (numerically when\n"
    "every name is a number).  The pose file is CSV with a header naming\n"
    "t,x,y,z,qx,qy,qz,qw, lines of 't x y z qx qy qz qw', or rows of 12 numbers\n"
    "(a 3x4 [R|t] matrix) with --times naming a file of one time per line; the\n"
    "layout is detected unless --pose-layout names it, and the time unit (s, ms,\n"
    "us, ns) unless --time-unit names it: the median step between poses must be\n"
    "1 ms to 10 s once read in that unit.  Before anything is\n"
    "written, the manifest is loaded back: scans and poses must pair up (one pose\n"
    "per scan; scan names that are times must match the pose times within 1 ms),\n"
    "the first scan must read, and the message says exactly where they do not.\n"
    "Paths are stored relative to the manifest's folder.  When the poses are of\n"
    "a vehicle body, an IMU or a camera, --extrinsic gives the sensor in that\n"
    "frame; it is stored in the manifest and each pose P becomes P * E on load.\n"
    "When the poses run at another rate than the scans, --pose-gap S gives each\n"
    "scan (named for its time: seconds, or nanoseconds) the pose at its time,\n"
    "interpolated (position linear, rotation slerp) between two poses at most S\n"
    "apart, written to poses-at-scans.csv beside the manifest; a scan without\n"
    "such poses is dropped and named, never extrapolated.\n\n";

struct index_opts {
    const char *dir, *poses, *times, *out, *pose_layout, *scan_layout, *pattern, *notes, *time_unit, *extrinsic;
    struct pose ext;
    double gap;              /* > 0: poses at the scan times, within this gap */
    char **files;            /* the kept scans then, relative to the manifest */
    size_t n_files, dropped;
    long channels;
    int allow_outside, quiet;
};

/* Count regular files in dir by the extensions of the scan-format table
 * (scan_io.h); pick the most common, leaving out the pose and times files. */
static int index_pick_pattern(const struct index_opts *o, char *pat, size_t n, struct err *e)
{
    const char *exts[32];
    size_t count[32] = {0}, n_ext = 0;
    const struct scan_format *f;
    for (size_t i = 0; (f = scan_format_at(i)); i++)
        for (int x = 0; x < SCAN_FORMAT_EXTS && f->exts[x] && n_ext < 32; x++) exts[n_ext++] = f->exts[x];
    /* The pose and times files are told apart by device and inode (one
     * stat each), not by resolving every entry's path. */
    struct stat sp, stt;
    int have_p = !stat(o->poses, &sp), have_t = o->times && !stat(o->times, &stt);
    DIR *d = opendir(o->dir);
    if (!d) return err_at(e, o->dir, 0, "cannot open folder: %s", strerror(errno));
    for (struct dirent *de; (de = readdir(d)); ) {
        const char *dot = strrchr(de->d_name, '.');
        if (de->d_name[0] == '.' || !dot) continue;
        size_t k = 0;
        while (k < n_ext && strcmp(dot, exts[k])) k++;
        if (k == n_ext) continue;
        struct stat st;
        if ((have_p || have_t) && !fstatat(dirfd(d), de->d_name, &st, 0) &&
            ((have_p && st.st_dev == sp.st_dev && st.st_ino == sp.st_ino) ||
             (have_t && st.st_dev == stt.st_dev && st.st_ino == stt.st_ino)))
            continue;
        count[k]++;
    }
    closedir(d);
    size_t best = 0;
    for (size_t k = 1; k < n_ext; k++) if (count[k] > count[best]) best = k;
    if (!count[best]) {
        char list[128];
        scan_format_list(list, sizeof list, ", ", " or ", SCAN_LIST_EXTS);
        return err_at(e, o->dir, 0, "no scan files found, expected files ending in %s (or name them with --pattern)", list);
    }
    snprintf(pat, n, "*%s", exts[best]);
    return 0;
}

/* path relative to base when inside it ("." for base itself); otherwise the
 * real path when allowed, else an error naming both. */
static int index_relative(const char *path, const char *base_real, int allow, const char *what, char *out,
                          size_t n, struct err *e)
{
    char real[PATH_MAX];
    if (!realpath(path, real)) return err_at(e, path, 0, "cannot open %s: %s", what, strerror(errno));
    size_t bl = strlen(base_real);
    if (!strcmp(real, base_real)) { snprintf(out, n, "."); return 0; }
    if (!strncmp(real, base_real, bl) && real[bl] == '/') { snprintf(out, n, "%s", real + bl + 1); return 0; }
    if (!allow)
        return err_at(e, path, 0, "the %s is outside the manifest's folder %s, expected it inside "
                      "(or pass --allow-outside; the recording then loads only with --allow-outside)",
                      what, base_real);
    snprintf(out, n, "%s", real);
    return 0;
}

/* Channels from the first scan's ring field when not given. */
static int index_channels(const struct index_opts *o, const struct recording *r, int *channels, struct err *e)
{
    struct cloud c;
    cloud_init(&c);
    size_t dropped;
    int rc = recording_load_scan(r, 0, &c, &dropped, e);
    if (!rc && o->channels <= 0) {
        unsigned top = 0;
        for (size_t k = 0; c.ring && k < c.n; k++) if (c.ring[k] > top) top = c.ring[k];
        if (!c.ring || !c.n)
            rc = err_set(e, "revisit index: the scans carry no ring field, expected --channels N "
                         "(the number of sensor channels)");
        else *channels = (int)top + 1;
    }
    cloud_free(&c);
    return rc;
}

/* Write the manifest to path and load it back; the loaded recording stays in r. */
static int index_try(const char *path, const struct recording_manifest *m, int allow, struct recording *r,
                     struct err *e)
{
    if (recording_write_manifest(path, m, e)) return -1;
    return recording_load(path, allow, r, e);
}

struct index_named {
    char name[256];
    double t;
};

static int index_named_cmp(const void *a, const void *b)
{
    double x = ((const struct index_named *)a)->t, y = ((const struct index_named *)b)->t;
    return x < y ? -1 : x > y;
}

/* The scans matching the pattern, each named for its time, sorted. */
static int index_named_scans(const struct index_opts *o, const char *pattern, struct index_named **out, size_t *n,
                             struct err *e)
{
    DIR *d = opendir(o->dir);
    if (!d) return err_at(e, o->dir, 0, "cannot open folder: %s", strerror(errno));
    size_t cap = 0;
    double big = 0;
    *out = NULL;
    *n = 0;
    int rc = 0;
    for (struct dirent *de; !rc && (de = readdir(d));) {
        if (de->d_name[0] == '.' || fnmatch(pattern, de->d_name, 0) || strlen(de->d_name) >= 256) continue;
        char stem[256], *end;
        snprintf(stem, sizeof stem, "%s", de->d_name);
        char *dot = strrchr(stem, '.');
        if (dot && dot != stem) *dot = 0;
        double v = strtod(stem, &end);
        if (end == stem || *end || !isfinite(v) || v < 0) {
            rc = err_at(e, o->dir, 0, "scan '%s' is not named for its time, expected names that are times "
                        "(seconds, or nanoseconds) with --pose-gap", de->d_name);
            break;
        }
        if (*n == cap) {
            cap = cap ? 2 * cap : 256;
            struct index_named *nv = realloc(*out, cap * sizeof *nv);
            if (!nv) { rc = err_set(e, "out of memory"); break; }
            *out = nv;
        }
        snprintf((*out)[*n].name, 256, "%s", de->d_name);
        (*out)[(*n)++].t = v;
        if (v > big) big = v;
    }
    closedir(d);
    for (size_t k = 0; !rc && big > 1e15 && k < *n; k++) (*out)[k].t *= 1e-9;
    if (!rc && !*n) rc = err_at(e, o->dir, 0, "no scan files match '%s'", pattern);
    if (!rc) qsort(*out, *n, sizeof **out, index_named_cmp);
    return rc;
}

/* Poses at the scan times (track.h), written beside the manifest as
 * poses-at-scans.csv; the kept scans go to o->files. */
static int index_resample(struct index_opts *o, const struct poses *ps, const char *scans_rel, const char *pattern,
                          const char *out_dir, char *poses_rel, size_t n_rel, struct err *e)
{
    struct index_named *v = NULL;
    size_t n = 0;
    if (index_named_scans(o, pattern, &v, &n, e)) {
        free(v);
        return -1;
    }
    struct track t = {ps->v, ps->n, ps->n, 0};   /* borrowed: sorted, strictly increasing */
    struct pose *kept = malloc(n * sizeof *kept);
    o->files = calloc(n, sizeof *o->files);
    int rc = kept && o->files ? 0 : err_set(e, "out of memory");
    for (size_t k = 0; !rc && k < n; k++) {
        char why[512], rel[PATH_MAX];
        if (track_at(&t, v[k].t, o->gap, &kept[o->n_files], why, sizeof why)) {
            if (o->dropped++ < 3)
                fprintf(stderr, "revisit index: scan %s (t %.6f s) dropped: %s\n", v[k].name, v[k].t, why);
            continue;
        }
        if (err_cut(snprintf(rel, sizeof rel, "%s/%s", scans_rel, v[k].name), sizeof rel))
            rc = err_set(e, "revisit index: scan path %s/%s is too long", scans_rel, v[k].name);
        else if (!(o->files[o->n_files++] = strdup(rel))) rc = err_set(e, "out of memory");
    }
    if (!rc && !o->n_files)
        rc = err_at(e, o->poses, 0, "none of the %zu scans has poses around its time at most %g s apart, expected "
                    "the poses to cover the scans (see --pose-gap)", n, o->gap);
    char path[PATH_MAX];
    snprintf(poses_rel, n_rel, "poses-at-scans.csv");
    fileio_join(path, sizeof path, out_dir, poses_rel);
    if (!rc) rc = poses_write(path, POSES_CSV, kept, o->n_files, NULL, e);
    free(kept);
    free(v);
    return rc;
}

static int index_build(struct index_opts *o, struct recording_manifest *m, struct recording_sensor *s,
                       char paths[4][PATH_MAX], struct err *e)
{
    char outdir[PATH_MAX], base[PATH_MAX];
    struct stat st;
    if (stat(o->dir, &st) || !S_ISDIR(st.st_mode)) return err_at(e, o->dir, 0, "not a folder, expected the folder of scans");
    fileio_dirname(outdir, sizeof outdir, o->out);
    if (fileio_mkdirs(outdir, e)) return -1;
    if (!realpath(outdir, base)) return err_at(e, outdir, 0, "cannot resolve folder: %s", strerror(errno));
    if (o->pattern) snprintf(paths[3], PATH_MAX, "%s", o->pattern);
    else if (index_pick_pattern(o, paths[3], PATH_MAX, e)) return -1;
    if (index_relative(o->dir, base, o->allow_outside, "scan folder", paths[0], PATH_MAX, e) ||
        index_relative(o->poses, base, o->allow_outside, "pose file", paths[1], PATH_MAX, e) ||
        (o->times && index_relative(o->times, base, o->allow_outside, "times file", paths[2], PATH_MAX, e)))
        return -1;
    enum scan_layout sl = SCAN_AUTO;
    if (o->scan_layout && scan_layout_parse(o->scan_layout, &sl, e)) return err_wrap(e, "revisit index: --scan-layout");
    if (sl == SCAN_AUTO) sl = scan_layout_from_path(paths[3]);
    enum poses_layout pl = POSES_AUTO;
    if (o->pose_layout && poses_layout_parse(o->pose_layout, &pl, e)) return err_wrap(e, "revisit index: --pose-layout");
    enum poses_unit tu = POSES_UNIT_AUTO;
    if (o->time_unit && poses_unit_parse(o->time_unit, &tu, e)) return err_wrap(e, "revisit index: --time-unit");
    struct poses ps;
    if (poses_read(o->poses, pl, o->times, &ps, e)) return -1;
    pl = ps.layout;
    int rc = poses_apply_unit(&ps, tu, o->times ? o->times : o->poses, &tu, e);
    if (!rc && o->gap > 0) rc = index_resample(o, &ps, paths[0], paths[3], outdir, paths[1], PATH_MAX, e);
    poses_free(&ps);
    if (rc) return -1;
    if (o->gap > 0) {  /* poses-at-scans.csv: CSV, seconds */
        pl = POSES_CSV;
        tu = POSES_UNIT_S;
    }
    s->channels = o->channels > 0 ? (int)o->channels : 1;
    if (o->notes && !(s->notes = strdup(o->notes))) return err_set(e, "out of memory");
    if (o->extrinsic && recording_extrinsic_parse(o->extrinsic, &o->ext, e))
        return err_wrap(e, "revisit index: --extrinsic");
    *m = (struct recording_manifest){.sensor = s, .scans_dir = paths[0], .scans_pattern = paths[3], .layout = sl,
                                     .poses_file = paths[1], .poses_layout = poses_layout_name(pl),
                                     .poses_times = o->times && o->gap <= 0 ? paths[2] : NULL,
                                     .poses_time_unit = poses_unit_name(tu),
                                     .files = (const char *const *)o->files, .n_files = o->n_files,
                                     .extrinsic = o->extrinsic ? &o->ext : NULL};
    return 0;
}

static int index_run(struct index_opts *o, struct err *e)
{
    if (o->channels < 0 || o->channels > 65535)
        return err_set(e, "revisit index: --channels %ld, expected 1 to 65535", o->channels);
    struct recording_manifest m;
    struct recording_sensor s;
    char paths[4][PATH_MAX], check[PATH_MAX + 32];
    recording_sensor_init(&s);
    if (index_build(o, &m, &s, paths, e)) { recording_sensor_free(&s); return -1; }
    snprintf(check, sizeof check, "%s.index-check", o->out);
    struct recording r;
    int rc = index_try(check, &m, o->allow_outside, &r, e);
    if (!rc) {
        int ch = s.channels;
        rc = index_channels(o, &r, &ch, e);
        s.channels = ch;
        recording_free(&r);
    }
    int loaded = 0;
    if (!rc) loaded = !(rc = index_try(check, &m, o->allow_outside, &r, e));
    if (!rc && rename(check, o->out)) rc = err_at(e, o->out, 0, "cannot write: %s", strerror(errno));
    unlink(check);
    if (rc) err_subst(e, check, o->out);  /* name the manifest the user asked for, not the trial copy */
    if (!rc && !o->quiet) {
        double dur = r.n > 1 ? r.poses[r.n - 1].t - r.poses[0].t : 0;
        printf("wrote %s: %zu scans (%s, %s/%s), %zu poses (%s, times in %s%s), %d channels, %.3f s\n", o->out,
               r.n, scan_layout_name(r.layout), paths[0], paths[3], r.n, m.poses_layout, m.poses_time_unit,
               o->time_unit ? "" : ", detected", s.channels, dur);
    }
    if (!rc && !o->quiet && o->gap > 0)
        printf("poses at the scan times in poses-at-scans.csv; %zu scans dropped (no poses around them at most "
               "%g s apart)\n", o->dropped, o->gap);
    if (loaded) recording_free(&r);
    recording_sensor_free(&s);
    for (size_t k = 0; k < o->n_files; k++) free(o->files[k]);
    free(o->files);
    return rc;
}

int cmd_index(int argc, char **argv)
{
    struct index_opts o = {0};
    char layouts[96] = "auto|";   /* the words of the scan-format table */
    scan_format_list(layouts + 5, sizeof layouts - 5, "|", "|", SCAN_LIST_NAMES);
    const struct opt opts[] = {
        {"--poses", OPT_STR, &o.poses, "FILE", "pose file (CSV, text or 3x4 rows); required"},
        {"--times", OPT_STR, &o.times, "FILE", "times file (one per line) for the 3x4 layout"},
        {"--out", OPT_STR, &o.out, "FILE", "manifest to write (default DIR/recording.json)"},
        {"--pose-layout", OPT_STR, &o.pose_layout, "auto|csv|text|matrix", "pose file layout (default: detect)"},
        {"--time-unit", OPT_STR, &o.time_unit, "auto|s|ms|us|ns",
         "unit of the pose times (default: detect by magnitude and rate); stored in the manifest"},
        {"--scan-layout", OPT_STR, &o.scan_layout, layouts, "scan layout (default: by extension)"},
        {"--pattern", OPT_STR, &o.pattern, "GLOB", "scan file names in DIR (default: the most common scan extension)"},
        {"--channels", OPT_INT, &o.channels, "N", "sensor channels (default: from the ring field of the first scan)"},
        {"--notes", OPT_STR, &o.notes, "TEXT", "free text stored in the sensor description"},
        {"--extrinsic", OPT_STR, &o.extrinsic, "X,Y,Z,QX,QY,QZ,QW|12 NUMBERS|FILE",
         "the sensor in the poses' frame (applied to every pose on load)"},
        {"--pose-gap", OPT_SECONDS, &o.gap, "S", "poses at another rate: interpolate to the scan times (the scan "
         "names) between poses at most S apart; other scans are dropped"},
        {"--allow-outside", OPT_FLAG, &o.allow_outside, NULL, "allow scans or poses outside the manifest's folder"},
        {"--quiet", OPT_FLAG, &o.quiet, NULL, "no summary line on stdout"},
        {0}};
    struct opt_args a;
    struct err e;
    int go = cmd_parse("index", about, argc, argv, opts, &a, &e);
    if (go != CMD_GO_ON) return go;
    if (a.n != 1) return err_set(&e, "revisit index: expected one folder of scans, got %d arguments", a.n), cmd_report(&e);
    if (!o.poses) return err_set(&e, "revisit index: option '--poses' is required"), cmd_report(&e);
    o.dir = a.v[0];
    char out[PATH_MAX];
    if (!o.out) {
        fileio_join(out, sizeof out, o.dir, "recording.json");
        o.out = out;
    }
    return index_run(&o, &e) ? cmd_report(&e) : CMD_OK;
}
