/* cell_set.c: a results folder's scored query set from poses.csv and queries.csv. */
#include "harness/results/cell_set.h"

#include <math.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>

#include "harness/base/fileio.h"
#include "harness/results/poses_csv.h"
#include "harness/results/queries_csv.h"
#include "metrics/gt.h"

struct oppoint_drive cell_set_drive(const double *xyz, const double *t, size_t n)
{
    double m = 0;
    for (size_t i = 1; i < n; i++)
        m += sqrt(pow(xyz[3 * i] - xyz[3 * i - 3], 2) + pow(xyz[3 * i + 1] - xyz[3 * i - 2], 2) +
                  pow(xyz[3 * i + 2] - xyz[3 * i - 1], 2));
    return (struct oppoint_drive){m / 1000, n > 1 ? (t[n - 1] - t[0]) / 3600 : 0};
}

int cell_set_load(const char *dir, const struct protocol *p, struct pr_set **out,
                  struct oppoint_drive *drive, struct err *e)
{
    char path[4300];
    struct poses_csv ps;
    fileio_join(path, sizeof path, dir, "poses.csv");
    if (poses_csv_read(path, &ps, e)) return -1;
    int reloc = p->mode == PROTOCOL_RELOC;
    const struct poses_csv_set *m = &ps.set[ps.set[POSES_CSV_MAP].n ? POSES_CSV_MAP : POSES_CSV_QUERY];
    const struct poses_csv_set *qs = &ps.set[POSES_CSV_QUERY];   /* loop mode may list the one recording as either set */
    struct gt_poses map = {m->xyz, m->t, m->n}, query = {qs->xyz, qs->t, qs->n};
    const struct poses_csv_set *scored = reloc ? qs : m;
    if (drive) *drive = cell_set_drive(scored->xyz, scored->t, scored->n);
    struct gt *g = NULL;
    struct queries_csv q;
    size_t *off = NULL;
    struct pr_cand *c = NULL;
    memset(&q, 0, sizeof q);
    fileio_join(path, sizeof path, dir, "queries.csv");
    int rc = gt_build(p, &map, reloc ? &query : NULL, NULL, 0, &g, e);
    if (!rc) rc = queries_csv_read(path, &q, e);
    if (!rc) rc = queries_csv_lists(&q, g, &off, &c, e);
    if (!rc) {
        struct pr_lists pl = {g->n_query, off, c};
        rc = pr_set_build(g, &pl, out, e);
    }
    free(off);
    free(c);
    queries_csv_free(&q);
    gt_free(g);
    poses_csv_free(&ps);
    return rc;
}
