/* cloud.c: growable interleaved point cloud with optional ring and time. */
#include "harness/base/cloud.h"

#include <math.h>
#include <stdlib.h>
#include <string.h>

#include "harness/base/grow.h"

void cloud_init(struct cloud *c)
{
    memset(c, 0, sizeof *c);
}

void cloud_free(struct cloud *c)
{
    if (!c) return;
    free(c->pts);
    free(c->ring);
    free(c->time);
    cloud_init(c);
}

int cloud_reserve(struct cloud *c, size_t cap)
{
    if (cap <= c->cap) return 0;
    if (cap > CLOUD_MAX_POINTS) return -1;
    /* three arrays grow side by side: the arithmetic of grow.h, then each realloc */
    size_t nc = grow_cap(c->cap, cap < 1024 ? 1024 : cap, 4 * sizeof *c->pts);
    if (!nc) return -1;
    if (nc > CLOUD_MAX_POINTS) nc = CLOUD_MAX_POINTS;
    float *p = realloc(c->pts, nc * 4 * sizeof *p);
    if (!p) return -1;
    c->pts = p;
    if (c->ring) {
        uint16_t *r = realloc(c->ring, nc * sizeof *r);
        if (!r) return -1;
        c->ring = r;
    }
    if (c->time) {
        float *t = realloc(c->time, nc * sizeof *t);
        if (!t) return -1;
        c->time = t;
    }
    c->cap = nc;
    return 0;
}

int cloud_enable_ring(struct cloud *c)
{
    if (c->ring) return 0;
    c->ring = calloc(c->cap ? c->cap : 1, sizeof *c->ring);
    return c->ring ? 0 : -1;
}

int cloud_enable_time(struct cloud *c)
{
    if (c->time) return 0;
    c->time = calloc(c->cap ? c->cap : 1, sizeof *c->time);
    return c->time ? 0 : -1;
}

int cloud_push(struct cloud *c, float x, float y, float z, float i)
{
    if (c->n == c->cap && cloud_reserve(c, c->n + 1)) return -1;
    float *p = c->pts + 4 * c->n;
    p[0] = x; p[1] = y; p[2] = z; p[3] = i;
    if (c->ring) c->ring[c->n] = 0;
    if (c->time) c->time[c->n] = 0;
    c->n++;
    return 0;
}

int cloud_copy(struct cloud *dst, const struct cloud *src)
{
    if (src->ring && cloud_enable_ring(dst)) return -1;
    if (src->time && cloud_enable_time(dst)) return -1;
    if (cloud_reserve(dst, src->n)) return -1;
    if (src->n) memcpy(dst->pts, src->pts, src->n * 4 * sizeof(float));
    if (!src->ring) { free(dst->ring); dst->ring = NULL; }
    else if (src->n) memcpy(dst->ring, src->ring, src->n * sizeof *src->ring);
    if (!src->time) { free(dst->time); dst->time = NULL; }
    else if (src->n) memcpy(dst->time, src->time, src->n * sizeof *src->time);
    dst->n = src->n;
    return 0;
}

void cloud_move(struct cloud *c, size_t j, size_t k)
{
    if (j == k) return;
    memcpy(c->pts + 4 * j, c->pts + 4 * k, 4 * sizeof(float));
    if (c->ring) c->ring[j] = c->ring[k];
    if (c->time) c->time[j] = c->time[k];
}

/* Branch-free blocks the compiler vectorises, so the usual all-finite case
 * costs about one pass over memory. */
#if defined(__x86_64__) && defined(__GNUC__) && !defined(__clang__) && !defined(__SANITIZE_ADDRESS__)
__attribute__((target_clones("avx2", "default")))
#endif
int cloud_values_finite(const float *v, size_t n)
{
    enum { BLOCK = 256 };
    const uint32_t EXP = 0x7f800000u;   /* all exponent bits set: NaN or infinity */
    uint32_t bad = 0;
    size_t k = 0;
    for (; k + BLOCK <= n; k += BLOCK) {
        for (int j = 0; j < BLOCK; j++) {
            uint32_t w;
            memcpy(&w, v + k + j, sizeof w);
            bad |= (w & EXP) == EXP;
        }
        if (bad) return 0;
    }
    for (; k < n; k++) {
        uint32_t w;
        memcpy(&w, v + k, sizeof w);
        bad |= (w & EXP) == EXP;
    }
    return !bad;
}

size_t cloud_drop_nonfinite(struct cloud *c)
{
    if (cloud_values_finite(c->pts, 4 * c->n)) return 0;
    size_t j = 0;
    for (size_t k = 0; k < c->n; k++) {
        const float *p = c->pts + 4 * k;
        if (isfinite(p[0]) && isfinite(p[1]) && isfinite(p[2])) cloud_move(c, j++, k);
    }
    size_t dropped = c->n - j;
    c->n = j;
    return dropped;
}
