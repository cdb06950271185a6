/* keyset.c: open-addressing set of borrowed byte-string keys (linear probing). */
#include "harness/base/keyset.h"

#include <stdlib.h>
#include <string.h>

/* FNV-1a 64 over the bytes (Fowler, Noll, Vo; common practice), then the
 * 64-bit finaliser of splitmix (common practice, no source) so that the low
 * bits, which pick the slot, depend on every byte. */
static uint64_t ks_hash(const void *key, size_t len)
{
    const unsigned char *b = key;
    uint64_t h = 14695981039346656037ULL;
    for (size_t k = 0; k < len; k++) {
        h ^= b[k];
        h *= 1099511628211ULL;
    }
    h ^= h >> 30;
    h *= 0xbf58476d1ce4e5b9ULL;
    h ^= h >> 27;
    h *= 0x94d049bb133111ebULL;
    return h ^ (h >> 31);
}

/* The slot holding key, or the empty slot where it would go. */
static struct keyset_slot *ks_slot(const struct keyset *s, const void *key, size_t len, uint64_t h)
{
    size_t mask = s->cap - 1;
    for (size_t k = (size_t)h & mask;; k = (k + 1) & mask) {
        struct keyset_slot *t = &s->slot[k];
        if (!t->key || (t->hash == h && t->len == len && !memcmp(t->key, key, len))) return t;
    }
}

static int ks_grow(struct keyset *s)
{
    size_t cap = s->cap ? 2 * s->cap : 16;
    if (cap < s->cap || cap > (size_t)-1 / sizeof *s->slot) return -1;
    struct keyset_slot *slot = calloc(cap, sizeof *slot);
    if (!slot) return -1;
    struct keyset bigger = {s->n, cap, slot};
    for (size_t k = 0; k < s->cap; k++)
        if (s->slot[k].key) *ks_slot(&bigger, s->slot[k].key, s->slot[k].len, s->slot[k].hash) = s->slot[k];
    free(s->slot);
    *s = bigger;
    return 0;
}

int keyset_add(struct keyset *s, const void *key, size_t len, size_t value, size_t *old)
{
    uint64_t h = ks_hash(key, len);
    if (s->cap) {
        const struct keyset_slot *t = ks_slot(s, key, len, h);
        if (t->key) {
            if (old) *old = t->value;
            return 1;
        }
    }
    if (2 * (s->n + 1) > s->cap && ks_grow(s)) return -1;
    *ks_slot(s, key, len, h) = (struct keyset_slot){key, len, h, value};
    s->n++;
    return 0;
}

int keyset_find(const struct keyset *s, const void *key, size_t len, size_t *value)
{
    if (!s->cap) return 0;
    const struct keyset_slot *t = ks_slot(s, key, len, ks_hash(key, len));
    if (!t->key) return 0;
    if (value) *value = t->value;
    return 1;
}

void keyset_free(struct keyset *s)
{
    if (!s) return;
    free(s->slot);
    memset(s, 0, sizeof *s);
}
