/* rdoc_md.c: the document tree as Markdown (images linked beside it). */
#include "reports/rdoc.h"

#include <ctype.h>
#include <string.h>

#include "reports/esc.h"

/* The longest run of backticks in s. */
static int tick_run(const char *s)
{
    int run = 0, best = 0;
    for (; *s; s++) {
        run = *s == '`' ? run + 1 : 0;
        if (run > best) best = run;
    }
    return best;
}

/* A code span whose fence no backtick inside can close.  Text with < > &
 * or a line break is written escaped instead: a code span shows entities
 * literally, and raw markup would reach renderers that pass HTML through. */
static void md_code(FILE *f, const char *s)
{
    if (strpbrk(s, "<>&\r\n")) { esc_md(f, s); return; }
    int n = tick_run(s) + 1, pad = s[0] == '`' || (s[0] && s[strlen(s) - 1] == '`');
    for (int k = 0; k < n; k++) fputc('`', f);
    fprintf(f, "%s%s%s", pad ? " " : "", s, pad ? " " : "");
    for (int k = 0; k < n; k++) fputc('`', f);
}

/* Our own numbers go verbatim when nothing in them can start markup. */
static void md_num(FILE *f, const char *s)
{
    for (const unsigned char *p = (const unsigned char *)s; *p; p++)
        if (!isalnum(*p) && !strchr(" .,+-%[]", *p)) { esc_md(f, s); return; }
    fputs(s, f);
}

static void md_run(FILE *f, const struct rdoc_run *r)
{
    for (size_t k = 0; k < r->n; k++) {
        const struct rdoc_span *s = &r->s[k];
        switch (s->kind) {
        case RDOC_TEXT: esc_md(f, s->text); break;
        case RDOC_NUM: md_num(f, s->text); break;
        case RDOC_CODE: md_code(f, s->text); break;
        case RDOC_STRONG: fputs("**", f); esc_md(f, s->text); fputs("**", f); break;
        case RDOC_EM: fputc('*', f); esc_md(f, s->text); fputc('*', f); break;
        case RDOC_LINK: fputc('[', f); esc_md(f, s->text); fprintf(f, "](%s)", s->href); break;
        }
    }
}

static void md_table(FILE *f, const struct rdoc_block *b)
{
    for (size_t i = 0; i < b->n; i++) {
        size_t col = i % b->cols;
        fputs(col ? " " : "| ", f);
        md_run(f, &b->runs[i]);
        fputs(" |", f);
        if (col + 1 < b->cols && i + 1 < b->n) continue;
        fputc('\n', f);
        if (i + 1 != b->cols) continue;
        fputc('|', f);
        for (size_t k = 0; k < b->cols; k++) fputs(b->align[k] == 'r' ? "---:|" : "---|", f);
        fputc('\n', f);
    }
    fputc('\n', f);
}

/* The image (when drawn), then the caption with links to its files. */
static void md_figure(FILE *f, const struct rdoc_block *b)
{
    const struct rdoc_run *cap = b->n ? &b->runs[0] : NULL;
    if (b->fig_png) {
        fputs("![", f);
        for (size_t k = 0; cap && k < cap->n; k++) esc_md(f, cap->s[k].text);
        fprintf(f, "](%s.png)\n\n", b->fig_rel);
    }
    if (cap) md_run(f, cap);
    fprintf(f, " ([SVG](%s.svg), [script](%s.gp), [data](%s.dat))%s\n\n", b->fig_rel, b->fig_rel, b->fig_rel,
            b->fig_png ? "" : " - not drawn, see below");
}

/* A fenced block that no line inside can close. */
static void md_pre(FILE *f, const struct rdoc_block *b)
{
    int fence = 2;
    for (size_t k = 0; k < b->n; k++)
        for (size_t j = 0; j < b->runs[k].n; j++) {
            int t = tick_run(b->runs[k].s[j].text);
            if (t > fence) fence = t;
        }
    fence++;
    for (int k = 0; k < fence; k++) fputc('`', f);
    fputs("text\n", f);
    for (size_t k = 0; k < b->n; k++) {
        for (size_t j = 0; j < b->runs[k].n; j++) fputs(b->runs[k].s[j].text, f);
        fputc('\n', f);
    }
    for (int k = 0; k < fence; k++) fputc('`', f);
    fputs("\n\n", f);
}

static void md_toc(FILE *f, const struct rdoc *d)
{
    fputs("**Contents:**", f);
    const struct rdoc_block *h;
    for (size_t i = 0, k = 0; (h = rdoc_toc_next(d, &i)); k++) {
        fputs(k ? " · [" : " [", f);
        md_run(f, &h->runs[0]);
        fprintf(f, "](#%s)", h->id);
    }
    fputs("\n\n", f);
}

static void md_block(FILE *f, const struct rdoc *d, const struct rdoc_block *b)
{
    switch (b->kind) {
    case RDOC_HEADING:
        for (int k = 0; k < b->level; k++) fputc('#', f);
        fputc(' ', f);
        if (b->n) md_run(f, &b->runs[0]);
        fputs("\n\n", f);
        break;
    case RDOC_PARA:
        if (b->style & RDOC_CAUTION) fputs("> ", f);
        if (b->n) md_run(f, &b->runs[0]);
        fputs("\n\n", f);
        break;
    case RDOC_LIST:
        for (size_t k = 0; k < b->n; k++) { fputs("- ", f); md_run(f, &b->runs[k]); fputc('\n', f); }
        fputc('\n', f);
        break;
    case RDOC_TABLE: md_table(f, b); break;
    case RDOC_FIGURE: md_figure(f, b); break;
    case RDOC_PRE: md_pre(f, b); break;
    case RDOC_TOC: md_toc(f, d); break;
    }
}

int rdoc_md_write(const struct rdoc *d, FILE *f, struct err *e)
{
    if (d->oom) return err_set(e, "out of memory for the report");
    for (size_t i = 0; i < d->n; i++) md_block(f, d, &d->b[i]);
    return 0;
}
