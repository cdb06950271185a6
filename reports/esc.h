/* esc.h: write user-derived text (method names, titles, file names) safely
 * into gnuplot scripts, HTML and Markdown.
 *
 *     esc_gp(f, "a`b'");     // writes  "a\140b\047"   (a gnuplot string literal)
 *     esc_html(f, "<b>");    // writes  &lt;b&gt;
 *     esc_md(f, "a|b*");     // writes  a\|b\*
 *
 * esc_gp emits a double-quoted gnuplot string in which every byte outside
 * letters, digits, space and  , . : ; = + - _ / ( ) [ ] { } # ! ? ~ < > & * ^
 * is an octal escape.  So the script line never holds a backtick (command
 * substitution), an '@' (macro expansion), a quote or a backslash of the
 * user's: the text is drawn literally and can never run a command.  Control
 * bytes become a space.  Draw such labels with the terminal's `noenhanced`
 * option so ^ _ { } stay literal.  All three cannot fail (a write error shows
 * in ferror(f)).
 */
#ifndef RV_ESC_H
#define RV_ESC_H

#include <stdio.h>

void esc_gp(FILE *f, const char *s);
void esc_html(FILE *f, const char *s);
void esc_md(FILE *f, const char *s);

#endif
