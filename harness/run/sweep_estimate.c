/* sweep_estimate.c: method speeds for the dry run's time estimate, from
 * finished cells' timings or a short measurement. */
#include "harness/run/sweep.h"

#include <cjson/cJSON.h>
#include <math.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>
#include <sys/stat.h>

#include "harness/base/cloud.h"
#include "harness/base/fileio.h"
#include "harness/base/progress.h"
#include "harness/io/recording.h"
#include "harness/results/cells.h"
#include "harness/run/plugin_host.h"

#define SE_MEASURE_SCANS 3

/* Seconds from cell.json (written when the cell starts) to result.json
 * (written last) of a finished cell: the cell's whole time, file writes
 * included; NaN when either is missing. */
static double se_cell_wall(const char *out_dir, const char *id)
{
    char a[4096], b[4096];
    struct stat sa, sb;
    snprintf(a, sizeof a, "%s/cells/%s/cell.json", out_dir, id);
    snprintf(b, sizeof b, "%s/cells/%s/result.json", out_dir, id);
    if (stat(a, &sa) || stat(b, &sb)) return NAN;
    double w = (double)(sb.st_mtim.tv_sec - sa.st_mtim.tv_sec) +
               1e-9 * (double)(sb.st_mtim.tv_nsec - sa.st_mtim.tv_nsec);
    return w >= 0 ? w : NAN;
}

/* Add one finished cell's timing ("timing" of result.json) to sp: its
 * describe time and count, and the rest of its time (retrieval, metrics,
 * writing; from the file times, else the recorded retrieval and metrics). */
static void se_add_cell(const char *out_dir, const char *id, struct sweep_speed *sp)
{
    char path[4096], *text;
    size_t len;
    snprintf(path, sizeof path, "%s/cells/%s/result.json", out_dir, id);
    if (fileio_read(path, (size_t)64 << 20, &text, &len, NULL)) return;
    cJSON *r = cJSON_ParseWithLength(text, len);
    free(text);
    const cJSON *t = cJSON_GetObjectItemCaseSensitive(r, "timing");
    const cJSON *ds = cJSON_GetObjectItemCaseSensitive(t, "describe_s");
    const cJSON *n = cJSON_GetObjectItemCaseSensitive(t, "described");
    const cJSON *rs = cJSON_GetObjectItemCaseSensitive(t, "retrieval_s");
    const cJSON *ms = cJSON_GetObjectItemCaseSensitive(t, "metrics_s");
    if (cJSON_IsNumber(ds) && cJSON_IsNumber(n) && cJSON_IsNumber(rs) && cJSON_IsNumber(ms)) {
        sp->cells++;
        sp->describe_s += ds->valuedouble;
        sp->described += n->valuedouble;
        double wall = se_cell_wall(out_dir, id);
        double rest = isnan(wall) ? NAN : wall - ds->valuedouble;
        sp->other_s += isnan(rest) || rest < rs->valuedouble + ms->valuedouble
                           ? rs->valuedouble + ms->valuedouble : rest;
    }
    cJSON_Delete(r);
}

/* Describe a few evenly spaced map scans, unperturbed, on one thread. */
static int se_measure(const struct plan *p, const char *label, const struct sweep_opts *o,
                      struct sweep_speed *sp, struct err *e)
{
    struct recording rec;
    struct plugin pl;
    if (recording_load(p->map_rec, 1, &rec, e)) return -1;
    if (plugin_open(&pl, label, o->plugin_path, e)) { recording_free(&rec); return -1; }
    float *d = malloc(((size_t)pl.dim + 1) * sizeof *d), *k = malloc(((size_t)pl.key_dim + 1) * sizeof *k);
    struct cloud c;
    cloud_init(&c);
    int rc = d && k ? 0 : err_set(e, "out of memory");
    size_t n = rec.n < SE_MEASURE_SCANS ? rec.n : SE_MEASURE_SCANS;
    double t = 0;
    for (size_t s = 0; s < n && !rc; s++) {
        size_t i = n > 1 ? s * (rec.n - 1) / (n - 1) : 0;
        if (recording_load_scan(&rec, i, &c, NULL, e)) { rc = -1; break; }
        struct rv_scan sc = {c.n, c.pts, c.ring, c.time, rec.poses[i].t, (uint32_t)i, 0};
        double t0 = progress_now();
        rc = plugin_describe(&pl, &sc, d, pl.key_dim ? k : NULL, e);
        t += progress_now() - t0;
    }
    if (!rc) {
        sp->measured = (int)n;
        sp->describe_s = t;
        sp->described = (double)n;
    }
    cloud_free(&c);
    free(d);
    free(k);
    plugin_close(&pl);
    recording_free(&rec);
    return rc;
}

void sweep_speeds(const struct plan *p, const struct sweep_opts *o, struct sweep_speed *sp)
{
    for (size_t m = 0; m < p->n_methods; m++) {
        memset(&sp[m], 0, sizeof sp[m]);
        sp[m].s_per_scan = NAN;
        for (size_t k = 0; o->out_dir && k < p->n_cells; k++)
            if (p->cells[k].method == m && results_cell_done(o->out_dir, p->cells[k].id))
                se_add_cell(o->out_dir, p->cells[k].id, &sp[m]);
        if (sp[m].described <= 0) {
            sp[m].cells = 0;
            sp[m].other_s = 0;
            struct err e;
            if (se_measure(p, p->methods[m].label, o, &sp[m], &e))
                snprintf(sp[m].why, sizeof sp[m].why, "%s", e.msg);
        }
        if (sp[m].described > 0) sp[m].s_per_scan = sp[m].describe_s / sp[m].described;
        if (sp[m].cells > 0) sp[m].other_s /= sp[m].cells;
    }
}
