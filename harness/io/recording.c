/* recording.c: load recording.json, its scan list and poses; load one scan. */
#include "harness/io/recording.h"

#include <cjson/cJSON.h>
#include <dirent.h>
#include <errno.h>
#include <fnmatch.h>
#include <limits.h>
#include <math.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>
#include <sys/stat.h>

#include "harness/base/fileio.h"
#include "harness/base/grow.h"
#include "harness/base/side.h"
#include "harness/io/poses_io.h"

#define REC_MANIFEST_MAX ((size_t)512 << 20)
#define REC_TIME_TOL_S 1e-3
#define REC_FRAME_MAX 1e6   /* whole-number scan names below this are frame numbers */

/* What the parser needs while walking the manifest. */
struct rec_ctx {
    const char *file;        /* manifest path for messages */
    char root[PATH_MAX];     /* real path of the manifest folder */
    int allow_outside;
};

void recording_sensor_init(struct recording_sensor *s)
{
    memset(s, 0, sizeof *s);
    s->vfov_deg[0] = s->vfov_deg[1] = NAN;
    s->range_max_m = NAN;
}

void recording_sensor_free(struct recording_sensor *s)
{
    if (!s) return;
    free(s->vertical_deg);
    free(s->notes);
    recording_sensor_init(s);
}

int recording_sensor_copy(struct recording_sensor *dst, const struct recording_sensor *src, struct err *e)
{
    *dst = *src;
    dst->vertical_deg = NULL;
    dst->notes = NULL;
    if (src->vertical_deg && src->channels > 0) {
        dst->vertical_deg = malloc((size_t)src->channels * sizeof *dst->vertical_deg);
        if (!dst->vertical_deg) return err_set(e, "out of memory copying the sensor description");
        memcpy(dst->vertical_deg, src->vertical_deg, (size_t)src->channels * sizeof *dst->vertical_deg);
    }
    if (src->notes && !(dst->notes = strdup(src->notes))) {
        recording_sensor_free(dst);
        return err_set(e, "out of memory copying the sensor description");
    }
    return 0;
}

void recording_free(struct recording *rec)
{
    if (!rec) return;
    if (rec->scan_paths)
        for (size_t k = 0; k < rec->n; k++) free(rec->scan_paths[k]);
    free(rec->scan_paths);
    free(rec->poses);
    recording_sensor_free(&rec->sensor);
    free(rec->perturbation.chain);
    free(rec->perturbation.source);
    memset(rec, 0, sizeof *rec);
    recording_sensor_init(&rec->sensor);
}

/* ---- JSON helpers: every message is "FILE: $.path: what, expected what" ---- */

static int rec_bad(const struct rec_ctx *x, const char *jpath, const char *what, const char *expected,
                   struct err *e)
{
    return err_set(e, "%s: %s: %s, expected %s", x->file, jpath, what, expected);
}

/* Refuse keys of obj not in allowed (NULL-terminated), and a key given
 * twice (a reader would take the first and drop the other unseen). */
static int rec_keys(const struct rec_ctx *x, const cJSON *obj, const char *jpath, const char *const *allowed,
                    struct err *e)
{
    for (const cJSON *it = obj->child; it; it = it->next) {
        int ok = 0;
        for (const char *const *a = allowed; *a && !ok; a++) ok = !strcmp(it->string, *a);
        for (const cJSON *o = obj->child; ok && o != it; o = o->next)
            if (!strcmp(o->string, it->string)) {
                char p[512];
                snprintf(p, sizeof p, "%s.%s", jpath, it->string);
                return rec_bad(x, p, "key given twice", "each key once", e);
            }
        if (ok) continue;
        char list[512] = "", p[512];
        for (const char *const *a = allowed; *a; a++)
            snprintf(list + strlen(list), sizeof list - strlen(list), "%s%s", a == allowed ? "" : ", ", *a);
        snprintf(p, sizeof p, "%s.%s", jpath, it->string);
        return rec_bad(x, p, "unknown key", list, e);
    }
    return 0;
}

/* obj[key] of a JSON type (cJSON_Number, ...); *out NULL when absent and optional. */
static int rec_get(const struct rec_ctx *x, const cJSON *obj, const char *jpath, const char *key, int type,
                   int required, const cJSON **out, struct err *e)
{
    char p[512];
    snprintf(p, sizeof p, "%s.%s", jpath, key);
    const cJSON *v = cJSON_GetObjectItemCaseSensitive(obj, key);
    *out = NULL;
    const char *tn = type == cJSON_Number ? "a number" : type == cJSON_String ? "a string"
                   : type == cJSON_Array ? "an array" : "an object";
    if (!v) return required ? rec_bad(x, p, "missing key", tn, e) : 0;
    if (!(v->type & type)) return rec_bad(x, p, "wrong type", tn, e);
    *out = v;
    return 0;
}

/* An array of exactly n finite numbers (n = 0: any length >= 1, returned in *len). */
static int rec_numbers(const struct rec_ctx *x, const cJSON *arr, const char *jpath, int n, double *v,
                       struct err *e)
{
    int len = cJSON_GetArraySize(arr), k = 0;
    if (len != n) {
        char want[64];
        snprintf(want, sizeof want, "%d numbers", n);
        char what[64];
        snprintf(what, sizeof what, "%d entries", len);
        return rec_bad(x, jpath, what, want, e);
    }
    for (const cJSON *it = arr->child; it; it = it->next, k++) {
        if (!cJSON_IsNumber(it) || !isfinite(it->valuedouble)) {
            char p[512];
            snprintf(p, sizeof p, "%s[%d]", jpath, k);
            return rec_bad(x, p, "not a finite number", "a number", e);
        }
        v[k] = it->valuedouble;
    }
    return 0;
}

static int rec_mount(const struct rec_ctx *x, const cJSON *m, struct recording_sensor *s, struct err *e)
{
    static const char *const keys[] = {"xyz_m", "rpy_deg", NULL};
    const cJSON *v;
    if (rec_keys(x, m, "$.sensor.mount", keys, e)) return -1;
    s->has_mount = 1;
    if (rec_get(x, m, "$.sensor.mount", "xyz_m", cJSON_Array, 0, &v, e)) return -1;
    if (v && rec_numbers(x, v, "$.sensor.mount.xyz_m", 3, s->mount_xyz_m, e)) return -1;
    if (rec_get(x, m, "$.sensor.mount", "rpy_deg", cJSON_Array, 0, &v, e)) return -1;
    if (v && rec_numbers(x, v, "$.sensor.mount.rpy_deg", 3, s->mount_rpy_deg, e)) return -1;
    return 0;
}

static int rec_sensor(const struct rec_ctx *x, const cJSON *root, struct recording_sensor *s, struct err *e)
{
    static const char *const keys[] = {"channels", "vertical_deg", "vertical_fov_deg", "range_max_m",
                                       "mount", "notes", NULL};
    const cJSON *obj, *v;
    if (rec_get(x, root, "$", "sensor", cJSON_Object, 1, &obj, e)) return -1;
    if (rec_keys(x, obj, "$.sensor", keys, e)) return -1;
    if (rec_get(x, obj, "$.sensor", "channels", cJSON_Number, 1, &v, e)) return -1;
    double ch = v->valuedouble;
    if (!(ch >= 1 && ch <= 65535 && ch == floor(ch)))
        return rec_bad(x, "$.sensor.channels", "not a whole number from 1 to 65535", "the number of channels", e);
    s->channels = (int)ch;
    if (rec_get(x, obj, "$.sensor", "vertical_deg", cJSON_Array, 0, &v, e)) return -1;
    if (v) {
        if (!(s->vertical_deg = malloc((size_t)s->channels * sizeof(double))))
            return err_set(e, "%s: out of memory", x->file);
        if (rec_numbers(x, v, "$.sensor.vertical_deg", s->channels, s->vertical_deg, e)) return -1;
    }
    if (rec_get(x, obj, "$.sensor", "vertical_fov_deg", cJSON_Array, 0, &v, e)) return -1;
    if (v && rec_numbers(x, v, "$.sensor.vertical_fov_deg", 2, s->vfov_deg, e)) return -1;
    if (v && !(s->vfov_deg[0] < s->vfov_deg[1] && s->vfov_deg[0] >= -90 && s->vfov_deg[1] <= 90))
        return rec_bad(x, "$.sensor.vertical_fov_deg", "not an increasing pair within [-90, 90]",
                       "[lowest, highest] elevation in degrees", e);
    if (rec_get(x, obj, "$.sensor", "range_max_m", cJSON_Number, 0, &v, e)) return -1;
    if (v && !(v->valuedouble > 0 && isfinite(v->valuedouble)))
        return rec_bad(x, "$.sensor.range_max_m", "not a positive number", "metres > 0", e);
    if (v) s->range_max_m = v->valuedouble;
    if (rec_get(x, obj, "$.sensor", "mount", cJSON_Object, 0, &v, e)) return -1;
    if (v && rec_mount(x, v, s, e)) return -1;
    if (rec_get(x, obj, "$.sensor", "notes", cJSON_String, 0, &v, e)) return -1;
    if (v && !(s->notes = strdup(v->valuestring))) return err_set(e, "%s: out of memory", x->file);
    return 0;
}

/* Join rel to the manifest folder; unless allowed, refuse a result whose real
 * path lies outside it.  out gets the joined (not the real) path. */
static int rec_path(const struct rec_ctx *x, const char *dir, const char *rel, const char *jpath,
                    char *out, size_t n, struct err *e)
{
    if (!rel[0]) return rec_bad(x, jpath, "empty path", "a file or folder name", e);
    if (fileio_join(out, n, dir, rel)) return rec_bad(x, jpath, "path too long", "a shorter path", e);
    char real[PATH_MAX];
    if (!realpath(out, real)) {
        char what[PATH_MAX + 64];
        snprintf(what, sizeof what, "'%s' cannot be opened (%s)", out, strerror(errno));
        return rec_bad(x, jpath, what, "an existing path", e);
    }
    if (x->allow_outside) return 0;
    size_t rl = strlen(x->root);
    int inside = !strncmp(real, x->root, rl) && (real[rl] == '/' || real[rl] == 0 || !strcmp(x->root, "/"));
    if (!inside) {
        char what[PATH_MAX + 64];
        snprintf(what, sizeof what, "'%s' leads outside the manifest's folder", rel);
        return rec_bad(x, jpath, what, "a path inside it (or pass --allow-outside)", e);
    }
    return 0;
}

/* The number a file name stands for ("000012.bin" -> 12, "1.5e9.pcd" ->
 * 1.5e9), or NAN when the stem is not a number. */
static double rec_stem_number(const char *path)
{
    const char *base = strrchr(path, '/');
    base = base ? base + 1 : path;
    char stem[256];
    snprintf(stem, sizeof stem, "%s", base);
    char *dot = strrchr(stem, '.');
    if (dot && dot != stem) *dot = 0;
    char *end;
    double v = strtod(stem, &end);
    return end == stem || *end || !isfinite(v) || stem[0] == '-' || stem[0] == '+' || stem[0] == ' ' ? NAN : v;
}

struct rec_name { char *path; double num; };

static int rec_name_cmp_num(const void *a, const void *b)
{
    const struct rec_name *x = a, *y = b;
    if (x->num != y->num) return x->num < y->num ? -1 : 1;
    return strcmp(x->path, y->path);
}

static int rec_name_cmp_str(const void *a, const void *b)
{
    return strcmp(((const struct rec_name *)a)->path, ((const struct rec_name *)b)->path);
}

/* Sort numerically when every stem is a number (so 9.bin comes before
 * 10.bin), else bytewise; move the paths into rec. */
static void rec_sort_names(struct rec_name *v, size_t n, struct recording *rec)
{
    int numeric = n > 0;
    for (size_t k = 0; k < n && numeric; k++) numeric = !isnan(v[k].num);
    if (n) qsort(v, n, sizeof *v, numeric ? rec_name_cmp_num : rec_name_cmp_str);
    for (size_t k = 0; k < n; k++) rec->scan_paths[k] = v[k].path;
    rec->n = n;
}

static int rec_list_dir(const struct rec_ctx *x, const char *dir, const char *pattern, struct rec_name **out,
                        size_t *n_out, struct err *e)
{
    DIR *d = opendir(dir);
    if (!d) return err_set(e, "%s: $.scans.dir: '%s' cannot be opened (%s), expected a folder", x->file, dir,
                           strerror(errno));
    struct rec_name *v = NULL;
    size_t n = 0, cap = 0;
    int rc = 0;
    for (struct dirent *de; (de = readdir(d)); ) {
        if (de->d_name[0] == '.' || fnmatch(pattern, de->d_name, FNM_PERIOD)) continue;
        char path[RECORDING_PATH_MAX];
        if (fileio_join(path, sizeof path, dir, de->d_name)) {
            rc = err_set(e, "%s: $.scans: '%s/%s' is too long a path", x->file, dir, de->d_name);
            break;
        }
        struct stat st;
        if (stat(path, &st) || !S_ISREG(st.st_mode)) continue;
        if (n >= RECORDING_MAX_SCANS) {
            rc = err_set(e, "%s: $.scans: more than %zu files match '%s', expected at most that many scans",
                         x->file, RECORDING_MAX_SCANS, pattern);
            break;
        }
        /* A regular entry (not a link) of the folder, checked inside already,
         * is inside too; links and unknown entry types are resolved. */
        if (!x->allow_outside && de->d_type != DT_REG &&
            (rc = rec_path(x, dir, de->d_name, "$.scans.pattern", path, sizeof path, e)))
            break;
        if (grow_reserve(&v, &cap, n + 1, sizeof *v)) {
            rc = err_set(e, "%s: out of memory listing scans", x->file);
            break;
        }
        if (!(v[n].path = strdup(path))) { rc = err_set(e, "%s: out of memory listing scans", x->file); break; }
        v[n].num = rec_stem_number(path);
        n++;
    }
    closedir(d);
    if (rc) {
        for (size_t k = 0; k < n; k++) free(v[k].path);
        free(v);
        return -1;
    }
    *out = v;
    *n_out = n;
    return 0;
}

static int rec_list_files(const struct rec_ctx *x, const cJSON *files, struct rec_name **out, size_t *n_out,
                          struct err *e)
{
    int len = cJSON_GetArraySize(files);
    if ((size_t)len > RECORDING_MAX_SCANS)
        return err_set(e, "%s: $.scans.files: %d entries, expected at most %zu scans", x->file, len,
                       RECORDING_MAX_SCANS);
    struct rec_name *v = calloc(len ? (size_t)len : 1, sizeof *v);
    if (!v) return err_set(e, "%s: out of memory listing scans", x->file);
    size_t n = 0;
    int rc = 0;
    for (const cJSON *it = files->child; it; it = it->next, n++) {
        char jp[64], path[RECORDING_PATH_MAX];
        snprintf(jp, sizeof jp, "$.scans.files[%zu]", n);
        if (!cJSON_IsString(it)) { rc = rec_bad(x, jp, "not a string", "a scan file path", e); break; }
        char mdir[RECORDING_PATH_MAX];
        fileio_dirname(mdir, sizeof mdir, x->file);
        if ((rc = rec_path(x, mdir, it->valuestring, jp, path, sizeof path, e))) break;
        if (!(v[n].path = strdup(path))) { rc = err_set(e, "%s: out of memory", x->file); break; }
        v[n].num = NAN;
    }
    if (rc) {
        for (size_t k = 0; k < n; k++) free(v[k].path);
        free(v);
        return -1;
    }
    *out = v;
    *n_out = n;
    return 0;
}

static int rec_scans(const struct rec_ctx *x, const cJSON *root, struct recording *rec, struct err *e)
{
    static const char *const keys[] = {"dir", "pattern", "files", NULL};
    const cJSON *obj, *dir, *pat, *files;
    if (rec_get(x, root, "$", "scans", cJSON_Object, 1, &obj, e) || rec_keys(x, obj, "$.scans", keys, e) ||
        rec_get(x, obj, "$.scans", "dir", cJSON_String, 0, &dir, e) ||
        rec_get(x, obj, "$.scans", "pattern", cJSON_String, 0, &pat, e) ||
        rec_get(x, obj, "$.scans", "files", cJSON_Array, 0, &files, e)) return -1;
    if (files && (dir || pat))
        return rec_bad(x, "$.scans", "both files and dir/pattern", "either files or dir + pattern", e);
    if (!files && !(dir && pat))
        return rec_bad(x, "$.scans", dir ? "missing key pattern" : "missing key dir",
                       "dir + pattern, or files", e);
    struct rec_name *v = NULL;
    size_t n = 0;
    if (files) {
        if (rec_list_files(x, files, &v, &n, e)) return -1;
    } else {
        if (strchr(pat->valuestring, '/'))
            return rec_bad(x, "$.scans.pattern", "contains '/'", "a file-name pattern such as *.bin", e);
        char path[RECORDING_PATH_MAX];
        if (rec_path(x, rec->dir, dir->valuestring, "$.scans.dir", path, sizeof path, e)) return -1;
        if (!strcmp(dir->valuestring, ".")) snprintf(path, sizeof path, "%s", rec->dir);
        if (rec_list_dir(x, path, pat->valuestring, &v, &n, e)) return -1;
    }
    rec->scan_paths = calloc(n ? n : 1, sizeof *rec->scan_paths);
    if (!rec->scan_paths) {
        for (size_t k = 0; k < n; k++) free(v[k].path);
        free(v);
        return err_set(e, "%s: out of memory", x->file);
    }
    if (files) {
        for (size_t k = 0; k < n; k++) rec->scan_paths[k] = v[k].path;
        rec->n = n;
    } else {
        rec_sort_names(v, n, rec);
    }
    free(v);
    if (n == 0) return rec_bad(x, "$.scans", "no scan files", "at least one scan", e);
    return 0;
}

static int rec_poses(const struct rec_ctx *x, const cJSON *root, struct recording *rec, struct poses *ps,
                     struct err *e)
{
    static const char *const keys[] = {"file", "layout", "times", "time_unit", NULL};
    const cJSON *obj, *file, *lay, *times, *unit;
    if (rec_get(x, root, "$", "poses", cJSON_Object, 1, &obj, e) || rec_keys(x, obj, "$.poses", keys, e) ||
        rec_get(x, obj, "$.poses", "file", cJSON_String, 1, &file, e) ||
        rec_get(x, obj, "$.poses", "layout", cJSON_String, 0, &lay, e) ||
        rec_get(x, obj, "$.poses", "times", cJSON_String, 0, &times, e) ||
        rec_get(x, obj, "$.poses", "time_unit", cJSON_String, 0, &unit, e)) return -1;
    enum poses_layout layout = POSES_AUTO;
    if (lay && poses_layout_parse(lay->valuestring, &layout, e)) return err_wrap(e, "%s: $.poses.layout", x->file);
    enum poses_unit tu = POSES_UNIT_AUTO;
    if (unit && poses_unit_parse(unit->valuestring, &tu, e)) return err_wrap(e, "%s: $.poses.time_unit", x->file);
    char pp[RECORDING_PATH_MAX], tp[RECORDING_PATH_MAX];
    if (rec_path(x, rec->dir, file->valuestring, "$.poses.file", pp, sizeof pp, e)) return -1;
    if (times && rec_path(x, rec->dir, times->valuestring, "$.poses.times", tp, sizeof tp, e)) return -1;
    if (poses_read(pp, layout, times ? tp : NULL, ps, e)) return -1;
    rec->time_unit_named = tu != POSES_UNIT_AUTO;
    return poses_apply_unit(ps, tu, times ? tp : pp, &rec->time_unit, e);
}

static int rec_perturbation(const struct rec_ctx *x, const cJSON *root, struct recording_perturbation *p,
                            struct err *e)
{
    static const char *const keys[] = {"chain", "seed", "on", "source", NULL};
    const cJSON *obj, *chain, *seed, *on, *src;
    if (rec_get(x, root, "$", "perturbation", cJSON_Object, 0, &obj, e)) return -1;
    if (!obj) return 0;
    if (rec_keys(x, obj, "$.perturbation", keys, e) ||
        rec_get(x, obj, "$.perturbation", "chain", cJSON_String, 1, &chain, e) ||
        rec_get(x, obj, "$.perturbation", "seed", cJSON_Number | cJSON_String, 1, &seed, e) ||
        rec_get(x, obj, "$.perturbation", "on", cJSON_String, 0, &on, e) ||
        rec_get(x, obj, "$.perturbation", "source", cJSON_String, 0, &src, e)) return -1;
    if (cJSON_IsNumber(seed)) {
        double s = seed->valuedouble;
        if (!(s >= 0 && s <= 9007199254740992.0 && s == floor(s)))
            return rec_bad(x, "$.perturbation.seed", "not a whole number from 0 to 2^53",
                           "a seed (larger seeds are written as a decimal string)", e);
        p->seed = (uint64_t)s;
    } else {
        char *end;
        errno = 0;
        p->seed = strtoull(seed->valuestring, &end, 10);
        if (end == seed->valuestring || *end || errno || seed->valuestring[0] == '-')
            return rec_bad(x, "$.perturbation.seed", "not a decimal whole number", "a seed", e);
    }
    if (on && side_lookup(on->valuestring) < 0)
        return rec_bad(x, "$.perturbation.on", "not " SIDE_CHOICES, SIDE_CHOICES, e);
    snprintf(p->on, sizeof p->on, "%s", on ? on->valuestring : "");
    p->chain = strdup(chain->valuestring);
    p->source = src ? strdup(src->valuestring) : NULL;
    if (!p->chain || (src && !p->source)) return err_set(e, "%s: out of memory", x->file);
    p->present = 1;
    return 0;
}

/* "extrinsic": the sensor in the poses' frame. */
static int rec_extrinsic(const struct rec_ctx *x, const cJSON *root, struct recording *rec, struct err *e)
{
    static const char *const keys[] = {"xyz_m", "quat_xyzw", NULL};
    const cJSON *obj, *xyz, *q;
    if (rec_get(x, root, "$", "extrinsic", cJSON_Object, 0, &obj, e)) return -1;
    if (!obj) return 0;
    double p[3], v[4];
    if (rec_keys(x, obj, "$.extrinsic", keys, e) ||
        rec_get(x, obj, "$.extrinsic", "xyz_m", cJSON_Array, 1, &xyz, e) ||
        rec_get(x, obj, "$.extrinsic", "quat_xyzw", cJSON_Array, 1, &q, e) ||
        rec_numbers(x, xyz, "$.extrinsic.xyz_m", 3, p, e) || rec_numbers(x, q, "$.extrinsic.quat_xyzw", 4, v, e))
        return -1;
    if (pose_from_quat(&rec->extrinsic, 0, p, v, e)) return err_wrap(e, "%s: $.extrinsic", x->file);
    rec->has_extrinsic = 1;
    return 0;
}

/* "log": where the recording came from; keys and types checked only. */
static int rec_log(const struct rec_ctx *x, const cJSON *root, struct err *e)
{
    static const char *const keys[] = {"file", "kind", "bytes", "sha256", "scans_topic", "scans_frame",
                                       "poses_topic", "poses_frames", "pose_gap_s", "scans_in_log",
                                       "scans_dropped", "dropped_list", NULL};
    const cJSON *obj, *v;
    if (rec_get(x, root, "$", "log", cJSON_Object, 0, &obj, e)) return -1;
    if (!obj) return 0;
    return rec_keys(x, obj, "$.log", keys, e) || rec_get(x, obj, "$.log", "file", cJSON_String, 1, &v, e) ||
           rec_get(x, obj, "$.log", "bytes", cJSON_Number, 1, &v, e) ||
           rec_get(x, obj, "$.log", "sha256", cJSON_String, 1, &v, e) ? -1 : 0;
}

/* Pose text: 7 or 12 numbers separated by commas or white space. */
static int rec_extrinsic_numbers(const char *text, struct pose *out, struct err *e)
{
    double v[13];
    int n = 0;
    for (const char *s = text; n < 13;) {
        while (*s == ',' || *s == ' ' || *s == '\t' || *s == '\n' || *s == '\r') s++;
        if (!*s) break;
        char *end;
        v[n] = strtod(s, &end);
        if (end == s) return err_set(e, "'%.40s' is not a number, expected 7 numbers (x y z qx qy qz qw) or 12 "
                                     "(a 3x4 row)", s);
        n++;
        s = end;
    }
    if (n == 7) return pose_from_quat(out, 0, v, v + 3, e);
    if (n == 12) return pose_from_matrix(out, 0, v, e);
    return err_set(e, "%s%d numbers, expected 7 (x y z qx qy qz qw) or 12 (a row-major 3x4 [R | p])",
                   n > 12 ? "more than " : "", n > 12 ? 12 : n);
}

int recording_extrinsic_parse(const char *text, struct pose *out, struct err *e)
{
    struct stat st;
    if (stat(text, &st) || !S_ISREG(st.st_mode)) return rec_extrinsic_numbers(text, out, e);
    char *buf;
    size_t len;
    if (fileio_read(text, 1 << 16, &buf, &len, e)) return -1;
    for (char *c = buf; *c; c++)
        if (*c == '#') while (*c && *c != '\n') *c++ = ' ';
    int rc = rec_extrinsic_numbers(buf, out, e);
    free(buf);
    return rc ? err_wrap(e, "%s", text) : 0;
}

/* Scans and poses pair up: same count, and scan names that are times match. */
static int rec_pair(const struct rec_ctx *x, const struct recording *rec, const struct poses *ps, struct err *e)
{
    if (rec->n != ps->n)
        return err_set(e, "%s: %zu scans but %zu poses, expected one pose per scan (first scan %s, last %s)",
                       x->file, rec->n, ps->n, rec->scan_paths[0], rec->scan_paths[rec->n - 1]);
    double first = rec_stem_number(rec->scan_paths[0]), big = 0;
    int is_index = 1, frames = 1;
    for (size_t k = 0; k < rec->n; k++) {
        double v = rec_stem_number(rec->scan_paths[k]);
        if (isnan(v)) return 0;  /* names carry no time */
        if (v != first + (double)k) is_index = 0;
        if (v != floor(v) || v >= REC_FRAME_MAX) frames = 0;
        if (v > big) big = v;
    }
    /* whole numbers counting up, or below a million: frame numbers, not times */
    if ((is_index && first == floor(first)) || frames) return 0;
    double scale = big > 1e15 ? 1e-9 : 1.0;
    for (size_t k = 0; k < rec->n; k++) {
        double t = rec_stem_number(rec->scan_paths[k]) * scale;
        if (fabs(t - ps->v[k].t) > REC_TIME_TOL_S)
            return err_set(e, "%s: scan %zu (%s) is named for time %.6f s but pose %zu has time %.6f s, "
                           "expected the same time within 1 ms", x->file, k, rec->scan_paths[k], t, k, ps->v[k].t);
    }
    return 0;
}

/* Values the parser would build, counted before it runs: one more than the
 * separators outside strings. A manifest holds the scan list, one number per
 * sensor channel and a few dozen other keys. */
#define REC_VALUES_MAX (RECORDING_MAX_SCANS + 65535 + 4096)

static int rec_check_values(const char *file, const char *buf, size_t len, struct err *e)
{
    size_t n = 1;
    int in_str = 0;
    for (size_t k = 0; k < len; k++) {
        char c = buf[k];
        if (in_str) {
            if (c == '\\') k++;
            else if (c == '"') in_str = 0;
        } else if (c == '"') {
            in_str = 1;
        } else if (c == ',' && ++n > REC_VALUES_MAX) {
            return err_set(e, "%s: more than %zu JSON values, expected at most %zu scans (refused before parsing)",
                           file, (size_t)REC_VALUES_MAX, RECORDING_MAX_SCANS);
        }
    }
    return 0;
}

/* Parse buf as JSON; a syntax error becomes "FILE:LINE:COL: ...". */
static cJSON *rec_parse_json(const char *file, const char *buf, size_t len, struct err *e)
{
    if (err_json_bom(buf, len, file, e)) return NULL;
    const char *end = NULL;
    cJSON *root = cJSON_ParseWithLengthOpts(buf, len, &end, 0);
    if (root) return root;
    size_t off = end && end >= buf && end <= buf + len ? (size_t)(end - buf) : 0;
    long line, col;
    err_line_col(buf, off, &line, &col);
    err_set(e, "%s:%ld:%ld: invalid JSON, expected a JSON object (format %s)", file, line, col, RECORDING_FORMAT);
    return NULL;
}

static int rec_manifest_path(const char *path, struct recording *rec, struct err *e)
{
    struct stat st;
    if (stat(path, &st)) return err_at(e, path, 0, "cannot open: %s", strerror(errno));
    int cut = S_ISDIR(st.st_mode) ? fileio_join(rec->manifest, sizeof rec->manifest, path, "recording.json")
                                   : err_cut(snprintf(rec->manifest, sizeof rec->manifest, "%s", path),
                                             sizeof rec->manifest);
    if (cut) return err_at(e, path, 0, "path too long");
    fileio_dirname(rec->dir, sizeof rec->dir, rec->manifest);
    return 0;
}

static int rec_top(const struct rec_ctx *x, const cJSON *root, struct recording *rec, struct err *e)
{
    static const char *const keys[] = {"format", "sensor", "scans", "scan_layout", "poses", "perturbation",
                                       "extrinsic", "log", NULL};
    const cJSON *fmt, *lay;
    if (!cJSON_IsObject(root)) return rec_bad(x, "$", "not a JSON object", "an object", e);
    if (rec_keys(x, root, "$", keys, e) || rec_get(x, root, "$", "format", cJSON_String, 1, &fmt, e)) return -1;
    if (strcmp(fmt->valuestring, RECORDING_FORMAT)) {
        char what[300];
        snprintf(what, sizeof what, "'%.200s' is not a format this version reads", fmt->valuestring);
        return rec_bad(x, "$.format", what, "\"" RECORDING_FORMAT "\"", e);
    }
    if (rec_get(x, root, "$", "scan_layout", cJSON_String, 1, &lay, e)) return -1;
    if (scan_layout_parse(lay->valuestring, &rec->layout, e)) return err_wrap(e, "%s: $.scan_layout", x->file);
    return 0;
}

int recording_load(const char *path, int allow_outside, struct recording *rec, struct err *e)
{
    memset(rec, 0, sizeof *rec);
    recording_sensor_init(&rec->sensor);
    if (rec_manifest_path(path, rec, e)) return -1;
    struct rec_ctx x = {rec->manifest, "", allow_outside};
    if (!realpath(rec->dir, x.root)) return err_at(e, rec->dir, 0, "cannot resolve folder: %s", strerror(errno));
    char *buf;
    size_t len;
    if (fileio_read(rec->manifest, REC_MANIFEST_MAX, &buf, &len, e)) return -1;
    cJSON *root = rec_check_values(rec->manifest, buf, len, e) ? NULL : rec_parse_json(rec->manifest, buf, len, e);
    free(buf);
    if (!root) return -1;
    struct poses ps = {0, NULL, POSES_AUTO};
    int rc = rec_top(&x, root, rec, e);
    if (!rc) rc = rec_sensor(&x, root, &rec->sensor, e);
    if (!rc) rc = rec_scans(&x, root, rec, e);
    if (!rc) rc = rec_perturbation(&x, root, &rec->perturbation, e);
    if (!rc) rc = rec_extrinsic(&x, root, rec, e);
    if (!rc) rc = rec_log(&x, root, e);
    if (!rc) rc = rec_poses(&x, root, rec, &ps, e);
    if (!rc) rc = rec_pair(&x, rec, &ps, e);
    cJSON_Delete(root);
    if (rc) {
        poses_free(&ps);
        recording_free(rec);
        return -1;
    }
    rec->poses = ps.v;
    for (size_t k = 0; rec->has_extrinsic && k < rec->n; k++) {
        double t = rec->poses[k].t;
        pose_compose(&rec->poses[k], &rec->extrinsic, &rec->poses[k]);
        rec->poses[k].t = t;
    }
    return 0;
}

int recording_load_scan(const struct recording *rec, size_t i, struct cloud *c, size_t *n_dropped,
                        struct err *e)
{
    if (n_dropped) *n_dropped = 0;
    if (i >= rec->n) return err_set(e, "%s: scan %zu does not exist, expected an index below %zu",
                                    rec->manifest, i, rec->n);
    if (scan_read_finite(rec->scan_paths[i], rec->layout, c, n_dropped, e)) return err_wrap(e, "scan %zu", i);
    return 0;
}
