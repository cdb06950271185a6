/* rng.h: the seeded random streams of the perturbation stages (libc/libm only).
 *
 * Generator: xoshiro256** (Blackman & Vigna, "Scrambled linear pseudorandom
 * number generators", ACM TOMS 2021; preprint 2018), its 256-bit state filled
 * by SplitMix64 (Steele, Lea & Flood, "Fast splittable pseudorandom number
 * generators", OOPSLA 2014), the seeding both papers recommend.
 *
 * A stream is keyed by (run seed, scan index, stage index): the three are
 * mixed through SplitMix64 steps, so neighbouring keys give unrelated
 * streams.  A per-recording stream passes RNG_RECORDING as the scan index.
 *
 *     struct rng r; rng_seed(&r, run_seed, scan, stage);
 *     double u = rng_uniform(&r);          // [0, 1)
 *
 * No function here can fail; no state is shared.
 */
#ifndef RV_RNG_H
#define RV_RNG_H

#include <stdint.h>

#define RNG_RECORDING UINT64_MAX   /* "scan index" of a per-recording stream */

struct rng {
    uint64_t s[4];
};

/* One SplitMix64 step: advance *state and return the mixed output. */
uint64_t rng_splitmix64(uint64_t *state);
/* Seed the stream for (run seed, scan, stage). */
void rng_seed(struct rng *r, uint64_t run_seed, uint64_t scan, uint64_t stage);
/* Next 64 raw bits of xoshiro256** as published (Blackman & Vigna 2018,
 * section 3); inline because stages call it once per point or two. */
static inline uint64_t rng_rotl(uint64_t x, int k)
{
    return (x << k) | (x >> (64 - k));
}

static inline uint64_t rng_next(struct rng *r)
{
    uint64_t *s = r->s;
    uint64_t out = rng_rotl(s[1] * 5, 7) * 9;
    uint64_t t = s[1] << 17;
    s[2] ^= s[0];
    s[3] ^= s[1];
    s[1] ^= s[2];
    s[0] ^= s[3];
    s[2] ^= t;
    s[3] = rng_rotl(s[3], 45);
    return out;
}
/* Uniform double in [0, 1) from the top 53 bits. */
double rng_uniform(struct rng *r);
/* Standard normal (Box-Muller, both uniforms drawn per call). */
double rng_normal(struct rng *r);

/* Standard normals two at a time: both Box-Muller outputs of one pair of
 * uniforms, handed out in turn.  Start with {0}; local to one pass. */
struct rng_normals {
    double v[2];
    int left;
};
double rng_normal_next(struct rng *r, struct rng_normals *n);
/* Exponential with the given mean (inversion). */
double rng_exp(struct rng *r, double mean);

#endif
