/* main.c: the `revisit` dispatcher over the command table (cmd_table.c). */
#include <signal.h>
#include <stdio.h>
#include <string.h>

#include "harness/base/blas.h"
#include "harness/cli/cmd.h"
#include "harness/cli/supervise.h"

static const char caution[] =
    "Caution: results on recorded or synthetic data do not show that a vehicle is\n"
    "safe. Acceptance decisions follow the organisation's safety process, local\n"
    "regulations and the standards that apply, signed off by qualified safety\n"
    "engineers; a verdict of this tool is evidence for that process, never a\n"
    "substitute for it.\n";

static void main_help(FILE *f)
{
    fprintf(f, "usage: revisit <command> [options]\n\n"
               "Robustness benchmarking for LiDAR place recognition: perturb recorded\n"
               "scans, run descriptor methods, score precision-recall against poses.\n\n"
               "commands:\n");
    const struct cmd_row *c;
    for (size_t k = 0; (c = cmd_at(k)); k++) fprintf(f, "  %-10s %s\n", c->name, c->summary);
    fprintf(f, "\n'revisit <command> --help' describes one command.\n"
               "exit codes: 0 done, 1 a check or criterion failed, 2 usage or input error,\n"
               "130 interrupted.\n\n%s", caution);
}

int cmd_report(const struct err *e)
{
    /* Messages are built as "revisit CMD: ..." deep down; the reader gets one
     * prefix: "revisit: CMD: ...". */
    const char *m = e->msg;
    if (!strncmp(m, "revisit: ", 9)) m += 9;
    else if (!strncmp(m, "revisit ", 8)) m += 8;
    fprintf(stderr, "revisit: %s\n", m);
    return CMD_ERROR;
}

static int main_finish(int rc)
{
    /* A report redirected to a full disk must not exit 0. */
    if (fflush(stdout) || ferror(stdout) || fclose(stdout)) {
        fprintf(stderr, "revisit: cannot write standard output\n");
        return CMD_ERROR;
    }
    return rc;
}

int main(int argc, char **argv)
{
    /* Before anything else: this may re-execute the program once with a
     * wider OpenBLAS kernel (see harness/base/blas.h). */
    blas_choose_kernel(argv);
    blas_one_thread();
    /* A file-size limit (ulimit -f) must surface as a write error (EFBIG)
     * that the atomic writer reports, not as a silent kill mid-file. */
    signal(SIGXFSZ, SIG_IGN);
    if (argc < 2 || !strcmp(argv[1], "--help") || !strcmp(argv[1], "-h")) {
        main_help(argc < 2 ? stderr : stdout);
        return main_finish(argc < 2 ? CMD_ERROR : CMD_OK);
    }
    if (!strcmp(argv[1], "--version")) {
        char blas[256];
        blas_describe(blas, sizeof blas);
        printf("revisit %s\nBLAS: %s\n", RV_VERSION, blas);
        return main_finish(CMD_OK);
    }
    if (!strcmp(argv[1], "--commands")) {
        const struct cmd_row *c;
        for (size_t k = 0; (c = cmd_at(k)); k++) printf("%s\n", c->name);
        return main_finish(CMD_OK);
    }
    const struct cmd_row *c = cmd_find(argv[1]);
    if (c) {
        /* Method code can end a process past every handler: such commands
         * run as a worker, and this process exits 0 only when the worker
         * reported that it finished. */
        int fd = -1, rc;
        if (c->supervised && supervise_start(argv, &fd, &rc)) return rc;
        rc = main_finish(c->fn(argc - 1, argv + 1));
        supervise_done(fd, rc);
        return rc;
    }
    fprintf(stderr, "revisit: unknown command '%s' (see 'revisit --help')\n", argv[1]);
    return main_finish(CMD_ERROR);
}
