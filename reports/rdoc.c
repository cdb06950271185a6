/* rdoc.c: building the report document tree (the renderers are rdoc_md.c
 * and rdoc_html.c). */
#include "reports/rdoc.h"

#include <ctype.h>
#include <stdarg.h>
#include <stdlib.h>
#include <string.h>

/* Grow a vector of elements of size sz to hold one more; 0 or -1. */
static int grow(void **v, size_t *cap, size_t n, size_t sz)
{
    if (n < *cap) return 0;
    size_t c = *cap ? 2 * *cap : 8;
    void *p = realloc(*v, c * sz);
    if (!p) return -1;
    memset((char *)p + *cap * sz, 0, (c - *cap) * sz);
    *v = p;
    *cap = c;
    return 0;
}

struct rdoc *rdoc_new(const char *title)
{
    struct rdoc *d = calloc(1, sizeof *d);
    if (d && !(d->title = strdup(title))) { free(d); d = NULL; }
    return d;
}

static void run_free(struct rdoc_run *r)
{
    for (size_t k = 0; k < r->n; k++) { free(r->s[k].text); free(r->s[k].href); }
    free(r->s);
}

void rdoc_free(struct rdoc *d)
{
    if (!d) return;
    for (size_t i = 0; i < d->n; i++) {
        struct rdoc_block *b = &d->b[i];
        for (size_t k = 0; k < b->n; k++) run_free(&b->runs[k]);
        free(b->runs);
        free(b->fig_png);
        free(b->fig_rel);
    }
    free(d->b);
    free(d->title);
    free(d);
}

int rdoc_oom(const struct rdoc *d) { return d->oom; }

static struct rdoc_block *block(struct rdoc *d, enum rdoc_kind kind)
{
    if (d->oom || grow((void **)&d->b, &d->cap, d->n, sizeof *d->b)) { d->oom = 1; return NULL; }
    struct rdoc_block *b = &d->b[d->n++];
    b->kind = kind;
    return b;
}

static struct rdoc_run *run(struct rdoc *d, unsigned style)
{
    if (d->oom || !d->n) { d->oom = 1; return NULL; }
    struct rdoc_block *b = &d->b[d->n - 1];
    if (grow((void **)&b->runs, &b->cap, b->n, sizeof *b->runs)) { d->oom = 1; return NULL; }
    struct rdoc_run *r = &b->runs[b->n++];
    r->style = style;
    return r;
}

static void span(struct rdoc *d, enum rdoc_span_kind kind, const char *text, const char *href)
{
    if (d->oom) return;
    struct rdoc_block *b = d->n ? &d->b[d->n - 1] : NULL;
    if (b && !b->n && !run(d, 0)) return;
    struct rdoc_run *r = b ? &b->runs[b->n - 1] : NULL;
    if (!r || grow((void **)&r->s, &r->cap, r->n, sizeof *r->s)) { d->oom = 1; return; }
    struct rdoc_span *s = &r->s[r->n];
    s->kind = kind;
    s->text = strdup(text);
    s->href = href ? strdup(href) : NULL;
    if (!s->text || (href && !s->href)) { free(s->text); free(s->href); d->oom = 1; return; }
    r->n++;
}

/* Lower case letters and digits; every other run of bytes one '-'. */
static void slug(const char *text, char *out, size_t n)
{
    size_t k = 0;
    for (const unsigned char *p = (const unsigned char *)text; *p && k + 1 < n; p++) {
        if (isalnum(*p)) out[k++] = (char)tolower(*p);
        else if (k && out[k - 1] != '-') out[k++] = '-';
    }
    while (k && out[k - 1] == '-') k--;
    out[k] = 0;
    if (!k) snprintf(out, n, "section");
}

static int id_taken(const struct rdoc *d, const char *id)
{
    for (size_t i = 0; i < d->n; i++)
        if (d->b[i].kind == RDOC_HEADING && !strcmp(d->b[i].id, id)) return 1;
    return 0;
}

void rdoc_heading(struct rdoc *d, int level, const char *text)
{
    char base[64], id[80];
    slug(text, base, sizeof base);
    snprintf(id, sizeof id, "%s", base);
    for (int k = 2; id_taken(d, id); k++) snprintf(id, sizeof id, "%s-%d", base, k);
    struct rdoc_block *b = block(d, RDOC_HEADING);
    if (!b) return;
    b->level = level < 1 ? 1 : level > 4 ? 4 : level;
    memcpy(b->id, id, sizeof b->id);
    span(d, RDOC_TEXT, text, NULL);
}

void rdoc_para(struct rdoc *d, unsigned style)
{
    struct rdoc_block *b = block(d, RDOC_PARA);
    if (b) b->style = style;
    if (b) run(d, style);
}

void rdoc_list(struct rdoc *d) { block(d, RDOC_LIST); }
void rdoc_item(struct rdoc *d) { run(d, 0); }
void rdoc_cell(struct rdoc *d, unsigned style) { run(d, style); }
void rdoc_pre(struct rdoc *d) { block(d, RDOC_PRE); }
void rdoc_toc(struct rdoc *d) { block(d, RDOC_TOC); }

const struct rdoc_block *rdoc_toc_next(const struct rdoc *d, size_t *i)
{
    for (; *i < d->n; ++*i) {
        const struct rdoc_block *h = &d->b[*i];
        if (h->kind == RDOC_HEADING && h->level == 2 && h->n) { ++*i; return h; }
    }
    return NULL;
}

void rdoc_table(struct rdoc *d, size_t cols, const char *align)
{
    struct rdoc_block *b = cols && cols <= RDOC_COLS_MAX ? block(d, RDOC_TABLE) : NULL;
    if (!b) { d->oom = 1; return; }
    b->cols = cols;
    for (size_t k = 0; k < cols; k++) b->align[k] = align && (align[k] == 'r' || align[k] == 'n') ? align[k] : 'l';
}

void rdoc_figure(struct rdoc *d, const char *png, const char *rel)
{
    struct rdoc_block *b = block(d, RDOC_FIGURE);
    if (!b) return;
    b->fig_png = png ? strdup(png) : NULL;
    b->fig_rel = strdup(rel);
    if ((png && !b->fig_png) || !b->fig_rel) d->oom = 1;
    else run(d, 0);
}

void rdoc_line(struct rdoc *d, const char *text)
{
    if (run(d, 0)) span(d, RDOC_TEXT, text, NULL);
}

void rdoc_text(struct rdoc *d, const char *s) { span(d, RDOC_TEXT, s, NULL); }
void rdoc_code(struct rdoc *d, const char *s) { span(d, RDOC_CODE, s, NULL); }
void rdoc_strong(struct rdoc *d, const char *s) { span(d, RDOC_STRONG, s, NULL); }
void rdoc_em(struct rdoc *d, const char *s) { span(d, RDOC_EM, s, NULL); }
void rdoc_link(struct rdoc *d, const char *text, const char *href) { span(d, RDOC_LINK, text, href); }

static void vspan(struct rdoc *d, enum rdoc_span_kind kind, const char *fmt, va_list ap)
{
    char buf[8192];
    va_list aq;
    va_copy(aq, ap);
    int n = vsnprintf(buf, sizeof buf, fmt, ap);
    if (n < 0) d->oom = 1;
    else if ((size_t)n < sizeof buf) span(d, kind, buf, NULL);
    else {
        char *big = malloc((size_t)n + 1);
        if (!big) d->oom = 1;
        else { vsnprintf(big, (size_t)n + 1, fmt, aq); span(d, kind, big, NULL); }
        free(big);
    }
    va_end(aq);
}

void rdoc_textf(struct rdoc *d, const char *fmt, ...)
{
    va_list ap;
    va_start(ap, fmt);
    vspan(d, RDOC_TEXT, fmt, ap);
    va_end(ap);
}

void rdoc_num(struct rdoc *d, const char *fmt, ...)
{
    va_list ap;
    va_start(ap, fmt);
    vspan(d, RDOC_NUM, fmt, ap);
    va_end(ap);
}
