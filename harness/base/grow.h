/* grow.h: room for one more element in a growable array, the one place
 * the capacity-doubling realloc is written.
 *
 *     struct item *v = NULL;
 *     size_t n = 0, cap = 0;
 *     if (grow_reserve(&v, &cap, n + 1, sizeof *v)) return err_set(e, "out of memory");
 *     v[n++] = it;
 *
 * v is the address of the array's pointer (any T **; NULL before the first
 * element), cap its capacity in elements, need the count that must fit,
 * size the bytes of one element.  When need exceeds cap, the array grows to
 * the larger of need and twice cap (at least GROW_MIN elements).
 *
 * Failure contract: 0 when need elements fit (nothing changes when they
 * already did); -1 when need * size overflows size_t or realloc fails, and
 * then *v and *cap are left as they were (the old array stays valid and
 * still owned by the caller).  grow_cap is the arithmetic alone, for arrays
 * that grow side by side: the new capacity, or 0 on overflow.
 * Thread-safe (no state).
 */
#ifndef RV_GROW_H
#define RV_GROW_H

#include <stddef.h>

#define GROW_MIN 16

size_t grow_cap(size_t cap, size_t need, size_t size);
int grow_reserve(void *v, size_t *cap, size_t need, size_t size);

#endif
