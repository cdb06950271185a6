/* sc_distance.c: the Scan Context distance as a column Gram-matrix kernel.
 *
 * d(a, b) = min over shifts k of 1 - (1/n_k) sum_j cos(a_j, b_(j+k mod S)),
 * the sum over the n_k columns j non-empty in both images, cos(x, y) =
 * x.y / (|x| |y|); 1 when no column is shared.  aux gets the first k that
 * reaches the minimum.
 *
 * How: G = A^T B holds every column dot product G[j][c] = a_j . b_c; each
 * pair's cosine is added to the circulant diagonal k = c - j (mod S).
 *   - Products of floats are exact in double, and every entry of G adds its
 *     R products in ring order, lane by lane, so G[j][c] and the squared
 *     norms |a_j|^2, |b_c|^2 are bit for bit those of a scalar loop, whatever
 *     the vector width: the AVX2 and the base kernel give identical results.
 *   - cos = G * (1/|a_j|) * (1/|b_c|), within a few units in the last place
 *     of G / sqrt(|a_j|^2 |b_c|^2); where G == |a_j|^2 == |b_c|^2 > 0 (equal
 *     columns) it is set to exactly 1, so a copy turned by whole sectors is
 *     at distance exactly 0.
 *   - b is copied ring-major into tiles of at most SC_TILE doubles, a
 *     four-column block of a into doubles, both on the stack; the kernel
 *     (sc_kernel.h, built for 2 and for 4 doubles per vector) then reads
 *     whole vectors and works on 4-row blocks of G.
 *
 *   tile (W columns of b, W a multiple of 8, zero past column S):
 *     | r0: b_t0[0] b_t0+1[0] ... | r1: b_t0[1] ... | ... | rR-1: ... |
 */
#include <math.h>
#include <string.h>

#include "harness/plugins/scan-context/sc.h"

#define SC_TILE 2048                       /* doubles of b per tile (16 KB) */
#define SC_PAD (SC_MAX_SECTORS + 8)        /* columns, padded to the block width */
#define SC_INLINE static inline __attribute__((always_inline))

struct sc_work {
    int R, S;
    double na[SC_MAX_SECTORS], ia[SC_MAX_SECTORS];    /* |a_j|^2, 1/|a_j| (0: empty) */
    double nb[SC_PAD], ib[SC_PAD];                    /* |b_c|^2, 1/|b_c| */
    double ob[2 * SC_PAD];                            /* [c], [c + S]: 1 if b_c is non-empty */
    /* sum[j % 4][S - j + c]: the cosines of a_j, b_c (four arrays, so that
     * the vector stores of one row never half-overlap the next row's loads);
     * cnt[k]: columns non-empty in both at shift k */
    double sum[4][2 * SC_PAD], cnt[SC_PAD];
    double tile[SC_TILE] __attribute__((aligned(32)));
    double arow[4 * SC_MAX_RINGS] __attribute__((aligned(32)));
};

/* Unaligned vector access (vectors never pass by value: no ABI change
 * between the base and the AVX2 build of a function). */
#define SC_LOAD(v, p) memcpy(&(v), (p), sizeof(v))
#define SC_STORE(p, v) memcpy((p), &(v), sizeof(v))

/* Squared norm and reciprocal norm of every column (0 for an empty one),
 * occ[c] (may be NULL) 1 for a non-empty column. */
SC_INLINE void sc_columns(const float *img, int R, int S, double *n2, double *inv, double *occ)
{
    for (int j = 0; j < S; j++) {
        const float *col = img + (size_t)j * R;
        double n = 0;
        for (int r = 0; r < R; r++) n += (double)col[r] * col[r];
        n2[j] = n;
        inv[j] = n > 0 ? 1 / sqrt(n) : 0;
        if (occ) occ[j] = n > 0;
    }
}

/* Copy columns t0..t0+W-1 of b ring-major into the tile (zeros past S). */
SC_INLINE void sc_tile(struct sc_work *w, const float *b, int t0, int W)
{
    for (int c = 0; c < W; c++)
        for (int r = 0; r < w->R; r++)
            w->tile[r * W + c] = t0 + c < w->S ? b[(size_t)(t0 + c) * w->R + r] : 0;
}

/* The minimum over shifts, first k on ties, as 1 - mean cosine. */
SC_INLINE double sc_best(const struct sc_work *w, int32_t *aux)
{
    double best = 2;
    int32_t best_k = 0;
    for (int k = 0; k < w->S; k++) {
        double sum = 0, n = w->cnt[k];
        for (int q = 0; q < 4; q++) sum += w->sum[q][k] + w->sum[q][w->S + k];
        double d = n > 0 ? 1 - sum / n : 1;
        if (d < best) {
            best = d;
            best_k = k;
        }
    }
    if (aux) *aux = best_k;
    return best < 0 ? 0 : best;
}


#define SC_VB 16
#define SC_NAME(x) sc_##x##_base
#define SC_TARGET
#define SC_KERNEL sc_pair_base
#include "harness/plugins/scan-context/sc_kernel.h"
#undef SC_VB
#undef SC_NAME
#undef SC_TARGET
#undef SC_KERNEL

#if defined(__x86_64__) || defined(__i386__)
#define SC_VB 32
#define SC_NAME(x) sc_##x##_avx2
#define SC_TARGET __attribute__((target("avx2,fma"), optimize("fp-contract=fast")))
#define SC_KERNEL sc_pair_avx2
#include "harness/plugins/scan-context/sc_kernel.h"

sc_pair_fn sc_pair_pick(void)
{
    __builtin_cpu_init();
    return __builtin_cpu_supports("avx2") && __builtin_cpu_supports("fma") ? sc_pair_avx2 : sc_pair_base;
}
#else
double sc_pair_avx2(int rings, int sectors, const float *a, const float *b, int32_t *aux)
{
    return sc_pair_base(rings, sectors, a, b, aux);
}

sc_pair_fn sc_pair_pick(void) { return sc_pair_base; }
#endif
