/* report_text.c: text the report document uses: findings, cell values, caution. */
#include "reports/report_int.h"

#include <ctype.h>
#include <math.h>
#include <stdarg.h>
#include <stdio.h>
#include <string.h>

const char report_caution[] =
    "Results on recorded or synthetic data do not show that a vehicle is safe. Loop closure "
    "feeds navigation: acceptance decisions follow the organisation's safety process, local "
    "regulations and the standards that apply (for road vehicles, e.g. ISO 26262 and ISO 21448), "
    "signed off by qualified safety engineers. A verdict of this tool is evidence for that "
    "process, never a substitute for it.";

void report_plot_name(char *out, size_t n, const char *kind, size_t index, const char *what)
{
    int k = snprintf(out, n, "%s-%zu", kind, index);
    if (k < 0 || (size_t)k >= n) { if (n) out[0] = 0; return; }
    size_t len = (size_t)k, kept = 0;
    int dash = 1;  /* a '-' goes before the next letter or digit */
    for (const unsigned char *p = (const unsigned char *)what; *p && kept < 32; p++) {
        if (!isalnum(*p)) { dash = 1; continue; }
        if (len + (size_t)dash + 1 >= n) break;
        if (dash) out[len++] = '-';
        out[len++] = (char)tolower(*p);
        kept++;
        dash = 0;
    }
    out[len] = 0;
}

const char *report_cond_name(const struct rstat_table *t, size_t c)
{
    return t->conds[c][0] ? t->conds[c] : "none";
}

void report_cell_text(const struct rstat_group *g, int metric, char *out, size_t n)
{
    if (!g) { snprintf(out, n, "-"); return; }
    if (!g->n_seeds) { snprintf(out, n, "failed"); return; }
    if (!g->present[metric] || isnan(g->mean[metric])) { snprintf(out, n, "-"); return; }
    size_t k = 0;
    if (isfinite(g->lo[metric]) && isfinite(g->hi[metric]))
        k = (size_t)snprintf(out, n, "%.3f [%.3f, %.3f]", g->mean[metric], g->lo[metric], g->hi[metric]);
    else
        k = (size_t)snprintf(out, n, "%.3f", g->mean[metric]);
    if (k < n && g->n_seeds > 1 && isfinite(g->sd[metric]))
        snprintf(out + k, n - k, " sd %.3f", g->sd[metric]);
}

static void add(struct report_doc *d, const char *fmt, ...) __attribute__((format(printf, 2, 3)));
static void add(struct report_doc *d, const char *fmt, ...)
{
    if (d->n_findings >= REPORT_FINDINGS_MAX) return;
    va_list ap;
    va_start(ap, fmt);
    vsnprintf(d->findings[d->n_findings++], sizeof d->findings[0], fmt, ap);
    va_end(ap);
}

/* Append to the last finding. */
static void more(struct report_doc *d, const char *fmt, ...) __attribute__((format(printf, 2, 3)));
static void more(struct report_doc *d, const char *fmt, ...)
{
    char *f = d->findings[d->n_findings - 1];
    size_t l = strlen(f);
    va_list ap;
    va_start(ap, fmt);
    vsnprintf(f + l, sizeof d->findings[0] - l, fmt, ap);
    va_end(ap);
}

static double f1(const struct rstat_table *t, size_t m, size_t c)
{
    const struct rstat_group *g = rstat_find(t, m, c);
    return g && g->n_seeds ? g->mean[RDATA_F1MAX] : NAN;
}

/* Finding 1: per method, the condition with the largest F1max drop from its
 * reference, methods in order of that drop, largest first. */
static void find_worst(struct report_doc *d)
{
    const struct rstat_table *t = d->table;
    size_t n = t->n_methods, worst[REPORT_FINDINGS_ITEMS], order[REPORT_FINDINGS_ITEMS];
    double drop[REPORT_FINDINGS_ITEMS];
    if (n > REPORT_FINDINGS_ITEMS) n = REPORT_FINDINGS_ITEMS;
    if (t->n_conds < 2) return;
    for (size_t m = 0; m < n; m++) {
        size_t ref = t->ref_cond[m];
        double fr = f1(t, m, ref);
        worst[m] = ref;
        drop[m] = -INFINITY;
        for (size_t c = 0; c < t->n_conds; c++) {
            double fc = f1(t, m, c);
            if (c != ref && !isnan(fc) && fr - fc > drop[m]) { drop[m] = fr - fc; worst[m] = c; }
        }
        if (isnan(fr)) drop[m] = -INFINITY;
        order[m] = m;
    }
    for (size_t a = 0; a < n; a++)
        for (size_t b = a + 1; b < n; b++)
            if (drop[order[b]] > drop[order[a]]) { size_t x = order[a]; order[a] = order[b]; order[b] = x; }
    add(d, "The condition that hurts each method most (F1max, from its reference condition):");
    for (size_t k = 0; k < n; k++) {
        size_t m = order[k];
        if (!(drop[m] > 0)) { more(d, "%s %s: no condition lowers it", k ? ";" : "", t->methods[m]); continue; }
        more(d, "%s %s: %s, %.3f to %.3f (%+.3f, reference %s)", k ? ";" : "", t->methods[m],
             report_cond_name(t, worst[m]), f1(t, m, t->ref_cond[m]), f1(t, m, worst[m]), -drop[m],
             report_cond_name(t, t->ref_cond[m]));
    }
    more(d, ".");
}

static void family_of(const struct rdata_cell *c, char *out, size_t n)
{
    if (c->has_axis) snprintf(out, n, "%s %s", c->axis_stage, c->axis_key);
    else if (c->chain[0]) snprintf(out, n, "%.*s", (int)strcspn(c->chain, ":+"), c->chain);
    else snprintf(out, n, "unperturbed");
}

/* The mean F1max of method m over the conditions of family fam. */
static double family_mean(const struct report_doc *d, size_t m, const char *fam, size_t from, size_t *nc)
{
    const struct rstat_table *t = d->table;
    double sum = 0;
    size_t k = 0;
    for (size_t c = from; c < t->n_conds; c++) {
        char other[200];
        family_of(&d->set->cells[t->cond_cell[c]], other, sizeof other);
        double v = f1(t, m, c);
        if (!strcmp(fam, other) && !isnan(v)) { sum += v; k++; }
    }
    *nc = k;
    return k ? sum / (double)k : NAN;
}

/* Finding 2: per condition family (swept axis, or first stage of the
 * chain), the method with the best mean F1max over the family. */
static void find_best(struct report_doc *d)
{
    const struct rstat_table *t = d->table;
    if (t->n_methods < 2) return;
    add(d, "The best method per condition family (mean F1max over the family's conditions):");
    size_t shown = 0;
    for (size_t c0 = 0; c0 < t->n_conds; c0++) {
        char fam[200], other[200];
        family_of(&d->set->cells[t->cond_cell[c0]], fam, sizeof fam);
        int seen = 0;
        for (size_t c1 = 0; c1 < c0 && !seen; c1++) {
            family_of(&d->set->cells[t->cond_cell[c1]], other, sizeof other);
            seen = !strcmp(fam, other);
        }
        if (seen) continue;
        double best = -INFINITY, second = -INFINITY;
        size_t bm = 0, nc = 0, k;
        for (size_t m = 0; m < t->n_methods; m++) {
            double v = family_mean(d, m, fam, c0, &k);
            if (isnan(v)) continue;
            if (v > best) { second = best; best = v; bm = m; nc = k; }
            else if (v > second) second = v;
        }
        if (isinf(best)) continue;
        more(d, "%s %s: %s %.3f over %zu condition%s", shown++ ? ";" : "", fam, t->methods[bm], best, nc,
             nc == 1 ? "" : "s");
        if (isfinite(second)) more(d, ", %.3f ahead of the next", best - second);
    }
    more(d, ".");
}

static void find_criterion(struct report_doc *d)
{
    const struct rdata_set *s = d->set;
    if (!s->n_verdicts) return;
    size_t best = 0;
    double bm = INFINITY;
    for (size_t k = 0; k < s->n_verdicts; k++) {
        double m = fabs(s->verdicts[k].measured - s->verdicts[k].threshold);
        if (m < bm) { bm = m; best = k; }
    }
    const struct rdata_verdict *v = &s->verdicts[best];
    add(d, "Criterion \"%s\" is nearest its threshold: measured %.3f %s %.3f (margin %.3f), %s.", v->text,
        v->measured, v->cmp, v->threshold, bm, v->pass ? "passed" : "failed");
}

void report_findings(struct report_doc *d)
{
    find_worst(d);
    find_best(d);
    find_criterion(d);
}

size_t report_distinct(const struct rdata_set *s, size_t offset, const char **out, size_t max)
{
    size_t n = 0;
    for (size_t i = 0; i < s->n && n < max; i++) {
        const char *v = (const char *)&s->cells[i] + offset;
        if (!v[0]) continue;
        size_t k = 0;
        while (k < n && strcmp(out[k], v)) k++;
        if (k == n) out[n++] = v;
    }
    return n;
}

size_t report_seeds(const struct rdata_set *s, unsigned long long *out, size_t max)
{
    size_t n = 0;
    for (size_t i = 0; i < s->n && n < max; i++) {
        size_t k = 0;
        while (k < n && out[k] != s->cells[i].seed) k++;
        if (k == n) out[n++] = s->cells[i].seed;
    }
    return n;
}
