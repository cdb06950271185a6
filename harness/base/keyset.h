/* keyset.h: a set of byte-string keys, each with a number, found in
 * expected constant time (open addressing, at most half full), so that a
 * check "is this name new?" over n names costs O(n), not O(n^2).
 *
 *     struct keyset s = {0};
 *     size_t first;
 *     for (size_t k = 0; k < n; k++) {
 *         int r = keyset_add(&s, names[k], strlen(names[k]), k, &first);
 *         if (r < 0) ...             // out of memory, the set is unchanged
 *         if (r > 0) ...             // names[k] repeats names[first]
 *     }
 *     keyset_find(&s, "clean", 5, &k);   // 1 and k set, or 0
 *     keyset_free(&s);
 *
 * Keys are borrowed: the bytes must stay in place, unchanged, while the set
 * lives.  A key is compared byte for byte (len bytes), so a number is added
 * as its bytes, normalised first where two spellings are equal (-0.0 and 0.0).
 * Not thread-safe for writers; concurrent keyset_find calls are fine.
 */
#ifndef RV_KEYSET_H
#define RV_KEYSET_H

#include <stddef.h>
#include <stdint.h>

struct keyset_slot {
    const void *key;      /* NULL: empty slot */
    size_t len;
    uint64_t hash;
    size_t value;
};

struct keyset {
    size_t n, cap;        /* keys held; slots (0 or a power of two, cap >= 2n) */
    struct keyset_slot *slot;
};

/* Add key with value.  0 added; 1 the key is there already (its value into
 * *old when old is not NULL, nothing changed); -1 out of memory (nothing
 * changed). */
int keyset_add(struct keyset *s, const void *key, size_t len, size_t value, size_t *old);
/* 1 and the key's value into *value (when not NULL), or 0 when absent. */
int keyset_find(const struct keyset *s, const void *key, size_t len, size_t *value);
/* Free the slots and leave the set empty; accepts a zeroed set or NULL. */
void keyset_free(struct keyset *s);

#endif
