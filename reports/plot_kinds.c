/* plot_kinds.c: the line, point and bar plot kinds, each a data file and a script
 * (the distance matrix is in plot_matrix.c, the summary chart in plot_summary.c). */
#include <math.h>
#include <stdlib.h>
#include <string.h>

#include "reports/esc.h"
#include "reports/plot_int.h"

/* The longest key entry of n series (their names; NULL or n == 0 skipped). */
static size_t key_longest(const struct plot_series *s, size_t n, size_t longest)
{
    for (size_t k = 0; s && k < n; k++)
        if (s[k].n && s[k].name && plot_key_len(s[k].name) > longest) longest = plot_key_len(s[k].name);
    return longest;
}

static double or_y(const double *v, size_t i, double y)
{
    return v && isfinite(v[i]) ? v[i] : y;
}

static int series_data(struct plot_set *ps, const char *name, const struct plot_series *s, size_t n,
                       struct err *e)
{
    struct afile a;
    if (plot_open(ps, &a, name, "dat", e)) return -1;
    fprintf(a.f, "# %s.dat: one block per series (x y lo hi), blocks apart by two blank lines\n", name);
    for (size_t k = 0; k < n; k++) {
        fprintf(a.f, "# series %zu\n", k);
        for (size_t i = 0; i < s[k].n; i++)
            fprintf(a.f, "%.9g %.9g %.9g %.9g\n", s[k].x[i], s[k].y[i], or_y(s[k].lo, i, s[k].y[i]),
                    or_y(s[k].hi, i, s[k].y[i]));
        fputs(k + 1 < n ? "\n\n" : "\n", a.f);
    }
    return plot_commit(&a, e);
}

int plot_degradation(struct plot_set *ps, const char *name, const char *title, const char *xlabel,
                     const char *ylabel, const struct plot_series *s, size_t n, struct err *e)
{
    if (series_data(ps, name, s, n, e)) return -1;
    struct afile a;
    if (plot_open(ps, &a, name, "gp", e)) return -1;
    FILE *f = a.f;
    /* Line plots put the key under the graph, so long names take no width from it. */
    struct plot_under u = plot_under_layout(n, key_longest(s, n, 0));
    plot_head(f, name, title, u.h);
    plot_under_write(f, &u);
    fputs("set xlabel ", f); esc_gp(f, xlabel);
    fputs("\nset ylabel ", f); esc_gp(f, ylabel);
    fputc('\n', f);
    /* The x axis spans the swept values exactly: no padding past them. */
    fputs("set yrange [0:1.05]\nset autoscale xfix\nset offsets 0, 0, 0, 0\n"
          "set style fill transparent solid 0.18 noborder\n", f);
    /* Each band is edged by thin lines in its series' dash pattern, so
     * overlapping bands stay apart where their tints mix. */
    for (size_t k = 0; k < n; k++)
        fprintf(f, "%s'%s.dat' index %zu using 1:3:4 with filledcurves lc rgb '%s' notitle, \\\n"
                   "     '' index %zu using 1:3 with lines ls %zu lw 0.8 notitle, '' index %zu using 1:4 with lines ls %zu lw 0.8 notitle",
                k ? ", \\\n     " : "plot ", name, k, plot_colour(k), k, k % PLOT_NCOLOURS + 1, k, k % PLOT_NCOLOURS + 1);
    for (size_t k = 0; k < n; k++) {
        fputs(", \\\n     ", f);
        fprintf(f, "'%s.dat' index %zu using 1:2 with linespoints ls %zu title ", name, k, k % PLOT_NCOLOURS + 1);
        plot_key_title(f, s[k].name);
    }
    fputc('\n', f);
    plot_tail(f, name, u.h);
    if (plot_commit(&a, e)) return -1;
    return plot_finish(ps, name, title, PLOT_DEGRADATION, e);
}

/* The F1max point of each series (the largest 2PR/(P+R) on its curve), one
 * block per series, into NAME-f1max.dat. */
static int pr_marks(struct plot_set *ps, const char *name, const struct plot_series *s, size_t n, struct err *e)
{
    char stem[96];
    snprintf(stem, sizeof stem, "%s-f1max", name);
    struct afile a;
    if (plot_open(ps, &a, stem, "dat", e)) return -1;
    fprintf(a.f, "# %s.dat: the F1max point (recall precision) of each series, one block each\n", stem);
    for (size_t k = 0; k < n; k++) {
        size_t best = 0;
        double bf = -1;
        for (size_t i = 0; i < s[k].n; i++) {
            double r = s[k].x[i], p = s[k].y[i], f = r + p > 0 ? 2 * r * p / (r + p) : 0;
            if (f > bf) { bf = f; best = i; }
        }
        fprintf(a.f, "%.9g %.9g\n%s", s[k].x[best], s[k].y[best], k + 1 < n ? "\n\n" : "");
    }
    return plot_commit(&a, e);
}

/* NAME-oppoints.dat: recall precision series colour (0xRRGGBB) per point. */
static int pr_ops_data(struct plot_set *ps, const char *name, const struct plot_oppoint *ops, size_t n_ops,
                       struct err *e)
{
    char stem[96];
    snprintf(stem, sizeof stem, "%s-oppoints", name);
    struct afile a;
    if (plot_open(ps, &a, stem, "dat", e)) return -1;
    fprintf(a.f, "# %s.dat: operating points: recall precision series colour\n", stem);
    for (size_t k = 0; k < n_ops; k++)
        fprintf(a.f, "%.9g %.9g %zu %ld\n", ops[k].recall, ops[k].precision, ops[k].series,
                strtol(plot_colour(ops[k].series) + 1, NULL, 16));
    return plot_commit(&a, e);
}

/* Each operating point's label, beside it, inward from the nearer edge, on
 * a white ground so the curves under it do not cross the text. */
static void pr_ops_labels(FILE *f, const struct plot_oppoint *ops, size_t n_ops)
{
    if (n_ops) fputs("set style textbox opaque noborder\n", f);
    for (size_t k = 0; k < n_ops; k++) {
        int right = ops[k].recall > 0.55;
        fprintf(f, "set label %zu ", 10 + k);
        esc_gp(f, ops[k].label);
        fprintf(f, " at %.9g, %.9g %s offset %s,-1.1 front boxed\n", ops[k].recall, ops[k].precision,
                right ? "right" : "left", right ? "-1" : "1");
    }
}

int plot_pr(struct plot_set *ps, const char *name, const char *title, const struct plot_series *s, size_t n,
            const struct plot_series *behind, const struct plot_oppoint *ops, size_t n_ops, struct err *e)
{
    char ref[96];
    snprintf(ref, sizeof ref, "%s-reference", name);
    size_t nb = 0;
    for (size_t k = 0; behind && k < n; k++) nb += behind[k].n > 0;
    if (series_data(ps, name, s, n, e) || (nb && series_data(ps, ref, behind, n, e)) || pr_marks(ps, name, s, n, e) ||
        (n_ops && pr_ops_data(ps, name, ops, n_ops, e)))
        return -1;
    struct afile a;
    if (plot_open(ps, &a, name, "gp", e)) return -1;
    FILE *f = a.f;
    static const char op_key[] = "operating point (threshold carried)";
    struct plot_under u = plot_under_layout(n + nb + 1 + (n_ops > 0),
                                            key_longest(behind, n, key_longest(s, n, strlen(op_key))));
    plot_head(f, name, title, u.h);
    plot_under_write(f, &u);
    pr_ops_labels(f, ops, n_ops);
    fputs("set xlabel 'recall'\nset ylabel 'precision'\nset xrange [0:1]\nset yrange [0:1.05]\nplot ", f);
    /* The reference curves first, thin and dotted, so the perturbed ones lie on top. */
    for (size_t k = 0; nb && k < n; k++) {
        if (!behind[k].n) continue;
        fprintf(f, "'%s.dat' index %zu using 1:2 with lines lc rgb '%s' lw 1 dt (2,3) title ", ref, k, plot_colour(k));
        plot_key_title(f, behind[k].name);
        fputs(", \\\n     ", f);
    }
    for (size_t k = 0; k < n; k++) {
        fprintf(f, "'%s.dat' index %zu using 1:2 with lines ls %zu title ", name, k, k % PLOT_NCOLOURS + 1);
        plot_key_title(f, s[k].name);
        fprintf(f, ", \\\n     '%s-f1max.dat' index %zu using 1:2 with points ls %zu pt 7 ps 1.8 %s", name, k,
                k % PLOT_NCOLOURS + 1, k ? "notitle" : "title 'F1max point'");
        fputs(k + 1 < n ? ", \\\n     " : "", f);
    }
    /* Operating points: a black-edged square in the curve's colour. */
    if (n_ops)
        fprintf(f, ", \\\n     '%s-oppoints.dat' using 1:2 with points pt 5 ps 1.9 lc rgb 'black' title '%s'"
                   ", \\\n     '' using 1:2:4 with points pt 5 ps 1.2 lc rgb variable notitle", name, op_key);
    fputc('\n', f);
    plot_tail(f, name, u.h);
    if (plot_commit(&a, e)) return -1;
    return plot_finish(ps, name, title, PLOT_PR, e);
}

static void track_rows(FILE *f, const struct rdata_track *t)
{
    long prev = -2;
    for (size_t i = 0; i < t->n; i++) {
        if (!t->has[i]) continue;
        if (prev >= 0 && (long)i != prev + 1) fputc('\n', f);
        fprintf(f, "%.9g %.9g %zu\n", t->x[i], t->y[i], i);
        prev = (long)i;
    }
}

/* One data file per layer, NAME-LAYER.dat, so no layer is an empty block. */
static const char *const traj_layers[5] = {"map", "query", "correct", "wrong", "missed"};

static int traj_data(struct plot_set *ps, const char *name, const struct rdata_poses *p,
                     const struct rstat_outcomes *o, struct err *e)
{
    static const enum rstat_class cls[5] = {0, 0, RSTAT_CORRECT, RSTAT_WRONG, RSTAT_MISSED};
    for (int b = 0; b < 5; b++) {
        char stem[128];
        snprintf(stem, sizeof stem, "%s-%s", name, traj_layers[b]);
        struct afile a;
        if (plot_open(ps, &a, stem, "dat", e)) return -1;
        fprintf(a.f, "# %s.dat: %s\n", stem, b < 2 ? "path: x y scan" : b == 3 ?
                "accepted wrong: x y dx dy query cand" : "x y query");
        if (b < 2) track_rows(a.f, b ? &p->query : &p->map);
        for (size_t k = 0; b >= 2 && k < o->n; k++) {
            const struct rstat_outcome *r = &o->o[k];
            if (r->cls != cls[b]) continue;
            if (b == 3)
                fprintf(a.f, "%.9g %.9g %.9g %.9g %ld %ld\n", r->qx, r->qy, r->cx - r->qx, r->cy - r->qy,
                        r->query, r->cand);
            else
                fprintf(a.f, "%.9g %.9g %ld\n", r->qx, r->qy, r->query);
        }
        if (plot_commit(&a, e)) return -1;
    }
    return 0;
}

int plot_traj(struct plot_set *ps, const char *name, const char *title, const struct rdata_poses *p,
              const struct rstat_outcomes *o, struct err *e)
{
    if (traj_data(ps, name, p, o, e)) return -1;
    struct afile a;
    if (plot_open(ps, &a, name, "gp", e)) return -1;
    FILE *f = a.f;
    plot_head(f, name, title, PLOT_H_PX);
    /* Shapes as well as colours tell the outcomes apart: filled circles,
     * filled triangles with dashed segments, open squares. */
    fputs("set size ratio -1\nset xlabel 'x (m)'\nset ylabel 'y (m)'\nset offsets graph 0.03, graph 0.03, graph 0.03, graph 0.03\n", f);
    const char *sep = "plot ", *next = ", \\\n     ";
    if (p->map.n) {
        /* Map and query paths in two palette colours (light blue, solid; orange, dashed). */
        fprintf(f, "%s'%s-map.dat' using 1:2 with lines lc rgb '%s' lw 2 title 'map path'", sep, name,
                p->query.n ? plot_colour(4) : "#9a9a9a");
        sep = next;
    }
    if (p->query.n) {
        fprintf(f, "%s'%s-query.dat' using 1:2 with lines lc rgb '%s' lw 1.5 dt (4,3) title 'query path'",
                sep, name, plot_colour(3));
        sep = next;
    }
    if (o->by_class[RSTAT_WRONG]) {
        fprintf(f, "%s'%s-wrong.dat' using 1:2:3:4 with vectors nohead lc rgb '%s' lw 1 dt (6,3) notitle, "
                   "'' using 1:2 with points pt 9 ps 1.1 lc rgb '%s' title 'accepted wrong'",
                sep, name, plot_colour(1), plot_colour(1));
        sep = next;
    }
    if (o->by_class[RSTAT_CORRECT]) {
        fprintf(f, "%s'%s-correct.dat' using 1:2 with points pt 7 ps 0.7 lc rgb '%s' title 'accepted correct'",
                sep, name, plot_colour(2));
        sep = next;
    }
    if (o->by_class[RSTAT_MISSED])
        fprintf(f, "%s'%s-missed.dat' using 1:2 with points pt 4 ps 0.9 lw 1.5 lc rgb '%s' title 'missed revisit'",
                sep, name, plot_colour(0));
    fputc('\n', f);
    plot_tail(f, name, PLOT_H_PX);
    if (plot_commit(&a, e)) return -1;
    return plot_finish(ps, name, title, PLOT_TRAJ, e);
}

static void threshold_mark(FILE *f, int k, double tau, const char *text, const char *colour, double at)
{
    if (!isfinite(tau)) return;
    fprintf(f, "set arrow %d from %.9g, graph 0 to %.9g, graph 1 nohead lw 2 dt (8,4) lc rgb '%s' front\n",
            k, tau, tau, colour);
    fprintf(f, "set label %d '%s' at %.9g, graph %.2f left offset 0.5,0 front\n", k, text, tau, at);
}

int plot_hist(struct plot_set *ps, const char *name, const char *title, const struct rstat_hist *h,
              double tau_f1, double tau_r100, struct err *e)
{
    double w = h->nbins > 1 ? (h->hi - h->lo) / (double)h->nbins : fmax(fabs(h->lo) * 0.1, 0.05);
    struct afile a;
    if (plot_open(ps, &a, name, "dat", e)) return -1;
    fprintf(a.f, "# %s.dat: bin_lo bin_hi correct wrong no_revisit (top-1 descriptor distance)\n", name);
    for (size_t b = 0; b < h->nbins; b++)
        fprintf(a.f, "%.9g %.9g %zu %zu %zu\n", h->lo + (double)b * w, h->lo + (double)(b + 1) * w,
                h->correct[b], h->wrong[b], h->norev[b]);
    if (plot_commit(&a, e)) return -1;
    if (plot_open(ps, &a, name, "gp", e)) return -1;
    FILE *f = a.f;
    static const char *const bars[3] = {"correct top-1 (within r_pos)", "wrong top-1 (beyond r_neg, a revisit existed)",
                                        "no revisit to find (top-1 beyond r_neg)"};
    struct plot_under u = plot_under_layout(3, strlen(bars[1]));
    plot_head(f, name, title, u.h);
    plot_under_write(f, &u);
    fprintf(f, "set xlabel 'top-1 descriptor distance'\nset ylabel 'queries'\nset yrange [0:*]\n"
               "set boxwidth %.9g absolute\n", w / 3);
    char text[80];
    snprintf(text, sizeof text, "F1max threshold %.4g", tau_f1);
    threshold_mark(f, 1, tau_f1, text, plot_colour(0), 0.95);
    snprintf(text, sizeof text, "R@100P threshold %.4g", tau_r100);
    threshold_mark(f, 2, tau_r100, text, plot_colour(3), 0.85);
    /* Three bars per bin, solid, hatched and crossed, so grey print keeps them apart. */
    fprintf(f, "plot '%s.dat' using (($1+$2)/2 - %.9g):3 with boxes fs solid 0.75 border lt -1 "
               "lc rgb '%s' title '%s', \\\n"
               "     '' using (($1+$2)/2):4 with boxes fs pattern 4 border lt -1 "
               "lc rgb '%s' title '%s', \\\n"
               "     '' using (($1+$2)/2 + %.9g):5 with boxes fs pattern 2 border lt -1 "
               "lc rgb '%s' title '%s'\n",
            name, w / 3, plot_colour(2), bars[0], plot_colour(1), bars[1], w / 3, plot_colour(4), bars[2]);
    plot_tail(f, name, u.h);
    if (plot_commit(&a, e)) return -1;
    return plot_finish(ps, name, title, PLOT_HIST, e);
}

int plot_sensitivity(struct plot_set *ps, const char *name, const char *title, const char *const *names,
                     size_t n_names, const struct plot_series *s, size_t n, struct err *e)
{
    double bw = 0.8 / (double)(n ? n : 1);
    struct afile a;
    if (plot_open(ps, &a, name, "dat", e)) return -1;
    fprintf(a.f, "# %s.dat: one block per series; parameter_index loss lo hi (F1max lost across the range)\n", name);
    for (size_t k = 0; k < n; k++) {
        for (size_t i = 0; i < s[k].n; i++)
            fprintf(a.f, "%.9g %.9g %.9g %.9g\n", s[k].x[i], s[k].y[i], s[k].lo ? s[k].lo[i] : s[k].y[i],
                    s[k].hi ? s[k].hi[i] : s[k].y[i]);
        fprintf(a.f, "\n\n");
    }
    if (plot_commit(&a, e)) return -1;
    if (plot_open(ps, &a, name, "gp", e)) return -1;
    FILE *f = a.f;
    plot_head(f, name, title, PLOT_H_PX);
    fprintf(f, "set ylabel 'F1max lost across the swept range'\nset xrange [-0.6:%.9g]\n"
               "set boxwidth %.9g absolute\nset key outside top center horizontal\nset xtics (", (double)n_names - 0.4, bw);
    for (size_t i = 0; i < n_names; i++) {
        if (i) fputs(", ", f);
        esc_gp(f, names[i]);
        fprintf(f, " %zu", i);
    }
    fprintf(f, ")\nset xtics rotate by -20\nset xzeroaxis\nset yrange [*<0:*]\nplot ");
    /* One solid bar per method, side by side, its interval as an error bar. */
    for (size_t k = 0; k < n; k++) {
        double off = ((double)k - ((double)n - 1) / 2) * bw;
        fprintf(f, "%s'%s.dat' index %zu using ($1%+.9g):2 with boxes fs solid 0.7 border lt -1 lc rgb '%s' title ",
                k ? ", \\\n     " : "", name, k, off, plot_colour(k % PLOT_NCOLOURS));
        esc_gp(f, s[k].name);
        fprintf(f, ", '' index %zu using ($1%+.9g):2:3:4 with yerrorbars lt -1 pt 0 notitle", k, off);
    }
    fputc('\n', f);
    plot_tail(f, name, PLOT_H_PX);
    if (plot_commit(&a, e)) return -1;
    return plot_finish(ps, name, title, PLOT_SENSITIVITY, e);
}
