/* test_grow.c: grow_reserve doubles a growable array's capacity, keeps its
 * contents, and refuses sizes that overflow without touching the array. */
#include <stdint.h>
#include <stdlib.h>

#include "harness/base/grow.h"
#include "tests/check.h"

struct item {
    double a;
    int b;
};

int main(void)
{
    struct item *v = NULL;
    size_t n = 0, cap = 0, moves = 0, ok = 1;
    CHECK(grow_reserve(&v, &cap, 0, sizeof *v) == 0 && v == NULL && cap == 0, "room for none: nothing allocated");
    for (int k = 0; k < 1000; k++) {
        size_t before = cap;
        if (grow_reserve(&v, &cap, n + 1, sizeof *v)) { ok = 0; break; }
        moves += cap != before;
        ok = ok && cap >= n + 1 && (before == 0 || cap == before || cap == 2 * before);
        v[n++] = (struct item){k * 0.5, -k};
    }
    CHECK(ok && n == 1000, "a thousand appends, each with room, the capacity doubling");
    CHECK(cap == 1024 && moves == 7, "16 doubled six times: seven growths for 1000 elements, capacity 1024");
    ok = 1;
    for (int k = 0; k < 1000; k++) ok = ok && v[k].a == k * 0.5 && v[k].b == -k;
    CHECK(ok, "every element survives the growths");

    struct item *same = v;
    CHECK(grow_reserve(&v, &cap, 1024, sizeof *v) == 0 && v == same && cap == 1024,
          "need within the capacity: the array is not touched");
    CHECK(grow_reserve(&v, &cap, 5000, sizeof *v) == 0 && cap == 5000 && v[999].b == -999,
          "need beyond twice the capacity: grown to exactly need");

    same = v;
    CHECK(grow_reserve(&v, &cap, SIZE_MAX / sizeof *v + 1, sizeof *v) == -1 && v == same && cap == 5000,
          "need * size past SIZE_MAX: refused, the array and capacity left as they were");
    CHECK(v[0].b == 0 && v[999].b == -999, "and the contents are intact");
    CHECK(grow_reserve(&v, &cap, SIZE_MAX, 2) == -1 && v == same && cap == 5000, "SIZE_MAX two-byte elements: refused");
    free(v);

    CHECK(grow_cap(0, 1, 8) == GROW_MIN, "a first growth gets GROW_MIN elements");
    CHECK(grow_cap(100, 101, 8) == 200, "a growth doubles");
    CHECK(grow_cap(100, 50, 8) == 100, "no growth needed: the capacity as it is");
    CHECK(grow_cap(SIZE_MAX / 8 - 1, SIZE_MAX / 8, 8) == SIZE_MAX / 8,
          "when doubling would overflow, exactly need");
    CHECK(grow_cap(SIZE_MAX / 2 + 2, SIZE_MAX / 2 + 3, 1) == SIZE_MAX / 2 + 3,
          "a capacity past half of SIZE_MAX cannot double: exactly need");
    CHECK(grow_cap(0, SIZE_MAX / 8 + 1, 8) == 0, "need * size past SIZE_MAX: 0");
    CHECK(grow_cap(0, 1, 0) == 0, "elements of size 0: 0");
    return check_done();
}
