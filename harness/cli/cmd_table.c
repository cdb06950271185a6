/* cmd_table.c: the command table, the one list of commands with their usage
 * lines and summaries, and the help both `revisit --help` and each
 * `revisit CMD --help` print from it. */
#include "harness/cli/cmd.h"

#include <string.h>

/* name, handler, usage (after "usage: revisit "; continuation lines keep
 * their indent), summary (one line for `revisit --help`), 1 for a command
 * that runs method code in its process (run as a worker, supervise.h), and
 * its exit statuses when they are not just CMD_EXIT_PLAIN. */
static const struct cmd_row cmd_rows[] = {
    {"index", cmd_index,
         "index DIR --poses FILE [--times FILE] [--out DIR/recording.json]",
     "write recording.json for a folder of scans and a pose file", 0,
     NULL},
    {"log", cmd_log,
         "log FILE\n"
         "       revisit log FILE --scans TOPIC --poses TOPIC|tf [--frames WORLD,SENSOR] --out DIR",
     "list a robot log's topics, or make a recording from a cloud topic and a pose source", 0,
     NULL},
    {"inspect", cmd_inspect,
         "inspect REC [--json]",
     "scan count, duration, points, path length, revisits and suspicious scans of a recording", 0,
     "0 every check passed, 1 a check failed (an unreadable scan, a pose jump or\n"
     "  a time gap), 2 a usage error or a manifest that cannot be read"},
    {"eval", cmd_eval,
         "eval --map REC [--query REC] --method NAME[:key=value,...] --out DIR\n"
         "                    [--chain CHAIN --on query|map|both --seed S] [protocol options]",
     "one evaluation: describe, retrieve, score against poses, write a results folder", 1,
     NULL},
    {"metrics", cmd_metrics,
         "metrics --results FILE [--poses FILE | --rec REC]\n"
         "                       [--query-poses FILE | --query-rec REC] [protocol options]\n"
         "                       [--only FILE | --listed] [--against FILE] [--bootstrap N] [--seed S]\n"
         "                       [--json OUT]",
     "score a per-query results CSV from any program against poses", 0,
     NULL},
    {"methods", cmd_methods,
         "methods [NAME|PATH.so] [--plugin-path DIRS]",
     "list the descriptor methods found and their settings", 1,
     "0 methods listed, 2 none found or an error"},
    {"sweep", cmd_sweep,
         "sweep SCENARIO --out DIR [options]",
     "run a scenario file's grid of cells, resumably, in shards if asked", 1,
     "0 every cell done, 2 a cell failed or an error, 130 interrupted (Ctrl-C;\n"
     "  finished cells are kept)"},
    {"merge", cmd_merge,
         "merge --out DIR SHARD_DIR...",
     "join the folders of a sharded sweep", 0,
     NULL},
    {"check", cmd_check,
         "check SCENARIO DIR [--junit FILE]",
     "judge a sweep against the scenario's acceptance criteria (JUnit XML too)", 0,
     "0 every criterion passed, 1 a criterion failed, 2 an error or an incomplete\n"
     "  sweep"},
    {"synth", cmd_synth,
         "synth --scenario NAME|FILE --out DIR [--seed S] [--scans N | --duration S]\n"
         "                     [--sensor NAME|FILE] [--log FILE.bag|FILE.mcap] [--jobs N] [--quiet]",
     "make a synthetic recording of an invented district with every kind of revisit", 0,
     "0 done, 2 an error, 130 interrupted (Ctrl-C; no recording is left at\n"
     "  --out)"},
    {"perturb", cmd_perturb,
         "perturb --in REC --out DIR --chain CHAIN [--seed S] [--jobs N]\n"
         "                       [--on query|map|both] [--layout raw|pcd|ply|pcd-compressed] [--stats] [--quiet]\n"
         "       revisit perturb --list",
     "write a perturbed copy of a recording (seeded chain of stages); --list the stages", 0,
     "0 done, 2 an error, 130 interrupted (Ctrl-C; no recording is left at\n"
     "  --out)"},
    {"report", cmd_report_main,
         "report DIR [--out DIR] [--format md,html] [--title TEXT] [--quiet]",
     "Markdown and HTML report of a results folder: tables, plots, verdicts", 0,
     NULL},
    {NULL, NULL, NULL, NULL, 0, NULL},
};

const struct cmd_row *cmd_at(size_t i)
{
    return i < sizeof cmd_rows / sizeof cmd_rows[0] - 1 ? &cmd_rows[i] : NULL;
}

const struct cmd_row *cmd_find(const char *name)
{
    for (const struct cmd_row *c = cmd_rows; c->name; c++)
        if (!strcmp(c->name, name)) return c;
    return NULL;
}

void cmd_print_help(FILE *f, const char *name, const char *about, const struct opt *opts)
{
    const struct cmd_row *c = cmd_find(name);
    fprintf(f, "usage: revisit %s\n\n%s", c ? c->usage : name, about);
    opt_print_help(f, opts);
    fprintf(f, "\nexit status:\n  %s\n", c && c->exits ? c->exits : CMD_EXIT_PLAIN);
}

int cmd_parse(const char *name, const char *about, int argc, char **argv, const struct opt *opts,
              struct opt_args *a, struct err *e)
{
    if (opt_parse(name, argc, argv, opts, a, e)) return cmd_report(e);
    if (!a->help) return CMD_GO_ON;
    cmd_print_help(stdout, name, about, opts);
    return CMD_OK;
}
