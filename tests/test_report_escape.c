/* test_report_escape.c: user text escaped for gnuplot, HTML and Markdown;
 * the plot palette's lightness ramp. */
#include <math.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>

#include "check.h"
#include "reports/esc.h"
#include "reports/plot.h"

/* Run one escaper into a string; the caller frees. */
static char *run(void (*fn)(FILE *, const char *), const char *s)
{
    char *buf = NULL;
    size_t len = 0;
    FILE *f = open_memstream(&buf, &len);
    fn(f, s);
    fclose(f);
    return buf;
}

static void expect(void (*fn)(FILE *, const char *), const char *in, const char *want, const char *desc)
{
    char *got = run(fn, in);
    CHECK(!strcmp(got, want), desc);
    if (strcmp(got, want)) fprintf(stderr, "  got  %s\n  want %s\n", got, want);
    free(got);
}

/* sRGB component to linear light, then relative luminance (W3C, Web Content
 * Accessibility Guidelines 2.0, 2008, definitions "relative luminance" and
 * "contrast ratio"). */
static double lin(int c)
{
    double v = c / 255.0;
    return v <= 0.03928 ? v / 12.92 : pow((v + 0.055) / 1.055, 2.4);
}

static double luminance(const char *hex)
{
    unsigned r, g, b;
    if (sscanf(hex, "#%2x%2x%2x", &r, &g, &b) != 3) return NAN;
    return 0.2126 * lin((int)r) + 0.7152 * lin((int)g) + 0.0722 * lin((int)b);
}

int main(void)
{
    /* gnuplot: a double-quoted string where "\ooo" is an octal byte (gnuplot
     * 5.4 manual, "Strings"); backquote substitution and @ macros act on the
     * raw line, so neither character may appear (manual, "Substitution"). */
    expect(esc_gp, "a`b'c\"d\\e@f$g%h", "\"a\\140b\\047c\\042d\\134e\\100f\\044g\\045h\"",
           "gnuplot: backtick, quotes, backslash, @, $, % become octal escapes");
    expect(esc_gp, "system(\"rm x\")", "\"system(\\042rm x\\042)\"", "gnuplot: system() stays inside the string");
    expect(esc_gp, "line\nbreak\ttab", "\"line break tab\"", "gnuplot: control characters become spaces");
    expect(esc_gp, "\xc3\xa9t\xc3\xa9", "\"\\303\\251t\\303\\251\"", "gnuplot: UTF-8 bytes pass as octal escapes");
    expect(esc_gp, "scan-context:rings=20,x_y{1}^2 [a] (b)", "\"scan-context:rings=20,x_y{1}^2 [a] (b)\"",
           "gnuplot: ordinary label characters are kept as they are");
    expect(esc_gp, "", "\"\"", "gnuplot: the empty string is an empty literal");
    char *g = run(esc_gp, "`id` @m 'x'");
    CHECK(!strchr(g, '`') && !strchr(g, '@') && !strchr(g, '\''), "gnuplot: no backtick, @ or single quote survives");
    CHECK(strchr(g + 1, '"') == g + strlen(g) - 1, "gnuplot: the string closes only at its end");
    free(g);

    /* HTML: the five characters of the HTML 5 specification's escaping
     * algorithm for text and attribute values (WHATWG, "Serializing HTML
     * fragments"), plus the apostrophe for single-quoted attributes. */
    expect(esc_html, "<script>alert('x')</script> & \"q\"",
           "&lt;script&gt;alert(&#39;x&#39;)&lt;/script&gt; &amp; &quot;q&quot;",
           "HTML: tags, ampersand and quotes become entities");
    expect(esc_html, "plain text", "plain text", "HTML: plain text is unchanged");

    /* Markdown: backslash escapes for ASCII punctuation (CommonMark 0.30,
     * section 2.4), entities for < > & so raw HTML cannot start. */
    expect(esc_md, "a|b*c_d`e<f>", "a\\|b\\*c\\_d\\`e&lt;f&gt;", "Markdown: table pipe, emphasis, code and tags escaped");
    expect(esc_md, "[link](x)", "\\[link\\](x)", "Markdown: brackets cannot form a link");
    expect(esc_md, "two\nlines", "two lines", "Markdown: a line break cannot end a table row");

    /* Palette: lightness rises step by step, so lines stay apart in grey.
     * The contrast between neighbours of at least 1.25 is our own design
     * target, not a published threshold. */
    double prev = -1;
    int rising = 1;
    double min_ratio = INFINITY;
    for (size_t k = 0; k < PLOT_NCOLOURS; k++) {
        double l = luminance(plot_colour(k));
        if (!(l > prev)) rising = 0;
        if (k) min_ratio = fmin(min_ratio, (l + 0.05) / (prev + 0.05));
        prev = l;
    }
    CHECK(rising, "palette: relative luminance rises strictly from the first colour to the last");
    CHECK(min_ratio >= 1.25, "palette: neighbouring colours differ in contrast ratio by at least 1.25");
    CHECK(!strcmp(plot_colour(PLOT_NCOLOURS), plot_colour(0)), "palette: colours repeat past the last one");
    return check_done();
}
