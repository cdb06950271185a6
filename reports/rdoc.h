/* rdoc.h: the report as a small document tree (headings, paragraphs, lists,
 * tables, figures, preformatted blocks; each holding runs of inline spans),
 * built once and rendered to Markdown and to HTML from the same tree.
 *
 *     struct rdoc *d = rdoc_new("Robustness report: demo");
 *     rdoc_heading(d, 2, "At a glance");
 *     rdoc_list(d);
 *     rdoc_item(d); rdoc_text(d, "Methods: "); rdoc_code(d, "ring-key");
 *     rdoc_table(d, 2, "lr");                    // two columns, the second right-aligned
 *     rdoc_cell(d, 0); rdoc_text(d, "metric");   // the first row is the header
 *     rdoc_cell(d, 0); rdoc_text(d, "value");
 *     rdoc_cell(d, 0); rdoc_text(d, "F1max");
 *     rdoc_cell(d, RDOC_PASS); rdoc_strong(d, "pass");
 *     if (rdoc_md_write(d, f, e) || rdoc_html_write(d, f, e)) ...
 *     rdoc_free(d);
 *
 * Spans (rdoc_text, rdoc_textf, rdoc_num, rdoc_code, rdoc_strong, rdoc_em, rdoc_link)
 * go into the newest run: the paragraph, list item, table cell, figure
 * caption or preformatted line opened last.  All text is raw; the renderers
 * escape it (esc.h), so user text never becomes markup in either format.
 *
 * Failure contract: builders cannot fail visibly; running out of memory
 * marks the document (rdoc_oom) and later builders do nothing, and both
 * renderers then return -1 with "out of memory for the report".  A
 * renderer returns -1 with e set when a figure's image cannot be read
 * (HTML inlines it); write errors show in ferror(f).  rdoc_new returns NULL
 * when out of memory; rdoc_free accepts NULL.
 */
#ifndef RV_RDOC_H
#define RV_RDOC_H

#include <stdio.h>
#include <stddef.h>
#include "harness/base/err.h"

enum rdoc_span_kind { RDOC_TEXT, RDOC_NUM, RDOC_CODE, RDOC_STRONG, RDOC_EM, RDOC_LINK };
enum rdoc_kind { RDOC_HEADING, RDOC_PARA, RDOC_LIST, RDOC_TABLE, RDOC_FIGURE, RDOC_PRE, RDOC_TOC };

/* Styles of a paragraph or table cell (bits). */
#define RDOC_CAUTION 1u   /* paragraph: the safety caution box */
#define RDOC_PASS 2u      /* cell: a passed verdict */
#define RDOC_FAIL 4u      /* cell: a failed verdict */

#define RDOC_COLS_MAX 64

struct rdoc_span {
    enum rdoc_span_kind kind;
    char *text;
    char *href;                  /* RDOC_LINK only: a path the report wrote */
};

struct rdoc_run {
    unsigned style;
    size_t n, cap;
    struct rdoc_span *s;
};

struct rdoc_block {
    enum rdoc_kind kind;
    int level;                   /* heading: 1 to 4 */
    char id[80];                 /* heading: anchor, unique in the document */
    unsigned style;              /* paragraph */
    size_t cols;                 /* table: cells are runs, row-major, row 0 the header */
    char align[RDOC_COLS_MAX + 1];  /* table: 'l', 'r' or 'n' per column */
    char *fig_png;               /* figure: image file to inline in HTML (NULL: not drawn) */
    char *fig_rel;               /* figure: path stem relative to the report ("plots/pr-0") */
    size_t n, cap;
    struct rdoc_run *runs;       /* heading text, paragraph, items, cells, caption, lines */
};

struct rdoc {
    char *title;
    int oom;
    size_t n, cap;
    struct rdoc_block *b;
};

struct rdoc *rdoc_new(const char *title);
void rdoc_free(struct rdoc *d);
int rdoc_oom(const struct rdoc *d);

/* Blocks.  A heading's id is made from its text (lower case, runs of other
 * characters as '-', "-2" and so on when taken). */
void rdoc_heading(struct rdoc *d, int level, const char *text);
void rdoc_para(struct rdoc *d, unsigned style);
void rdoc_list(struct rdoc *d);
void rdoc_item(struct rdoc *d);
/* cols columns (at most RDOC_COLS_MAX); align: one 'l' or 'r' per column,
 * or 'n' for left-aligned words kept on one line (short names), NULL for
 * all left. */
void rdoc_table(struct rdoc *d, size_t cols, const char *align);
void rdoc_cell(struct rdoc *d, unsigned style);
/* png: the drawn image (NULL when not drawn); rel: stem of its files
 * relative to the report.  The caption follows as spans. */
void rdoc_figure(struct rdoc *d, const char *png, const char *rel);
void rdoc_pre(struct rdoc *d);
/* A table of contents: links to every level-2 heading of the document,
 * wherever they come, rendered where this block stands. */
void rdoc_toc(struct rdoc *d);
/* For the renderers: the next level-2 heading at or after block *i (then
 * *i moves past it), or NULL. */
const struct rdoc_block *rdoc_toc_next(const struct rdoc *d, size_t *i);
void rdoc_line(struct rdoc *d, const char *text);

/* Spans into the newest run. */
void rdoc_text(struct rdoc *d, const char *s);
void rdoc_textf(struct rdoc *d, const char *fmt, ...) __attribute__((format(printf, 2, 3)));
/* A number or interval of ours ("0.812 [0.770, 0.840] sd 0.012"): Markdown
 * writes it verbatim when it holds only digits, letters, spaces and
 * . , + - % [ ], escaped otherwise; HTML escapes it as any text. */
void rdoc_num(struct rdoc *d, const char *fmt, ...) __attribute__((format(printf, 2, 3)));
void rdoc_code(struct rdoc *d, const char *s);
void rdoc_strong(struct rdoc *d, const char *s);
void rdoc_em(struct rdoc *d, const char *s);
void rdoc_link(struct rdoc *d, const char *text, const char *href);

/* The whole document.  0 or -1 (see the failure contract). */
int rdoc_md_write(const struct rdoc *d, FILE *f, struct err *e);
int rdoc_html_write(const struct rdoc *d, FILE *f, struct err *e);

#endif
