/* cmd_eval.c: `revisit eval`: one evaluation, end to end, into a results folder. */
#include <limits.h>
#include <math.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>
#include <unistd.h>

#include "harness/cli/cmd.h"
#include "harness/results/matrix_csv.h"
#include "harness/results/outdir.h"
#include "harness/run/eval.h"
#include "harness/base/fileio.h"
#include "harness/base/opt.h"
#include "harness/cli/opt_protocol.h"
#include "metrics/oppoint.h"

static const char about[] =
    "Describe every scan of REC (and of the query recording) with the method,\n"
    "perturbed by CHAIN where asked, find each query's top-K candidates, score\n"
    "them against the poses and write DIR/result.json (every scalar with its\n"
    "bootstrap interval, the curve, settings, chain, seed, timings),\n"
    "DIR/queries.csv (what 'revisit metrics' reads), DIR/poses.csv and\n"
    "DIR/matrix.csv (every query against every map scan up to --matrix-scans;\n"
    "past 400 x 400 the whole matrix is DIR/matrix.bin and matrix.csv a sample;\n"
    "a custom distance, being slow, gives a 60 x 60 sample unless asked).\n"
    "Loop mode by default; --query makes it reloc.  METHOD is a\n"
    "plugin name ('revisit methods' lists them), a path to a .so, or a path to a\n"
    "program speaking the external protocol.  --cache DIR keeps descriptors so a\n"
    "repeated run (another protocol or threshold) does not describe again.\n"
    "--isolate describes in a child process with a per-scan time-out\n"
    "(--time-limit) and a memory limit (--mem-limit): a method that crashes,\n"
    "hangs or allocates without bound fails with a message naming it and the scan.\n"
    "External programs always run under both limits, in a process group of their\n"
    "own that ends with them.\n"
    "An --out folder that already holds files is refused unless --replace is given.\n"

    "--tuned-on DIR chooses a threshold on an earlier results folder (the clean\n"
    "map, the old mount) by --operating-point and scores this run at it:\n"
    "precision, recall, F1 and false positives (count, per km, per hour) with\n"
    "intervals, the difference against DIR, and the threshold's own interval\n"
    "(\"operating_point\" in result.json).\n\n";

struct eval_opts {
    const char *map, *query, *method, *out, *chain, *on, *plugin_path, *cache, *condition, *tuned_on, *op_rule;
    unsigned long long seed, boot_seed;
    long boot, jobs, top_c, mem_mb, matrix_scans;
    double time_s, same_deg, reverse_deg;
    int quiet, isolate, replace;
    struct opt_protocol op;
};

static int eval_finish_spec(struct eval_opts *o, struct eval_spec *s, struct err *e)
{
    if (!o->map || !o->method || !o->out)
        return err_set(e, "revisit eval: --map, --method and --out are required (see 'revisit eval --help')");
    if (o->query && !o->op.mode) o->op.mode = protocol_mode_name(PROTOCOL_RELOC);
    eval_spec_defaults(s);
    if (opt_protocol_finish(&o->op, "eval", &s->protocol, e)) return -1;
    if (o->boot != LONG_MIN && (o->boot < 0 || o->boot > 100000))
        return err_set(e, "revisit eval: --bootstrap expects 0 to 100000 resamples, got %ld", o->boot);
    if (o->top_c > 1000000)
        return err_set(e, "revisit eval: --prefilter expects a whole number from 1 to 1000000, got %ld", o->top_c);
    s->map_rec = o->map;
    s->query_rec = o->query;
    s->method = o->method;
    s->plugin_path = o->plugin_path;
    s->chain = o->chain;
    s->on = o->on;
    s->seed = o->seed;
    s->out_dir = o->out;
    s->cache_dir = o->cache;
    s->condition = o->condition;
    if (o->boot != LONG_MIN) s->bootstrap = (int)o->boot;
    s->bootstrap_seed = o->boot_seed;
    s->jobs = (int)o->jobs;
    s->top_c = o->top_c > 0 ? (int)o->top_c : 0;
    s->quiet = o->quiet;
    s->crash_notice = !o->isolate;
    s->isolate = o->isolate;
    if (!isnan(o->time_s) && !(o->time_s > 0 && o->time_s <= 1e6))
        return err_set(e, "revisit eval: --time-limit expects seconds above 0, up to 1000000, got %g", o->time_s);
    if (o->mem_mb > (1L << 24))
        return err_set(e, "revisit eval: --mem-limit expects MiB from 1 to 16777216, got %ld", o->mem_mb);
    s->kinds = (struct kind_rule){o->same_deg, o->reverse_deg};
    if (kind_rule_check(&s->kinds))
        return err_set(e, "revisit eval: --same-within %g and --reverse-from %g, expected 0 <= same < reverse <= 180 degrees",
                       o->same_deg, o->reverse_deg);
    s->tuned_on = o->tuned_on;
    if (o->op_rule && !o->tuned_on)
        return err_set(e, "revisit eval: --operating-point needs --tuned-on, the results folder that chooses the threshold");
    if (o->op_rule && oppoint_parse(o->op_rule, &s->op, e)) return err_wrap(e, "revisit eval: --operating-point");
    for (int k = 0; o->tuned_on && k < 2; k++) {   /* before any work: the folder must hold both files */
        char path[4200];
        fileio_join(path, sizeof path, o->tuned_on, k ? "poses.csv" : "queries.csv");
        if (access(path, R_OK))
            return err_set(e, "revisit eval: --tuned-on %s: cannot read %s, expected a results folder of "
                           "'revisit eval' or a sweep cell", o->tuned_on, path);
    }
    s->time_limit_s = isnan(o->time_s) ? 0 : o->time_s;
    s->mem_limit_mb = (size_t)o->mem_mb;
    if (o->matrix_scans != LONG_MIN && (o->matrix_scans < 0 || o->matrix_scans > MATRIX_BIN_MAX))
        return err_set(e, "revisit eval: --matrix-scans expects 0 to %d scans, got %ld", MATRIX_BIN_MAX, o->matrix_scans);
    s->matrix_scans = o->matrix_scans == LONG_MIN ? 0 : o->matrix_scans ? o->matrix_scans : -1;
    return 0;
}

static void eval_print(const struct eval_spec *s, const struct eval_summary *m)
{
    printf("method     %s\n", s->method);
    if (s->chain) printf("chain      %s (seed %llu)\n", s->chain, (unsigned long long)s->seed);
    printf("queries    %zu, revisits %zu\n", m->queries, m->revisits);
    printf("F1max      %.4f\nR@100P     %.4f\nEP         %.4f\nAP         %.4f\nrecall@1   %.4f\n", m->f1max,
           m->r100p, m->ep, m->ap, m->recall1);
    printf("time       describe %.2f s (%zu scans described, descriptor sets from the cache: %zu), retrieval %.2f s, "
           "metrics %.2f s, matrix %.2f s\n", m->describe_s, m->described, m->cache_hits, m->retrieval_s,
           m->metrics_s, m->matrix_s);
    if (m->cache_rejected) printf("cache      %zu damaged or mismatched file(s) rebuilt\n", m->cache_rejected);
    if (m->cache_stale)
        printf("cache      %zu descriptor set(s) made from another content of the recording or another build "
               "of the method: described again\n", m->cache_stale);
    if (m->has_op)
        printf("threshold  %.4f chosen on %s (%s): precision %.4f, recall %.4f, false positives %.0f\n",
               m->op_tau, s->tuned_on, oppoint_rule_name(s->op.rule), m->op_precision, m->op_recall, m->op_fp);
    printf("results    %s/result.json (intervals there)\n", s->out_dir);
}

/* Run s with the whole folder or nothing: written beside out, renamed into place. */
static int eval_into_out(struct eval_spec *s, const char *out, struct err *e)
{
    char tmp[4200];
    if (results_out_begin(out, tmp, sizeof tmp, e)) return err_wrap(e, "revisit eval"), cmd_report(e);
    s->out_dir = tmp;
    struct eval_summary sum;
    if (eval_run(s, &sum, e)) {
        results_out_fail(tmp, out, e);
        return cmd_report(e);
    }
    if (results_out_commit(tmp, out, e)) return err_wrap(e, "revisit eval"), cmd_report(e);
    s->out_dir = out;
    eval_print(s, &sum);
    return CMD_OK;
}

int cmd_eval(int argc, char **argv)
{
    struct eval_opts o;
    memset(&o, 0, sizeof o);
    o.seed = 1;
    o.boot_seed = 1;
    o.boot = LONG_MIN;   /* not given */
    o.time_s = NAN;
    o.matrix_scans = LONG_MIN;   /* not given */
    o.same_deg = 45;
    o.reverse_deg = 135;
    opt_protocol_init(&o.op);
    const struct opt table[] = {
        {"--map", OPT_STR, &o.map, "REC", "map recording (recording.json or its folder); loop mode uses it alone"},
        {"--query", OPT_STR, &o.query, "REC", "query recording: reloc mode against the map"},
        {"--method", OPT_STR, &o.method, "SPEC", "NAME[:key=value,...], a .so path, or an external program"},
        {"--plugin-path", OPT_STR, &o.plugin_path, "DIRS", "':'-separated folders searched first for NAME.so"},
        {"--chain", OPT_STR, &o.chain, "CHAIN", "perturbation chain, e.g. yaw:deg=random+sector:width=90"},
        {"--on", OPT_STR, &o.on, "query|map|both", "where the chain applies (default: query in reloc, both in loop)"},
        {"--seed", OPT_U64, &o.seed, "S", "perturbation seed (default 1)"},
        OPT_PROTOCOL_ROWS(o.op),
        {"--prefilter", OPT_COUNT, &o.top_c, "C", "custom distances: candidates kept by the key prefilter (default 50)"},
        {"--bootstrap", OPT_INT, &o.boot, "N", "bootstrap resamples for intervals (default 1000; 0: none)"},
        {"--bootstrap-seed", OPT_U64, &o.boot_seed, "S", "bootstrap seed (default 1)"},
        {"--tuned-on", OPT_STR, &o.tuned_on, "DIR", "results folder whose threshold is carried over (see --operating-point)"},
        {"--operating-point", OPT_STR, &o.op_rule, "RULE", "f1max (default), precision:P, recall:R or fixed:D, chosen on --tuned-on"},
        {"--same-within", OPT_DEGREES, &o.same_deg, "DEG", "revisits turned at most DEG count as same direction (default 45)"},
        {"--reverse-from", OPT_DEGREES, &o.reverse_deg, "DEG", "revisits turned at least DEG count as reverse (default 135)"},
        {"--matrix-scans", OPT_INT, &o.matrix_scans, "N",
         "distance matrix of every scan when map and queries have at most N each (default 4000 for a dense "
         "distance; a custom one: a sample unless given; 0: a sample only)"},
        {"--cache", OPT_STR, &o.cache, "DIR", "descriptor cache folder, shared between runs"},
        {"--condition", OPT_STR, &o.condition, "NAME", "condition name recorded in result.json"},
        {"--out", OPT_STR, &o.out, "DIR", "results folder (created; an existing one must be empty)"},
        {"--replace", OPT_FLAG, &o.replace, NULL, "write into an --out folder that already holds files"},
        {"--jobs", OPT_COUNT, &o.jobs, "N", "threads (default: all cores)"},
        {"--isolate", OPT_FLAG, &o.isolate, NULL, "describe in a child process (crash, hang and memory safe)"},
        {"--time-limit", OPT_SECONDS, &o.time_s, "S",
         "most seconds per scan: 60 or 60s (default 60; external programs 10); isolated and external methods are stopped"},
        {"--mem-limit", OPT_COUNT, &o.mem_mb, "MiB", "memory an isolated method or external program may take (default 4096)"},
        {"--quiet", OPT_FLAG, &o.quiet, NULL, "no progress bar"},
        {0}};
    struct opt_args args;
    struct err e;
    int go = cmd_parse("eval", about, argc, argv, table, &args, &e);
    if (go != CMD_GO_ON) return go;
    if (args.n) return err_set(&e, "revisit eval: unexpected argument '%s'", args.v[0]), cmd_report(&e);
    struct eval_spec s;
    if (eval_finish_spec(&o, &s, &e)) return cmd_report(&e);
    if (fileio_out_unused(o.out, o.replace, &e)) return err_wrap(&e, "revisit eval"), cmd_report(&e);
    /* the command as given, whole (result.json keeps it to rerun the evaluation) */
    size_t need = 9;
    for (int k = 0; k < argc; k++) need += strlen(argv[k]) + 1;
    char *command = malloc(need);
    if (!command) return err_set(&e, "revisit eval: out of memory"), cmd_report(&e);
    size_t used = 0;
    for (int k = 0; k < argc; k++) used += (size_t)sprintf(command + used, "%s%s", k ? " " : "revisit ", argv[k]);
    s.command = command;
    int rc = eval_into_out(&s, o.out, &e);
    free(command);
    return rc;
}
