/* eval.c: one evaluation cell: recording -> chain -> descriptors ->
 * retrieval -> ground truth -> metrics -> results folder. */
#include "harness/run/eval.h"

#include <cjson/cJSON.h>
#include <limits.h>
#include <math.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>

#include "harness/run/desc_cache.h"
#include "harness/base/blas.h"
#include "harness/base/fileio.h"
#include "harness/run/isolate.h"
#include "harness/base/json_file.h"
#include "harness/results/cells.h"
#include "harness/results/format.h"
#include "harness/results/matrix_csv.h"
#include "harness/results/poses_csv.h"
#include "harness/results/queries_csv.h"
#include "harness/run/plugin_host.h"
#include "harness/base/pool.h"
#include "harness/base/progress.h"
#include "harness/results/cell_set.h"
#include "harness/results/oppoint_json.h"
#include "harness/io/recording.h"
#include "harness/results/result_metrics.h"
#include "harness/run/retrieval.h"
#include "metrics/boot.h"
#include "metrics/gt.h"
#include "metrics/pr.h"
#include "perturb/chain.h"

/* One set of scans and its descriptors (row-major, n x dim; keys n x key_dim). */
struct ev_set {
    const struct recording *rec;
    const struct chain *chain;   /* NULL: unperturbed */
    uint32_t seq;                /* 0 map, 1 query */
    size_t n;
    float *desc, *key;
    double *xyz, *t;             /* sensor positions and times, for ground truth */
};

struct ev_ctx {
    const struct eval_spec *s;
    struct eval_summary sum;
    struct plugin plug;
    struct recording map, query;
    int reloc, shared;           /* shared: the query set is the map set */
    struct chain *chain;
    char chain_text[2048];
    enum chain_on on;
    struct ev_set mset, qset;
    struct retrieval_out r;
    struct gt *g;
    struct pr_set *ps;
    struct boot_result br;
    int has_op;                  /* op holds the operating point carried from s->tuned_on */
    struct oppoint_result op;
    struct kind_scores kinds;
    struct pr_curve *curve;
    struct ev_set *iso_set;      /* the set an isolated child describes */
    uint64_t map_digest, query_digest;  /* recording_digest of each */
    size_t *mat_ri, *mat_ci, mat_nr, mat_nc;   /* the distance matrix: scan of each row, column */
    double *mat;                 /* mat_nr x mat_nc distances */
    struct progress mat_prog;
};

void eval_spec_defaults(struct eval_spec *s)
{
    memset(s, 0, sizeof *s);
    protocol_defaults(&s->protocol);
    s->seed = 1;
    s->bootstrap = 1000;
    s->bootstrap_seed = 1;
    s->jobs = 0;
}

static void ev_set_free(struct ev_set *s)
{
    free(s->desc);
    free(s->key);
    free(s->xyz);
    free(s->t);
    s->desc = s->key = NULL;
    s->xyz = s->t = NULL;
}

static void ev_free(struct ev_ctx *c)
{
    ev_set_free(&c->mset);
    if (!c->shared) ev_set_free(&c->qset);
    retrieval_out_free(&c->r);
    free(c->mat);
    free(c->mat_ri);
    free(c->mat_ci);
    pr_curve_free(c->curve);
    pr_set_free(c->ps);
    gt_free(c->g);
    chain_free(c->chain);
    plugin_close(&c->plug);
    recording_free(&c->map);
    if (c->reloc) recording_free(&c->query);
}

/* Per-worker state of the describe pool. */
struct ev_desc {
    struct ev_ctx *c;
    struct ev_set *set;
    struct cloud *clouds;
    struct chain_scratch *scr;
    struct progress prog;
    struct isolate_ctx *ic;      /* isolated: report each scan started to the parent */
};

static int ev_desc_task(void *arg, size_t i, int w, struct err *e)
{
    struct ev_desc *d = arg;
    struct ev_ctx *c = d->c;
    struct ev_set *set = d->set;
    struct cloud *cl = &d->clouds[w];
    if (d->ic) isolate_beat(d->ic, i);
    if (recording_load_scan(set->rec, i, cl, NULL, e)) return -1;
    /* In reloc mode the map (set 0) and the query recording (set 1) are
     * different scans: key their per-scan draws apart.  In loop mode both
     * roles are the same scan and share set 0. */
    uint32_t draw_set = c->reloc ? set->seq : 0;
    if (set->chain && chain_apply_set(set->chain, cl, c->s->seed, draw_set, (uint32_t)i, &d->scr[w], NULL, e))
        return err_wrap(e, "scan %zu", i);
    struct rv_scan s = {cl->n, cl->pts, cl->ring, cl->time, set->rec->poses[i].t, (uint32_t)i, set->seq};
    float *key = c->plug.key_dim ? set->key + i * c->plug.key_dim : NULL;
    if (plugin_describe(&c->plug, &s, set->desc + i * c->plug.dim, key, e)) return -1;
    progress_add(&d->prog, 1);
    return 0;
}

/* Describe every scan of set, on several threads when the method allows
 * (one thread when isolated, so a crash names the exact scan). */
static int ev_describe_all(struct ev_ctx *c, struct ev_set *set, struct isolate_ctx *ic, struct err *e)
{
    int par = (c->plug.flags & RV_FLAG_THREAD_SAFE) && !(c->plug.flags & RV_FLAG_SEQUENTIAL) && !c->plug.ext;
    int threads = par && !ic ? pool_threads(c->s->jobs) : 1;
    struct ev_desc d = {c, set, calloc((size_t)threads, sizeof *d.clouds),
                        calloc((size_t)threads, sizeof *d.scr), {0}, ic};
    if (!d.clouds || !d.scr) {
        free(d.clouds);
        free(d.scr);
        return err_set(e, "out of memory");
    }
    for (int k = 0; k < threads; k++) {
        cloud_init(&d.clouds[k]);
        chain_scratch_init(&d.scr[k]);
    }
    plugin_reset(&c->plug);
    progress_start(&d.prog, set->seq ? "describe queries" : "describe map", set->n, c->s->quiet);
    int rc = pool_run(set->n, threads, ev_desc_task, &d, e);
    progress_end(&d.prog);
    for (int k = 0; k < threads; k++) {
        cloud_free(&d.clouds[k]);
        chain_scratch_free(&d.scr[k]);
    }
    free(d.clouds);
    free(d.scr);
    if (rc && pool_stop_requested()) return err_set(e, "interrupted while describing");
    return rc;
}

/* The child's side of an isolated describe: write descriptors and keys
 * into the shared buffer (desc then keys), which the parent copies back. */
static int ev_isolated_child(void *ctx, void *shared, struct isolate_ctx *ic, struct err *e)
{
    struct ev_ctx *c = ctx;
    struct ev_set *set = c->iso_set;
    set->desc = shared;
    set->key = (float *)shared + set->n * c->plug.dim;
    return ev_describe_all(c, set, ic, e);
}

/* Describe in a child process with a time-out and an address-space limit;
 * a crash, hang or runaway allocation fails the cell, never the harness. */
static int ev_describe_isolated(struct ev_ctx *c, struct ev_set *set, struct err *e)
{
    size_t nd = set->n * c->plug.dim, nk = set->n * c->plug.key_dim;
    size_t bytes = (nd + nk) * sizeof(float);
    float *shared = isolate_shared_new(bytes, e);
    if (!shared) return -1;
    char who[128];
    snprintf(who, sizeof who, "method '%s'", c->plug.name);
    struct isolate_opts o = {who, "scan", c->plug.time_limit_s > 0 ? c->plug.time_limit_s : PLUGIN_TIME_LIMIT_S,
                             (c->s->mem_limit_mb ? c->s->mem_limit_mb : EVAL_MEM_LIMIT_MB) << 20};
    float *desc = set->desc, *key = set->key;
    c->iso_set = set;
    int rc = isolate_run(&o, ev_isolated_child, c, shared, e);
    set->desc = desc;
    set->key = key;
    if (!rc) {
        memcpy(desc, shared, nd * sizeof(float));
        if (nk) memcpy(key, shared + nd, nk * sizeof(float));
    }
    isolate_shared_free(shared, bytes);
    return rc;
}

/* Fill set->desc/key from the cache or by describing (then store). */
static int ev_describe_set(struct ev_ctx *c, struct ev_set *set, struct err *e)
{
    size_t nd = set->n * c->plug.dim, nk = set->n * c->plug.key_dim;
    set->desc = malloc((nd ? nd : 1) * sizeof *set->desc);
    set->key = malloc((nk ? nk : 1) * sizeof *set->key);
    if (!set->desc || !set->key) return err_set(e, "out of memory for %zu descriptors of %u floats", set->n, c->plug.dim);
    char src[PATH_MAX];
    if (!realpath(set->rec->manifest, src)) snprintf(src, sizeof src, "%s", set->rec->manifest);
    /* The draw set is part of what was described (see ev_desc_task). */
    char chain_key[sizeof c->chain_text + 16];
    snprintf(chain_key, sizeof chain_key, "%s%s", c->chain_text, c->reloc && set->seq ? "#set=1" : "");
    uint64_t content[2] = {set->rec == &c->map ? c->map_digest : c->query_digest, c->plug.digest};
    struct desc_cache_key k = {c->plug.label, c->plug.version, set->chain ? chain_key : "",
                               set->chain ? c->s->seed : 0, src,
                               fileio_hash_bytes(FILEIO_HASH_SEED, content, sizeof content),
                               c->plug.dim, c->plug.key_dim, set->n};
    if (c->s->cache_dir) {
        int rejected = 0;
        int hit = desc_cache_load(c->s->cache_dir, &k, set->desc, set->key, &rejected, e);
        if (hit < 0) return -1;
        c->sum.cache_rejected += rejected == 1;
        c->sum.cache_stale += rejected == 2;
        if (hit) {
            c->sum.cache_hits++;
            return 0;
        }
    }
    double t0 = progress_now();
    int isolated = c->s->isolate && !c->plug.ext;  /* external programs are separate processes already */
    /* Describe is per scan: a method's small LAPACK calls gain nothing from
     * OpenBLAS threads, whose idle workers then spin beside the describe
     * pool.  One BLAS thread here; the count is restored for retrieval (a
     * sweep running cells in parallel has set 1 already: nothing changes). */
    int blas_n = blas_threads();
    if (blas_n > 1) blas_set_threads(1);
    int rc = isolated ? ev_describe_isolated(c, set, e) : ev_describe_all(c, set, NULL, e);
    if (blas_n > 1) blas_set_threads(blas_n);
    if (rc) return -1;
    c->sum.describe_s += progress_now() - t0;
    c->sum.described += set->n;
    return c->s->cache_dir ? desc_cache_store(c->s->cache_dir, &k, set->desc, set->key, e) : 0;
}

/* Positions and times of a set's scans. */
static int ev_set_poses(struct ev_set *set, struct err *e)
{
    set->xyz = malloc((set->n ? set->n : 1) * 3 * sizeof *set->xyz);
    set->t = malloc((set->n ? set->n : 1) * sizeof *set->t);
    if (!set->xyz || !set->t) return err_set(e, "out of memory");
    for (size_t i = 0; i < set->n; i++) {
        memcpy(set->xyz + 3 * i, set->rec->poses[i].p, 3 * sizeof *set->xyz);
        set->t[i] = set->rec->poses[i].t;
    }
    return 0;
}

/* Recordings, chain, method; decide which sets need describing. */
static int ev_setup(struct ev_ctx *c, struct err *e)
{
    const struct eval_spec *s = c->s;
    if (!s->map_rec || !s->method || !s->out_dir) return err_set(e, "eval: a map recording, a method and an output folder are needed");
    c->reloc = s->query_rec != NULL;
    if (c->reloc != (s->protocol.mode == PROTOCOL_RELOC))
        return err_set(e, "eval: mode %s %s a query recording", protocol_mode_name(s->protocol.mode),
                       c->reloc ? "does not take" : "needs");
    if (recording_load(s->map_rec, 0, &c->map, e)) return -1;
    if (c->reloc && recording_load(s->query_rec, 0, &c->query, e)) {
        c->reloc = 0;
        return -1;
    }
    size_t hm = 0, hq = 0;
    if (recording_digest(&c->map, &c->map_digest, &hm, e) ||
        (c->reloc && recording_digest(&c->query, &c->query_digest, &hq, e)))
        return -1;
    c->sum.scans_hashed = hm + hq;
    c->on = c->reloc ? CHAIN_ON_QUERY : CHAIN_ON_BOTH;
    if (s->on && chain_on_parse(s->on, &c->on, e)) return -1;
    if (s->chain && *s->chain) {
        if (chain_parse(s->chain, &c->chain, e)) return -1;
        size_t n = chain_format(c->chain, c->chain_text, sizeof c->chain_text);
        if (n >= sizeof c->chain_text)
            return err_set(e, "eval: the chain's normalised text is %zu bytes, expected at most %zu", n,
                           sizeof c->chain_text - 1);
    }
    struct plugin_limits lim = {s->time_limit_s, (s->mem_limit_mb ? s->mem_limit_mb : EVAL_MEM_LIMIT_MB) << 20};
    if (plugin_open_limits(&c->plug, s->method, s->plugin_path, &lim, e)) return -1;
    if (s->crash_notice) plugin_crash_notice();
    /* A chain that changes no cloud (sector:width=0, the first point of a
     * swept axis) leaves the unperturbed sets: they share the unperturbed
     * descriptors (cache key and all) instead of describing copies. */
    const struct chain *act = c->chain && !chain_is_identity(c->chain) ? c->chain : NULL;
    const struct chain *mch = act && chain_on_map(c->on) ? act : NULL;
    const struct chain *qch = act && chain_on_query(c->on) ? act : NULL;
    c->mset = (struct ev_set){&c->map, mch, 0, c->map.n, NULL, NULL, NULL, NULL};
    c->qset = (struct ev_set){c->reloc ? &c->query : &c->map, qch, 1, c->reloc ? c->query.n : c->map.n,
                              NULL, NULL, NULL, NULL};
    c->shared = !c->reloc && mch == qch;
    if (c->shared) c->qset = c->mset;
    if (ev_set_poses(&c->mset, e) || (!c->shared && ev_set_poses(&c->qset, e))) return -1;
    if (c->shared) c->qset = c->mset;
    return 0;
}

static int ev_custom(const void *ctx, const float *a, const float *const *b, size_t n, double *out, struct err *e)
{
    return plugin_distances(ctx, a, b, n, out, e);
}

static int ev_retrieve(struct ev_ctx *c, struct err *e)
{
    const struct protocol *p = &c->s->protocol;
    struct progress prog;
    struct retrieval_rule rule = {!c->reloc, c->mset.t, p->exclusion_s, p->exclusion_scans, &prog};
    progress_start(&prog, "retrieval", c->qset.n, c->s->quiet);
    struct retrieval_mat m = {c->mset.desc, c->mset.n, c->plug.dim}, q = {c->qset.desc, c->qset.n, c->plug.dim};
    double t0 = progress_now();
    int rc;
    if (c->plug.distance == RV_DIST_CUSTOM) {
        struct retrieval_mat mk = {c->mset.key, c->mset.n, c->plug.key_dim},
                             qk = {c->qset.key, c->qset.n, c->plug.key_dim};
        int top_c = c->s->top_c > 0 ? c->s->top_c : 50;
        rc = retrieval_custom(&m, &q, c->plug.key_dim ? &mk : NULL, c->plug.key_dim ? &qk : NULL, ev_custom,
                              &c->plug, c->plug.name, &rule, p->top_k, top_c, c->s->jobs, &c->r, e);
    } else {
        rc = retrieval_dense(&m, &q, c->plug.distance, &rule, p->top_k, c->s->jobs, &c->r, e);
    }
    progress_end(&prog);
    c->sum.retrieval_s = progress_now() - t0;
    return rc;
}

/* Retrieval lists in the pr.h layout (caller frees *off and *cand). */
static int ev_lists(const struct ev_ctx *c, size_t **off, struct pr_cand **cand, struct err *e)
{
    size_t n = c->r.n_query, total = 0;
    for (size_t i = 0; i < n; i++) total += (size_t)c->r.count[i];
    *off = malloc((n + 1) * sizeof **off);
    *cand = malloc((total ? total : 1) * sizeof **cand);
    if (!*off || !*cand) {
        free(*off);
        free(*cand);
        return err_set(e, "out of memory");
    }
    size_t at = 0;
    for (size_t i = 0; i < n; i++) {
        (*off)[i] = at;
        for (int k = 0; k < c->r.count[i]; k++)
            (*cand)[at++] = (struct pr_cand){c->r.idx[i * c->r.k + k], c->r.dist[i * c->r.k + k]};
    }
    (*off)[n] = at;
    return 0;
}

static void ev_tick(void *ctx, size_t done)
{
    progress_add(ctx, done);
}

/* Heading of a pose: the direction of its x axis in the world's x-y plane. */
static double ev_heading(const struct pose *p)
{
    return atan2(p->R[3], p->R[0]);
}

/* The kind of every revisit query (heading difference to the pose it
 * revisits), and recall and R@100P per kind. */
static int ev_kinds(struct ev_ctx *c, struct err *e)
{
    struct kind_rule r = c->s->kinds;
    if (r.same_deg == 0 && r.reverse_deg == 0) kind_rule_defaults(&r);
    size_t n = c->g->n_query;
    unsigned char *kind = malloc(n ? n : 1);
    if (!kind) return err_set(e, "out of memory");
    for (size_t i = 0; i < n; i++) {
        const struct gt_query *q = &c->g->q[i];
        kind[i] = KIND_NONE;
        if (q->revisit && q->nearest >= 0)
            kind[i] = (unsigned char)kind_of(ev_heading(&c->qset.rec->poses[i]),
                                             ev_heading(&c->mset.rec->poses[q->nearest]), &r);
    }
    kind_scores(c->ps, kind, n, &r, &c->kinds);
    free(kind);
    return 0;
}

/* The threshold chosen on the results folder s->tuned_on, carried here. */
static int ev_oppoint(struct ev_ctx *c, struct err *e)
{
    struct pr_set *ref = NULL;
    struct oppoint_drive dr, da = cell_set_drive(c->qset.xyz, c->qset.t, c->qset.n);
    if (cell_set_load(c->s->tuned_on, &c->s->protocol, &ref, &dr, e))
        return err_wrap(e, "--tuned-on %s", c->s->tuned_on);
    int rc = oppoint_carry(ref, c->ps, &c->s->op, &dr, &da, c->s->bootstrap, c->s->bootstrap_seed, 0.95,
                           &c->op, e);
    pr_set_free(ref);
    if (!rc) {   /* the carried scores are rows of the metric table too */
        result_metrics_oppoint(&c->op, &c->br.point, c->br.lo, c->br.hi);
        c->ps->op_tau = c->op.tau;
        c->ps->km = da.km;
        c->ps->hours = da.hours;
    }
    c->has_op = !rc;
    c->sum.has_op = !rc;
    c->sum.op_tau = c->op.tau;
    c->sum.op_precision = c->op.at.v[OPP_PRECISION];
    c->sum.op_recall = c->op.at.v[OPP_RECALL];
    c->sum.op_fp = c->op.at.v[OPP_FP];
    return rc;
}

static int ev_metrics(struct ev_ctx *c, const struct pr_lists *l, struct err *e)
{
    double t0 = progress_now();
    struct gt_poses mp = {c->mset.xyz, c->mset.t, c->mset.n}, qp = {c->qset.xyz, c->qset.t, c->qset.n};
    if (gt_build(&c->s->protocol, &mp, c->reloc ? &qp : NULL, NULL, 0, &c->g, e)) return -1;
    if (pr_set_build(c->g, l, &c->ps, e) || pr_curve_build(c->ps, &c->curve, e)) return -1;
    if (c->s->bootstrap > 0) {
        struct progress prog;
        progress_start(&prog, "bootstrap", (size_t)c->s->bootstrap, c->s->quiet);
        struct boot_tick tk = {ev_tick, &prog};
        int rc = boot_percentile_ticked(c->ps, c->s->bootstrap, c->s->bootstrap_seed, 0.95,
                                        pool_threads(c->s->jobs), &tk, &c->br, e);
        progress_end(&prog);
        if (rc) return -1;
    } else {
        pr_scalars_compute(c->ps, NULL, &c->br.point);
        for (int m = 0; m < PR_N_METRICS; m++) c->br.lo[m] = c->br.hi[m] = NAN;
    }
    const double *v = c->br.point.v;
    c->sum.f1max = v[PR_F1MAX];
    c->sum.r100p = v[PR_R100P];
    c->sum.ep = v[PR_EP];
    c->sum.ap = v[PR_AP];
    c->sum.recall1 = v[PR_RECALL_1];
    c->sum.p_r0 = v[PR_P_R0];
    c->sum.recall1pct = v[PR_RECALL_1PCT];
    c->sum.queries = c->ps->n;
    c->sum.revisits = c->g->n_revisits;
    if (c->s->tuned_on && ev_oppoint(c, e)) return -1;
    if (ev_kinds(c, e)) return -1;
    c->sum.metrics_s = progress_now() - t0;
    return 0;
}

static int ev_write_poses(const struct ev_ctx *c, const char *path, struct err *e)
{
    struct poses_csv_set map = {c->mset.n, c->mset.t, c->mset.xyz}, query = {c->qset.n, c->qset.t, c->qset.xyz};
    return poses_csv_write(path, &map, &query, e);
}

/* Up to `most` evenly spaced indices of 0..n-1 into idx; returns how many. */
static size_t ev_spread(size_t n, size_t most, size_t *idx)
{
    size_t m = n < most ? n : most;
    for (size_t k = 0; k < m; k++) idx[k] = m > 1 ? k * (n - 1) / (m - 1) : 0;
    return m;
}

static double ev_pair(const struct ev_ctx *c, size_t i, size_t j)
{
    const float *a = c->qset.desc + i * c->plug.dim, *b = c->mset.desc + j * c->plug.dim;
    return c->plug.distance == RV_DIST_CUSTOM ? plugin_distance(&c->plug, a, b, NULL)
                                              : retrieval_pair(a, b, c->plug.dim, c->plug.distance);
}

/* One row of the distance matrix (a pool task); a custom distance for the
 * whole row at once. */
static int ev_matrix_row(void *arg, size_t r, int w, struct err *e)
{
    (void)w;
    struct ev_ctx *c = arg;
    /* Loop mode: a query's candidates are earlier scans, so the row stops at
     * the diagonal (the columns are in scan order: a prefix). */
    size_t nk = c->mat_nc;
    double *row = c->mat + r * c->mat_nc;
    if (!c->reloc)
        for (nk = 0; nk < c->mat_nc && c->mat_ci[nk] <= c->mat_ri[r];) nk++;
    if (c->plug.distance != RV_DIST_CUSTOM) {
        for (size_t k = 0; k < nk; k++) row[k] = ev_pair(c, c->mat_ri[r], c->mat_ci[k]);
    } else if (nk) {
        const float **b = malloc(nk * sizeof *b);
        if (!b) return err_set(e, "out of memory for a row of the distance matrix");
        for (size_t k = 0; k < nk; k++) b[k] = c->mset.desc + c->mat_ci[k] * c->plug.dim;
        int rc = plugin_distances(&c->plug, c->qset.desc + c->mat_ri[r] * c->plug.dim, b, nk, row, e);
        free(b);
        if (rc) return -1;
        for (size_t k = 0; k < nk; k++)
            if (retrieval_distance_ok(c->plug.name, row[k], c->mat_ri[r], c->mat_ci[k], e)) return -1;
    }
    for (size_t k = nk; k < c->mat_nc; k++) row[k] = NAN;
    progress_add(&c->mat_prog, 1);
    return 0;
}

/* The distance matrix, timed as matrix_s.  Every query against every map
 * scan when both sets have at most matrix_scans scans (unless the spec
 * says: EVAL_MATRIX_SCANS for a dense distance, none for a custom one,
 * whose pairs cost microseconds each: 1,594 scans of Scan Context take
 * about 12 s; a negative value: never); otherwise an evenly spaced sample
 * of MATRIX_CSV_MAX rows and columns (60 for a custom distance).  In loop mode only the pairs on and below the
 * diagonal (the map scan no later than the query) are computed, the rest
 * are NaN: no later scan is ever a candidate.  Rows run on the pool (the
 * distance is called from several threads in retrieval already). */
static int ev_matrix(struct ev_ctx *c, struct err *e)
{
    double t0 = progress_now();
    int custom = c->plug.distance == RV_DIST_CUSTOM;
    long most = c->s->matrix_scans ? c->s->matrix_scans : custom ? -1 : EVAL_MATRIX_SCANS;
    int full = most > 0 && c->qset.n <= (size_t)most && c->mset.n <= (size_t)most;
    size_t sample = custom ? 60 : MATRIX_CSV_MAX;
    c->mat_ri = malloc((c->qset.n + 1) * sizeof *c->mat_ri);
    c->mat_ci = malloc((c->mset.n + 1) * sizeof *c->mat_ci);
    if (!c->mat_ri || !c->mat_ci) return err_set(e, "out of memory for the distance matrix's indices");
    c->mat_nr = ev_spread(c->qset.n, full ? c->qset.n : sample, c->mat_ri);
    c->mat_nc = ev_spread(c->mset.n, full ? c->mset.n : sample, c->mat_ci);
    c->mat = malloc((c->mat_nr * c->mat_nc + 1) * sizeof *c->mat);
    if (!c->mat) return err_set(e, "out of memory for a %zu x %zu distance matrix", c->mat_nr, c->mat_nc);
    progress_start(&c->mat_prog, "distance matrix", c->mat_nr, c->s->quiet);
    int rc = pool_run(c->mat_nr, c->s->jobs, ev_matrix_row, c, e);
    progress_end(&c->mat_prog);
    c->sum.matrix_s = progress_now() - t0;
    return rc;
}

/* matrix.csv: the matrix when it fits MATRIX_CSV_MAX, else an evenly spaced
 * sample of its rows and columns, with matrix.bin holding all of it. */
static int ev_write_matrix(const struct ev_ctx *c, const char *dir, struct err *e)
{
    char path[4200];
    if (results_path(path, sizeof path, dir, RESULTS_MATRIX, e)) return -1;
    if (c->mat_nr <= MATRIX_CSV_MAX && c->mat_nc <= MATRIX_CSV_MAX)
        return matrix_csv_write(path, c->mat_ri, c->mat_nr, c->mat_ci, c->mat_nc, c->mat, e);
    size_t pr[MATRIX_CSV_MAX], pc[MATRIX_CSV_MAX], ri[MATRIX_CSV_MAX], ci[MATRIX_CSV_MAX];
    size_t nr = ev_spread(c->mat_nr, MATRIX_CSV_MAX, pr), nc = ev_spread(c->mat_nc, MATRIX_CSV_MAX, pc);
    double *d = malloc(nr * nc * sizeof *d);
    if (!d) return err_set(e, "out of memory for the sample of the distance matrix");
    for (size_t r = 0; r < nr; r++) {
        ri[r] = c->mat_ri[pr[r]];
        for (size_t k = 0; k < nc; k++) d[r * nc + k] = c->mat[pr[r] * c->mat_nc + pc[k]];
    }
    for (size_t k = 0; k < nc; k++) ci[k] = c->mat_ci[pc[k]];
    int rc = matrix_csv_write(path, ri, nr, ci, nc, d, e);
    free(d);
    if (rc || results_path(path, sizeof path, dir, RESULTS_MATRIX_BIN, e)) return -1;
    return matrix_csv_bin_write(path, c->mat_ri, c->mat_nr, c->mat_ci, c->mat_nc, c->mat, e);
}

static void ev_str(cJSON *o, const char *key, const char *v)
{
    if (v) cJSON_AddStringToObject(o, key, v);
    else cJSON_AddNullToObject(o, key);
}

static cJSON *ev_method_json(const struct plugin *p)
{
    cJSON *m = cJSON_CreateObject();
    cJSON_AddStringToObject(m, "name", p->name);
    cJSON_AddStringToObject(m, "label", p->label);
    cJSON_AddStringToObject(m, "version", p->version);
    cJSON *set = cJSON_AddObjectToObject(m, "settings");
    for (uint32_t k = 0; p->m && k < p->m->n_settings; k++) {
        const struct rv_setting *st = &p->m->settings[k];
        char txt[128];
        plugin_setting_text(st, p->values[k], txt, sizeof txt);
        if (st->type == RV_SET_BOOL) cJSON_AddBoolToObject(set, st->key, p->values[k] != 0);
        else if (st->type == RV_SET_CHOICE) cJSON_AddStringToObject(set, st->key, txt);
        else cJSON_AddNumberToObject(set, st->key, p->values[k]);
    }
    static const char *const kinds[] = {"l2", "cosine", "custom"};
    cJSON_AddStringToObject(m, "distance", kinds[p->distance]);
    cJSON_AddNumberToObject(m, "descriptor_bytes", (double)(p->dim + p->key_dim) * sizeof(float));
    return m;
}

static cJSON *ev_condition_json(const struct ev_ctx *c)
{
    const struct eval_spec *s = c->s;
    cJSON *o = cJSON_CreateObject();
    ev_str(o, "name", s->condition ? s->condition : c->chain ? c->chain_text : "none");
    ev_str(o, "chain", c->chain ? c->chain_text : NULL);
    ev_str(o, "on", c->chain ? chain_on_name(c->on) : NULL);
    cJSON_AddNumberToObject(o, "seed", (double)s->seed);
    if (s->has_axis) {
        cJSON *a = cJSON_AddObjectToObject(o, "axis");
        ev_str(a, "stage", s->axis_stage);
        ev_str(a, "key", s->axis_key);
        cJSON_AddNumberToObject(a, "value", s->axis_value);
    }
    return o;
}

static cJSON *ev_protocol_json(const struct ev_ctx *c)
{
    cJSON *o = result_metrics_protocol(&c->s->protocol);
    if (c->plug.distance == RV_DIST_CUSTOM && c->plug.key_dim)
        cJSON_AddNumberToObject(o, "prefilter", c->s->top_c > 0 ? c->s->top_c : 50);
    return o;
}

/* "counts", "metrics" and "curve" as result_metrics writes them for
 * `revisit metrics --json` too, then eval's own additions: the map size and
 * the bootstrap it ran.  0 or -1 (out of memory). */
static int ev_metrics_json(const struct ev_ctx *c, cJSON *o, struct err *e)
{
    if (result_metrics_add(o, &c->br.point, c->s->bootstrap > 0 ? &c->br : NULL, c->curve, c->sum.queries,
                           c->sum.revisits, e))
        return -1;
    cJSON_AddNumberToObject(cJSON_GetObjectItemCaseSensitive(o, "counts"), "map", (double)c->mset.n);
    if (c->s->bootstrap > 0) {
        cJSON *m = cJSON_GetObjectItemCaseSensitive(o, "metrics");
        cJSON_AddNumberToObject(m, "bootstrap", c->s->bootstrap);
        cJSON_AddNumberToObject(m, "level", 0.95);
    }
    return 0;
}

/* The content digests the result was computed from (a sweep compares them
 * on resume). */
static cJSON *ev_inputs_json(const struct ev_ctx *c)
{
    char hex[17];
    cJSON *o = cJSON_CreateObject();
    snprintf(hex, sizeof hex, "%016llx", (unsigned long long)c->map_digest);
    cJSON_AddStringToObject(o, "map", hex);
    snprintf(hex, sizeof hex, "%016llx", (unsigned long long)c->query_digest);
    if (c->reloc) cJSON_AddStringToObject(o, "query", hex);
    else cJSON_AddNullToObject(o, "query");
    snprintf(hex, sizeof hex, "%016llx", (unsigned long long)c->plug.digest);
    cJSON_AddStringToObject(o, "method", hex);
    return o;
}

/* "kinds": {"same_deg": 45, "reverse_deg": 135, "same": {"revisits": N,
 * "recall_at_1": x, "r100p": y}, "reverse": {...}, "crossing": {...}} */
static cJSON *ev_kinds_json(const struct kind_scores *k)
{
    cJSON *o = cJSON_CreateObject();
    cJSON_AddNumberToObject(o, "same_deg", k->rule.same_deg);
    cJSON_AddNumberToObject(o, "reverse_deg", k->rule.reverse_deg);
    for (int c = 0; c < KIND_N; c++) {
        cJSON *m = cJSON_AddObjectToObject(o, kind_name((enum kind_id)c));
        cJSON_AddNumberToObject(m, "revisits", k->revisits[c]);
        cJSON_AddNumberToObject(m, "recall_at_1", k->recall_at_1[c]);
        cJSON_AddNumberToObject(m, "r100p", k->r100p[c]);
    }
    return o;
}

static cJSON *ev_result_json(const struct ev_ctx *c, struct err *e)
{
    const struct eval_spec *s = c->s;
    cJSON *o = cJSON_CreateObject();
    char format[64];
    results_format_json_name(format, sizeof format, "result");
    cJSON_AddStringToObject(o, "format", format);
    cJSON_AddStringToObject(o, "software", "revisit " RV_VERSION);
    ev_str(o, "command", s->command);
    ev_str(o, "scenario_hash", s->scenario_hash);
    cJSON *meth = ev_method_json(&c->plug);
    if (s->alias) cJSON_AddStringToObject(meth, "alias", s->alias);
    cJSON_AddItemToObject(o, "method", meth);
    cJSON_AddItemToObject(o, "condition", ev_condition_json(c));
    cJSON_AddItemToObject(o, "protocol", ev_protocol_json(c));
    cJSON *r = cJSON_AddObjectToObject(o, "recordings");
    char real[PATH_MAX];
    ev_str(r, "map", realpath(c->map.manifest, real) ? real : c->map.manifest);
    ev_str(r, "query", !c->reloc ? NULL : realpath(c->query.manifest, real) ? real : c->query.manifest);
    cJSON_AddItemToObject(o, "inputs", ev_inputs_json(c));
    if (ev_metrics_json(c, o, e)) {
        cJSON_Delete(o);
        return NULL;
    }
    if (c->has_op) cJSON_AddItemToObject(o, "operating_point", oppoint_json(&c->op, s->tuned_on));
    cJSON_AddItemToObject(o, "kinds", ev_kinds_json(&c->kinds));
    cJSON *t = cJSON_AddObjectToObject(o, "timing");
    cJSON_AddNumberToObject(t, "describe_s", c->sum.describe_s);
    cJSON_AddNumberToObject(t, "retrieval_s", c->sum.retrieval_s);
    cJSON_AddNumberToObject(t, "metrics_s", c->sum.metrics_s);
    cJSON_AddNumberToObject(t, "matrix_s", c->sum.matrix_s);
    cJSON_AddNumberToObject(t, "described", (double)c->sum.described);
    cJSON_AddNumberToObject(t, "cache_hits", (double)c->sum.cache_hits);
    cJSON_AddNumberToObject(t, "cache_rejected", (double)c->sum.cache_rejected);
    cJSON_AddNumberToObject(t, "cache_stale", (double)c->sum.cache_stale);
    cJSON_AddStringToObject(o, "status", "ok");
    return o;
}

/* queries.csv, poses.csv, matrix.csv (and matrix.bin), then result.json last: a folder with a
 * result.json is complete. */
static int ev_write(const struct ev_ctx *c, const struct pr_lists *l, struct err *e)
{
    char path[4200];
    const char *dir = c->s->out_dir;
    if (fileio_mkdirs(dir, e)) return -1;
    if (results_path(path, sizeof path, dir, RESULTS_QUERIES, e) || queries_csv_write(path, l, e)) return -1;
    if (results_path(path, sizeof path, dir, RESULTS_POSES, e) || ev_write_poses(c, path, e)) return -1;
    if (ev_write_matrix(c, dir, e)) return -1;
    if (results_path(path, sizeof path, dir, RESULTS_RESULT, e)) return -1;
    cJSON *result = ev_result_json(c, e);
    return result ? json_file_write(path, result, e) : -1;
}

int eval_run(const struct eval_spec *s, struct eval_summary *out, struct err *e)
{
    struct ev_ctx c;
    memset(&c, 0, sizeof c);
    c.s = s;
    size_t *off = NULL;
    struct pr_cand *cand = NULL;
    int rc = -1;
    if (ev_setup(&c, e) || ev_describe_set(&c, &c.mset, e)) goto done;
    if (c.shared) c.qset = c.mset;
    else if (ev_describe_set(&c, &c.qset, e)) goto done;
    if (ev_retrieve(&c, e) || ev_lists(&c, &off, &cand, e)) goto done;
    struct pr_lists l = {c.r.n_query, off, cand};
    if (ev_metrics(&c, &l, e) || ev_matrix(&c, e) || ev_write(&c, &l, e)) goto done;
    if (out) *out = c.sum;
    rc = 0;
done:
    free(off);
    free(cand);
    ev_free(&c);
    return rc;
}
