/* cmd_merge.c: `revisit merge --out DIR SHARD...`: join shard folders. */
#include <dirent.h>
#include <errno.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>
#include <sys/stat.h>

#include "harness/cli/cmd.h"
#include "harness/base/numfmt.h"
#include "harness/base/fileio.h"
#include "harness/base/opt.h"
#include "harness/plan/plan.h"
#include "harness/results/summary.h"
#include "harness/run/sweep.h"
#include "harness/results/cells.h"

#define MERGE_FILE_MAX ((size_t)1 << 30)

static const char about[] =
    "Join the sweep folders written by 'revisit sweep --shard I/N' (or by runs\n"
    "on several machines) into DIR: every finished cell is copied atomically,\n"
    "cells already in DIR are kept, and the summary is written over all of them.\n"
    "Folders made from different scenario files are refused (each holds the\n"
    "scenario's hash).  DIR may be one of the shard folders.\n\n";

/* Hash of SHARD/scenario.json into out[17]. 0 or -1. */
static int merge_hash(const char *dir, char out[17], struct err *e)
{
    return results_sweep_hash(dir, out, e) ? err_wrap(e, "revisit merge") : 0;
}

/* Copy the regular files of src into a new folder dst (via a .part folder). */
static int merge_copy_cell(const char *src, const char *out, const char *id, struct err *e)
{
    char part[4200], dst[4200];
    if (results_cell_part(part, sizeof part, out, id, e) || results_cell_path(dst, sizeof dst, out, id, NULL, e) ||
        fileio_mkdirs(part, e))
        return -1;
    DIR *d = opendir(src);
    if (!d) return err_at(e, src, 0, "cannot open folder: %s", strerror(errno));
    struct dirent *de;
    int rc = 0;
    while (!rc && (de = readdir(d))) {
        char from[4400], to[4400], *buf;
        size_t len;
        struct stat st;
        if (err_cut(snprintf(from, sizeof from, "%s/%s", src, de->d_name), sizeof from) ||
            err_cut(snprintf(to, sizeof to, "%s/%s", part, de->d_name), sizeof to)) {
            rc = err_at(e, src, 0, "path too long below this folder ('%s')", de->d_name);
            break;
        }
        if (de->d_name[0] == '.' || lstat(from, &st) || !S_ISREG(st.st_mode)) continue;
        buf = NULL;
        rc = fileio_read(from, MERGE_FILE_MAX, &buf, &len, e) ? -1 : fileio_write(to, buf, len, e);
        free(buf);
    }
    closedir(d);
    if (!rc && rename(part, dst)) rc = err_at(e, dst, 0, "cannot move the copied cell into place: %s", strerror(errno));
    return rc;
}

/* Copy the done cells of one shard that dst lacks; *copied counts them. */
static int merge_one(const struct plan *p, const char *shard, const char *out, size_t *copied, struct err *e)
{
    struct summary s;
    if (summary_load(&s, p, shard, e)) return -1;   /* checks every cell's scenario hash */
    char src[4400];
    int rc = 0;
    for (size_t k = 0; k < p->n_cells && !rc; k++) {
        if (!s.cells[k].done || results_cell_done(out, p->cells[k].id)) continue;
        rc = results_cell_path(src, sizeof src, shard, p->cells[k].id, NULL, e) ||
             merge_copy_cell(src, out, p->cells[k].id, e);
        *copied += !rc;
    }
    summary_free(&s);
    return rc;
}

static int merge_run(const char *out, int n, const char *const *dirs, int quiet, struct err *e)
{
    char first[17], h[17], path[4200];
    if (merge_hash(dirs[0], first, e)) return -1;
    for (int k = 1; k < n; k++) {
        if (merge_hash(dirs[k], h, e)) return -1;
        if (strcmp(h, first))
            return err_at(e, dirs[k], 0, "made by another scenario file (hash %s), expected hash %s as in %s",
                          h, first, dirs[0]);
    }
    struct plan p;
    if (results_path(path, sizeof path, dirs[0], RESULTS_SCENARIO, e) || plan_load(&p, path, e)) return -1;
    size_t copied = 0;
    int rc = sweep_prepare(&p, out, e);
    for (int k = 0; k < n && !rc; k++) rc = merge_one(&p, dirs[k], out, &copied, e);
    struct summary s;
    if (!rc && !(rc = summary_load(&s, &p, out, e))) {
        rc = summary_write(&s, e);
        if (!rc && !quiet)
            fprintf(stderr, "revisit merge: %zu %s copied; %s holds %zu of %zu %s (%zu failed)\n", copied,
                    numfmt_noun(copied, "cell", "cells"), out, s.n_done, p.n_cells, numfmt_noun(p.n_cells, "cell", "cells"),
                    s.n_failed);
        summary_free(&s);
    }
    plan_free(&p);
    return rc;
}

int cmd_merge(int argc, char **argv)
{
    const char *out = NULL;
    int quiet = 0;
    const struct opt opts[] = {
        {"--out", OPT_STR, &out, "DIR", "merged sweep folder; required"},
        {"--quiet", OPT_FLAG, &quiet, NULL, "no totals on stderr"},
        {0}};
    struct opt_args a;
    struct err e;
    int go = cmd_parse("merge", about, argc, argv, opts, &a, &e);
    if (go != CMD_GO_ON) return go;
    if (!out || a.n < 1) {
        err_set(&e, !out ? "revisit merge: option '--out' is required"
                         : "revisit merge: expected one or more shard folders");
        return cmd_report(&e);
    }
    return merge_run(out, a.n, a.v, quiet, &e) ? cmd_report(&e) : CMD_OK;
}
