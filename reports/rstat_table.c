/* rstat_table.c: scalars per method x condition, aggregated over seeds. */
#include "reports/rstat.h"

#include <math.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>

static size_t name_index(const char **list, size_t *n, const char *name)
{
    for (size_t k = 0; k < *n; k++)
        if (!strcmp(list[k], name)) return k;
    list[*n] = name;
    return (*n)++;
}

/* Condition order: unperturbed first, then by family (axis stage:key or
 * name), axis value, name.  Each key carries its cell so qsort needs no
 * outside state. */
struct cond_key {
    const struct rdata_cell *c;
    size_t old;
};

static int cond_cmp(const void *a, const void *b)
{
    const struct rdata_cell *x = ((const struct cond_key *)a)->c, *y = ((const struct cond_key *)b)->c;
    int px = x->chain[0] != 0, py = y->chain[0] != 0;
    if (px != py) return px - py;
    char fx[400], fy[400];
    snprintf(fx, sizeof fx, "%s:%s", x->has_axis ? x->axis_stage : x->cond, x->has_axis ? x->axis_key : "");
    snprintf(fy, sizeof fy, "%s:%s", y->has_axis ? y->axis_stage : y->cond, y->has_axis ? y->axis_key : "");
    int r = strcmp(fx, fy);
    if (r) return r;
    if (x->has_axis && y->has_axis && x->axis_value != y->axis_value)
        return x->axis_value < y->axis_value ? -1 : 1;
    return strcmp(x->cond, y->cond);  /* same name and value: one condition */
}

static int table_sort_conds(const struct rdata_set *s, struct rstat_table *t, size_t *cond_of_cell)
{
    struct cond_key *k = malloc(t->n_conds * sizeof *k);
    size_t *map = malloc(t->n_conds * sizeof *map);
    const char **names = malloc(t->n_conds * sizeof *names);
    size_t *cell = malloc(t->n_conds * sizeof *cell);
    if (!k || !map || !names || !cell) { free(k); free(map); free(names); free(cell); return -1; }
    for (size_t c = 0; c < t->n_conds; c++) k[c] = (struct cond_key){&s->cells[t->cond_cell[c]], c};
    qsort(k, t->n_conds, sizeof *k, cond_cmp);
    for (size_t c = 0; c < t->n_conds; c++) {
        map[k[c].old] = c;
        names[c] = t->conds[k[c].old];
        cell[c] = t->cond_cell[k[c].old];
    }
    for (size_t i = 0; i < s->n; i++) cond_of_cell[i] = map[cond_of_cell[i]];
    memcpy(t->conds, names, t->n_conds * sizeof *names);
    memcpy(t->cond_cell, cell, t->n_conds * sizeof *cell);
    free(k); free(map); free(names); free(cell);
    return 0;
}

static void group_add(struct rstat_group *g, const struct rdata_cell *c, size_t cell)
{
    if (!g->n_seeds && !g->n_failed) g->first_cell = cell;
    if (!c->ok) { g->n_failed++; return; }
    g->n_seeds++;
    for (int k = 0; k < RDATA_NMETRIC; k++) {
        if (!c->m[k].present) continue;
        g->present[k]++;
        g->mean[k] += c->m[k].value;
        g->lo[k] += c->m[k].lo;   /* NaN bounds make the mean NaN: no interval */
        g->hi[k] += c->m[k].hi;
        g->sd[k] += c->m[k].value * c->m[k].value;
    }
}

static void group_finish(struct rstat_group *g)
{
    for (int k = 0; k < RDATA_NMETRIC; k++) {
        double n = g->present[k];
        if (!n) { g->mean[k] = g->lo[k] = g->hi[k] = g->sd[k] = NAN; continue; }
        double m = g->mean[k] / n, ss = g->sd[k] - n * m * m;
        g->mean[k] = m;
        g->lo[k] /= n;
        g->hi[k] /= n;
        g->sd[k] = n > 1 ? sqrt(fmax(ss, 0) / (n - 1)) : NAN;
        g->present[k] = 1;
    }
}

static void table_groups(const struct rdata_set *s, struct rstat_table *t,
                         const size_t *meth, const size_t *cond, struct rstat_group *grid)
{
    for (size_t i = 0; i < s->n; i++) group_add(&grid[meth[i] * t->n_conds + cond[i]], &s->cells[i], i);
    for (size_t m = 0; m < t->n_methods; m++) {
        t->ref_cond[m] = (size_t)-1;
        for (size_t c = 0; c < t->n_conds; c++) {
            struct rstat_group *g = &grid[m * t->n_conds + c];
            if (!g->n_seeds && !g->n_failed) continue;
            group_finish(g);
            g->method = m;
            g->cond = c;
            if (t->ref_cond[m] == (size_t)-1 && g->n_seeds) t->ref_cond[m] = c;
            t->groups[t->n_groups++] = *g;
        }
        if (t->ref_cond[m] == (size_t)-1) t->ref_cond[m] = 0;  /* every cell failed */
    }
}

/* A condition is its name plus, for a swept axis, the value. */
static void cond_key(const struct rdata_cell *c, char *out, size_t n)
{
    if (c->has_axis) snprintf(out, n, "%s (%s=%g)", c->cond, c->axis_key, c->axis_value);
    else snprintf(out, n, "%s", c->cond);
}

/* Short names: the plugin name when no other label shares it, else the label. */
static void method_names(const struct rdata_set *s, struct rstat_table *t)
{
    for (size_t m = 0; m < t->n_methods; m++) {
        const struct rdata_cell *c = NULL;
        for (size_t i = 0; i < s->n && !c; i++)
            if (t->cell_method[i] == m) c = &s->cells[i];
        int shared = !c->method[0];
        for (size_t i = 0; i < s->n && !shared; i++)
            shared = t->cell_method[i] != m && !strcmp(s->cells[i].method, c->method);
        t->methods[m] = c->alias[0] ? c->alias : shared ? t->labels[m] : c->method;
    }
}

int rstat_table_build(const struct rdata_set *s, struct rstat_table *t, struct err *e)
{
    memset(t, 0, sizeof *t);
    size_t n = s->n ? s->n : 1;
    size_t *meth = t->cell_method = malloc(n * sizeof *meth), *cond = t->cell_cond = malloc(n * sizeof *cond);
    t->cond_keys = malloc(n * sizeof *t->cond_keys);
    t->methods = malloc(n * sizeof *t->methods);
    t->labels = malloc(n * sizeof *t->labels);
    t->conds = malloc(n * sizeof *t->conds);
    t->cond_cell = malloc(n * sizeof *t->cond_cell);
    t->ref_cond = malloc(n * sizeof *t->ref_cond);
    t->groups = malloc(n * sizeof *t->groups);
    struct rstat_group *grid = NULL;
    if (!meth || !cond || !t->cond_keys || !t->methods || !t->labels || !t->conds || !t->cond_cell || !t->ref_cond || !t->groups)
        goto oom;
    for (size_t i = 0; i < s->n; i++) {
        meth[i] = name_index(t->labels, &t->n_methods, s->cells[i].label);
        size_t before = t->n_conds;
        cond_key(&s->cells[i], t->cond_keys[i], sizeof t->cond_keys[i]);
        cond[i] = name_index(t->conds, &t->n_conds, t->cond_keys[i]);
        if (t->n_conds > before) t->cond_cell[cond[i]] = i;
    }
    if (t->n_conds && table_sort_conds(s, t, cond)) goto oom;
    grid = calloc(t->n_methods * t->n_conds + 1, sizeof *grid);
    if (!grid) goto oom;
    table_groups(s, t, meth, cond, grid);
    method_names(s, t);
    free(grid);
    return 0;
oom:
    free(grid);
    rstat_table_free(t);
    return err_set(e, "out of memory building the table of %zu cells", s->n);
}

void rstat_table_free(struct rstat_table *t)
{
    free(t->methods); free(t->conds); free(t->cond_cell); free(t->ref_cond); free(t->groups);
    free(t->cond_keys); free(t->cell_method); free(t->cell_cond); free(t->labels);
    memset(t, 0, sizeof *t);
}

const struct rstat_group *rstat_find(const struct rstat_table *t, size_t method, size_t cond)
{
    for (size_t k = 0; k < t->n_groups; k++)
        if (t->groups[k].method == method && t->groups[k].cond == cond) return &t->groups[k];
    return NULL;
}
