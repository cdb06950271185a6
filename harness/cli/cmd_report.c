/* cmd_report.c: `revisit report DIR`: tables, plots and verdicts of a results folder.
 * The handler is cmd_report_main because cmd_report() is the shared error printer. */
#include <stdio.h>
#include <string.h>

#include "harness/cli/cmd.h"
#include "harness/base/numfmt.h"
#include "harness/base/fileio.h"
#include "harness/base/opt.h"
#include "reports/report.h"

static const char about[] =
    "Turn a results folder (one 'revisit eval --out' folder, or a sweep folder with\n"
    "cells/) into report.md and one self-contained report.html: tables of F1max,\n"
    "R@100P, EP, AP and recall@1 with 95% intervals per method and condition,\n"
    "degradation curves, PR curves, a top view of the trajectory at the F1max\n"
    "threshold, a descriptor-distance matrix and top-1 distance distributions,\n"
    "the acceptance verdicts from DIR/verdicts.json, the safety caution and a\n"
    "reproducibility block.  Plots are drawn by gnuplot from the data files and\n"
    "scripts written to OUT/plots/; without gnuplot the report lists the plots it\n"
    "skipped.  OUT defaults to DIR/report; an OUT that already holds files is\n"
    "refused unless --replace is given.\n\n";

/* The command line, shell-quoted, for the reproducibility block. */
static void join_command(int argc, char **argv, char *out, size_t n)
{
    size_t k = (size_t)snprintf(out, n, "revisit");
    for (int i = 0; i < argc && k < n; i++) {
        const char *a = argv[i];
        int plain = *a && strspn(a, "abcdefghijklmnopqrstuvwxyzABCDEFGHIJKLMNOPQRSTUVWXYZ0123456789-_./=:,+@%") == strlen(a);
        if (plain) { k += (size_t)snprintf(out + k, n - k, " %s", a); continue; }
        k += (size_t)snprintf(out + k, n - k, " '");
        for (; *a && k + 5 < n; a++) {
            if (*a == '\'') k += (size_t)snprintf(out + k, n - k, "'\\''");
            else out[k++] = *a;
        }
        if (k < n) k += (size_t)snprintf(out + k, n - k, "'");
    }
    if (k >= n) out[n - 1] = 0;
    else out[k] = 0;
}

int cmd_report_main(int argc, char **argv)
{
    const char *out = NULL, *format = NULL, *title = NULL;
    int quiet = 0, replace = 0;
    const struct opt opts[] = {
        {"--out", OPT_STR, &out, "DIR", "where report.md, report.html and plots/ go (default DIR/report)"},
        {"--format", OPT_STR, &format, "LIST", "md, html or md,html (default md,html)"},
        {"--replace", OPT_FLAG, &replace, NULL, "write into an output folder that already holds files"},
        {"--title", OPT_STR, &title, "TEXT", "report title (default from the scenario or method)"},
        {"--quiet", OPT_FLAG, &quiet, NULL, "no progress bar"},
        {0}};
    struct opt_args args;
    struct err e = {{0}};
    int go = cmd_parse("report", about, argc, argv, opts, &args, &e);
    if (go != CMD_GO_ON) return go;
    if (args.n != 1) {
        err_set(&e, "revisit report: expected one results folder, got %d arguments (see 'revisit report --help')",
                args.n);
        return cmd_report(&e);
    }
    struct report_opts o;
    report_opts_defaults(&o);
    if (format && report_formats(format, &o, &e)) return cmd_report(&e);
    char command[4096];
    join_command(argc, argv, command, sizeof command);
    o.in_dir = args.v[0];
    o.out_dir = out;
    o.title = title;
    o.quiet = quiet;
    o.command = command;
    char dest[4096];
    if (out) snprintf(dest, sizeof dest, "%s", out);
    else fileio_join(dest, sizeof dest, args.v[0], "report");
    if (fileio_out_unused(dest, replace, &e)) return err_wrap(&e, "revisit report"), cmd_report(&e);
    struct report_result r;
    if (report_run(&o, &r, &e)) return cmd_report(&e);
    if (!quiet)
        fprintf(stderr, "revisit report: %zu %s, %zu of %zu %s drawn%s; wrote %s\n", r.cells,
                numfmt_noun(r.cells, "cell", "cells"), r.drawn, r.plots, numfmt_noun(r.plots, "plot", "plots"),
                r.have_gnuplot ? "" : " (gnuplot not found)", r.out_dir);
    return CMD_OK;
}
