/* desc_cache.h: descriptors on disk, so a repeated evaluation (another
 * protocol, threshold or sweep cell) does not describe the scans again.
 *
 * One file per (method label and version, recording, chain, seed):
 * CACHE_DIR/desc-<16 hex digits>.bin, the digits a 64-bit FNV-1a hash of
 * those fields.  Layout (little-endian):
 *
 *     0  "RVDC"            magic
 *     4  u32 2             format version
 *     8  u32 dim           12 u32 key_dim
 *    16  u64 count         24 u64 seed
 *    32  u64 checksum      FNV-1a 64 of every byte from offset 64 to the end
 *    40  u32 lengths of method, version, chain, source (4 x u32)
 *    56  u64 content       digest of the recording's content and the method's file
 *    64  the four strings, no terminators
 *     .  count x dim f32 descriptors, then count x key_dim f32 keys
 *
 * A file whose header fields differ from the request, whose size is wrong
 * or whose checksum fails is not used (counted as rejected) and is
 * rewritten after describing.  A file that matches in all but the content
 * digest was made from another recording at the same path or another build
 * of the method: it is not used either (*rejected = 2, "stale").  Writes are atomic (afile), so sweep cells
 * sharing one cache folder never see half a file.
 *
 *     struct desc_cache_key k = {label, "1.0", chain, seed, "/abs/rec.json", digest, dim, kd, n};
 *     int hit = desc_cache_load(dir, &k, desc, key, &rejected, e);  // 1 hit, 0 miss, -1 error
 *     if (!hit) { describe...; desc_cache_store(dir, &k, desc, key, e); }
 */
#ifndef RV_DESC_CACHE_H
#define RV_DESC_CACHE_H

#include <stddef.h>
#include <stdint.h>
#include "harness/base/err.h"

struct desc_cache_key {
    const char *method;    /* label with every setting spelled out */
    const char *version;   /* the method's version */
    const char *chain;     /* "" when unperturbed */
    uint64_t seed;         /* 0 when unperturbed */
    const char *source;    /* the recording's manifest, absolute */
    uint64_t content;      /* recording_digest mixed with the method file's digest */
    uint32_t dim, key_dim;
    uint64_t count;
};

/* The file for k under dir (out of size n). 0, or -1 when it does not fit. */
int desc_cache_path(const char *dir, const struct desc_cache_key *k, char *out, size_t n);

/* 1: desc (count x dim) and key (count x key_dim, may be NULL when key_dim
 * is 0) filled from the file; 0: no usable file (*rejected = 1 when one
 * existed but was corrupt or did not match, 2 when it matched but for the
 * content digest); -1: a read error (e set). */
int desc_cache_load(const char *dir, const struct desc_cache_key *k, float *desc, float *key,
                    int *rejected, struct err *e);

/* Write the file atomically (creates dir).  0 or -1. */
int desc_cache_store(const char *dir, const struct desc_cache_key *k, const float *desc,
                     const float *key, struct err *e);

#endif
