/* textbuf.h: text appended piece by piece into a caller's fixed buffer,
 * with the snprintf contract over the whole: the buffer always holds a
 * terminated prefix, and the length the whole text needs is counted even
 * past the end, so the caller can tell a cut and size a second try.
 *
 *     char out[64];
 *     struct textbuf b = textbuf_init(out, sizeof out);
 *     textbuf_put(&b, "%s=%d", "rings", 20);
 *     if (b.len >= sizeof out) ...   // cut; b.len + 1 bytes would fit it
 *
 * Cannot fail: a formatting error adds nothing.  n may be 0 (out NULL):
 * then only the length is counted.
 */
#ifndef RV_TEXTBUF_H
#define RV_TEXTBUF_H

#include <stddef.h>

struct textbuf {
    char *buf;
    size_t n, len;
};

struct textbuf textbuf_init(char *buf, size_t n);
void textbuf_put(struct textbuf *b, const char *fmt, ...) __attribute__((format(printf, 2, 3)));

#endif
