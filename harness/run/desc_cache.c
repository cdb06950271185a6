/* desc_cache.c: the descriptor cache file (layout in desc_cache.h). */
#include "harness/run/desc_cache.h"

#include <errno.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>
#include <sys/stat.h>

#include "harness/base/fileio.h"

#define DC_HEAD 64
#define DC_FNV_BASIS 0xcbf29ce484222325ull
#define DC_FNV_PRIME 0x100000001b3ull

static uint64_t dc_fnv(uint64_t h, const void *data, size_t n)
{
    const unsigned char *p = data;
    for (size_t k = 0; k < n; k++) h = (h ^ p[k]) * DC_FNV_PRIME;
    return h;
}

static void dc_put(unsigned char *b, uint64_t v, int bytes)
{
    for (int k = 0; k < bytes; k++) b[k] = (unsigned char)(v >> (8 * k));
}

static uint64_t dc_get(const unsigned char *b, int bytes)
{
    uint64_t v = 0;
    for (int k = 0; k < bytes; k++) v |= (uint64_t)b[k] << (8 * k);
    return v;
}

int desc_cache_path(const char *dir, const struct desc_cache_key *k, char *out, size_t n)
{
    uint64_t h = DC_FNV_BASIS;
    const char *parts[] = {k->method, k->version, k->chain, k->source};
    for (int i = 0; i < 4; i++) h = dc_fnv(dc_fnv(h, parts[i], strlen(parts[i])), "\n", 1);
    unsigned char s[8];
    dc_put(s, k->seed, 8);
    h = dc_fnv(h, s, 8);
    char name[64];
    snprintf(name, sizeof name, "desc-%016llx.bin", (unsigned long long)h);
    return fileio_join(out, n, dir, name);
}

/* The header and strings for k into a malloc'ed buffer of *len bytes. */
static unsigned char *dc_header(const struct desc_cache_key *k, size_t *len)
{
    const char *parts[] = {k->method, k->version, k->chain, k->source};
    size_t sl[4], total = DC_HEAD;
    for (int i = 0; i < 4; i++) total += sl[i] = strlen(parts[i]);
    unsigned char *b = calloc(1, total);
    if (!b) return NULL;
    memcpy(b, "RVDC", 4);
    dc_put(b + 4, 2, 4);
    dc_put(b + 8, k->dim, 4);
    dc_put(b + 12, k->key_dim, 4);
    dc_put(b + 16, k->count, 8);
    dc_put(b + 24, k->seed, 8);
    size_t at = DC_HEAD;
    for (int i = 0; i < 4; i++) {
        dc_put(b + 40 + 4 * i, sl[i], 4);
        memcpy(b + at, parts[i], sl[i]);
        at += sl[i];
    }
    dc_put(b + 56, k->content, 8);
    *len = total;
    return b;
}

int desc_cache_load(const char *dir, const struct desc_cache_key *k, float *desc, float *key,
                    int *rejected, struct err *e)
{
    char path[4200];
    *rejected = 0;
    if (desc_cache_path(dir, k, path, sizeof path)) return err_at(e, dir, 0, "path too long for a cache file");
    struct stat st;
    if (stat(path, &st)) return 0;
    size_t hl, nd = (size_t)k->count * k->dim * 4, nk = (size_t)k->count * k->key_dim * 4;
    unsigned char *want = dc_header(k, &hl);
    if (!want) return err_set(e, "%s: out of memory", path);
    char *buf = NULL;
    size_t len = 0;
    if (fileio_read(path, hl + nd + nk + 1, &buf, &len, NULL)) {
        free(want);
        *rejected = 1;
        return 0;
    }
    const unsigned char *b = (const unsigned char *)buf;
    int ok = len == hl + nd + nk && !memcmp(b, want, 32) && !memcmp(b + 40, want + 40, 16) &&
             !memcmp(b + DC_HEAD, want + DC_HEAD, hl - DC_HEAD) &&
             dc_get(b + 32, 8) == dc_fnv(DC_FNV_BASIS, b + DC_HEAD, len - DC_HEAD);
    /* everything the same but the content: the recording or the method changed */
    int stale = ok && dc_get(b + 56, 8) != k->content;
    ok = ok && !stale;
    if (ok) {
        memcpy(desc, b + hl, nd);
        if (nk && key) memcpy(key, b + hl + nd, nk);
    }
    *rejected = stale ? 2 : !ok;
    free(want);
    free(buf);
    return ok;
}

int desc_cache_store(const char *dir, const struct desc_cache_key *k, const float *desc,
                     const float *key, struct err *e)
{
    char path[4200];
    if (fileio_mkdirs(dir, e)) return -1;
    if (desc_cache_path(dir, k, path, sizeof path)) return err_at(e, dir, 0, "path too long for a cache file");
    size_t hl, nd = (size_t)k->count * k->dim * 4, nk = (size_t)k->count * k->key_dim * 4;
    unsigned char *h = dc_header(k, &hl);
    if (!h) return err_set(e, "%s: out of memory", path);
    uint64_t sum = dc_fnv(DC_FNV_BASIS, h + DC_HEAD, hl - DC_HEAD);
    sum = dc_fnv(sum, desc, nd);
    if (nk) sum = dc_fnv(sum, key, nk);
    dc_put(h + 32, sum, 8);
    struct afile a;
    if (afile_open(&a, path, e)) {
        free(h);
        return -1;
    }
    int bad = fwrite(h, 1, hl, a.f) != hl || (nd && fwrite(desc, 1, nd, a.f) != nd) ||
              (nk && fwrite(key, 1, nk, a.f) != nk);
    free(h);
    if (bad) {
        int saved = errno;
        afile_abort(&a);
        return err_at(e, path, 0, "write failed: %s", strerror(saved));
    }
    return afile_commit(&a, e);
}
