/* sc_distance.c: the Scan Context distance as a column correlation.
 *
 * d(a, b) = min over shifts k of 1 - (1/n_k) sum_j cos(a_j, b_(j+k mod S)),
 * the sum over the n_k columns j non-empty in both images, cos(x, y) =
 * x.y / (|x| |y|); 1 when no column is shared.  aux gets the first k that
 * reaches the minimum.
 *
 * How, in two passes (sc_kernel.h, built for 4 and for 8 floats per vector):
 *   1. Float pass, every shift at once.  With a^_j = a_j / |a_j| stored
 *      ring-major, reversed and doubled (rev, below), the cosine sum of
 *      every shift k is a correlation: acc[k] = sum_c sum_r b^_c[r]
 *      rev[r][S - c + k], one broadcast of b^_c[r] and eight unaligned
 *      vector loads and multiply-adds per non-zero cell of b (64 shifts);
 *      empty cells are skipped.  The float sums go to double every SC_GROUP
 *      columns.  n_k comes from the same correlation on the columns'
 *      occupancy (exact in float).
 *   2. Exact pass, in double, only on the shifts whose float distance is
 *      within 2 SC_ERR of the float minimum.  Pass 1 errs by at most
 *      (SC_GROUP R + 4) 2^-24 in a distance: a float sum of at most
 *      SC_GROUP R products, each column's products summing to at most 1 in
 *      magnitude (|a^_j| = |b^_c| = 1), errs by SC_GROUP R 2^-24 per unit
 *      (the standard bound of a rounded sum, common practice, no source),
 *      and rounding a^ and b^ to float adds at most 4 units.  SC_ERR is
 *      twice that bound plus 8 units, so a shift left out is farther than
 *      the minimum: the minimum, its first shift on ties and the value
 *      returned are those of the double computation alone.  There each
 *      cosine is dot * (1/|a_j|) * (1/|b_c|), the dot and the squared norms
 *      summed in double over four lanes of rings (products of floats are
 *      exact in double), within a few units in the last place of the
 *      quotient; where dot == |a_j|^2 == |b_c|^2 > 0 (equal columns) it is
 *      exactly 1, so a copy turned by whole sectors is at distance exactly 0.
 * The AVX2 and the base build differ only in pass 1, so their results are
 * identical.  The _many forms prepare the query (rev) once for all its
 * candidates.
 *
 * rev (W = S + K columns, K = S rounded up to SC_KB shifts; column t holds
 * a^ of column -t mod S of a):
 *     | r0: a^_0[0] a^_S-1[0] a^_S-2[0] ... | r1: a^_0[1] ... | ... | rR-1 |
 */
#include <math.h>
#include <stdlib.h>
#include <string.h>

#include "harness/plugins/scan-context/sc.h"

#define SC_KB 64                                   /* shifts per block of the float pass */
#define SC_KMAX ((SC_MAX_SECTORS + SC_KB - 1) / SC_KB * SC_KB)
#define SC_STACK_FLOATS 16384                      /* rev and cells of b up to this, on the stack */
#define SC_GROUP 8                                 /* columns per float sum of pass 1 */
#define SC_ERR(R) (2.0 * (SC_GROUP * (R) + 8) / 16777216.0)

/* The query, ready for pass 1. */
struct sc_prep {
    int R, S, K, W;
    const float *a;
    double na[SC_MAX_SECTORS + 4], ia[SC_MAX_SECTORS + 4];  /* |a_j|^2, 1/|a_j| (0: empty) */
    float *rev;                                      /* R x W, see the banner */
    float occ[SC_MAX_SECTORS + SC_KMAX];             /* occ[t]: column -t mod S non-empty */
};

/* One candidate: its non-zero cells and pass 1's sums. */
struct sc_cand {
    int ncol;                                        /* non-empty columns */
    int at[SC_MAX_SECTORS], end[SC_MAX_SECTORS];     /* column c's S - c; its cells end */
    float *val;                                      /* b^_c[r] of the non-zero cells */
    int32_t *off;                                    /* their r W + S - c */
    double nb[SC_MAX_SECTORS + 4], ib[SC_MAX_SECTORS + 4];  /* |b_c|^2, 1/|b_c| (0: empty) */
    double sum[SC_KMAX];
    float cnt[SC_KMAX];
};

/* Past column S, a column of zeros. */
static const float sc_zero[SC_MAX_RINGS];

/* Floats of the variable buffers for R x S: rev, then the cells of b (two
 * arrays of R S, with room for one vector written past the last cell). */
static size_t sc_floats(int R, int S)
{
    int K = (S + SC_KB - 1) / SC_KB * SC_KB;
    return (size_t)R * (size_t)(S + K) + 2 * ((size_t)R * (size_t)S + 8);
}

/* Where pass 1 puts the cells of b: after rev. */
static void sc_cells(const struct sc_prep *p, struct sc_cand *c)
{
    c->val = p->rev + (size_t)p->R * p->W;
    c->off = (int32_t *)(c->val + (size_t)p->R * p->S + 8);
}

/* Unaligned vector access (vectors never pass by value: no ABI change
 * between the base and the AVX2 build of a function). */
#define SC_LOAD(v, p) memcpy(&(v), (p), sizeof(v))
#define SC_STORE(p, v) memcpy((p), &(v), sizeof(v))

#define SC_VB 16
#define SC_NAME(x) sc_##x##_base
#define SC_TARGET
#include "harness/plugins/scan-context/sc_kernel.h"
#undef SC_VB
#undef SC_NAME
#undef SC_TARGET

double sc_pair_base(int rings, int sectors, const float *a, const float *b, int32_t *aux)
{
    double d;
    sc_many_base(rings, sectors, a, &b, 1, &d, aux);
    return d;
}

#if defined(__x86_64__) || defined(__i386__)
#include <immintrin.h>
#define SC_VB 32
#define SC_NAME(x) sc_##x##_avx2
#define SC_TARGET __attribute__((target("avx2,fma,bmi2"), optimize("fp-contract=fast")))
#include "harness/plugins/scan-context/sc_kernel.h"

double sc_pair_avx2(int rings, int sectors, const float *a, const float *b, int32_t *aux)
{
    double d;
    sc_many_avx2(rings, sectors, a, &b, 1, &d, aux);
    return d;
}

static int sc_has_avx2(void)
{
    __builtin_cpu_init();
    return __builtin_cpu_supports("avx2") && __builtin_cpu_supports("fma") && __builtin_cpu_supports("bmi2");
}

sc_pair_fn sc_pair_pick(void) { return sc_has_avx2() ? sc_pair_avx2 : sc_pair_base; }
sc_many_fn sc_many_pick(void) { return sc_has_avx2() ? sc_many_avx2 : sc_many_base; }
#else
double sc_pair_avx2(int rings, int sectors, const float *a, const float *b, int32_t *aux)
{
    return sc_pair_base(rings, sectors, a, b, aux);
}

void sc_many_avx2(int rings, int sectors, const float *a, const float *const *b, size_t n, double *out,
                  int32_t *aux)
{
    sc_many_base(rings, sectors, a, b, n, out, aux);
}

sc_pair_fn sc_pair_pick(void) { return sc_pair_base; }
sc_many_fn sc_many_pick(void) { return sc_many_base; }
#endif
