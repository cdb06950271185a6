/* synrng.h: the counter-based random numbers of the synthetic generator.
 *
 * No hidden state: a draw is a pure function of (key, counter), so a scan's
 * noise depends only on the seed and the scan and ray indices, never on the
 * thread that casts it.  A small sequential stream serves world building.
 *
 *     struct synrng r; synrng_init(&r, seed, SYNRNG_WORLD);
 *     double u = synrng_uniform(&r);            // [0, 1)
 *     uint64_t h = synrng_hash3(seed, scan, ray);
 */
#ifndef RV_SYNRNG_H
#define RV_SYNRNG_H

#include <math.h>
#include <stdint.h>

enum { SYNRNG_WORLD = 1, SYNRNG_ROUTE = 2, SYNRNG_SCAN = 3, SYNRNG_POSE = 4 };

struct synrng {
    uint64_t state;
};

/* The splitmix64 finaliser (a bijective 64-bit mix). */
static inline uint64_t synrng_mix(uint64_t z)
{
    z += 0x9e3779b97f4a7c15ull;
    z = (z ^ (z >> 30)) * 0xbf58476d1ce4e5b9ull;
    z = (z ^ (z >> 27)) * 0x94d049bb133111ebull;
    return z ^ (z >> 31);
}

static inline uint64_t synrng_hash3(uint64_t a, uint64_t b, uint64_t c)
{
    return synrng_mix(synrng_mix(synrng_mix(a) ^ b) ^ c);
}

static inline void synrng_init(struct synrng *r, uint64_t seed, uint64_t stream)
{
    r->state = synrng_hash3(seed, stream, 0x5eedull);
}

static inline uint64_t synrng_next(struct synrng *r)
{
    r->state += 0x9e3779b97f4a7c15ull;
    return synrng_mix(r->state);
}

/* Uniform in [0, 1) from the top 53 bits of h. */
static inline double synrng_unit(uint64_t h)
{
    return (double)(h >> 11) * (1.0 / 9007199254740992.0);
}

static inline double synrng_uniform(struct synrng *r)
{
    return synrng_unit(synrng_next(r));
}

static inline double synrng_range(struct synrng *r, double lo, double hi)
{
    return lo + (hi - lo) * synrng_uniform(r);
}

/* Standard normal by Box-Muller from two hashed uniforms. */
static inline double synrng_normal_h(uint64_t h1, uint64_t h2)
{
    double u1 = 1.0 - synrng_unit(h1), u2 = synrng_unit(h2);
    return sqrt(-2.0 * log(u1)) * cos(6.283185307179586 * u2);
}

static inline double synrng_normal(struct synrng *r)
{
    uint64_t a = synrng_next(r);
    return synrng_normal_h(a, synrng_next(r));
}

#endif
