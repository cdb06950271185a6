/* merr.c: the message helper shared by the metrics/ sources. */
#include "metrics/merr.h"

#include <stdarg.h>
#include <stdio.h>

int merr_set(struct err *e, const char *fmt, ...)
{
    if (!e) return -1;
    va_list ap;
    va_start(ap, fmt);
    vsnprintf(e->msg, sizeof e->msg, fmt, ap);
    va_end(ap);
    return -1;
}
