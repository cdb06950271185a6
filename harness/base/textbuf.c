/* textbuf.c: appending formatted text to a fixed buffer. */
#include "harness/base/textbuf.h"

#include <stdarg.h>
#include <stdio.h>

struct textbuf textbuf_init(char *buf, size_t n)
{
    if (n) buf[0] = 0;
    return (struct textbuf){buf, n, 0};
}

void textbuf_put(struct textbuf *b, const char *fmt, ...)
{
    va_list ap;
    va_start(ap, fmt);
    size_t room = b->len < b->n ? b->n - b->len : 0;
    int k = vsnprintf(room ? b->buf + b->len : NULL, room, fmt, ap);
    va_end(ap);
    if (k > 0) b->len += (size_t)k;
}
