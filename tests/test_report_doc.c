/* test_report_doc.c: the report document tree and its two renderers:
 * heading anchors, the caution box, code spans that user backticks cannot
 * close, tables with aligned columns and verdict styles, our numbers
 * verbatim, fenced blocks, figures drawn and not drawn, and the failures. */
#include <stdio.h>
#include <stdlib.h>
#include <string.h>

#include "check.h"
#include "reports/rdoc.h"

static char *render(const struct rdoc *d, int (*fn)(const struct rdoc *, FILE *, struct err *), int *rc,
                    struct err *e)
{
    char *buf = NULL;
    size_t len = 0;
    FILE *f = open_memstream(&buf, &len);
    *rc = fn(d, f, e);
    fclose(f);
    return buf;
}

static void has(const char *doc, const char *want, const char *desc)
{
    CHECK(strstr(doc, want) != NULL, desc);
    if (!strstr(doc, want)) fprintf(stderr, "  missing: %s\n", want);
}

static struct rdoc *sample(void)
{
    struct rdoc *d = rdoc_new("T <1>");
    rdoc_heading(d, 1, "Results & <more>");
    rdoc_heading(d, 2, "Results & <more>");
    rdoc_para(d, RDOC_CAUTION);
    rdoc_strong(d, "Caution.");
    rdoc_text(d, " a_b");
    rdoc_list(d);
    rdoc_item(d); rdoc_code(d, "x`y");
    rdoc_item(d); rdoc_code(d, "`edge`");
    rdoc_item(d); rdoc_code(d, "<b>");
    rdoc_table(d, 2, "lr");
    rdoc_cell(d, 0); rdoc_text(d, "name");
    rdoc_cell(d, 0); rdoc_text(d, "value");
    rdoc_cell(d, 0); rdoc_text(d, "a|b");
    rdoc_cell(d, RDOC_FAIL); rdoc_num(d, "%.3f [%.3f, %.3f]", 0.5, 0.25, 0.75);
    rdoc_pre(d);
    rdoc_line(d, "echo ```");
    rdoc_figure(d, NULL, "plots/pr-0");
    rdoc_text(d, "PR curves");
    return d;
}

struct want {
    const char *text, *desc;
};

/* Markdown: CommonMark spec 0.30, section 2.4 (backslash escapes) and 6.1
 * (code spans: a run of n backticks closes only on a run of n; one space
 * each side is stripped); tables: GitHub Flavored Markdown spec 0.29,
 * section 4.10 (the delimiter row, `---:` for right alignment). */
static const struct want md_want[] = {
    {"# Results &amp; &lt;more&gt;\n\n## Results", "headings keep their level and escape their text"},
    {"> **Caution.** a\\_b\n", "the caution is a block quote with a bold lead"},
    {"- ``x`y``\n", "a backtick inside a code span gets a longer fence"},
    {"- `` `edge` ``\n", "a code span starting with a backtick is padded by one space"},
    {"- &lt;b&gt;\n", "a code span with markup characters falls back to escaped text"},
    {"| name | value |\n|---|---:|\n| a\\|b | 0.500 [0.250, 0.750] |\n",
     "a table: header, delimiter row with the right-aligned column, escaped cell, our number verbatim"},
    {"````text\necho ```\n````\n", "a fenced block is longer than any backtick run inside"},
    {"PR curves ([SVG](plots/pr-0.svg), [script](plots/pr-0.gp), [data](plots/pr-0.dat)) - not drawn",
     "a figure not drawn links its files and says so"},
};

/* HTML: the WHATWG HTML Living Standard, "13.1.4 Character references"
 * (escaped text) and "4.9 Tabular data" (th, td); the class names are our
 * own. */
static const struct want html_want[] = {
    {"<title>T &lt;1&gt;</title>", "the title is escaped"},
    {"<h1 id=\"results-more\">Results &amp; &lt;more&gt;</h1>", "a heading gets an anchor from its text"},
    {"<h2 id=\"results-more-2\">", "a second heading of the same text gets its own anchor"},
    {"<p class=\"caution\"><strong>Caution.</strong> a_b</p>", "the caution box"},
    {"<li><code>x`y</code></li>", "a code span"},
    {"<li><code>&lt;b&gt;</code></li>", "markup in a code span stays text"},
    {"<tr><th>name</th><th class=\"num\">value</th></tr>", "the header row, right-aligned column marked"},
    {"<tr><td>a|b</td><td class=\"num fail\">0.500 [0.250, 0.750]</td></tr>", "a body row with its style"},
    {"<pre>echo ```\n</pre>", "a preformatted block"},
    {"<figure><figcaption>PR curves (files in plots/: pr-0.svg, pr-0.gp, pr-0.dat) - not drawn",
     "a figure not drawn names its files"},
    {"</body></html>\n", "the document is closed"},
};

/* Render d with fn; every wanted text is in it, the image marker is not. */
static void expect_all(const struct rdoc *d, int (*fn)(const struct rdoc *, FILE *, struct err *),
                       const struct want *w, size_t n, const char *no_image)
{
    struct err e = {0};
    int rc;
    char *out = render(d, fn, &rc, &e);
    CHECK(rc == 0, "the renderer succeeds");
    for (size_t k = 0; k < n; k++) has(out, w[k].text, w[k].desc);
    CHECK(!strstr(out, no_image), "a figure not drawn has no image");
    free(out);
}

static void failures(void)
{
    struct err e = {0};
    int rc;
    struct rdoc *d = rdoc_new("t");
    rdoc_figure(d, "/nonexistent/pr-0.png", "plots/pr-0");
    rdoc_text(d, "c");
    free(render(d, rdoc_html_write, &rc, &e));
    CHECK(rc == -1 && strstr(e.msg, "/nonexistent/pr-0.png"), "an image that cannot be read fails the HTML, named");
    rdoc_free(d);
    d = rdoc_new("t");
    rdoc_table(d, RDOC_COLS_MAX + 1, NULL);
    rdoc_text(d, "x");
    CHECK(rdoc_oom(d), "a table wider than the limit marks the document as not built");
    free(render(d, rdoc_md_write, &rc, &e));
    CHECK(rc == -1 && strstr(e.msg, "report"), "a document not built is refused by the Markdown renderer");
    free(render(d, rdoc_html_write, &rc, &e));
    CHECK(rc == -1, "and by the HTML renderer");
    rdoc_free(d);
    rdoc_free(NULL);
}

int main(void)
{
    struct rdoc *d = sample();
    CHECK(d && !rdoc_oom(d), "the sample document is built");
    expect_all(d, rdoc_md_write, md_want, sizeof md_want / sizeof md_want[0], "![");
    expect_all(d, rdoc_html_write, html_want, sizeof html_want / sizeof html_want[0], "<img");
    rdoc_free(d);
    failures();
    return check_done();
}
