/* sweep.c: run a plan's cells on the pool into atomic cell folders. */
#include "harness/run/sweep.h"

#include <cjson/cJSON.h>
#include <dirent.h>
#include <errno.h>
#include <math.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>
#include <sys/stat.h>
#include <unistd.h>

#include "harness/base/blas.h"
#include "harness/results/cell_json.h"
#include "harness/results/cells.h"
#include "perturb/chain.h"
#include "harness/results/format.h"
#include "harness/results/lock.h"
#include "harness/results/result_json.h"
#include "harness/base/fileio.h"
#include "harness/base/json_file.h"
#include "harness/base/numfmt.h"
#include "harness/base/pool.h"
#include "harness/base/progress.h"
#include "harness/io/recording.h"
#include "harness/run/plugin_host.h"

#define SW_PATH 4096
#define SW_SCENARIO_MAX ((size_t)4 << 20)

void sweep_opts_defaults(struct sweep_opts *o)
{
    memset(o, 0, sizeof *o);
    o->shard_n = 1;
    o->cell_jobs = 1;
}

int sweep_prepare(const struct plan *p, const char *out_dir, struct err *e)
{
    char path[SW_PATH], hash[17];
    char *text = NULL;
    size_t len;
    if (results_cell_path(path, sizeof path, out_dir, NULL, NULL, e) || fileio_mkdirs(path, e)) return -1;
    if (results_path(path, sizeof path, out_dir, "cache", e) || fileio_mkdirs(path, e)) return -1;
    if (results_path(path, sizeof path, out_dir, RESULTS_SCENARIO, e)) return -1;
    if (!access(path, F_OK)) {
        if (fileio_read(path, SW_SCENARIO_MAX, &text, &len, e)) return -1;
        plan_hash_hex(text, len, hash);
        free(text);
        if (strcmp(hash, p->hash))
            return err_at(e, path, 0, "made by another scenario file (hash %s), expected hash %s of %s; "
                          "use a new --out folder", hash, p->hash, p->path);
        return 0;
    }
    if (fileio_read(p->path, SW_SCENARIO_MAX, &text, &len, e)) return -1;
    plan_hash_hex(text, len, hash);
    int rc = strcmp(hash, p->hash)
                 ? err_at(e, p->path, 0, "changed while the sweep started, expected hash %s", p->hash)
                 : fileio_write(path, text, len, e);
    free(text);
    return rc;
}

void sweep_cell_spec(const struct plan *p, size_t k, const struct sweep_opts *o,
                     const char *cell_dir, const char *cache_dir, struct eval_spec *s)
{
    const struct plan_cell *c = &p->cells[k];
    const struct plan_cond *d = &p->conds[c->cond];
    memset(s, 0, sizeof *s);
    s->map_rec = p->map_rec;
    s->query_rec = p->query_rec;
    s->method = p->methods[c->method].label;
    s->alias = p->methods[c->method].has_alias ? p->methods[c->method].name : NULL;
    s->plugin_path = o->plugin_path;
    s->chain = c->chain;
    s->on = d->on;
    s->seed = c->seed;
    s->protocol = p->protocol;
    s->out_dir = cell_dir;
    s->cache_dir = cache_dir;
    s->condition = d->name;
    s->scenario_hash = p->hash;
    s->bootstrap = p->bootstrap;
    s->bootstrap_seed = p->bootstrap_seed;
    s->jobs = o->cell_jobs > 0 ? o->cell_jobs : 1;
    s->quiet = 1;
    s->isolate = o->isolate;
    s->crash_notice = !o->isolate;
    s->time_limit_s = o->time_limit_s;
    s->mem_limit_mb = o->mem_limit_mb;
    s->has_axis = c->has_axis;
    s->axis_stage = c->has_axis ? d->axis_stage : NULL;
    s->axis_key = c->has_axis ? d->axis_key : NULL;
    s->axis_value = c->axis_value;
    /* The report draws each method's matrix from its reference cells, the
     * unperturbed ones (the first condition when none is): every scan
     * there, a custom distance too, the cheaper sample everywhere else. */
    int any_clean = 0;
    for (size_t j = 0; j < p->n_cells && !any_clean; j++) any_clean = !p->cells[j].chain || !*p->cells[j].chain;
    int reference = any_clean ? !c->chain || !*c->chain : c->cond == 0;
    s->matrix_scans = reference ? EVAL_MATRIX_SCANS : -1;
}

/* The condition object shared by cell.json and a failed result.json. */
static cJSON *sw_condition_json(const struct plan *p, size_t k)
{
    const struct plan_cell *c = &p->cells[k];
    const struct plan_cond *d = &p->conds[c->cond];
    cJSON *o = cJSON_CreateObject();
    cJSON_AddStringToObject(o, "name", d->name);
    if (c->chain) cJSON_AddStringToObject(o, "chain", c->chain);
    else cJSON_AddNullToObject(o, "chain");
    if (d->on) cJSON_AddStringToObject(o, "on", d->on);
    else cJSON_AddNullToObject(o, "on");
    cJSON_AddNumberToObject(o, "seed", (double)c->seed);
    cell_json_axis(o, p, k);
    return o;
}

/* DIR/cells/.part-ID/cell.json: what the cell is, written before it runs. */
static int sw_write_cell(const struct plan *p, size_t k, const char *part, struct err *e)
{
    char path[SW_PATH];
    if (results_path(path, sizeof path, part, "cell.json", e)) return -1;
    cJSON *o = cJSON_CreateObject();
    cJSON_AddStringToObject(o, "format", "revisit-cell-1");
    cJSON_AddStringToObject(o, "id", p->cells[k].id);
    cJSON_AddNumberToObject(o, "index", (double)k);
    cJSON_AddStringToObject(o, "scenario_hash", p->hash);
    cJSON_AddStringToObject(o, "method", p->methods[p->cells[k].method].label);
    cJSON_AddItemToObject(o, "condition", sw_condition_json(p, k));
    return json_file_write(path, o, e);
}

/* result.json for a cell whose method failed (status "failed", no metrics). */
static int sw_write_failed(const struct plan *p, size_t k, const char *part, const char *msg, struct err *e)
{
    char path[SW_PATH];
    if (results_path(path, sizeof path, part, RESULTS_RESULT, e)) return -1;
    const char *label = p->methods[p->cells[k].method].label;
    const char *colon = strchr(label, ':');
    cJSON *o = cJSON_CreateObject();
    char format[64];
    results_format_json_name(format, sizeof format, "result");
    cJSON_AddStringToObject(o, "format", format);
    cJSON_AddStringToObject(o, "software", "revisit " RV_VERSION);
    cJSON_AddStringToObject(o, "scenario_hash", p->hash);
    cJSON *m = cJSON_AddObjectToObject(o, "method");
    char name[512];
    snprintf(name, sizeof name, "%.*s", colon ? (int)(colon - label) : (int)strlen(label), label);
    cJSON_AddStringToObject(m, "name", name);
    cJSON_AddStringToObject(m, "label", label);
    if (p->methods[p->cells[k].method].has_alias) cJSON_AddStringToObject(m, "alias", p->methods[p->cells[k].method].name);
    cJSON_AddItemToObject(o, "condition", sw_condition_json(p, k));
    cJSON_AddStringToObject(o, "status", "failed");
    cJSON_AddStringToObject(o, "error", msg);
    return json_file_write(path, o, e);
}

/* ---- running ------------------------------------------------------------ */

enum { SW_TODO, SW_OK, SW_FAILED, SW_LEFT };

struct sw_ctx {
    const struct plan *p;
    const struct sweep_opts *o;
    const size_t *todo;   /* cell indices in run order */
    unsigned char *state; /* per todo entry */
    unsigned char *redo;  /* per cell: done, but from other inputs (removed before it runs again) */
    struct sw_inputs *in; /* what finished cells must have been made from */
    char cache[SW_PATH];
    struct progress prog;
};

/* Run one cell into its .part folder and move it into place.  Returns -1
 * only for trouble with the sweep folder itself; a failing method is a
 * failed cell, and a cell cut short by a hard stop is dropped. */
static int sw_cell(void *arg, size_t task, int worker, struct err *e)
{
    (void)worker;
    struct sw_ctx *c = arg;
    size_t k = c->todo[task];
    const char *id = c->p->cells[k].id;
    if (c->o->stop && *c->o->stop) { c->state[task] = SW_LEFT; return 0; }
    char part[SW_PATH], done[SW_PATH];
    if (results_cell_part(part, sizeof part, c->o->out_dir, id, e) ||
        results_cell_path(done, sizeof done, c->o->out_dir, id, NULL, e))
        return -1;
    /* A failed cell being retried leaves first; until the rerun ends it is not done. */
    if (fileio_remove_tree(part, e) || ((c->o->retry_failed || c->redo[k]) && fileio_remove_tree(done, e)) ||
        fileio_mkdirs(part, e) || sw_write_cell(c->p, k, part, e))
        return -1;
    struct eval_spec s;
    struct eval_summary sum;
    memset(&sum, 0, sizeof sum);
    struct err ce;
    ce.msg[0] = 0;
    sweep_cell_spec(c->p, k, c->o, part, c->cache, &s);
    char command[8192];  /* the cell as one `revisit eval`, for its result.json */
    if (eval_spec_command(&s, done, command, sizeof command) < sizeof command) s.command = command;
    int rc = c->o->run(&s, &sum, &ce);
    if (rc && pool_stop_requested()) {           /* hard stop: the cell did not finish */
        c->state[task] = SW_LEFT;
        return fileio_remove_tree(part, e);
    }
    char res[SW_PATH];
    if (err_cut(snprintf(res, sizeof res, "%s/result.json", part), sizeof res))
        return err_at(e, part, 0, "path too long for the cell's result.json");
    if (!rc && access(res, F_OK)) {              /* success is what is on disk, not what was said */
        rc = -1;
        snprintf(ce.msg, sizeof ce.msg, "method '%s' reported success but no result.json was written",
                 s.method);
    }
    if (rc && sw_write_failed(c->p, k, part, ce.msg[0] ? ce.msg : "method failed", e)) return -1;
    if (rename(part, done)) {
        int saved = errno;
        if (results_cell_done(c->o->out_dir, id)) return fileio_remove_tree(part, e);  /* another shard won */
        return err_at(e, done, 0, "cannot move the finished cell into place: %s", strerror(saved));
    }
    c->state[task] = rc ? SW_FAILED : SW_OK;
    if (!rc) progress_note(&c->prog, "scans described", sum.described);
    progress_add(&c->prog, 1);
    return 0;
}

/* Remove DIR/cells/.part-* left by a killed run of this shard (other
 * shards may be running into the same folder right now). */
static int sw_clear_parts(const struct plan *p, const struct sweep_opts *o, struct err *e)
{
    const char *out_dir = o->out_dir;
    char cells[SW_PATH];
    if (results_cell_path(cells, sizeof cells, out_dir, NULL, NULL, e)) return -1;
    DIR *d = opendir(cells);
    if (!d) return err_at(e, cells, 0, "cannot open folder: %s", strerror(errno));
    struct dirent *de;
    int rc = 0;
    while (!rc && (de = readdir(d))) {
        const char *id = results_part_id(de->d_name);
        if (!id) continue;
        long k = plan_find_cell(p, id);
        if (k >= 0 && !plan_in_shard((size_t)k, o->shard_i, o->shard_n)) continue;
        char sub[SW_PATH];
        if (err_cut(snprintf(sub, sizeof sub, "%s/%s", cells, de->d_name), sizeof sub))
            rc = err_at(e, cells, 0, "path too long below this folder ('%s')", de->d_name);
        else
            rc = fileio_remove_tree(sub, e);
    }
    closedir(d);
    return rc;
}

/* 1 when the done cell's result.json says "failed". */
static int sw_cell_failed(const char *out_dir, const char *id)
{
    char path[SW_PATH];
    if (results_cell_path(path, sizeof path, out_dir, id, RESULTS_RESULT, NULL)) return 0;
    cJSON *r = result_json_load(path, NULL);
    int failed = r && result_json_status(r, path, NULL) == 0;
    cJSON_Delete(r);
    return failed;
}

/* What finished cells must have been made from: the recordings' content
 * digests and each method file's digest, as hex (empty: unknown, not
 * compared). */
struct sw_inputs {
    char map[17], query[17];
    char (*method)[17];   /* per plan method */
};

static void sw_hex(char out[17], uint64_t v)
{
    snprintf(out, 17, "%016llx", (unsigned long long)v);
}

static int sw_rec_digest(const char *path, char out[17], struct err *e)
{
    struct recording r;
    uint64_t d;
    if (recording_load(path, 0, &r, e)) return -1;
    int rc = recording_digest(&r, &d, NULL, e);
    recording_free(&r);
    if (!rc) sw_hex(out, d);
    return rc;
}

static int sw_inputs_get(const struct plan *p, const struct sweep_opts *o, struct sw_inputs *in, struct err *e)
{
    memset(in, 0, sizeof *in);
    if (!(in->method = calloc(p->n_methods + 1, sizeof *in->method))) return err_set(e, "sweep: out of memory");
    /* what cannot be read stays unknown: the cells that need it fail when they run */
    struct err ignored;
    if (sw_rec_digest(p->map_rec, in->map, &ignored) ||
        (p->query_rec && sw_rec_digest(p->query_rec, in->query, &ignored))) {
        in->map[0] = 0;
        return 0;
    }
    for (size_t m = 0; m < p->n_methods; m++) {
        uint64_t d;
        if (!plugin_file_digest(p->methods[m].label, o->plugin_path, &d, &ignored)) sw_hex(in->method[m], d);
    }
    return 0;
}

/* 1 when the done cell's result says ok but names other inputs (or none);
 * an unreadable result is not stale (the summary reports it). */
static int sw_cell_stale(const struct plan *p, const struct sw_inputs *in, const char *out_dir, size_t k)
{
    char path[SW_PATH];
    if (!in->map[0]) return 0;  /* the recordings did not load: nothing to compare with */
    if (results_cell_path(path, sizeof path, out_dir, p->cells[k].id, RESULTS_RESULT, NULL)) return 0;
    cJSON *r = result_json_load(path, NULL);
    if (!r || result_json_status(r, path, NULL) != 1) {   /* failed cells are for --retry-failed */
        cJSON_Delete(r);
        return 0;
    }
    const cJSON *inp = cJSON_GetObjectItemCaseSensitive(r, "inputs");
    const char *want[3] = {in->map, in->query[0] ? in->query : NULL, in->method[p->cells[k].method]};
    static const char *const keys[3] = {"map", "query", "method"};
    int stale = !cJSON_IsObject(inp);
    for (int i = 0; i < 3 && !stale; i++) {
        const cJSON *v = cJSON_GetObjectItemCaseSensitive(inp, keys[i]);
        if (!want[i]) stale = v && !cJSON_IsNull(v);
        else if (want[i][0]) stale = !cJSON_IsString(v) || strcmp(v->valuestring, want[i]);
    }
    cJSON_Delete(r);
    return stale;
}

/* Order the cells to run: the first cell of each method first (so the
 * unperturbed map is described once per method before the rest share the
 * cache), then the others in plan order.  Returns the count, or -1 when out
 * of memory; *n_lead gets the number of leading cells. */
static long sw_order(const struct plan *p, const struct sweep_opts *o, const struct sw_inputs *in,
                     unsigned char *redo, size_t *todo, size_t *n_lead, struct sweep_stats *st)
{
    unsigned char *seen = calloc(p->n_methods + 1, 1), *lead = calloc(p->n_cells + 1, 1);
    long n = -1;
    if (!seen || !lead) goto out;
    n = 0;
    for (size_t k = 0; k < p->n_cells; k++) {
        if (!plan_in_shard(k, o->shard_i, o->shard_n)) continue;
        st->in_shard++;
        int done = results_cell_done(o->out_dir, p->cells[k].id);
        if (done && sw_cell_stale(p, in, o->out_dir, k)) {
            redo[k] = 1;
            st->stale++;
        } else if (done && !(o->retry_failed && sw_cell_failed(o->out_dir, p->cells[k].id))) {
            st->skipped++;
            lead[k] = 2;
            continue;
        }
        size_t m = p->cells[k].method;
        if (!seen[m]) { seen[m] = 1; lead[k] = 1; todo[n++] = k; }
    }
    *n_lead = (size_t)n;
    for (size_t k = 0; k < p->n_cells; k++)
        if (plan_in_shard(k, o->shard_i, o->shard_n) && !lead[k]) todo[n++] = k;
out:
    free(seen);
    free(lead);
    return n;
}

static int sw_run_locked(const struct plan *p, const struct sweep_opts *o, struct sweep_stats *st, struct err *e);

int sweep_run(const struct plan *p, const struct sweep_opts *o, struct sweep_stats *st, struct err *e)
{
    memset(st, 0, sizeof *st);
    st->total = p->n_cells;
    if (!o->run) return err_set(e, "sweep: no cell runner given");
    int lock = -1;
    if (sweep_prepare(p, o->out_dir, e) || results_lock(o->out_dir, o->shard_i, o->shard_n, &lock, e)) return -1;
    int rc = sw_run_locked(p, o, st, e);
    results_unlock(lock);
    return rc;
}

/* sweep_run with the shard's lock held. */
static int sw_run_locked(const struct plan *p, const struct sweep_opts *o, struct sweep_stats *st, struct err *e)
{
    if (sw_clear_parts(p, o, e)) return -1;
    struct sw_inputs in;
    if (sw_inputs_get(p, o, &in, e)) {
        free(in.method);
        return -1;
    }
    struct sw_ctx c = {.p = p, .o = o, .in = &in};
    snprintf(c.cache, sizeof c.cache, "%s/cache", o->out_dir);
    size_t *todo = malloc((p->n_cells + 1) * sizeof *todo);
    c.state = calloc(p->n_cells + 1, 1);
    c.redo = calloc(p->n_cells + 1, 1);
    size_t n_lead = 0;
    long n = todo && c.state && c.redo ? sw_order(p, o, &in, c.redo, todo, &n_lead, st) : -1;
    if (n < 0) {
        free(todo);
        free(c.state);
        free(c.redo);
        free(in.method);
        return err_set(e, "sweep: out of memory for %zu cells", p->n_cells);
    }
    c.todo = todo;
    /* Cells in parallel replace OpenBLAS's own threads: its thread pool
     * does not survive a fork (isolated or external methods) made while
     * another cell is inside a threaded sgemm, and the parent then spins
     * for ever in the next call. */
    if (pool_threads(o->jobs) > 1) blas_set_threads(1);
    progress_start(&c.prog, "sweep", (size_t)n, o->quiet);
    int rc = pool_run(n_lead, o->jobs, sw_cell, &c, e);
    c.todo = todo + n_lead;
    c.state += n_lead;
    if (!rc) rc = pool_run((size_t)n - n_lead, o->jobs, sw_cell, &c, e);
    c.state -= n_lead;
    progress_end(&c.prog);
    if (rc && pool_stop_requested()) rc = 0;   /* cells not started are counted below */
    for (long t = 0; t < n; t++) {
        if (c.state[t] == SW_OK || c.state[t] == SW_FAILED) st->ran++;
        if (c.state[t] == SW_FAILED) st->failed++;
        if (c.state[t] == SW_LEFT || c.state[t] == SW_TODO) st->left++;
    }
    st->interrupted = st->left > 0 && ((o->stop && *o->stop) || pool_stop_requested());
    free(todo);
    free(c.state);
    free(c.redo);
    free(in.method);
    return rc;
}

/* ---- the plan as text --------------------------------------------------- */

/* Scan descriptions a cell needs, split into perturbed ones and unperturbed
 * sets that the cache shares per method (bit 1: map, bit 2: query). */
static size_t sw_cell_work(const struct plan *p, size_t k, size_t n_map, size_t n_query, unsigned *shared)
{
    const struct plan_cell *c = &p->cells[k];
    int reloc = p->query_rec != NULL;
    enum chain_on on = reloc ? CHAIN_ON_QUERY : CHAIN_ON_BOTH;
    if (p->conds[c->cond].on) chain_on_parse(p->conds[c->cond].on, &on, NULL);  /* checked by the loader */
    size_t q = reloc ? n_query : n_map;
    *shared = 0;
    if (!c->chain) { *shared = reloc ? 3 : 1; return 0; }
    if (on == CHAIN_ON_BOTH) return n_map + (reloc ? n_query : 0);
    if (on == CHAIN_ON_QUERY) { *shared = 1; return q; }
    *shared = reloc ? 2 : 1;  /* map only: the queries stay unperturbed */
    return n_map;
}

/* The estimated time of the cells to run, one line per method's speed. */
static void sw_print_time(FILE *f, const struct plan *p, const struct sweep_opts *o,
                          const struct sweep_speed *sp, const double *scans, const size_t *cells)
{
    double total = 0;
    size_t n_cells = 0;
    int known = 1;
    for (size_t m = 0; m < p->n_methods; m++) {
        const struct sweep_speed *s = &sp[m];
        if (!cells[m]) continue;
        n_cells += cells[m];
        if (isnan(s->s_per_scan)) {
            fprintf(f, "speed of %s: unknown (%s)\n", p->methods[m].name, s->why);
            known = 0;
            continue;
        }
        if (s->cells)
            fprintf(f, "speed of %s: %.1f ms per scan, %.2f s per cell besides describing "
                    "(from %d finished cells)\n", p->methods[m].name, 1e3 * s->s_per_scan, s->other_s, s->cells);
        else
            fprintf(f, "speed of %s: %.1f ms per scan (measured on %d scans; retrieval, metrics and "
                    "writing not included)\n", p->methods[m].name, 1e3 * s->s_per_scan, s->measured);
        total += scans[m] * s->s_per_scan + (double)cells[m] * s->other_s;
    }
    if (!n_cells) return;
    int par = pool_threads(o->jobs);
    if ((size_t)par > n_cells) par = (int)n_cells;
    double wall = total / par;
    fprintf(f, "estimated time: %s%02d:%02d:%02d with %d cell%s at once (%.0f s of work)\n", known ? "" : "at least ",
            (int)(wall / 3600), (int)fmod(wall / 60, 60), (int)fmod(wall, 60), par, par == 1 ? "" : "s", total);
}

void sweep_print_plan(FILE *f, const struct plan *p, const struct sweep_opts *o,
                      size_t n_map, size_t n_query, const struct sweep_speed *sp)
{
    size_t mine = 0, done = 0, perturbed = 0, shared = 0;
    unsigned *seen = calloc(p->n_methods + 1, sizeof *seen);
    double *scans = calloc(p->n_methods + 1, sizeof *scans);
    size_t *cells = calloc(p->n_methods + 1, sizeof *cells);
    fprintf(f, "scenario %s (hash %s)%s%s\n", p->path, p->hash, p->name ? ": " : "", p->name ? p->name : "");
    fprintf(f, "%-52s %s\n", "cell to run", "chain (on)");
    for (size_t k = 0; k < p->n_cells; k++) {
        if (!plan_in_shard(k, o->shard_i, o->shard_n)) continue;
        const struct plan_cell *c = &p->cells[k];
        int is_done = o->out_dir && results_cell_done(o->out_dir, c->id);
        unsigned sh;
        mine++;
        done += is_done;
        if (is_done) {   /* its unperturbed sets are in the cache now */
            sw_cell_work(p, k, n_map, n_query, &sh);
            if (seen) seen[c->method] |= sh;
            continue;
        }
        fprintf(f, "%-52s %s (%s)\n", c->id, c->chain ? c->chain : "-",
                p->conds[c->cond].on ? p->conds[c->cond].on : "default");
        size_t w = sw_cell_work(p, k, n_map, n_query, &sh), own = 0;
        perturbed += w;
        if (seen && (sh & 1) && !(seen[c->method] & 1)) own += n_map;
        if (seen && (sh & 2) && !(seen[c->method] & 2)) own += n_query;
        shared += own;
        if (seen) seen[c->method] |= sh;
        if (scans) scans[c->method] += (double)(w + own);
        if (cells) cells[c->method]++;
    }
    if (done) fprintf(f, "(%zu finished cell%s left out)\n", done, done == 1 ? "" : "s");
    fprintf(f, "\n%zu of %zu %s in shard %d/%d, %zu done, %zu to run", mine, p->n_cells,
            numfmt_noun(p->n_cells, "cell", "cells"), o->shard_i, o->shard_n, done, mine - done);
    fprintf(f, " (%zu %s x %zu %s)\n", p->n_methods, numfmt_noun(p->n_methods, "method", "methods"), p->n_conds,
            numfmt_noun(p->n_conds, "condition", "conditions"));
    if (n_map)
        fprintf(f, "estimated work: %zu scan %s (%zu perturbed, %zu unperturbed shared per method)\n",
                perturbed + shared, numfmt_noun(perturbed + shared, "description", "descriptions"), perturbed, shared);
    else
        fprintf(f, "estimated work: scan counts unknown (recording not readable)\n");
    if (sp && n_map && scans && cells) sw_print_time(f, p, o, sp, scans, cells);
    free(seen);
    free(scans);
    free(cells);
}
