/* synconf.c: reading scenario and sensor files, every key checked. */
#include "scenarios/synconf.h"

#include <cJSON.h>
#include <math.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>
#include <unistd.h>

#include "harness/base/fileio.h"

#define SYNCONF_MAX_BYTES ((size_t)1 << 20)

/* Where messages point: the file and the JSON path of the object. */
struct jctx {
    const char *file;
    struct err *e;
};

static int jfail(const struct jctx *j, const char *path, const char *key, const char *what)
{
    if (key) return err_set(j->e, "%s: %s.%s: %s", j->file, path, key, what);
    return err_set(j->e, "%s: %s: %s", j->file, path, what);
}

/* The object has only allowed keys, each once. */
static int jkeys(const struct jctx *j, const cJSON *o, const char *path, const char *const *allowed)
{
    if (!cJSON_IsObject(o)) return jfail(j, path, NULL, "expected an object");
    for (const cJSON *c = o->child; c; c = c->next) {
        int ok = 0;
        for (int k = 0; allowed[k]; k++)
            if (!strcmp(c->string, allowed[k])) ok = 1;
        if (!ok) return jfail(j, path, c->string, "unknown key");
        for (const cJSON *d = c->next; d; d = d->next)
            if (!strcmp(c->string, d->string)) return jfail(j, path, c->string, "duplicate key");
    }
    return 0;
}

static const cJSON *jget(const cJSON *o, const char *key)
{
    return cJSON_GetObjectItemCaseSensitive(o, key);
}

/* Optional number in [lo, hi] (whole when integral); absent keeps *dst. */
static int jnum(const struct jctx *j, const cJSON *o, const char *path, const char *key,
                double lo, double hi, int integral, double *dst)
{
    const cJSON *it = jget(o, key);
    if (!it) return 0;
    double v = cJSON_IsNumber(it) ? it->valuedouble : NAN;
    if (!(v >= lo && v <= hi) || (integral && v != floor(v))) {
        char msg[200];
        if (cJSON_IsNumber(it))
            snprintf(msg, sizeof msg, "expected a %s in [%g, %g], got %g", integral ? "whole number" : "number", lo, hi, v);
        else
            snprintf(msg, sizeof msg, "expected a %s in [%g, %g]", integral ? "whole number" : "number", lo, hi);
        return jfail(j, path, key, msg);
    }
    *dst = v;
    return 0;
}

static int jint(const struct jctx *j, const cJSON *o, const char *path, const char *key, int lo,
                int hi, int *dst)
{
    double v = *dst;
    if (jnum(j, o, path, key, lo, hi, 1, &v)) return -1;
    *dst = (int)v;
    return 0;
}

/* Optional array of exactly n numbers in [lo, hi]. */
static int jarr(const struct jctx *j, const cJSON *o, const char *path, const char *key, int n,
                double lo, double hi, double *dst)
{
    const cJSON *it = jget(o, key);
    if (!it) return 0;
    char msg[160];
    snprintf(msg, sizeof msg, "expected an array of %d numbers in [%g, %g]", n, lo, hi);
    if (!cJSON_IsArray(it) || cJSON_GetArraySize(it) != n) return jfail(j, path, key, msg);
    int k = 0;
    for (const cJSON *c = it->child; c; c = c->next, k++) {
        if (!cJSON_IsNumber(c) || !(c->valuedouble >= lo && c->valuedouble <= hi))
            return jfail(j, path, key, msg);
        dst[k] = c->valuedouble;
    }
    return 0;
}

static int jstr(const struct jctx *j, const cJSON *o, const char *path, const char *key, char *dst,
                size_t n)
{
    const cJSON *it = jget(o, key);
    if (!it) return 0;
    if (!cJSON_IsString(it) || !it->valuestring[0] || strlen(it->valuestring) >= n)
        return jfail(j, path, key, "expected a non-empty string");
    memcpy(dst, it->valuestring, strlen(it->valuestring) + 1);
    return 0;
}

static int jbool(const struct jctx *j, const cJSON *o, const char *path, const char *key, int *dst)
{
    const cJSON *it = jget(o, key);
    if (!it) return 0;
    if (!cJSON_IsBool(it)) return jfail(j, path, key, "expected true or false");
    *dst = cJSON_IsTrue(it);
    return 0;
}

static int jformat(const struct jctx *j, const cJSON *o, const char *path, const char *want, int required)
{
    const cJSON *it = jget(o, "format");
    if (!it && !required) return 0;
    if (!it) return jfail(j, path, "format", "missing, expected the format name");
    if (!cJSON_IsString(it) || strcmp(it->valuestring, want)) {
        char msg[128];
        snprintf(msg, sizeof msg, "expected \"%s\"", want);
        return jfail(j, path, "format", msg);
    }
    return 0;
}

/* Parse a whole file; syntax errors give line and column. Caller deletes. */
static int jparse(const char *path, cJSON **out, struct err *e)
{
    char *buf;
    size_t len;
    if (fileio_read(path, SYNCONF_MAX_BYTES, &buf, &len, e)) return -1;
    if (err_json_bom(buf, len, path, e)) { free(buf); return -1; }
    const char *end = NULL;
    *out = cJSON_ParseWithLengthOpts(buf, len, &end, 0);
    if (*out && end) {   /* only white space may follow the value */
        while ((size_t)(end - buf) < len && strchr(" \t\r\n", *end)) end++;
        if ((size_t)(end - buf) < len) {
            cJSON_Delete(*out);
            *out = NULL;
        }
    }
    if (!*out) {
        long line, col;
        err_line_col(buf, end ? (size_t)(end - buf) : 0, &line, &col);
        free(buf);
        return err_set(e, "%s:%ld:%ld: malformed JSON, expected a value, ',' or a closing bracket here",
                       path, line, col);
    }
    free(buf);
    return 0;
}

static const char *const sensor_keys[] = {
    "format", "name", "about", "profile", "channels", "vertical_fov_deg", "vertical_deg",
    "azimuth_step_deg", "range_min_m", "range_max_m", "range_sigma_m", "weak_loss", "weak_level",
    "falloff_m", "spin_hz", "motion", "mount", "self_mask", NULL};

static int jmount(const struct jctx *j, const cJSON *o, const char *path, struct lidar *L)
{
    static const char *const keys[] = {"xyz_m", "rpy_deg", NULL};
    const cJSON *m = jget(o, "mount");
    if (!m) return 0;
    char p[256];
    snprintf(p, sizeof p, "%s.mount", path);
    return jkeys(j, m, p, keys) || jarr(j, m, p, "xyz_m", 3, -10, 10, L->mount_xyz_m) ||
           jarr(j, m, p, "rpy_deg", 3, -180, 180, L->mount_rpy_deg);
}

static int jmasks(const struct jctx *j, const cJSON *o, const char *path, struct lidar *L)
{
    static const char *const keys[] = {"azimuth_deg", "elev_max_deg", NULL};
    const cJSON *a = jget(o, "self_mask");
    if (!a) return 0;
    if (!cJSON_IsArray(a) || cJSON_GetArraySize(a) > LIDAR_MAX_MASKS)
        return jfail(j, path, "self_mask", "expected an array of at most 8 masks");
    L->n_masks = 0;
    for (const cJSON *m = a->child; m; m = m->next) {
        char p[256];
        snprintf(p, sizeof p, "%s.self_mask[%d]", path, L->n_masks);
        double az[2] = {0, 0}, el = -90;
        if (jkeys(j, m, p, keys) || jarr(j, m, p, "azimuth_deg", 2, 0, 360, az) ||
            jnum(j, m, p, "elev_max_deg", -90, 90, 0, &el))
            return -1;
        if (!jget(m, "azimuth_deg") || !jget(m, "elev_max_deg"))
            return jfail(j, p, NULL, "expected both azimuth_deg and elev_max_deg");
        L->mask[L->n_masks++] = (struct lidar_mask){az[0], az[1], el};
    }
    return 0;
}

static int jvertical(const struct jctx *j, const cJSON *o, const char *path, struct lidar *L)
{
    int ch = L->channels;
    if (jint(j, o, path, "channels", 1, LIDAR_MAX_CHANNELS, &ch)) return -1;
    const cJSON *v = jget(o, "vertical_deg");
    if (v) {
        if (!cJSON_IsArray(v) || cJSON_GetArraySize(v) < 1 || cJSON_GetArraySize(v) > LIDAR_MAX_CHANNELS)
            return jfail(j, path, "vertical_deg", "expected an array of 1 to 256 angles");
        int n = cJSON_GetArraySize(v), k = 0;
        if (jget(o, "channels") && n != ch) {
            char msg[128];
            snprintf(msg, sizeof msg, "%d angles for %d channels, expected one per channel", n, ch);
            return jfail(j, path, "vertical_deg", msg);
        }
        for (const cJSON *c = v->child; c; c = c->next, k++) {
            if (!cJSON_IsNumber(c)) return jfail(j, path, "vertical_deg", "expected numbers");
            L->elev_deg[k] = c->valuedouble;
        }
        L->channels = n;
        return 0;
    }
    double fov[2] = {L->elev_deg[0], L->elev_deg[L->channels > 0 ? L->channels - 1 : 0]};
    if (jarr(j, o, path, "vertical_fov_deg", 2, -90, 90, fov)) return -1;
    if (jget(o, "vertical_fov_deg") && !(fov[1] > fov[0]))
        return jfail(j, path, "vertical_fov_deg", "expected [lowest, highest] with lowest < highest");
    if (jget(o, "channels") || jget(o, "vertical_fov_deg")) lidar_uniform(L, ch, fov[0], fov[1]);
    return 0;
}

/* Apply the keys of a sensor object over L (which holds its base). */
static int jsensor(const struct jctx *j, const cJSON *o, const char *path, struct lidar *L)
{
    if (jkeys(j, o, path, sensor_keys) || jformat(j, o, path, "revisit-sensor-1", 0) ||
        jvertical(j, o, path, L) ||
        jnum(j, o, path, "azimuth_step_deg", 0, 90, 0, &L->az_step_deg) ||
        jnum(j, o, path, "range_min_m", 0, 1000, 0, &L->range_min_m) ||
        jnum(j, o, path, "range_max_m", 0, 1000, 0, &L->range_max_m) ||
        jnum(j, o, path, "range_sigma_m", 0, 10, 0, &L->range_sigma_m) ||
        jnum(j, o, path, "weak_loss", 0, 1, 0, &L->weak_loss) ||
        jnum(j, o, path, "weak_level", 0, 1, 0, &L->weak_level) ||
        jnum(j, o, path, "falloff_m", 0, 10000, 0, &L->falloff_m) ||
        jnum(j, o, path, "spin_hz", 0, 100, 0, &L->spin_hz) ||
        jbool(j, o, path, "motion", &L->motion) || jmount(j, o, path, L) || jmasks(j, o, path, L))
        return -1;
    char what[SYNCONF_PATH_MAX + 64];
    snprintf(what, sizeof what, "%s: %s", j->file, path);
    return lidar_check(L, what, j->e);
}

static void jdir(const char *path, char *out, size_t n)
{
    fileio_dirname(out, n, path);
}

static int synconf_sensor_depth(const char *name, const char *near_dir, struct lidar *L, char *label,
                                size_t label_n, int depth, struct err *e);

/* A sensor object (file or embedded): its profile first, then its keys. */
static int jsensor_obj(const struct jctx *j, const cJSON *o, const char *path, const char *near_dir,
                       struct lidar *L, char *label, size_t label_n, int depth)
{
    const cJSON *prof = cJSON_IsObject(o) ? jget(o, "profile") : NULL;
    if (prof) {
        if (!cJSON_IsString(prof)) return jfail(j, path, "profile", "expected a profile name");
        if (synconf_sensor_depth(prof->valuestring, near_dir, L, label, label_n, depth + 1, j->e))
            return -1;
    }
    char nm[64] = "";
    if (cJSON_IsObject(o) && jstr(j, o, path, "name", nm, sizeof nm)) return -1;
    if (nm[0]) snprintf(label, label_n, "%s", nm);
    return jsensor(j, o, path, L);
}

static int synconf_sensor_depth(const char *name, const char *near_dir, struct lidar *L, char *label,
                                size_t label_n, int depth, struct err *e)
{
    if (depth > 4) return err_set(e, "sensor '%s': profiles nest deeper than 4, expected a chain that ends", name);
    char path[SYNCONF_PATH_MAX], dir[SYNCONF_PATH_MAX];
    if (synconf_find(name, "sensors", near_dir, path, sizeof path, e)) return -1;
    cJSON *root;
    if (jparse(path, &root, e)) return -1;
    struct jctx j = {path, e};
    jdir(path, dir, sizeof dir);
    if (depth == 0 || !label[0]) snprintf(label, label_n, "%s", name);
    int rc = jsensor_obj(&j, root, "$", dir, L, label, label_n, depth);
    cJSON_Delete(root);
    return rc;
}

int synconf_load_sensor(const char *name, const char *near_dir, struct lidar *L, char *label,
                        size_t label_n, struct err *e)
{
    lidar_defaults(L);
    label[0] = 0;
    return synconf_sensor_depth(name, near_dir, L, label, label_n, 0, e);
}

static int jworld(const struct jctx *j, const cJSON *o, struct district_params *w)
{
    static const char *const keys[] = {
        "style", "grid", "block_m", "jitter_m", "street_width_m", "slope", "roundabouts",
        "diagonals", "repeat_share", "parked_per_100m", "change_share", "traffic",
        "trees_per_100m", "poles_per_100m", NULL};
    const char *p = "$.world";
    if (!o) return jfail(j, "$", "world", "missing, expected the district object");
    if (jkeys(j, o, p, keys)) return -1;
    const cJSON *st = jget(o, "style");
    int style = st && cJSON_IsString(st) ? district_style_parse(st->valuestring) : -1;
    if (style < 0) return jfail(j, p, "style", "expected \"port\", \"campus\" or \"suburb\"");
    district_defaults(w, style);
    double grid[2] = {w->nx, w->ny}, ra = w->roundabouts, di = w->diagonals, tr = w->traffic;
    if (jarr(j, o, p, "grid", 2, 2, 16, grid) || jarr(j, o, p, "block_m", 2, 10, 400, w->block_m) ||
        jnum(j, o, p, "jitter_m", 0, 20, 0, &w->jitter_m) ||
        jnum(j, o, p, "street_width_m", 6, 30, 0, &w->street_width_m) ||
        jarr(j, o, p, "slope", 2, -0.1, 0.1, w->slope) ||
        jnum(j, o, p, "roundabouts", 0, 16, 1, &ra) || jnum(j, o, p, "diagonals", 0, 32, 1, &di) ||
        jnum(j, o, p, "repeat_share", 0, 1, 0, &w->repeat_share) ||
        jnum(j, o, p, "parked_per_100m", 0, 20, 0, &w->parked_per_100m) ||
        jnum(j, o, p, "change_share", 0, 1, 0, &w->change_share) ||
        jnum(j, o, p, "traffic", 0, 64, 1, &tr) ||
        jnum(j, o, p, "trees_per_100m", 0, 40, 0, &w->trees_per_100m) ||
        jnum(j, o, p, "poles_per_100m", 0, 20, 0, &w->poles_per_100m))
        return -1;
    if (grid[0] != floor(grid[0]) || grid[1] != floor(grid[1]))
        return jfail(j, p, "grid", "expected whole numbers of intersections");
    if (w->block_m[0] > w->block_m[1]) return jfail(j, p, "block_m", "expected [smallest, largest]");
    if (w->block_m[0] < w->street_width_m + 8)
        return jfail(j, p, "block_m", "blocks must be at least 8 m wider than the streets");
    w->nx = (int)grid[0]; w->ny = (int)grid[1];
    w->roundabouts = (int)ra; w->diagonals = (int)di; w->traffic = (int)tr;
    return 0;
}

static int jleg(const struct jctx *j, const cJSON *o, int l, const struct district_params *w,
                struct route_leg *g)
{
    static const char *const keys[] = {"path", "lane_m", NULL};
    char p[96];
    snprintf(p, sizeof p, "$.route.legs[%d]", l);
    if (jkeys(j, o, p, keys) || jnum(j, o, p, "lane_m", 0, 3, 0, &g->lane_m)) return -1;
    const cJSON *a = jget(o, "path");
    if (!cJSON_IsArray(a) || cJSON_GetArraySize(a) < 2 || cJSON_GetArraySize(a) > ROUTE_MAX_STOPS)
        return jfail(j, p, "path", "expected an array of 2 to 64 intersections [i, j]");
    g->n = 0;
    for (const cJSON *c = a->child; c; c = c->next) {
        char q[128];
        snprintf(q, sizeof q, "%s.path[%d]", p, g->n);
        int ok = cJSON_IsArray(c) && cJSON_GetArraySize(c) == 2 && cJSON_IsNumber(c->child) &&
                 cJSON_IsNumber(c->child->next);
        double i = ok ? c->child->valuedouble : -1, jj = ok ? c->child->next->valuedouble : -1;
        if (!ok || i != floor(i) || jj != floor(jj))
            return jfail(j, q, NULL, "expected an intersection [i, j] of whole numbers");
        if (i < 0 || jj < 0 || i >= w->nx || jj >= w->ny) {
            char msg[128];
            snprintf(msg, sizeof msg, "(%g, %g) is outside the %d x %d grid", i, jj, w->nx, w->ny);
            return jfail(j, q, NULL, msg);
        }
        g->node[g->n++] = (int)jj * w->nx + (int)i;
    }
    return 0;
}

static int jroute(const struct jctx *j, const cJSON *o, struct synconf *c)
{
    static const char *const keys[] = {"speed_mps", "lateral_mps2", "accel_mps2", "rate_hz",
                                       "pose_noise", "legs", NULL};
    static const char *const nkeys[] = {"sigma_m", "sigma_deg", NULL};
    const char *p = "$.route";
    if (!o) return jfail(j, "$", "route", "missing, expected the route object");
    route_defaults(&c->route);
    if (jkeys(j, o, p, keys) || jnum(j, o, p, "speed_mps", 1, 40, 0, &c->route.cruise_mps) ||
        jnum(j, o, p, "lateral_mps2", 0.1, 10, 0, &c->route.lateral_mps2) ||
        jnum(j, o, p, "accel_mps2", 0.1, 10, 0, &c->route.accel_mps2) ||
        jnum(j, o, p, "rate_hz", 0.1, 100, 0, &c->rate_hz))
        return -1;
    const cJSON *n = jget(o, "pose_noise");
    if (n && (jkeys(j, n, "$.route.pose_noise", nkeys) ||
              jnum(j, n, "$.route.pose_noise", "sigma_m", 0, 10, 0, &c->pose_sigma_m) ||
              jnum(j, n, "$.route.pose_noise", "sigma_deg", 0, 30, 0, &c->pose_sigma_deg)))
        return -1;
    const cJSON *legs = jget(o, "legs");
    if (!cJSON_IsArray(legs) || cJSON_GetArraySize(legs) < 1 || cJSON_GetArraySize(legs) > ROUTE_MAX_LEGS)
        return jfail(j, p, "legs", "expected an array of 1 to 32 legs");
    c->route.n_legs = 0;
    for (const cJSON *g = legs->child; g; g = g->next) {
        struct route_leg *leg = &c->route.leg[c->route.n_legs];
        leg->lane_m = 1.5;
        if (jleg(j, g, c->route.n_legs, &c->world, leg)) return -1;
        c->route.n_legs++;
    }
    c->world.epochs = c->route.n_legs;
    return 0;
}

static int jscenario(const struct jctx *j, const cJSON *root, const char *sensor, struct synconf *c)
{
    static const char *const keys[] = {"format", "name", "about", "seed", "sensor", "world", "route", NULL};
    if (jkeys(j, root, "$", keys) || jformat(j, root, "$", "revisit-synth-1", 1) ||
        jstr(j, root, "$", "name", c->name, sizeof c->name))
        return -1;
    if (!c->name[0]) return jfail(j, "$", "name", "missing, expected the scenario name");
    double seed = 1;
    if (jnum(j, root, "$", "seed", 0, 9007199254740992.0, 1, &seed)) return -1;
    c->seed = (uint64_t)seed;
    if (jworld(j, jget(root, "world"), &c->world) || jroute(j, jget(root, "route"), c)) return -1;
    char dir[SYNCONF_PATH_MAX];
    jdir(j->file, dir, sizeof dir);
    if (sensor) return synconf_load_sensor(sensor, dir, &c->sensor, c->sensor_name, sizeof c->sensor_name, j->e);
    const cJSON *s = jget(root, "sensor");
    if (!s) return jfail(j, "$", "sensor", "missing, expected a profile name or a sensor object");
    if (cJSON_IsString(s))
        return synconf_load_sensor(s->valuestring, dir, &c->sensor, c->sensor_name, sizeof c->sensor_name, j->e);
    lidar_defaults(&c->sensor);
    snprintf(c->sensor_name, sizeof c->sensor_name, "custom");
    return jsensor_obj(j, s, "$.sensor", dir, &c->sensor, c->sensor_name, sizeof c->sensor_name, 0);
}

int synconf_load(const char *scenario, const char *sensor, struct synconf *c, struct err *e)
{
    memset(c, 0, sizeof *c);
    c->rate_hz = 10;
    if (synconf_find(scenario, "", NULL, c->path, sizeof c->path, e)) return -1;
    cJSON *root;
    if (jparse(c->path, &root, e)) return -1;
    struct jctx j = {c->path, e};
    int rc = jscenario(&j, root, sensor, c);
    cJSON_Delete(root);
    return rc;
}

static int synconf_is_path(const char *name)
{
    size_t n = strlen(name);
    return strchr(name, '/') || (n > 5 && !strcmp(name + n - 5, ".json"));
}

/* dirs[nd] = a + b when it fits; the new count. */
static int synconf_dir(char dirs[][SYNCONF_PATH_MAX], int nd, const char *a, const char *b)
{
    return err_cut(snprintf(dirs[nd], SYNCONF_PATH_MAX, "%s%s", a, b), SYNCONF_PATH_MAX) ? nd : nd + 1;
}

int synconf_find(const char *name, const char *sub, const char *near_dir, char *out, size_t n,
                 struct err *e)
{
    if (!name[0]) return err_set(e, "empty %s name, expected a built-in name or a .json file", *sub ? "sensor" : "scenario");
    if (synconf_is_path(name)) {
        if (access(name, R_OK)) return err_set(e, "%s: cannot read the file", name);
        return err_cut(snprintf(out, n, "%s", name), n) ? err_set(e, "%s: path too long", name) : 0;
    }
    char exe[SYNCONF_PATH_MAX] = "", bin[SYNCONF_PATH_MAX] = ".", dirs[6][SYNCONF_PATH_MAX];
    ssize_t k = readlink("/proc/self/exe", exe, sizeof exe - 1);
    if (k > 0) { exe[k] = 0; fileio_dirname(bin, sizeof bin, exe); }
    const char *env = getenv("REVISIT_SCENARIOS");
    int nd = 0;
    /* a folder whose path does not fit is left out of the search, never cut */
    if (near_dir) nd = synconf_dir(dirs, nd, near_dir, "/..");  /* a sensors/ beside the file */
    if (near_dir) nd = synconf_dir(dirs, nd, near_dir, "");
    if (env && *env) nd = synconf_dir(dirs, nd, env, "");
    nd = synconf_dir(dirs, nd, bin, "/../scenarios");
    nd = synconf_dir(dirs, nd, bin, "/../../scenarios");
    nd = synconf_dir(dirs, nd, bin, "/../share/revisit/scenarios");
    for (int d = 0; d < nd; d++) {
        if (err_cut(snprintf(out, n, "%s/%s%s%s.json", dirs[d], sub, *sub ? "/" : "", name), n)) continue;
        if (!access(out, R_OK)) return 0;
    }
    if (*sub)
        return err_set(e, "unknown sensor profile '%s', expected a file NAME.json in a sensors/ folder "
                          "(built in: spin16, spin32, spin64, spin128) or a path to a .json file", name);
    return err_set(e, "unknown scenario '%s', expected a built-in name (port, campus, suburb) "
                      "or a path to a .json file", name);
}
