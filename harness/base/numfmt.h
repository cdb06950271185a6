/* numfmt.h: numbers written to JSON and CSV so that reading them back gives
 * the same double.
 *
 * numfmt writes the first of %.15g, %.16g and %.17g (for a subnormal v,
 * from %.1g on) that strtod reads back as exactly v: as many significant
 * digits as the shortest text that reads back, and not one bit lost:
 *     0.1 + 0.2   -> "0.30000000000000004"   (%.15g would say "0.3")
 *     0.25        -> "0.25"
 *     1500        -> "1500"      (whole numbers below 1e15 never take an exponent)
 * Non-finite values come out as %g writes them ("nan", "inf", "-inf").
 * (The three texts are rounded from one 21-digit snprintf text and read back
 * by the exact decimal fast path where it applies; ties and the rest take
 * snprintf and strtod themselves: tests/test_numfmt_digits.c.)
 *
 *     char b[NUMFMT_LEN];
 *     fprintf(f, "%s,%s\n", numfmt(b, x), numfmt(b2, y));
 *
 * numfmt_json_print prints a cJSON tree like cJSON_Print (same layout) but
 * with every number through numfmt: cJSON's own printer keeps 15 digits
 * whenever they come within a relative DBL_EPSILON of the value, so it
 * writes 0.30000000000000004 as 0.3.  Non-finite numbers print as null, as
 * cJSON prints them.
 *
 * Failure contract: numfmt and numfmt_noun cannot fail and returns buf.  numfmt_json_print
 * returns a malloc'ed text (free it with free(), like cJSON_Print's) or NULL when out of
 * memory; root is not changed.  Both are thread-safe.
 */
#ifndef RV_NUMFMT_H
#define RV_NUMFMT_H

#include <stddef.h>
#include <cjson/cJSON.h>

#define NUMFMT_LEN 32   /* "-1.2345678901234567e-308" and its NUL fit */

const char *numfmt(char buf[NUMFMT_LEN], double v);

/* The noun for a count: one when n == 1, else many ("1 cell", "3 cells"):
 *     printf("%zu %s failed\n", n, numfmt_noun(n, "cell", "cells"));
 * Cannot fail; returns one of its arguments. */
const char *numfmt_noun(size_t n, const char *one, const char *many);

char *numfmt_json_print(const cJSON *root);

#endif
