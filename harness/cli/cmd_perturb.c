/* cmd_perturb.c: `revisit perturb`: write a perturbed copy of a recording,
 * or list the stages a chain may use. */
#include <limits.h>
#include <signal.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>

#include "harness/cli/cmd.h"
#include "harness/base/numfmt.h"
#include "harness/base/fileio.h"
#include "harness/base/opt.h"
#include "harness/base/pool.h"
#include "harness/base/progress.h"
#include "harness/io/recording.h"
#include "perturb/chain.h"

static const char about[] =
    "Apply a perturbation chain to every scan of recording REC (a folder or its\n"
    "recording.json) and write a new recording to DIR: the perturbed scans, the\n"
    "same poses, and a manifest that records the chain (normalised), the seed and\n"
    "the source.  A chain is stages joined by '+', each 'name' or\n"
    "'name:key=value,...', for example\n"
    "    yaw:deg=random+sector:width=90+dropout:p=0.3+range:max=40m+noise:sigma=0.03\n"
    "Values take an optional unit (deg, m, m/s, deg/s, s); 'random' draws a value\n"
    "per scan where a parameter allows it, or once per recording with draw=recording.\n"
    "Every draw comes from (seed, scan index, stage index), so the output is\n"
    "byte-identical for any --jobs.  --on records which side of an evaluation the\n"
    "copy stands for (default query).  --layout picks the scan files written\n"
    "(default: the input's layout; text input is written as pcd).  --stats prints\n"
    "the points into and out of each stage, summed over the scans.  --list prints\n"
    "every stage with its parameters, defaults, ranges and meaning.  An --out folder\n"
    "that already holds files is refused unless --replace is given.\n\n";

struct perturb_opts {
    const char *in, *out, *chain, *on, *layout;
    unsigned long long seed;
    long jobs;
    int stats, quiet, list, allow_outside, replace;
};

/* ---- --list ------------------------------------------------------------- */

static void print_default(const struct chain_param_info *p)
{
    if (p->kind == CHAIN_LIST) printf("none");
    else if (p->def_random) printf("random");
    else if (p->kind == CHAIN_CHOICE) {
        const char *c = p->choices;
        for (int k = 0; k < (int)p->def && strchr(c, '|'); k++) c = strchr(c, '|') + 1;
        printf("%.*s", (int)strcspn(c, "|"), c);
    } else printf("%g%s", p->def, p->unit);
}

static void perturb_list(void)
{
    const struct chain_stage_info *in;
    printf("stages (chain: stage+stage+..., stage: name or name:key=value,...):\n");
    for (size_t i = 0; (in = chain_stage_info(i)); i++) {
        printf("\n%s: %s\n", in->name, in->meaning);
        for (size_t k = 0; k < in->n_params; k++) {
            const struct chain_param_info *p = &in->params[k];
            printf("  %-9s default ", p->key);
            print_default(p);
            printf("; %s%s\n      %s\n", p->expect, p->may_random ? " or random" : "", p->meaning);
        }
    }
}

/* ---- the run ------------------------------------------------------------ */

struct perturb_run {
    const struct recording *rec;
    const struct recording_writer *w;
    const struct chain *ch;
    uint64_t seed;
    struct cloud *clouds;            /* one per worker */
    struct chain_scratch *scratch;   /* one per worker */
    struct chain_stats *sums;        /* one per worker */
    size_t *dropped;                 /* one per worker: non-finite points dropped on load */
    struct progress *bar;
};

static int perturb_task(void *ctx, size_t i, int worker, struct err *e)
{
    struct perturb_run *r = ctx;
    struct cloud *c = &r->clouds[worker];
    struct chain_stats st;
    size_t bad = 0;
    if (recording_load_scan(r->rec, i, c, &bad, e)) return -1;
    r->dropped[worker] += bad;
    if (chain_apply(r->ch, c, r->seed, (uint32_t)i, &r->scratch[worker], &st, e))
        return err_wrap(e, "scan %zu", i);
    if (recording_writer_scan(r->w, i, c, e)) return -1;
    chain_stats_add(&r->sums[worker], &st);
    progress_add(r->bar, 1);
    return 0;
}

static void perturb_on_sigint(int sig)
{
    (void)sig;
    pool_request_stop();
}

/* Run the pool over every scan; *total receives the summed stats. */
static int perturb_scans(struct perturb_run *r, int jobs, int quiet, struct chain_stats *total,
                         size_t *dropped, struct err *e)
{
    int nw = pool_threads(jobs);
    r->clouds = calloc((size_t)nw, sizeof *r->clouds);
    r->scratch = calloc((size_t)nw, sizeof *r->scratch);
    r->sums = calloc((size_t)nw, sizeof *r->sums);
    r->dropped = calloc((size_t)nw, sizeof *r->dropped);
    int rc = -1;
    if (!r->clouds || !r->scratch || !r->sums || !r->dropped) {
        err_set(e, "out of memory for %d workers", nw);
        goto out;
    }
    for (int k = 0; k < nw; k++) {
        cloud_init(&r->clouds[k]);
        chain_scratch_init(&r->scratch[k]);
    }
    struct progress bar;
    r->bar = &bar;
    progress_start(&bar, "perturb", r->rec->n, quiet);
    struct sigaction sa, old;
    memset(&sa, 0, sizeof sa);
    sa.sa_handler = perturb_on_sigint;
    sigemptyset(&sa.sa_mask);
    sigaction(SIGINT, &sa, &old);
    rc = pool_run(r->rec->n, jobs, perturb_task, r, e);
    sigaction(SIGINT, &old, NULL);
    progress_end(&bar);
    memset(total, 0, sizeof *total);
    *dropped = 0;
    for (int k = 0; k < nw; k++) {
        chain_stats_add(total, &r->sums[k]);
        *dropped += r->dropped[k];
        cloud_free(&r->clouds[k]);
        chain_scratch_free(&r->scratch[k]);
    }
out:
    free(r->clouds);
    free(r->scratch);
    free(r->sums);
    free(r->dropped);
    return rc;
}

static void print_stats(const struct chain *ch, const struct chain_stats *t, size_t scans,
                        size_t dropped)
{
    printf("stage        points in   points out   kept\n");
    for (size_t i = 0; i < t->n_stages; i++)
        printf("%-10s %11zu %12zu %6.1f%%\n", chain_stage_name(ch, i), t->in[i], t->out[i],
               t->in[i] ? 100.0 * (double)t->out[i] / (double)t->in[i] : 100.0);
    printf("%zu %s; %zu %s with a non-finite coordinate dropped on reading\n", scans,
           numfmt_noun(scans, "scan", "scans"), dropped, numfmt_noun(dropped, "point", "points"));
}

/* Output layout: --layout, else the input's (input in a layout recordings
 * are not written in, such as text, becomes pcd). */
static int perturb_layout(const struct perturb_opts *o, const struct recording *rec,
                          enum scan_layout *out, struct err *e)
{
    if (o->layout) {
        if (scan_layout_parse(o->layout, out, e)) return err_wrap(e, "revisit perturb: --layout");
        const struct scan_format *f = scan_format_of(*out);
        if (f && f->recording) return 0;
        char names[128];
        scan_format_list(names, sizeof names, ", ", " or ", SCAN_LIST_RECORDING);
        return err_set(e, "revisit perturb: option '--layout' expects %s, got '%s'", names, o->layout);
    }
    enum scan_layout l = rec->layout;
    if (l == SCAN_AUTO && rec->n) l = scan_layout_from_path(rec->scan_paths[0]);
    const struct scan_format *f = scan_format_of(l);
    *out = f && f->recording ? l : SCAN_PCD;
    return 0;
}

/* Refuse to write over the recording being read. */
static int perturb_check_out(const char *out, const struct recording *rec, struct err *e)
{
    char a[PATH_MAX], b[PATH_MAX];
    if (realpath(out, a) && realpath(rec->dir, b) && !strcmp(a, b))
        return err_set(e, "revisit perturb: --out %s is the input recording's folder, expected "
                       "another folder", out);
    return 0;
}

static int perturb_write(const struct perturb_opts *o, const struct chain *ch,
                         const struct recording *rec, struct chain_stats *total, size_t *dropped,
                         struct err *e)
{
    enum scan_layout layout;
    enum chain_on on;
    if (chain_on_parse(o->on, &on, e)) return err_wrap(e, "revisit perturb: --on");
    if (perturb_layout(o, rec, &layout, e) || perturb_check_out(o->out, rec, e)) return -1;
    if (fileio_out_unused(o->out, o->replace, e)) return err_wrap(e, "revisit perturb");
    char text[4096];
    if (chain_format_full(ch, text, sizeof text) >= sizeof text)  /* the manifest shows every value */
        return err_set(e, "revisit perturb: the chain is longer than %zu characters", sizeof text);
    struct recording_writer w;
    int rc = -1;
    if (recording_writer_begin(&w, o->out, &rec->sensor, layout, e)) goto out;
    if (recording_writer_perturbation(&w, text, o->seed, chain_on_name(on), rec->manifest, e))
        goto out;
    struct perturb_run r = {rec, &w, ch, o->seed, NULL, NULL, NULL, NULL, NULL};
    if (perturb_scans(&r, (int)o->jobs, o->quiet, total, dropped, e)) goto out;
    if (recording_writer_poses(&w, rec->poses, rec->n, e)) goto out;
    rc = recording_writer_finish(&w, e);
out:
    recording_writer_free(&w);
    return rc;
}

/* --layout's help: the layouts of the scan-format table recordings are written in. */
static void perturb_layout_help(char *out, size_t n)
{
    char names[64];
    scan_format_list(names, sizeof names, ", ", " or ", SCAN_LIST_RECORDING);
    snprintf(out, n, "%s scan files (default: as input)", names);
}

int cmd_perturb(int argc, char **argv)
{
    char lhelp[128];
    perturb_layout_help(lhelp, sizeof lhelp);
    struct perturb_opts o = {NULL, NULL, NULL, "query", NULL, 1, 0, 0, 0, 0, 0, 0};
    const struct opt table[] = {
        {"--in", OPT_STR, &o.in, "REC", "recording to read (folder or recording.json)"},
        {"--out", OPT_STR, &o.out, "DIR", "folder of the perturbed recording (new or empty)"},
        {"--replace", OPT_FLAG, &o.replace, NULL, "write into an --out folder that already holds files"},
        {"--chain", OPT_STR, &o.chain, "CHAIN", "stages joined by '+' (see --list)"},
        {"--seed", OPT_U64, &o.seed, "S", "run seed of every draw (default 1)"},
        {"--jobs", OPT_COUNT, &o.jobs, "N", "threads (default: online cores)"},
        {"--on", OPT_STR, &o.on, "SIDE", "query, map or both: recorded in the manifest"},
        {"--layout", OPT_STR, &o.layout, "L", lhelp},
        {"--stats", OPT_FLAG, &o.stats, NULL, "print points in and out of every stage"},
        {"--allow-outside", OPT_FLAG, &o.allow_outside, NULL, "accept input paths outside REC"},
        {"--list", OPT_FLAG, &o.list, NULL, "print every stage and its parameters"},
        {"--quiet", OPT_FLAG, &o.quiet, NULL, "no progress bar"},
        {0}};
    struct opt_args args;
    struct err e = {{0}};
    int go = cmd_parse("perturb", about, argc, argv, table, &args, &e);
    if (go != CMD_GO_ON) return go;
    if (o.list) {
        perturb_list();
        return CMD_OK;
    }
    if (args.n) {
        err_set(&e, "revisit perturb: unexpected argument '%s', expected options only", args.v[0]);
        return cmd_report(&e);
    }
    const char *missing = !o.in ? "--in" : !o.out ? "--out" : !o.chain ? "--chain" : NULL;
    if (missing) {
        err_set(&e, "revisit perturb: option '%s' is required (see 'revisit perturb --help')",
                missing);
        return cmd_report(&e);
    }
    if (o.jobs < 0 || o.jobs > 256) {
        err_set(&e, "revisit perturb: option '--jobs' expects 1 to 256, got %ld", o.jobs);
        return cmd_report(&e);
    }
    struct chain *ch;
    if (chain_parse(o.chain, &ch, &e)) return err_wrap(&e, "revisit perturb: --chain"), cmd_report(&e);
    struct recording rec;
    if (recording_load(o.in, o.allow_outside, &rec, &e)) {
        chain_free(ch);
        return cmd_report(&e);
    }
    struct chain_stats total;
    size_t dropped = 0;
    int rc = perturb_write(&o, ch, &rec, &total, &dropped, &e);
    if (!rc && o.stats) print_stats(ch, &total, rec.n, dropped);
    chain_free(ch);
    recording_free(&rec);
    if (rc && pool_stop_requested()) {
        fprintf(stderr, "revisit: perturb interrupted; %s has no recording.json\n", o.out);
        return CMD_INTERRUPTED;
    }
    return rc ? cmd_report(&e) : CMD_OK;
}
