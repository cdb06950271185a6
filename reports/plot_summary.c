/* plot_summary.c: the summary chart: one row per condition, per metric a
 * panel, per method a point with its interval and a dashed line at the
 * method's baseline value.  Both images come from one pass loop, since a
 * multiplot cannot be replotted. */
#include <math.h>
#include <string.h>

#include "reports/esc.h"
#include "reports/plot_int.h"

#define SUMMARY_ROW_PX 24
#define SUMMARY_TOP_PX 70   /* the chart's title and the panels' titles */

static int summary_data(struct plot_set *ps, const char *name, size_t n_rows, const struct plot_dots *d,
                        size_t n, struct err *e)
{
    struct afile a;
    if (plot_open(ps, &a, name, "dat", e)) return -1;
    fprintf(a.f, "# %s.dat: one block per panel and method (row value lo hi), rows from 0 at the top, "
                 "blocks apart by two blank lines\n", name);
    for (size_t k = 0; k < n; k++) {
        fprintf(a.f, "# panel %s, method %zu, baseline %.9g\n", d[k].panel, d[k].series, d[k].base);
        size_t rows = 0;
        for (size_t r = 0; r < n_rows; r++) {
            if (!isfinite(d[k].x[r])) continue;
            double lo = isfinite(d[k].lo[r]) ? d[k].lo[r] : d[k].x[r];
            double hi = isfinite(d[k].hi[r]) ? d[k].hi[r] : d[k].x[r];
            fprintf(a.f, "%zu %.9g %.9g %.9g\n", r, d[k].x[r], lo, hi);
            rows++;
        }
        if (!rows) fputs("nan nan nan nan\n", a.f);  /* keeps the block, draws nothing */
        fputs(k + 1 < n ? "\n\n" : "\n", a.f);
    }
    return plot_commit(&a, e);
}

/* One panel: its place on the page, the rows, the baselines, the points. */
static void summary_panel(FILE *f, const char *name, size_t p, size_t n_panels, const char *const *rows,
                          size_t n_rows, const struct plot_dots *d, size_t n, size_t n_series)
{
    const double left = 0.22, gap = 0.03, right = 0.98, w = (right - left - gap * (double)(n_panels - 1)) / (double)n_panels;
    double x0 = left + (double)p * (w + gap);
    fprintf(f, "  set lmargin at screen %.4f\n  set rmargin at screen %.4f\n", x0, x0 + w);
    fputs("  set title ", f);
    esc_gp(f, d[p * n_series].panel);
    fputs("\n  set ytics (", f);
    for (size_t r = 0; r < n_rows; r++) {
        fputs(r ? ", " : "", f);
        if (p) fputs("\"\"", f);
        else esc_gp(f, rows[r]);
        fprintf(f, " %zu", r);
    }
    fprintf(f, ")\n  unset arrow\n");
    for (size_t s = 0; s < n_series; s++) {
        const struct plot_dots *k = &d[p * n_series + s];
        if (isfinite(k->base))
            fprintf(f, "  set arrow from %.9g, graph 0 to %.9g, graph 1 nohead lc rgb '%s' lw 1.5 dt (6,4)\n",
                    k->base, k->base, plot_colour(s));
    }
    for (size_t s = 0; s < n_series; s++) {
        double off = n_series > 1 ? ((double)s - (double)(n_series - 1) / 2) * 0.6 / (double)n_series : 0;
        fprintf(f, "%s'%s.dat' index %zu using 2:($1%+.4f):3:4 with xerrorbars ls %zu ", s ? ", \\\n       " : "  plot ",
                name, p * n_series + s, off, s % PLOT_NCOLOURS + 1);
        if (p) { fputs("notitle", f); continue; }
        fputs("title ", f);
        plot_key_title(f, d[s].name);
    }
    fputc('\n', f);
    (void)n;
}

int plot_summary(struct plot_set *ps, const char *name, const char *title, const char *const *rows, size_t n_rows,
                 const struct plot_dots *d, size_t n_panels, size_t n_series, struct err *e)
{
    size_t n = n_panels * n_series;
    if (!n_rows || !n || summary_data(ps, name, n_rows, d, n, e)) return n_rows && n ? -1 : 0;
    struct afile a;
    if (plot_open(ps, &a, name, "gp", e)) return -1;
    FILE *f = a.f;
    size_t longest = 0;
    for (size_t s = 0; s < n_series; s++)
        if (plot_key_len(d[s].name) > longest) longest = plot_key_len(d[s].name);
    struct plot_under u = plot_under_layout(n_series, longest);
    u.h = (unsigned)(SUMMARY_TOP_PX + SUMMARY_ROW_PX * n_rows) + u.bottom_px;
    plot_head(f, name, title, u.h);
    plot_under_write(f, &u);
    fprintf(f, "unset title\nset xrange [0:1]\nset yrange [%zu.5:-0.5]\nset grid xtics noytics\n"
               "set xlabel 'score (1 is best)'\nset tmargin at screen %.4f\n"
               "set style line 100 lc rgb '#d0d0d0'\nset errorbars large\n",
            n_rows - 1, 1 - (double)SUMMARY_TOP_PX / u.h);
    fprintf(f, "do for [pass=1:2] {\n  if (pass == 1) { set terminal pngcairo noenhanced size %u,%u font 'Sans,11'; "
               "set output '%s.png' } else { set terminal svg noenhanced size %u,%u font 'Sans,11'; "
               "set output '%s.svg' }\n  set multiplot title ", PLOT_W_PX, u.h, name, PLOT_W_PX, u.h, name);
    esc_gp(f, title);
    fputc('\n', f);
    for (size_t p = 0; p < n_panels; p++) summary_panel(f, name, p, n_panels, rows, n_rows, d, n, n_series);
    fputs("  unset multiplot\n}\nunset output\n", f);
    if (plot_commit(&a, e)) return -1;
    return plot_finish(ps, name, title, PLOT_SUMMARY, e);
}
