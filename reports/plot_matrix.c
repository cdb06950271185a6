/* plot_matrix.c: the distance matrix as an image, one pixel (or a square
 * of pixels) per distance, with the true revisits marked.
 *
 * Layout: the image area is exactly k pixels per shown cell (k = 1 for a
 * matrix of PLOT_MATRIX_FULL_PX cells or more a side, larger for small
 * ones), so every distance of a recording of up to PLOT_MATRIX_MAX_PX
 * scans is its own pixel; a larger matrix is shown with each pixel the
 * smallest distance of an f x f block, so a dark revisit band stays dark.
 * NAME.bin holds the shown distances (float32, row-major, for gnuplot's
 * `binary array`), NAME.dat the true revisits (column row, in shown cells)
 * and, for large images, the dotted edges drawn either side of each run of
 * true revisits in a row, which leave the band itself in view. */
#include <math.h>
#include <stdint.h>
#include <stdlib.h>
#include <string.h>

#include "reports/esc.h"
#include "reports/plot_int.h"

#define PLOT_MATRIX_FULL_PX 480   /* the image's side at least, when the matrix is small */
#define PLOT_MATRIX_MAX_PX 2000   /* the image's side at most: larger matrices are pooled */
#define PLOT_MATRIX_RINGS 3       /* pixels per cell from which true revisits are rings */
#define MX_LEFT 100
#define MX_RIGHT 300
#define MX_TOP 60
#define MX_BOTTOM 90

/* What is drawn: rows x cols cells, each the smallest of f x f distances. */
struct mx_view {
    size_t f, rows, cols, k;     /* pooling factor, shown cells, pixels per cell */
};

size_t plot_matrix_pool(const struct matrix_csv *m)
{
    size_t n = m->rows > m->cols ? m->rows : m->cols;
    return (n + PLOT_MATRIX_MAX_PX - 1) / PLOT_MATRIX_MAX_PX;
}

static struct mx_view mx_view(const struct matrix_csv *m)
{
    struct mx_view v;
    v.f = plot_matrix_pool(m);
    v.rows = (m->rows + v.f - 1) / v.f;
    v.cols = (m->cols + v.f - 1) / v.f;
    size_t shown = v.rows > v.cols ? v.rows : v.cols;
    v.k = shown >= PLOT_MATRIX_FULL_PX ? 1 : (PLOT_MATRIX_FULL_PX + shown - 1) / shown;
    return v;
}

static int mx_image(struct plot_set *ps, const char *name, const struct matrix_csv *m, const struct mx_view *v,
                    struct err *e)
{
    struct afile a;
    if (plot_open(ps, &a, name, "bin", e)) return -1;
    for (size_t r = 0; r < v->rows; r++)
        for (size_t c = 0; c < v->cols; c++) {
            float best = NAN;
            for (size_t i = r * v->f; i < (r + 1) * v->f && i < m->rows; i++)
                for (size_t j = c * v->f; j < (c + 1) * v->f && j < m->cols; j++) {
                    double d = m->d[i * m->cols + j];
                    if (!isnan(d) && (isnan(best) || d < best)) best = (float)d;
                }
            unsigned char b[4];
            uint32_t u;
            memcpy(&u, &best, 4);
            for (int k = 0; k < 4; k++) b[k] = (unsigned char)(u >> (8 * k));  /* little-endian */
            fwrite(b, 1, 4, a.f);
        }
    return plot_commit(&a, e);
}

/* Block 0: each true revisit (shown column, row); block 1: the two edge
 * dots of each run of true revisits within a shown row. */
static int mx_truth(struct plot_set *ps, const char *name, const struct matrix_csv *m, const struct mx_view *v,
                    const unsigned char *truth, size_t *n_true, struct err *e)
{
    unsigned char *t = calloc(v->rows * v->cols + 1, 1);
    if (!t) return err_set(e, "out of memory for the matrix truth marks");
    for (size_t i = 0; i < m->rows; i++)
        for (size_t j = 0; j < m->cols; j++)
            if (truth[i * m->cols + j]) t[(i / v->f) * v->cols + j / v->f] = 1;
    struct afile a;
    if (plot_open(ps, &a, name, "dat", e)) { free(t); return -1; }
    fprintf(a.f, "# %s.dat: block 0 true revisits (column row, cells of %s.bin), block 1 the edges of each "
                 "row's runs of them\n", name, name);
    *n_true = 0;
    for (size_t r = 0; r < v->rows; r++)
        for (size_t c = 0; c < v->cols; c++)
            if (t[r * v->cols + c]) { fprintf(a.f, "%zu %zu\n", c, r); (*n_true)++; }
    fputs("\n\n", a.f);
    for (size_t r = 0; r < v->rows; r++)
        for (size_t c = 0; c < v->cols; c++) {
            if (!t[r * v->cols + c] || (c && t[r * v->cols + c - 1])) continue;
            size_t end = c;
            while (end + 1 < v->cols && t[r * v->cols + end + 1]) end++;
            fprintf(a.f, "%.1f %zu\n%.1f %zu\n", (double)c - 2.5, r, (double)end + 2.5, r);
        }
    free(t);
    return plot_commit(&a, e);
}

/* About eight tics labelled with the scan indices the shown cells start at. */
static void mx_tics(FILE *f, const char *axis, const long *idx, size_t n, size_t fct)
{
    size_t shown = (n + fct - 1) / fct, step = shown > 8 ? (shown + 7) / 8 : 1;
    fprintf(f, "set %stics (", axis);
    for (size_t k = 0; k < shown; k += step) fprintf(f, "%s\"%ld\" %zu", k ? ", " : "", idx[k * fct], k);
    fputs(") out nomirror\n", f);
}

/* The frame: margins in pixels, so each cell is exactly k x k pixels. */
static void mx_frame(FILE *f, const struct mx_view *v, unsigned w, unsigned h)
{
    unsigned iw = (unsigned)(v->k * v->cols), ih = (unsigned)(v->k * v->rows);
    fprintf(f, "set lmargin at screen %.6f\nset rmargin at screen %.6f\n", (double)MX_LEFT / w,
            (double)(MX_LEFT + iw) / w);
    fprintf(f, "set bmargin at screen %.6f\nset tmargin at screen %.6f\n", (double)MX_BOTTOM / h,
            (double)(MX_BOTTOM + ih) / h);
    fprintf(f, "set xrange [-0.5:%zu.5]\nset yrange [%zu.5:-0.5]\n", v->cols - 1, v->rows - 1);
    fprintf(f, "set colorbox user origin screen %.6f, screen %.6f size screen %.6f, screen %.6f\n",
            (double)(MX_LEFT + iw + 16) / w, (double)MX_BOTTOM / h, 18.0 / w, (double)ih / h);
    fprintf(f, "set key at screen %.6f, screen %.6f left bottom box opaque\n", (double)(MX_LEFT + iw + 16) / w,
            8.0 / h);
}

int plot_matrix(struct plot_set *ps, const char *name, const char *title,
                const struct matrix_csv *m, const unsigned char *truth, struct err *e)
{
    struct mx_view v = mx_view(m);
    size_t n_true = 0;
    if (mx_image(ps, name, m, &v, e) || mx_truth(ps, name, m, &v, truth, &n_true, e)) return -1;
    unsigned w = (unsigned)(MX_LEFT + v.k * v.cols + MX_RIGHT), h = (unsigned)(MX_TOP + v.k * v.rows + MX_BOTTOM);
    struct afile a;
    if (plot_open(ps, &a, name, "gp", e)) return -1;
    FILE *f = a.f;
    plot_head_size(f, name, title, w, h);
    /* A lightness ramp in the palette's own colours: near (small distance)
     * is dark, far is light, so the image reads the same in grey.  True
     * revisits are rings drawn twice, black under white, visible on both;
     * on a large image, where rings would hide the band, white dots either
     * side of each row's run of them. */
    fprintf(f, "set palette defined (0 '%s', 0.35 '%s', 0.7 '%s', 1 '%s')\n", plot_colour(0),
            plot_colour(2), plot_colour(3), plot_colour(5));
    fputs("set xlabel 'map scan'\nset ylabel 'query scan'\nset cblabel 'descriptor distance'\nunset grid\n", f);
    mx_frame(f, &v, w, h);
    mx_tics(f, "x", m->col_idx, m->cols, v.f);
    mx_tics(f, "y", m->row_idx, m->rows, v.f);
    fprintf(f, "plot '%s.bin' binary array=(%zu,%zu) format='%%float32' endian=little with image notitle", name,
            v.cols, v.rows);
    if (n_true && v.k >= PLOT_MATRIX_RINGS)
        fprintf(f, ", \\\n     '%s.dat' index 0 using 1:2 with points pt 6 ps 0.7 lw 3 lc rgb 'black' title 'true revisit'"
                   ", \\\n     '' index 0 using 1:2 with points pt 6 ps 0.7 lw 1 lc rgb 'white' notitle", name);
    else if (n_true)
        fprintf(f, ", \\\n     '%s.dat' index 1 using 1:2 with points pt 7 ps 0.3 lc rgb 'black' "
                   "title 'true revisits between'"
                   ", \\\n     '' index 1 using 1:2 with points pt 7 ps 0.15 lc rgb 'white' notitle", name);
    fputc('\n', f);
    plot_tail_size(f, name, w, h);
    if (plot_commit(&a, e)) return -1;
    return plot_finish(ps, name, title, PLOT_MATRIX, e);
}
