/* plot.c: palette, script frame, running gnuplot, checking its images. */
#include "reports/plot.h"

#include <errno.h>
#include <fcntl.h>
#include <stdlib.h>
#include <string.h>
#include <sys/stat.h>
#include <sys/wait.h>
#include <unistd.h>

#include "reports/esc.h"
#include "reports/plot_int.h"

/* Palette (our own): six colours whose lightness rises step by step from a
 * deep indigo to a pale straw, alternating cool and warm hues.  The steady
 * lightness ramp keeps every line apart when printed in grey; the hues sit
 * on the blue-orange axis, which the common red-green colour vision
 * deficiencies leave distinct.  Dash patterns and point shapes vary with
 * the colour, so no reader depends on colour alone. */
static const char *const palette[PLOT_NCOLOURS] = {
    "#1b1f4b", "#a34a0c", "#2a7ab0", "#e08a2c", "#8fc1e3", "#f3d46b",
};
static const char *const dashes[PLOT_NCOLOURS] = {
    "solid", "(10,5)", "(3,4)", "(12,4,3,4)", "(6,3,2,3,2,3)", "(2,2)",
};
static const int points[PLOT_NCOLOURS] = {7, 5, 9, 13, 6, 4};

static const char *const kind_names[PLOT_NKIND] = {
    "degradation curve", "PR curves", "trajectory top view", "distance matrix", "top-1 distance distributions",
    "summary chart",
    "sensitivity ranking",
};

const char *plot_colour(size_t k) { return palette[k % PLOT_NCOLOURS]; }
const char *plot_kind_name(enum plot_kind k) { return kind_names[k]; }

void plot_find_gnuplot(const char *path_env, char *out, size_t n)
{
    out[0] = 0;
    const char *p = path_env ? path_env : getenv("PATH");
    if (!p) return;
    while (*p) {
        const char *c = strchr(p, ':');
        size_t len = c ? (size_t)(c - p) : strlen(p);
        char cand[4096];
        if (len && len < sizeof cand - 16) {
            snprintf(cand, sizeof cand, "%.*s/gnuplot", (int)len, p);
            struct stat st;
            if (!stat(cand, &st) && S_ISREG(st.st_mode) && !access(cand, X_OK)) {
                snprintf(out, n, "%s", cand);
                return;
            }
        }
        if (!c) break;
        p = c + 1;
    }
}

void plot_set_init(struct plot_set *ps, const char *dir)
{
    memset(ps, 0, sizeof *ps);
    snprintf(ps->dir, sizeof ps->dir, "%s", dir);
    plot_find_gnuplot(NULL, ps->gnuplot, sizeof ps->gnuplot);
    long cores = sysconf(_SC_NPROCESSORS_ONLN);
    ps->jobs = cores < 1 ? 1 : cores > PLOT_MAX_JOBS ? PLOT_MAX_JOBS : (size_t)cores;
}

static int plot_reap_oldest(struct plot_set *ps, struct err *e);

void plot_set_free(struct plot_set *ps)
{
    struct err ignored;
    while (ps->n_run) plot_reap_oldest(ps, &ignored);   /* an error path left some running */
    free(ps->items);
    ps->items = NULL;
    ps->n = ps->cap = 0;
}

int plot_open(struct plot_set *ps, struct afile *a, const char *name, const char *ext, struct err *e)
{
    char path[4300];
    snprintf(path, sizeof path, "%s/%s.%s", ps->dir, name, ext);
    return afile_open(a, path, e);
}

int plot_commit(struct afile *a, struct err *e)
{
    if (ferror(a->f)) {
        afile_abort(a);
        return err_at(e, a->path, 0, "write failed");
    }
    return afile_commit(a, e);
}

void plot_head(FILE *f, const char *name, const char *title, unsigned h)
{
    plot_head_size(f, name, title, PLOT_W_PX, h);
}

void plot_head_size(FILE *f, const char *name, const char *title, unsigned w, unsigned h)
{
    fprintf(f, "# %s.gp: written by revisit report beside %s.dat.\n"
               "# Redraw with: gnuplot %s.gp (in this folder) after restyling.\n"
               "set encoding utf8\n"
               "set terminal pngcairo noenhanced size %u,%u font 'Sans,11'\n"
               "set output '%s.png'\n"
               "set title ", name, name, name, w, h, name);
    esc_gp(f, title);
    fputs("\nset key outside right top box opaque\nset grid lc rgb '#d0d0d0'\n", f);
    for (size_t k = 0; k < PLOT_NCOLOURS; k++)
        fprintf(f, "set style line %zu lc rgb '%s' lw 2 dt %s pt %d ps 0.9\n",
                k + 1, palette[k], dashes[k], points[k]);
}

void plot_tail(FILE *f, const char *name, unsigned h)
{
    plot_tail_size(f, name, PLOT_W_PX, h);
}

void plot_tail_size(FILE *f, const char *name, unsigned w, unsigned h)
{
    fprintf(f, "set terminal svg noenhanced size %u,%u font 'Sans,11'\n"
               "set output '%s.svg'\nreplot\nunset output\n", w, h, name);
}

size_t plot_key_len(const char *name)
{
    size_t n = strlen(name);
    return n <= PLOT_KEY_MAX ? n : PLOT_KEY_MAX + 3;
}

void plot_key_title(FILE *f, const char *name)
{
    size_t n = strlen(name);
    if (n <= PLOT_KEY_MAX) { esc_gp(f, name); return; }
    char cut[PLOT_KEY_MAX + 4];
    size_t k = PLOT_KEY_MAX;
    while (k > 0 && ((unsigned char)name[k] & 0xC0) == 0x80) k--;
    memcpy(cut, name, k);
    memcpy(cut + k, "...", 4);
    esc_gp(f, cut);
}

/* Pixel sizes of the 11-point Sans the terminals use, rounded up: a
 * character's advance, a key row, and what the x tic labels and the x
 * label take under the graph. */
#define UNDER_CHAR_PX 9
#define UNDER_ROW_PX 18
#define UNDER_SAMPLE_PX 100  /* a key column's sample line and gaps */
#define UNDER_LABELS_PX 64   /* tic labels, x label and their offsets */
#define UNDER_PAD_PX 12      /* between the x label and the key, and under the key */

struct plot_under plot_under_layout(size_t entries, size_t longest)
{
    size_t colw = UNDER_CHAR_PX * longest + UNDER_SAMPLE_PX, cols = (PLOT_W_PX - 40) / colw;
    if (cols < 1) cols = 1;
    if (cols > entries) cols = entries ? entries : 1;
    struct plot_under u;
    u.rows = (unsigned)((entries + cols - 1) / cols);
    u.bottom_px = UNDER_LABELS_PX + 2 * UNDER_PAD_PX + UNDER_ROW_PX * u.rows;
    u.h = PLOT_GRAPH_PX + u.bottom_px;
    return u;
}

void plot_under_write(FILE *f, const struct plot_under *u)
{
    fprintf(f, "set bmargin at screen %.4f\n"
               "set key at screen 0.5, screen %.4f center bottom vertical maxrows %u Left reverse nobox\n",
            (double)u->bottom_px / u->h, (double)UNDER_PAD_PX / 2 / u->h, u->rows ? u->rows : 1);
}

int plot_png_ok(const char *path, unsigned *w, unsigned *h)
{
    static const unsigned char sig[8] = {0x89, 'P', 'N', 'G', '\r', '\n', 0x1a, '\n'};
    unsigned char b[24];
    FILE *f = fopen(path, "rb");
    if (!f) return 0;
    size_t got = fread(b, 1, sizeof b, f);
    fclose(f);
    if (got != sizeof b || memcmp(b, sig, 8) || memcmp(b + 12, "IHDR", 4)) return 0;
    *w = (unsigned)b[16] << 24 | (unsigned)b[17] << 16 | (unsigned)b[18] << 8 | b[19];
    *h = (unsigned)b[20] << 24 | (unsigned)b[21] << 16 | (unsigned)b[22] << 8 | b[23];
    return *w > 0 && *h > 0;
}

/* Start gnuplot on NAME.gp in the plot folder, its output into NAME.log. */
static int gnuplot_start(const struct plot_set *ps, const char *name, pid_t *pid, struct err *e)
{
    char script[80], log[4300];
    if (err_cut(snprintf(script, sizeof script, "%s.gp", name), sizeof script)
        || err_cut(snprintf(log, sizeof log, "%s/%s.log", ps->dir, name), sizeof log))
        return err_set(e, "%s/%s.gp: path too long for gnuplot", ps->dir, name);
    *pid = fork();
    if (*pid < 0) return err_set(e, "cannot start gnuplot: %s", strerror(errno));
    if (*pid == 0) {
        int in = open("/dev/null", O_RDONLY);
        int out = open(log, O_WRONLY | O_CREAT | O_TRUNC, 0644);
        if (in < 0 || out < 0 || chdir(ps->dir)) _exit(127);
        dup2(in, 0);
        dup2(out, 1);
        dup2(out, 2);
        execl(ps->gnuplot, "gnuplot", script, (char *)NULL);
        _exit(127);
    }
    return 0;
}

/* Wait for gnuplot pid of plot it, then check its two images. */
static int gnuplot_finish(const struct plot_set *ps, pid_t pid, struct plot_item *it, struct err *e)
{
    int st;
    while (waitpid(pid, &st, 0) < 0)
        if (errno != EINTR) return err_set(e, "waiting for gnuplot: %s", strerror(errno));
    if (!WIFEXITED(st) || WEXITSTATUS(st))
        return err_set(e, "%s/%s.gp: gnuplot failed (status %d), expected a drawn plot; see %s/%s.log",
                       ps->dir, it->name, WIFEXITED(st) ? WEXITSTATUS(st) : -1, ps->dir, it->name);
    char png[4300], svg[4300];
    snprintf(png, sizeof png, "%s/%s.png", ps->dir, it->name);
    snprintf(svg, sizeof svg, "%s/%s.svg", ps->dir, it->name);
    unsigned w, h;
    struct stat sb;
    if (!plot_png_ok(png, &w, &h))
        return err_at(e, png, 0, "not a valid PNG after gnuplot, expected a drawn image");
    if (stat(svg, &sb) || sb.st_size == 0)
        return err_at(e, svg, 0, "missing or empty after gnuplot, expected an SVG image");
    it->drawn = 1;
    return 0;
}

/* Wait for the longest-running gnuplot and take it off the list. */
static int plot_reap_oldest(struct plot_set *ps, struct err *e)
{
    pid_t pid = ps->run[0].pid;
    size_t item = ps->run[0].item;
    memmove(ps->run, ps->run + 1, --ps->n_run * sizeof *ps->run);
    return gnuplot_finish(ps, pid, &ps->items[item], e);
}

int plot_set_wait(struct plot_set *ps, struct err *e)
{
    int rc = 0;
    struct err later;
    while (ps->n_run)
        if (plot_reap_oldest(ps, rc ? &later : e)) rc = -1;   /* the first failure is the one told */
    return rc;
}

/* Record the plot and draw it when gnuplot is present. */
int plot_finish(struct plot_set *ps, const char *name, const char *title, enum plot_kind kind,
                struct err *e)
{
    if (ps->n == ps->cap) {
        size_t cap = ps->cap ? 2 * ps->cap : 16;
        struct plot_item *g = realloc(ps->items, cap * sizeof *g);
        if (!g) return err_set(e, "out of memory for the plot list");
        ps->items = g;
        ps->cap = cap;
    }
    struct plot_item *it = &ps->items[ps->n++];
    memset(it, 0, sizeof *it);
    snprintf(it->name, sizeof it->name, "%s", name);
    snprintf(it->caption, sizeof it->caption, "%s", title);
    it->kind = kind;
    if (!ps->gnuplot[0]) return 0;
    if (ps->n_run == ps->jobs && plot_reap_oldest(ps, e)) return -1;
    pid_t pid;
    if (gnuplot_start(ps, name, &pid, e)) return -1;
    ps->run[ps->n_run].pid = pid;
    ps->run[ps->n_run++].item = ps->n - 1;
    return 0;
}
