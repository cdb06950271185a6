/* junit.h: write a JUnit XML report (one test suite, one test case per
 * verdict), the file CI systems read.
 *
 *     struct junit_case c[] = {{"f1max on mount >= 0.5", "revisit.demo", 1, NULL}, ...};
 *     if (junit_write("verdicts.xml", "revisit check", c, n, e)) ...
 *
 * Text is escaped for XML (& < > " ' and control characters).  0 or -1.
 */
#ifndef RV_JUNIT_H
#define RV_JUNIT_H

#include <stddef.h>
#include <stdio.h>
#include "harness/base/err.h"

struct junit_case {
    const char *name;
    const char *classname;
    int pass;
    const char *message;   /* why it failed (failure message), or NULL */
};

/* Escape s for an XML attribute or text node into f. Cannot fail. */
void junit_escape(FILE *f, const char *s);

/* Write the report atomically. 0 or -1. */
int junit_write(const char *path, const char *suite, const struct junit_case *c, size_t n, struct err *e);

#endif
