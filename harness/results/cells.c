/* cells.c: paths of a results folder and of a sweep folder's cells. */
#include "harness/results/cells.h"

#include <stdio.h>
#include <stdlib.h>
#include <string.h>
#include <sys/stat.h>

#include "harness/base/fileio.h"
#include "harness/plan/plan.h"

#define CELLS_PART ".part-"

static int cells_fits(int n, size_t size, const char *out, struct err *e)
{
    if (n >= 0 && (size_t)n < size) return 0;
    return err_set(e, "path too long: '%.80s...', expected at most %zu bytes", out, size ? size - 1 : 0);
}

int results_path(char *out, size_t n, const char *dir, const char *file, struct err *e)
{
    return cells_fits(snprintf(out, n, "%s/%s", dir, file), n, out, e);
}

int results_cell_path(char *out, size_t n, const char *sweep_dir, const char *id, const char *file,
                      struct err *e)
{
    int k = !id ? snprintf(out, n, "%s/cells", sweep_dir)
          : !file ? snprintf(out, n, "%s/cells/%s", sweep_dir, id)
                  : snprintf(out, n, "%s/cells/%s/%s", sweep_dir, id, file);
    return cells_fits(k, n, out, e);
}

int results_cell_part(char *out, size_t n, const char *sweep_dir, const char *id, struct err *e)
{
    return cells_fits(snprintf(out, n, "%s/cells/" CELLS_PART "%s", sweep_dir, id), n, out, e);
}

const char *results_part_id(const char *name)
{
    size_t l = strlen(CELLS_PART);
    return strncmp(name, CELLS_PART, l) ? NULL : name + l;
}

int results_sweep_hash(const char *sweep_dir, char out[17], struct err *e)
{
    char path[4200], *text;
    size_t len;
    if (results_path(path, sizeof path, sweep_dir, RESULTS_SCENARIO, e) ||
        fileio_read(path, (size_t)4 << 20, &text, &len, e))
        return err_wrap(e, "%s is not a sweep folder", sweep_dir);
    plan_hash_hex(text, len, out);
    free(text);
    return 0;
}

int results_cell_done(const char *sweep_dir, const char *id)
{
    char path[4096];
    struct stat st;
    if (results_cell_path(path, sizeof path, sweep_dir, id, RESULTS_RESULT, NULL)) return 0;
    return !stat(path, &st) && S_ISREG(st.st_mode);
}
