/* cells.c: paths of a sweep folder's cells. */
#include "harness/results/cells.h"

#include <stdio.h>
#include <sys/stat.h>

int results_cell_done(const char *sweep_dir, const char *id)
{
    char path[4096];
    struct stat st;
    int n = snprintf(path, sizeof path, "%s/cells/%s/result.json", sweep_dir, id);
    if (n < 0 || (size_t)n >= sizeof path) return 0;
    return !stat(path, &st) && S_ISREG(st.st_mode);
}
