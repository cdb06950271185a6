/* check.h: the tiny test harness every tests/test_*.c uses.
 *
 *     CHECK(cloud.n == 3, "push appends one point each");
 *     CHECK_NEAR(r, 5.0, 1e-9, "range to a wall 5 m ahead");
 *     return check_done();   // prints "N passed, N failed", exit 1 on a failure
 *
 * Each description names the behaviour checked.  Checks against an outside
 * reference name the source in a comment beside them.
 */
#ifndef RV_CHECK_H
#define RV_CHECK_H

#include <math.h>
#include <stdio.h>
#include <string.h>

static int check_passed, check_failed, check_skipped;

#define CHECK(cond, desc) do { \
    if (cond) check_passed++; \
    else { check_failed++; fprintf(stderr, "FAIL %s:%d: %s\n", __FILE__, __LINE__, desc); } \
} while (0)

#define CHECK_NEAR(a, b, tol, desc) do { \
    double check_a_ = (double)(a), check_b_ = (double)(b); \
    if (fabs(check_a_ - check_b_) <= (tol)) check_passed++; \
    else { check_failed++; fprintf(stderr, "FAIL %s:%d: %s (got %.17g, want %.17g)\n", \
                                   __FILE__, __LINE__, desc, check_a_, check_b_); } \
} while (0)

/* A check that cannot run in this build: counted and shown as skipped, never as passed. */
#define CHECK_SKIP(desc) do { check_skipped++; fprintf(stderr, "SKIP %s:%d: %s\n", __FILE__, __LINE__, desc); } while (0)

/* Message check: the error text contains the fragment. */
#define CHECK_MSG(msg, frag, desc) do { \
    if (strstr((msg), (frag))) check_passed++; \
    else { check_failed++; fprintf(stderr, "FAIL %s:%d: %s (message '%s' lacks '%s')\n", \
                                   __FILE__, __LINE__, desc, (msg), (frag)); } \
} while (0)

static inline int check_done(void)
{
    if (check_skipped)
        printf("%d passed, %d failed, %d skipped\n", check_passed, check_failed, check_skipped);
    else
        printf("%d passed, %d failed\n", check_passed, check_failed);
    return check_failed ? 1 : 0;
}

#endif
