/* esc.c: escaping for gnuplot strings, HTML and Markdown. */
#include "reports/esc.h"

#include <string.h>

static int gp_plain(unsigned char c)
{
    if ((c >= 'a' && c <= 'z') || (c >= 'A' && c <= 'Z') || (c >= '0' && c <= '9')) return 1;
    return c && strchr(" ,.:;=+-_/()[]{}#!?~<>&*^", c) != NULL;
}

void esc_gp(FILE *f, const char *s)
{
    fputc('"', f);
    for (const unsigned char *p = (const unsigned char *)s; *p; p++) {
        if (gp_plain(*p)) fputc(*p, f);
        else if (*p < 0x20 || *p == 0x7f) fputc(' ', f);
        else fprintf(f, "\\%03o", *p);
    }
    fputc('"', f);
}

void esc_html(FILE *f, const char *s)
{
    for (const char *p = s; *p; p++) {
        switch (*p) {
        case '&': fputs("&amp;", f); break;
        case '<': fputs("&lt;", f); break;
        case '>': fputs("&gt;", f); break;
        case '"': fputs("&quot;", f); break;
        case '\'': fputs("&#39;", f); break;
        default: fputc(*p, f);
        }
    }
}

/* Markdown: backslash the characters that start markup, and write < > & as
 * entities so a renderer that passes HTML through shows them as text. */
void esc_md(FILE *f, const char *s)
{
    for (const unsigned char *p = (const unsigned char *)s; *p; p++) {
        if (*p == '<') fputs("&lt;", f);
        else if (*p == '>') fputs("&gt;", f);
        else if (*p == '&') fputs("&amp;", f);
        else if (*p == '\n' || *p == '\r') fputc(' ', f);
        else if (strchr("\\`*_{}[]#+|~$", *p)) fprintf(f, "\\%c", *p);
        else fputc(*p, f);
    }
}
