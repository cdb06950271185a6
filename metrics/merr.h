/* merr.h: the one message helper of metrics/, internal to the library.
 *
 * metrics/ fills the caller's `struct err` (harness/base/err.h, used for the type
 * only) but links nothing outside libc and libm, so it carries this twin of
 * err_set instead of calling harness/base/err.c.  Not part of any public header.
 *
 *     if (!x) return merr_set(e, "out of memory for %zu outcomes", n);
 */
#ifndef RV_MERR_H
#define RV_MERR_H

#include "harness/base/err.h"

/* Write the printf-formatted message into e->msg (dropped when e is NULL);
 * returns -1 so `return merr_set(...)` reads well.  Thread-safe. */
int merr_set(struct err *e, const char *fmt, ...)
    __attribute__((format(printf, 2, 3)));

#endif
