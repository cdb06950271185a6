/* rng.c: SplitMix64 seeding and the xoshiro256** generator (see rng.h). */
#include "perturb/rng.h"

#include <math.h>

uint64_t rng_splitmix64(uint64_t *state)
{
    /* Constants from Steele, Lea & Flood (OOPSLA 2014), the published mixer. */
    uint64_t z = (*state += 0x9e3779b97f4a7c15ULL);
    z = (z ^ (z >> 30)) * 0xbf58476d1ce4e5b9ULL;
    z = (z ^ (z >> 27)) * 0x94d049bb133111ebULL;
    return z ^ (z >> 31);
}

void rng_seed(struct rng *r, uint64_t run_seed, uint64_t scan, uint64_t stage)
{
    /* Chain the key words through the mixer so each one changes every bit. */
    uint64_t st = run_seed;
    uint64_t h = rng_splitmix64(&st);
    st = h ^ scan;
    h = rng_splitmix64(&st);
    st = h ^ stage;
    for (int k = 0; k < 4; k++) r->s[k] = rng_splitmix64(&st);
    if (!(r->s[0] | r->s[1] | r->s[2] | r->s[3])) r->s[0] = 1;  /* all-zero state is fixed */
}

double rng_uniform(struct rng *r)
{
    return (double)(rng_next(r) >> 11) * 0x1.0p-53;
}

double rng_normal(struct rng *r)
{
    /* Box & Muller (1958): u1 in (0, 1] keeps the log finite. */
    double u1 = 1.0 - rng_uniform(r), u2 = rng_uniform(r);
    return sqrt(-2.0 * log(u1)) * cos(2.0 * M_PI * u2);
}

double rng_normal_next(struct rng *r, struct rng_normals *n)
{
    if (!n->left) {
        double u1 = 1.0 - rng_uniform(r), u2 = rng_uniform(r);
        double rad = sqrt(-2.0 * log(u1)), a = 2.0 * M_PI * u2;
        n->v[0] = rad * cos(a);
        n->v[1] = rad * sin(a);
        n->left = 2;
    }
    return n->v[2 - n->left--];
}

double rng_exp(struct rng *r, double mean)
{
    return -mean * log(1.0 - rng_uniform(r));
}
