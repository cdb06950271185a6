/* recording_write.c: write recording.json and whole recordings (scans, poses). */
#include "harness/io/recording.h"

#include <cjson/cJSON.h>
#include <errno.h>
#include <math.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>
#include <sys/stat.h>
#include <unistd.h>

#include "harness/base/fileio.h"
#include "harness/base/numfmt.h"
#include "harness/base/side.h"
#include "harness/io/poses_io.h"

static cJSON *rec_w_numbers(const double *v, int n)
{
    cJSON *a = cJSON_CreateArray();
    for (int k = 0; a && k < n; k++) cJSON_AddItemToArray(a, cJSON_CreateNumber(v[k]));
    return a;
}

static cJSON *rec_w_sensor(const struct recording_sensor *s)
{
    cJSON *o = cJSON_CreateObject();
    if (!o) return NULL;
    cJSON_AddNumberToObject(o, "channels", s->channels);
    if (s->vertical_deg) cJSON_AddItemToObject(o, "vertical_deg", rec_w_numbers(s->vertical_deg, s->channels));
    if (isfinite(s->vfov_deg[0]) && isfinite(s->vfov_deg[1]))
        cJSON_AddItemToObject(o, "vertical_fov_deg", rec_w_numbers(s->vfov_deg, 2));
    if (isfinite(s->range_max_m)) cJSON_AddNumberToObject(o, "range_max_m", s->range_max_m);
    if (s->has_mount) {
        cJSON *m = cJSON_AddObjectToObject(o, "mount");
        cJSON_AddItemToObject(m, "xyz_m", rec_w_numbers(s->mount_xyz_m, 3));
        cJSON_AddItemToObject(m, "rpy_deg", rec_w_numbers(s->mount_rpy_deg, 3));
    }
    if (s->notes) cJSON_AddStringToObject(o, "notes", s->notes);
    return o;
}

static cJSON *rec_w_perturbation(const struct recording_perturbation *p)
{
    cJSON *o = cJSON_CreateObject();
    if (!o) return NULL;
    cJSON_AddStringToObject(o, "chain", p->chain ? p->chain : "");
    if (p->seed <= ((uint64_t)1 << 53)) {
        cJSON_AddNumberToObject(o, "seed", (double)p->seed);
    } else {
        char s[32];
        snprintf(s, sizeof s, "%llu", (unsigned long long)p->seed);
        cJSON_AddStringToObject(o, "seed", s);
    }
    if (p->on[0]) cJSON_AddStringToObject(o, "on", p->on);
    if (p->source) cJSON_AddStringToObject(o, "source", p->source);
    return o;
}

static cJSON *rec_w_manifest(const struct recording_manifest *m)
{
    cJSON *root = cJSON_CreateObject();
    if (!root) return NULL;
    cJSON_AddStringToObject(root, "format", RECORDING_FORMAT);
    cJSON_AddItemToObject(root, "sensor", rec_w_sensor(m->sensor));
    cJSON *scans = cJSON_AddObjectToObject(root, "scans");
    if (m->files) {
        cJSON *a = cJSON_AddArrayToObject(scans, "files");
        for (size_t k = 0; a && k < m->n_files; k++) cJSON_AddItemToArray(a, cJSON_CreateString(m->files[k]));
    } else {
        cJSON_AddStringToObject(scans, "dir", m->scans_dir);
        cJSON_AddStringToObject(scans, "pattern", m->scans_pattern);
    }
    cJSON_AddStringToObject(root, "scan_layout", scan_layout_name(m->layout));
    cJSON *poses = cJSON_AddObjectToObject(root, "poses");
    cJSON_AddStringToObject(poses, "file", m->poses_file);
    cJSON_AddStringToObject(poses, "layout", m->poses_layout ? m->poses_layout : "auto");
    if (m->poses_times) cJSON_AddStringToObject(poses, "times", m->poses_times);
    if (m->poses_time_unit) cJSON_AddStringToObject(poses, "time_unit", m->poses_time_unit);
    if (m->perturbation && m->perturbation->present)
        cJSON_AddItemToObject(root, "perturbation", rec_w_perturbation(m->perturbation));
    if (m->extrinsic) {
        cJSON *x = cJSON_AddObjectToObject(root, "extrinsic");
        cJSON_AddItemToObject(x, "xyz_m", rec_w_numbers(m->extrinsic->p, 3));
        cJSON_AddItemToObject(x, "quat_xyzw", rec_w_numbers(m->extrinsic->q, 4));
    }
    if (m->log_json) cJSON_AddItemToObject(root, "log", cJSON_Parse(m->log_json));
    return root;
}

int recording_write_manifest(const char *path, const struct recording_manifest *m, struct err *e)
{
    if (!m->sensor || m->sensor->channels < 1 || m->sensor->channels > 65535)
        return err_at(e, path, 0, "sensor channels must be from 1 to 65535");
    if (!m->files && !(m->scans_dir && m->scans_pattern))
        return err_at(e, path, 0, "no scan list given, expected files or dir + pattern");
    if (!m->poses_file) return err_at(e, path, 0, "no pose file given");
    cJSON *root = rec_w_manifest(m);
    char *text = root ? numfmt_json_print(root) : NULL;
    cJSON_Delete(root);
    if (!text) return err_at(e, path, 0, "out of memory building the manifest");
    size_t len = strlen(text);
    text[len] = '\n';  /* cJSON_Print's NUL becomes the final newline */
    int rc = fileio_write(path, text, len + 1, e);
    free(text);
    return rc;
}

int recording_writer_begin(struct recording_writer *w, const char *dir,
                           const struct recording_sensor *sensor, enum scan_layout layout,
                           struct err *e)
{
    memset(w, 0, sizeof *w);
    recording_sensor_init(&w->sensor);
    const struct scan_format *f = scan_format_of(layout);
    if (!f || !f->recording) {
        char names[128];
        scan_format_list(names, sizeof names, ", ", " or ", SCAN_LIST_RECORDING);
        return err_at(e, dir, 0, "recordings are written in the %s layout, not %s", names, scan_layout_name(layout));
    }
    if (!sensor || sensor->channels < 1 || sensor->channels > 65535)
        return err_at(e, dir, 0, "sensor channels must be from 1 to 65535");
    if (strlen(dir) + 128 >= sizeof w->dir) return err_at(e, dir, 0, "path too long");
    if (fileio_stage_open(&w->stage, dir, e)) return -1;
    if (err_cut(snprintf(w->dir, sizeof w->dir, "%s", w->stage.tmp), sizeof w->dir)) {
        fileio_stage_abort(&w->stage);
        return err_at(e, dir, 0, "path too long");
    }
    w->layout = layout;
    char scans[RECORDING_PATH_MAX];
    fileio_join(scans, sizeof scans, w->dir, "scans");
    if (fileio_mkdirs(scans, e)) return -1;
    return recording_sensor_copy(&w->sensor, sensor, e);
}

int recording_writer_perturbation(struct recording_writer *w, const char *chain, uint64_t seed,
                                  const char *on, const char *src_manifest, struct err *e)
{
    struct recording_perturbation *p = &w->perturbation;
    free(p->chain);
    free(p->source);
    memset(p, 0, sizeof *p);
    if (on && side_lookup(on) < 0) return err_set(e, "perturbation applied on '%s', expected " SIDE_CHOICES, on);
    p->chain = strdup(chain ? chain : "");
    p->source = src_manifest ? strdup(src_manifest) : NULL;
    if (!p->chain || (src_manifest && !p->source)) return err_set(e, "out of memory");
    p->seed = seed;
    snprintf(p->on, sizeof p->on, "%s", on ? on : "");
    p->present = 1;
    return 0;
}

int recording_writer_source(struct recording_writer *w, const char *log_json, const struct pose *extrinsic,
                            struct err *e)
{
    free(w->log_json);
    w->log_json = NULL;
    if (log_json && !(w->log_json = strdup(log_json))) return err_set(e, "out of memory");
    w->has_extrinsic = extrinsic != NULL;
    if (extrinsic) w->extrinsic = *extrinsic;
    return 0;
}

void recording_writer_scan_path(const struct recording_writer *w, size_t i, char *out, size_t n)
{
    /* recording_writer_begin keeps dir short enough; an empty path fails loudly at any use */
    if (err_cut(snprintf(out, n, "%s/scans/%06zu%s", w->dir, i, scan_layout_ext(w->layout)), n)) out[0] = 0;
}

/* Where scan i will be once the recording is in place (for messages). */
static void rec_w_final_path(const struct recording_writer *w, size_t i, char *out, size_t n)
{
    if (err_cut(snprintf(out, n, "%s/scans/%06zu%s", w->stage.path, i, scan_layout_ext(w->layout)), n) && n > 4)
        memcpy(out + n - 4, "...", 4);  /* a name for messages only */
}

int recording_writer_scan(const struct recording_writer *w, size_t i, const struct cloud *c, struct err *e)
{
    char path[RECORDING_PATH_MAX], shown[RECORDING_PATH_MAX];
    recording_writer_scan_path(w, i, path, sizeof path);
    rec_w_final_path(w, i, shown, sizeof shown);
    if (w->layout == SCAN_RAW && c->n == 0)
        return err_at(e, shown, 0, "scan %zu has no points; the raw layout cannot hold an empty scan, "
                      "expected the pcd layout for recordings that may have empty scans", i);
    return scan_write(path, w->layout, c, e);
}

int recording_writer_poses(struct recording_writer *w, const struct pose *v, size_t n, struct err *e)
{
    if (n == 0) return err_at(e, w->stage.path, 0, "no poses, expected one pose per scan");
    for (size_t k = 1; k < n; k++)
        if (!(v[k].t > v[k - 1].t))
            return err_at(e, w->stage.path, 0, "pose %zu has time %.17g, not after pose %zu's %.17g; expected strictly "
                          "increasing times", k, v[k].t, k - 1, v[k - 1].t);
    struct pose *copy = malloc(n * sizeof *copy);
    if (!copy) return err_set(e, "out of memory");
    memcpy(copy, v, n * sizeof *copy);
    free(w->poses);
    w->poses = copy;
    w->n_poses = n;
    char path[RECORDING_PATH_MAX];
    fileio_join(path, sizeof path, w->dir, "poses.csv");
    return poses_write(path, POSES_CSV, v, n, NULL, e);
}

int recording_writer_finish(struct recording_writer *w, struct err *e)
{
    if (!w->poses) return err_at(e, w->stage.path, 0, "no poses written, expected recording_writer_poses first");
    /* The staged folder started empty: no stale scans can be in it. */
    for (size_t k = 0; k < w->n_poses; k++) {
        char path[RECORDING_PATH_MAX], shown[RECORDING_PATH_MAX];
        struct stat st;
        recording_writer_scan_path(w, k, path, sizeof path);
        rec_w_final_path(w, k, shown, sizeof shown);
        if (stat(path, &st) || !S_ISREG(st.st_mode))
            return err_at(e, shown, 0, "scan %zu of %zu was not written, expected every scan before finishing",
                          k, w->n_poses);
    }
    char pattern[16];
    snprintf(pattern, sizeof pattern, "*%s", scan_layout_ext(w->layout));
    struct recording_manifest m = {
        .sensor = &w->sensor, .scans_dir = "scans", .scans_pattern = pattern, .layout = w->layout,
        .poses_file = "poses.csv", .poses_layout = "csv", .poses_time_unit = "s", .perturbation = &w->perturbation,
        .extrinsic = w->has_extrinsic ? &w->extrinsic : NULL, .log_json = w->log_json};
    char path[RECORDING_PATH_MAX];
    fileio_join(path, sizeof path, w->dir, "recording.json");
    if (recording_write_manifest(path, &m, e)) return -1;
    return fileio_stage_commit(&w->stage, "recording.json", e);
}

void recording_writer_free(struct recording_writer *w)
{
    if (!w) return;
    fileio_stage_abort(&w->stage);   /* nothing when finish put it in place */
    recording_sensor_free(&w->sensor);
    free(w->perturbation.chain);
    free(w->perturbation.source);
    free(w->log_json);
    free(w->poses);
    memset(w, 0, sizeof *w);
}
