/* report_cell.c: the plots drawn from one cell's per-query files. */
#include "reports/report_int.h"

#include <math.h>
#include <stdlib.h>
#include <string.h>
#include <sys/stat.h>

#include "harness/base/fileio.h"
#include "harness/base/progress.h"
#include "harness/results/cells.h"

#define REPORT_HIST_BINS 40

static int file_exists(const char *dir, const char *name, char *path, size_t n)
{
    struct stat st;
    fileio_join(path, n, dir, name);
    return !stat(path, &st) && S_ISREG(st.st_mode);
}

static void overview_fill(struct report_doc *d, const struct rdata_cell *c, const struct rdata_poses *p,
                          const struct rstat_outcomes *o)
{
    struct report_overview *v = &d->ov;
    v->have = 1;
    snprintf(v->cell_id, sizeof v->cell_id, "%s", strcmp(c->id, ".") ? c->id : "");
    for (size_t i = 0; i < p->map.n; i++) v->map_scans += p->map.has[i];
    for (size_t i = 0; i < p->query.n; i++) v->query_scans += p->query.has[i];
    rstat_track_length(&p->map, &v->map_len_m, &v->map_dur_s);
    rstat_track_length(&p->query, &v->query_len_m, &v->query_dur_s);
    v->queries = o->n;
    for (int k = 0; k < RSTAT_NKIND; k++) { v->kinds[k] = o->kinds[k]; v->revisits += o->kinds[k]; }
}

/* 1 when idx counts up by one: every scan of the span, none left out. */
static int consecutive(const long *idx, size_t n)
{
    for (size_t k = 1; k < n; k++)
        if (idx[k] != idx[k - 1] + 1) return 0;
    return 1;
}

static int matrix_plot(struct report_doc *d, struct plot_set *ps, size_t m, const struct rdata_cell *c,
                       const struct rdata_poses *p, struct err *e)
{
    struct matrix_csv mx;
    int got = matrix_csv_load(c->dir, &mx, e);
    if (got < 0) return -1;
    if (got) {
        report_note(d, "distance matrix of %s: cell %s has no matrix.csv", d->table->methods[m], c->id);
        return 0;
    }
    unsigned char *truth = calloc(mx.rows * mx.cols, 1);
    if (!truth) { matrix_csv_free(&mx); return err_set(e, "out of memory for the matrix truth mask"); }
    for (size_t r = 0; r < mx.rows; r++)
        for (size_t k = 0; k < mx.cols; k++)
            truth[r * mx.cols + k] = (unsigned char)rstat_true_pair(p, &c->proto, mx.row_idx[r], mx.col_idx[k]);
    char name[64], title[700], shown[96];
    size_t f = plot_matrix_pool(&mx);
    if (f > 1) snprintf(shown, sizeof shown, "%zu x %zu, each pixel the smallest of %zu x %zu", mx.rows, mx.cols, f, f);
    else snprintf(shown, sizeof shown, "%zu x %zu scans%s", mx.rows, mx.cols,
                  consecutive(mx.row_idx, mx.rows) && consecutive(mx.col_idx, mx.cols) ? "" : ", evenly spaced");
    report_plot_name(name, sizeof name, "distance-matrix", m, d->table->methods[m]);
    snprintf(title, sizeof title, "Descriptor distances, %s, condition %s (%s)", d->table->methods[m],
             report_cond_name(d->table, d->table->ref_cond[m]), shown);
    int rc = plot_matrix(ps, name, title, &mx, truth, e);
    free(truth);
    matrix_csv_free(&mx);
    return rc;
}

static int outcome_plots(struct report_doc *d, struct plot_set *ps, size_t m, const struct rdata_cell *c,
                         const struct rdata_poses *p, const struct rdata_queries *q, struct err *e)
{
    struct rstat_outcomes o;
    double tau = c->m[RDATA_F1MAX].threshold;
    if (rstat_outcomes(p, q, &c->proto, tau, &o, e)) return err_wrap(e, "%s", c->dir);
    if (!d->ov.have) overview_fill(d, c, p, &o);
    const char *cond = report_cond_name(d->table, d->table->ref_cond[m]);
    char name[64], title[700];
    report_plot_name(name, sizeof name, "trajectory", m, d->table->methods[m]);
    snprintf(title, sizeof title, "Top view at the F1max threshold, %s, condition %s", d->table->methods[m], cond);
    int rc = plot_traj(ps, name, title, p, &o, e);
    struct rstat_hist h;
    if (!rc) rc = rstat_hist(&o, &c->proto, REPORT_HIST_BINS, &h, e);
    if (!rc) {
        report_plot_name(name, sizeof name, "top1-distances", m, d->table->methods[m]);
        snprintf(title, sizeof title, "Top-1 distances, %s, condition %s",
                 d->table->methods[m], cond);
        rc = plot_hist(ps, name, title, &h, tau, c->m[RDATA_R100P].threshold, e);
        rstat_hist_free(&h);
    }
    rstat_outcomes_free(&o);
    return rc;
}

static int method_plots(struct report_doc *d, struct plot_set *ps, size_t m, struct err *e)
{
    const struct rstat_table *t = d->table;
    long i = report_ok_cell(d->set, t, m, t->ref_cond[m]);
    if (i < 0) {
        report_note(d, "top view, distances and matrix of %s: no finished cell", t->methods[m]);
        return 0;
    }
    const struct rdata_cell *c = &d->set->cells[i];
    char pp[4200], qp[4200];
    if (!file_exists(c->dir, RESULTS_POSES, pp, sizeof pp) || !file_exists(c->dir, RESULTS_QUERIES, qp, sizeof qp)) {
        report_note(d, "top view, distances and matrix of %s: cell %s lacks poses.csv or queries.csv",
                    t->methods[m], c->id);
        return 0;
    }
    struct rdata_poses p;
    struct rdata_queries q;
    if (rdata_poses_load(pp, &p, e)) return -1;
    if (rdata_queries_load(qp, &q, e)) { rdata_poses_free(&p); return -1; }
    /* Loop mode scores one recording; poses.csv may list it twice. */
    struct rdata_poses view = p;
    if (c->proto.mode == PROTOCOL_LOOP && p.map.n) memset(&view.query, 0, sizeof view.query);
    int rc = outcome_plots(d, ps, m, c, &view, &q, e);
    if (!rc) rc = matrix_plot(d, ps, m, c, &view, e);
    rdata_queries_free(&q);
    rdata_poses_free(&p);
    return rc;
}

int report_cell_plots(struct report_doc *d, struct plot_set *ps, struct progress *pg, struct err *e)
{
    for (size_t m = 0; m < d->table->n_methods; m++) {
        if (method_plots(d, ps, m, e)) return -1;
        progress_add(pg, 3);
    }
    return 0;
}
