/* cmd.h: the subcommands of `revisit`.
 *
 * To add a command:
 *   1. write harness/cli/cmd_NAME.c with `int cmd_NAME(int argc, char **argv)`,
 *      a static description text `about` and an option table handed to
 *      cmd_parse(), which prints `--help` (usage line, about, options);
 *   2. declare it below and add a row (name, handler, usage line, summary,
 *      1 if it runs method code in its process, its exit statuses or NULL)
 *      to the table in harness/cli/cmd_table.c;
 *   3. nothing to add to the Makefile (every .c file in harness/cli/ is picked up);
 *   4. add tests (tests/e2e_help.sh runs --help on every row already);
 *   5. document it in the README of the folder that owns it (linked from
 *      README.md's reference list) and DEVELOPERS.md if it adds a module.
 *
 * Handlers return an exit code: CMD_OK, CMD_FAIL (a check or criterion
 * failed), CMD_ERROR (usage or input error; the message is already printed
 * as "revisit: ..." on stderr), CMD_INTERRUPTED.
 */
#ifndef RV_CMD_H
#define RV_CMD_H

#include <stddef.h>
#include <stdio.h>

#include "harness/base/err.h"
#include "harness/base/opt.h"

enum { CMD_OK = 0, CMD_FAIL = 1, CMD_ERROR = 2, CMD_INTERRUPTED = 130 };

/* cmd_parse's "no help asked, no error: go on with the command". */
#define CMD_GO_ON (-1)

/* A row of the command table (harness/cli/cmd_table.c). */
struct cmd_row {
    const char *name;
    int (*fn)(int argc, char **argv);
    const char *usage;      /* after "usage: revisit ", e.g. "check SCENARIO DIR [--junit FILE]" */
    const char *summary;    /* the line `revisit --help` shows */
    int supervised;         /* runs method code in this process: run as a worker (supervise.h) */
    const char *exits;      /* its exit statuses for --help; NULL: CMD_EXIT_PLAIN */
};

/* The exit statuses of a command that checks nothing and cannot be
 * interrupted half way: 1 is only ever "a check or criterion failed". */
#define CMD_EXIT_PLAIN "0 done, 2 an error (usage, input, a method, a write)"

/* Row i of the table, NULL past the last; the row of a name, NULL if none. */
const struct cmd_row *cmd_at(size_t i);
const struct cmd_row *cmd_find(const char *name);

/* `revisit NAME --help`: the usage line of NAME's row, about (the command's
 * own description, ending in a blank line), then the options of opts. */
void cmd_print_help(FILE *f, const char *name, const char *about, const struct opt *opts);

/* opt_parse for command name, then --help printed by cmd_print_help.
 * CMD_GO_ON when the command should go on; else the exit code to return
 * (CMD_OK after the help, CMD_ERROR after a printed error). */
int cmd_parse(const char *name, const char *about, int argc, char **argv, const struct opt *opts,
              struct opt_args *a, struct err *e);

/* Print "revisit: <msg>" to stderr and return CMD_ERROR. */
int cmd_report(const struct err *e);

/* revisit report DIR: Markdown and HTML report of a results folder (reports/). */
int cmd_report_main(int argc, char **argv);

/* revisit sweep SCENARIO --out DIR: run a scenario's grid of cells (harness/run/sweep.h). */
int cmd_sweep(int argc, char **argv);
/* revisit merge --out DIR SHARD...: join shard folders of one scenario. */
int cmd_merge(int argc, char **argv);
/* revisit check SCENARIO DIR: judge the acceptance criteria (harness/results/summary.h). */
int cmd_check(int argc, char **argv);
/* revisit metrics --results FILE: score a per-query results CSV (metrics/, harness/results/queries_csv.h). */
int cmd_metrics(int argc, char **argv);
/* revisit eval --map REC --method SPEC --out DIR: one evaluation (harness/run/eval.h). */
int cmd_eval(int argc, char **argv);
/* revisit methods [NAME]: the methods on the plugin search path (harness/run/plugin_host.h). */
int cmd_methods(int argc, char **argv);

/* revisit index DIR --poses FILE: write recording.json for a folder of scans (harness/io/recording.h). */
int cmd_index(int argc, char **argv);
/* revisit log FILE [--out DIR ...]: topics of a robot log, or a recording from it (harness/io/logrec.h). */
int cmd_log(int argc, char **argv);
/* revisit inspect REC: scan count, duration, points, path length, revisits, suspicious scans. */
int cmd_inspect(int argc, char **argv);

/* revisit synth --scenario NAME --out DIR: a synthetic recording (scenarios/synth.h). */
int cmd_synth(int argc, char **argv);

/* revisit perturb --in REC --out DIR --chain CHAIN: a perturbed copy of a recording (perturb/chain.h). */
int cmd_perturb(int argc, char **argv);

#endif
