/* outdir.c: results folders written whole (see outdir.h). */
#include "harness/results/outdir.h"

#include <errno.h>
#include <stdio.h>
#include <string.h>
#include <sys/stat.h>
#include <unistd.h>

#include "harness/base/fileio.h"

int results_out_begin(const char *out, char *tmp, size_t n, struct err *e)
{
    int len = snprintf(tmp, n, "%s.part-%ld", out, (long)getpid());
    if (len < 0 || (size_t)len >= n) return err_at(e, out, 0, "path too long for a folder beside it");
    char parent[4096];
    fileio_dirname(parent, sizeof parent, out);
    if (fileio_mkdirs(parent, e) || fileio_remove_tree(tmp, e)) return -1;
    if (mkdir(tmp, 0755)) return err_at(e, tmp, 0, "cannot create folder: %s", strerror(errno));
    return 0;
}

void results_out_abort(const char *tmp)
{
    struct err ignored;
    (void)fileio_remove_tree(tmp, &ignored);
}

void results_out_fail(const char *tmp, const char *out, struct err *e)
{
    results_out_abort(tmp);
    err_subst(e, tmp, out);
}

int results_out_commit(const char *tmp, const char *out, struct err *e)
{
    char old[4200];
    int len = snprintf(old, sizeof old, "%s.old-%ld", out, (long)getpid());
    if (len < 0 || (size_t)len >= sizeof old) {
        results_out_abort(tmp);
        return err_at(e, out, 0, "path too long for a folder beside it");
    }
    struct stat st;
    int had = !lstat(out, &st);
    if (had && fileio_remove_tree(old, e)) {
        results_out_abort(tmp);
        return -1;
    }
    if (had && rename(out, old)) {
        int saved = errno;
        results_out_abort(tmp);
        return err_at(e, out, 0, "cannot move the old results aside: %s", strerror(saved));
    }
    if (rename(tmp, out)) {
        int saved = errno;
        if (had && rename(old, out) == 0) {}  /* put the old results back */
        results_out_abort(tmp);
        return err_at(e, out, 0, "cannot move the new results into place: %s", strerror(saved));
    }
    if (had) {
        struct err ignored;
        (void)fileio_remove_tree(old, &ignored);  /* a left-over old copy wastes space, never mixes runs */
    }
    return 0;
}
