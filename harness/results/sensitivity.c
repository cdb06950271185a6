/* sensitivity.c: loss per unit and across the swept range of each axis, and
 * the loss of each stage of a compound condition run alone, with paired
 * bootstrap intervals over the queries.
 *
 * Layout: f[k] is F1max of plan cell k under the current weights (NaN for a
 * cell no row needs); fig[r * (B + 1) + b] is row r's figure in resample b,
 * the point estimate at b = B.
 */
#include "harness/results/sensitivity.h"

#include <math.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>

#include "harness/base/fileio.h"
#include "harness/results/cell_set.h"
#include "harness/results/format.h"
#include "metrics/boot.h"
#include "perturb/chain.h"

struct sn_ctx {
    const struct summary *s;
    size_t m;                 /* method */
    struct pr_set **set;      /* per plan cell, NULL when not needed */
    double *f;                /* per plan cell */
    long base;                /* the baseline condition (no chain, no axis), -1 when none */
};

/* Mean of f over the done cells of (method, cond[, value]); NaN when none. */
static double sn_mean(const struct sn_ctx *c, size_t cond, int has, double value)
{
    double sum = 0;
    size_t n = 0;
    for (size_t k = 0; k < c->s->p->n_cells; k++) {
        const struct plan_cell *pc = &c->s->p->cells[k];
        if (pc->method != c->m || pc->cond != cond || (has && pc->axis_value != value) || !c->set[k]) continue;
        sum += c->f[k];
        n++;
    }
    return n ? sum / (double)n : NAN;
}

/* Least-squares slope of y over x (n >= 2). */
static double sn_slope(const double *x, const double *y, size_t n)
{
    double mx = 0, my = 0, sxy = 0, sxx = 0;
    for (size_t i = 0; i < n; i++) { mx += x[i]; my += y[i]; }
    mx /= (double)n;
    my /= (double)n;
    for (size_t i = 0; i < n; i++) { sxy += (x[i] - mx) * (y[i] - my); sxx += (x[i] - mx) * (x[i] - mx); }
    return sxx > 0 ? sxy / sxx : NAN;
}

/* Row r's figure (per unit into *a, range or stage loss into *b, compound into *cl). */
static void sn_figure(const struct sn_ctx *c, const struct sens_row *r, double *a, double *b, double *cl)
{
    const struct plan_cond *d = &c->s->p->conds[r->cond];
    if (r->kind == SENS_AXIS) {
        double y[64];
        size_t n = d->n_values < 64 ? d->n_values : 64;
        for (size_t i = 0; i < n; i++) y[i] = sn_mean(c, r->cond, 1, d->values[i]);
        *a = -sn_slope(d->values, y, n);
        *b = y[0] - y[n - 1];
        *cl = NAN;
        return;
    }
    double fb = c->base >= 0 ? sn_mean(c, (size_t)c->base, 0, 0) : NAN;
    *a = NAN;
    *b = fb - sn_mean(c, r->cond, 0, 0);
    *cl = fb - sn_mean(c, d->part_of, 0, 0);
}

/* 1 when every cell of (method, cond) is done and ok. */
static int sn_ready(const struct summary *s, size_t m, size_t cond)
{
    size_t n = 0;
    for (size_t k = 0; k < s->p->n_cells; k++) {
        if (s->p->cells[k].method != m || s->p->cells[k].cond != cond) continue;
        if (!s->cells[k].done || !s->cells[k].ok) return 0;
        n++;
    }
    return n > 0;
}

/* The rows of method m (axis conditions, stages alone), appended to *rows. */
static int sn_rows(const struct summary *s, size_t m, long base, struct sens_row **rows, size_t *n, size_t *cap)
{
    const struct plan *p = s->p;
    for (size_t c = 0; c < p->n_conds; c++) {
        const struct plan_cond *d = &p->conds[c];
        int axis = d->n_values >= 2 && d->values[0] < d->values[d->n_values - 1];
        int stage = d->is_part && base >= 0 && sn_ready(s, m, d->part_of) && sn_ready(s, m, (size_t)base);
        if ((!axis && !stage) || !sn_ready(s, m, c)) continue;
        if (*n == *cap) {
            size_t nc = *cap ? 2 * *cap : 16;
            struct sens_row *a = realloc(*rows, nc * sizeof *a);
            if (!a) return -1;
            *rows = a;
            *cap = nc;
        }
        struct sens_row *r = &(*rows)[(*n)++];
        memset(r, 0, sizeof *r);
        r->kind = axis ? SENS_AXIS : SENS_STAGE;
        r->method = m;
        r->cond = c;
        if (axis) {
            snprintf(r->parameter, sizeof r->parameter, "%s.%s", d->axis_stage, d->axis_key);
            const struct chain_stage_info *in = chain_stage_find(d->axis_stage);
            for (size_t j = 0; in && j < in->n_params; j++)
                if (!strcmp(in->params[j].key, d->axis_key)) snprintf(r->unit, sizeof r->unit, "%s", in->params[j].unit);
            r->v_min = d->values[0];
            r->v_max = d->values[d->n_values - 1];
        } else {
            snprintf(r->parameter, sizeof r->parameter, "%s", d->chain);
            r->v_min = r->v_max = NAN;
        }
    }
    return 0;
}

/* Load the sets the rows of method m need; 0, or -1 with e set. */
static int sn_load(struct sn_ctx *c, const struct sens_row *rows, size_t n, struct err *e)
{
    const struct plan *p = c->s->p;
    for (size_t k = 0; k < p->n_cells; k++) {
        const struct plan_cell *pc = &p->cells[k];
        if (pc->method != c->m) continue;
        int need = (long)pc->cond == c->base;
        for (size_t r = 0; r < n && !need; r++)
            need = rows[r].method == c->m && (rows[r].cond == pc->cond ||
                   (rows[r].kind == SENS_STAGE && p->conds[rows[r].cond].part_of == pc->cond));
        if (!need || !c->s->cells[k].done || !c->s->cells[k].ok) continue;
        char dir[4300];
        snprintf(dir, sizeof dir, "%s/cells/%s", c->s->dir, pc->id);
        if (cell_set_load(dir, &p->protocol, &c->set[k], NULL, e)) return err_wrap(e, "cell %s", pc->id);
    }
    return 0;
}

/* F1max of every loaded set under weights w (NULL: the point estimate). */
static void sn_eval(struct sn_ctx *c, const uint32_t *w)
{
    for (size_t k = 0; k < c->s->p->n_cells; k++) {
        if (!c->set[k]) continue;
        struct pr_scalars sc;
        pr_scalars_compute(c->set[k], w, &sc);
        c->f[k] = sc.v[PR_F1MAX];
    }
}

static int sn_cmp(const void *x, const void *y)
{
    double a = *(const double *)x, b = *(const double *)y;
    return (a > b) - (a < b);
}

static void sn_interval(double *v, size_t nb, double *lo, double *hi)
{
    size_t m = 0;
    for (size_t b = 0; b < nb; b++)
        if (!isnan(v[b])) v[m++] = v[b];
    if (!m) { *lo = *hi = NAN; return; }
    qsort(v, m, sizeof *v, sn_cmp);
    *lo = boot_quantile(v, m, 0.025);
    *hi = boot_quantile(v, m, 0.975);
}

/* Point values and intervals of rows[r0 .. n) for method c->m. */
static int sn_method(struct sn_ctx *c, struct sens_row *rows, size_t r0, size_t n, struct err *e)
{
    int B = c->s->p->bootstrap;
    size_t nq = 0;
    const struct pr_set *first = NULL;
    for (size_t k = 0; k < c->s->p->n_cells; k++)
        if (c->set[k] && !first) { first = c->set[k]; nq = first->n; }
        else if (c->set[k] && boot_same_queries(first, c->set[k], NULL)) B = 0;   /* not paired: no interval */
    double *fa = malloc((size_t)(B + 1) * (n - r0) * 2 * sizeof *fa);
    uint32_t *w = malloc((nq ? nq : 1) * sizeof *w);
    if (!fa || !w) { free(fa); free(w); return err_set(e, "sensitivity: out of memory"); }
    for (int b = 0; b <= B; b++) {
        if (b < B) boot_weights(c->s->p->bootstrap_seed, b, nq, w);
        sn_eval(c, b < B ? w : NULL);
        for (size_t r = r0; r < n; r++) {
            double a, l, cl;
            sn_figure(c, &rows[r], &a, &l, &cl);
            fa[((r - r0) * 2) * (size_t)(B + 1) + (size_t)b] = a;
            fa[((r - r0) * 2 + 1) * (size_t)(B + 1) + (size_t)b] = l;
            if (b == B) { rows[r].per_unit = a; rows[r].range = l; rows[r].compound = cl; rows[r].share = l / cl; }
        }
    }
    for (size_t r = r0; r < n; r++) {
        rows[r].per_unit_lo = rows[r].per_unit_hi = rows[r].range_lo = rows[r].range_hi = NAN;
        if (!B) continue;
        sn_interval(fa + ((r - r0) * 2) * (size_t)(B + 1), (size_t)B, &rows[r].per_unit_lo, &rows[r].per_unit_hi);
        sn_interval(fa + ((r - r0) * 2 + 1) * (size_t)(B + 1), (size_t)B, &rows[r].range_lo, &rows[r].range_hi);
    }
    free(fa);
    free(w);
    return 0;
}

/* Rank the axis rows of one method by range loss, and mark each compound's dominant stage. */
static void sn_rank(struct sens_row *rows, size_t r0, size_t n)
{
    for (size_t r = r0; r < n; r++) {
        rows[r].rank = 1;
        for (size_t q = r0; q < n; q++) {
            if (q == r || rows[q].kind != rows[r].kind) continue;
            if (rows[r].kind == SENS_STAGE && rows[q].compound != rows[r].compound) continue;
            if (rows[q].range > rows[r].range || (rows[q].range == rows[r].range && q < r)) rows[r].rank++;
        }
    }
}

int sens_compute(const struct summary *s, struct sens_row **rows, size_t *n, struct err *e)
{
    const struct plan *p = s->p;
    long base = -1;
    for (size_t c = 0; c < p->n_conds && base < 0; c++)
        if (!p->conds[c].chain && !p->conds[c].n_values) base = (long)c;
    struct sens_row *out = NULL;
    size_t cnt = 0, cap = 0;
    struct sn_ctx c = {s, 0, calloc(p->n_cells + 1, sizeof *c.set), calloc(p->n_cells + 1, sizeof *c.f), base};
    int rc = c.set && c.f ? 0 : err_set(e, "sensitivity: out of memory");
    for (size_t m = 0; !rc && m < p->n_methods; m++) {
        size_t r0 = cnt;
        if (sn_rows(s, m, base, &out, &cnt, &cap)) { rc = err_set(e, "sensitivity: out of memory"); break; }
        if (cnt == r0) continue;
        c.m = m;
        rc = sn_load(&c, out, cnt, e) || sn_method(&c, out, r0, cnt, e) ? -1 : 0;
        if (!rc) sn_rank(out, r0, cnt);
        for (size_t k = 0; c.set && k < p->n_cells; k++) { pr_set_free(c.set[k]); c.set[k] = NULL; }
    }
    free(c.set);
    free(c.f);
    if (rc) { free(out); return -1; }
    *rows = out;
    *n = cnt;
    return 0;
}

void sens_free(struct sens_row *rows)
{
    free(rows);
}

/* A CSV field in double quotes (labels and chains hold commas). */
static void sn_quoted(FILE *f, const char *t)
{
    fputs(",\"", f);
    for (; *t; t++) {
        if (*t == '"') fputc('"', f);
        fputc(*t, f);
    }
    fputc('"', f);
}

static void sn_num(FILE *f, double x)
{
    if (isfinite(x)) fprintf(f, ",%.10g", x);
    else fputs(",", f);
}

int sens_write(const struct summary *s, const struct sens_row *rows, size_t n, struct err *e)
{
    char path[4200];
    snprintf(path, sizeof path, "%s/sensitivity.csv", s->dir);
    struct afile a;
    if (afile_open(&a, path, e)) return -1;
    results_format_write(a.f, RESULTS_SENSITIVITY_KIND);
    fprintf(a.f, "kind,method,condition,parameter,unit,from,to,loss_per_unit,loss_per_unit_lo,loss_per_unit_hi,"
                 "loss,loss_lo,loss_hi,compound,compound_loss,share,rank\n");
    for (size_t r = 0; r < n; r++) {
        const struct sens_row *x = &rows[r];
        const struct plan_cond *d = &s->p->conds[x->cond];
        fputs(x->kind == SENS_AXIS ? "axis" : "stage", a.f);
        sn_quoted(a.f, s->p->methods[x->method].name);
        fprintf(a.f, ",%s", d->name);
        sn_quoted(a.f, x->parameter);
        fprintf(a.f, ",%s", x->unit);
        const double v[9] = {x->v_min, x->v_max, x->per_unit, x->per_unit_lo, x->per_unit_hi, x->range,
                             x->range_lo, x->range_hi, NAN};
        for (int k = 0; k < 8; k++) sn_num(a.f, v[k]);
        fprintf(a.f, ",%s", x->kind == SENS_STAGE ? s->p->conds[d->part_of].name : "");
        sn_num(a.f, x->compound);
        sn_num(a.f, x->share);
        fprintf(a.f, ",%d\n", x->rank);
    }
    return afile_commit(&a, e);
}
