/* test_keyset.c: the key set finds every key added, says which earlier key
 * a repeat matches, and keeps that through growth. */
#include <stdio.h>
#include <stdlib.h>
#include <string.h>

#include "harness/base/keyset.h"
#include "tests/check.h"

int main(void)
{
    enum { N = 20000 };
    static char names[N][16];
    struct keyset s = {0};
    size_t v = 99, bad = 0;
    CHECK(!keyset_find(&s, "x", 1, &v) && v == 99, "an empty set finds nothing and leaves the value");
    for (size_t k = 0; k < N; k++) {
        snprintf(names[k], sizeof names[k], "cell-%zu", k);
        bad += keyset_add(&s, names[k], strlen(names[k]), k, NULL) != 0;
    }
    CHECK(bad == 0 && s.n == N, "20,000 distinct keys are all new");
    CHECK(s.cap >= 2 * s.n && (s.cap & (s.cap - 1)) == 0, "the set stays at most half full, a power of two");
    bad = 0;
    for (size_t k = 0; k < N; k++) bad += !keyset_find(&s, names[k], strlen(names[k]), &v) || v != k;
    CHECK(bad == 0, "every key is found with its value after growing");
    size_t old = 0;
    char again[] = "cell-1234";
    CHECK(keyset_add(&s, again, strlen(again), 7, &old) == 1 && old == 1234 && s.n == N,
          "a repeat (another copy of the bytes) names the first key's value and adds nothing");
    CHECK(!keyset_find(&s, "cell-", 5, NULL) && !keyset_find(&s, "cell-123400", 11, NULL),
          "a prefix or an extension of a key is another key");
    CHECK(keyset_add(&s, "", 0, 5, NULL) == 0 && keyset_find(&s, "x", 0, &v) && v == 5,
          "the empty key is a key like the others");
    keyset_free(&s);
    CHECK(s.n == 0 && s.cap == 0 && !s.slot && !keyset_find(&s, names[0], strlen(names[0]), NULL),
          "a freed set is empty and usable");
    keyset_free(NULL);
    return check_done();
}
