/* grow.c: capacity doubling with overflow checks (see grow.h). */
#include "harness/base/grow.h"

#include <stdint.h>
#include <stdlib.h>
#include <string.h>

size_t grow_cap(size_t cap, size_t need, size_t size)
{
    if (!size || need > SIZE_MAX / size) return 0;
    if (need <= cap) return cap;
    size_t nc = cap <= SIZE_MAX / 2 ? 2 * cap : need;
    if (nc < GROW_MIN) nc = GROW_MIN;
    if (nc < need) nc = need;
    if (nc > SIZE_MAX / size) nc = need;     /* doubling would overflow: exactly need */
    return nc;
}

int grow_reserve(void *v, size_t *cap, size_t need, size_t size)
{
    if (need <= *cap) return 0;
    size_t nc = grow_cap(*cap, need, size);
    if (!nc) return -1;
    /* *v is a T * of the caller's; it is read and written as bytes, so any
     * object pointer type may stand behind it (POSIX: one representation). */
    void *old, *p;
    memcpy(&old, v, sizeof old);
    p = realloc(old, nc * size);
    if (!p) return -1;
    memcpy(v, &p, sizeof p);
    *cap = nc;
    return 0;
}
