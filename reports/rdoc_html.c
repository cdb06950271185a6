/* rdoc_html.c: the document tree as one self-contained HTML file (images
 * inlined as data URLs, our own style sheet, no script). */
#include "reports/rdoc.h"

#include <stdlib.h>
#include <string.h>

#include "harness/base/fileio.h"
#include "reports/esc.h"

#define HTML_IMAGE_MAX ((size_t)64 << 20)

/* Our own plain layout: one readable column, ruled tables, the palette's
 * indigo for headings, its blue and burnt orange behind passed and failed
 * verdicts (white text; tests/xcheck_report_palette.py checks contrast and
 * colour-vision distance); every verdict carries its word and mark too, so
 * nothing depends on colour. */
static const char css[] =
    "body{font-family:sans-serif;max-width:1300px;margin:2em auto;padding:0 1em;color:#1a1a1a;line-height:1.45}"
    "h1,h2,h3{color:#1b1f4b}h2{border-bottom:2px solid #1b1f4b;padding-bottom:.2em;margin-top:2em}"
    ".caution{border:2px solid #a34a0c;padding:.6em 1em;background:#fff7ef}"
    "table{border-collapse:collapse;margin:.5em 0 1.5em;display:block;overflow-x:auto}td,th{border:1px solid #999;padding:.15em .5em;"
    "text-align:left;font-variant-numeric:tabular-nums}th{background:#eef1f6}"
    "td.num,th.num{text-align:right;white-space:nowrap}td.name,th.name{white-space:nowrap}"
    ".pass,.fail{font-weight:bold;color:#fff;white-space:nowrap}.pass{background:#2a7ab0}.fail{background:#a34a0c}"
    "code,td{overflow-wrap:anywhere}.toc{margin:1em 0;line-height:1.8}"
    "figure{margin:1em 0 2em}figure img{max-width:100%;border:1px solid #ccc}"
    "figcaption{font-size:.92em}pre{background:#f4f4f4;padding:.6em;overflow-x:auto;white-space:pre-wrap}";

static void base64(FILE *f, const unsigned char *b, size_t n)
{
    static const char t[] = "ABCDEFGHIJKLMNOPQRSTUVWXYZabcdefghijklmnopqrstuvwxyz0123456789+/";
    for (size_t i = 0; i < n; i += 3) {
        unsigned v = (unsigned)b[i] << 16 | (i + 1 < n ? (unsigned)b[i + 1] << 8 : 0) | (i + 2 < n ? b[i + 2] : 0);
        fputc(t[v >> 18 & 63], f);
        fputc(t[v >> 12 & 63], f);
        fputc(i + 1 < n ? t[v >> 6 & 63] : '=', f);
        fputc(i + 2 < n ? t[v & 63] : '=', f);
    }
}

static void html_run(FILE *f, const struct rdoc_run *r)
{
    static const char *const tag[] = {[RDOC_CODE] = "code", [RDOC_STRONG] = "strong", [RDOC_EM] = "em"};
    for (size_t k = 0; k < r->n; k++) {
        const struct rdoc_span *s = &r->s[k];
        if (s->kind == RDOC_TEXT || s->kind == RDOC_NUM) { esc_html(f, s->text); continue; }
        if (s->kind == RDOC_LINK) {
            fputs("<a href=\"", f); esc_html(f, s->href); fputs("\">", f);
            esc_html(f, s->text);
            fputs("</a>", f);
            continue;
        }
        fprintf(f, "<%s>", tag[s->kind]);
        esc_html(f, s->text);
        fprintf(f, "</%s>", tag[s->kind]);
    }
}

static void html_table(FILE *f, const struct rdoc_block *b)
{
    fputs("<table>", f);
    for (size_t i = 0; i < b->n; i++) {
        size_t col = i % b->cols;
        const struct rdoc_run *r = &b->runs[i];
        const char *cell = i < b->cols ? "th" : "td";
        if (!col) fputs("<tr>", f);
        fprintf(f, "<%s", cell);
        const char *cls[3] = {b->align[col] == 'r' ? "num" : b->align[col] == 'n' ? "name" : NULL,
                              r->style & RDOC_PASS ? "pass" : NULL,
                              r->style & RDOC_FAIL ? "fail" : NULL};
        for (int k = 0, first = 1; k < 3; k++)
            if (cls[k]) { fprintf(f, "%s%s", first ? " class=\"" : " ", cls[k]); first = 0; }
        if (cls[0] || cls[1] || cls[2]) fputc('"', f);
        fputc('>', f);
        html_run(f, r);
        fprintf(f, "</%s>", cell);
        if (col + 1 == b->cols || i + 1 == b->n) fputs("</tr>\n", f);
    }
    fputs("</table>\n", f);
}

static int html_figure(FILE *f, const struct rdoc_block *b, struct err *e)
{
    const struct rdoc_run *cap = b->n ? &b->runs[0] : NULL;
    fputs("<figure>", f);
    if (b->fig_png) {
        char *buf;
        size_t len;
        if (fileio_read(b->fig_png, HTML_IMAGE_MAX, &buf, &len, e)) return -1;
        fputs("<img alt=\"", f);
        for (size_t k = 0; cap && k < cap->n; k++) esc_html(f, cap->s[k].text);
        fputs("\" src=\"data:image/png;base64,", f);
        base64(f, (const unsigned char *)buf, len);
        fputs("\">", f);
        free(buf);
    }
    fputs("<figcaption>", f);
    if (cap) html_run(f, cap);
    const char *slash = strrchr(b->fig_rel, '/');
    const char *stem = slash ? slash + 1 : b->fig_rel;
    fprintf(f, " (files in %.*s: %s.svg, %s.gp, %s.dat)%s</figcaption></figure>\n",
            slash ? (int)(stem - b->fig_rel) : 1, slash ? b->fig_rel : ".", stem, stem, stem,
            b->fig_png ? "" : " - not drawn, see below");
    return 0;
}

static void html_toc(FILE *f, const struct rdoc *d)
{
    fputs("<nav class=\"toc\"><strong>Contents:</strong>", f);
    const struct rdoc_block *h;
    for (size_t i = 0, k = 0; (h = rdoc_toc_next(d, &i)); k++) {
        fprintf(f, "%s<a href=\"#%s\">", k ? " · " : " ", h->id);
        html_run(f, &h->runs[0]);
        fputs("</a>", f);
    }
    fputs("</nav>\n", f);
}

static int html_block(FILE *f, const struct rdoc *d, const struct rdoc_block *b, struct err *e)
{
    switch (b->kind) {
    case RDOC_HEADING:
        fprintf(f, "<h%d id=\"%s\">", b->level, b->id);
        if (b->n) html_run(f, &b->runs[0]);
        fprintf(f, "</h%d>\n", b->level);
        break;
    case RDOC_PARA:
        fputs(b->style & RDOC_CAUTION ? "<p class=\"caution\">" : "<p>", f);
        if (b->n) html_run(f, &b->runs[0]);
        fputs("</p>\n", f);
        break;
    case RDOC_LIST:
        fputs("<ul>\n", f);
        for (size_t k = 0; k < b->n; k++) { fputs("<li>", f); html_run(f, &b->runs[k]); fputs("</li>\n", f); }
        fputs("</ul>\n", f);
        break;
    case RDOC_TABLE: html_table(f, b); break;
    case RDOC_FIGURE: return html_figure(f, b, e);
    case RDOC_PRE:
        fputs("<pre>", f);
        for (size_t k = 0; k < b->n; k++) { html_run(f, &b->runs[k]); fputc('\n', f); }
        fputs("</pre>\n", f);
        break;
    case RDOC_TOC: html_toc(f, d); break;
    }
    return 0;
}

int rdoc_html_write(const struct rdoc *d, FILE *f, struct err *e)
{
    if (d->oom) return err_set(e, "out of memory for the report");
    fputs("<!DOCTYPE html>\n<html lang=\"en\"><head><meta charset=\"utf-8\">\n<title>", f);
    esc_html(f, d->title);
    fprintf(f, "</title>\n<style>%s</style></head><body>\n", css);
    for (size_t i = 0; i < d->n; i++)
        if (html_block(f, d, &d->b[i], e)) return -1;
    fputs("</body></html>\n", f);
    return 0;
}
