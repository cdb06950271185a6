/* m2dp_fold.h: the folded M2DP binning kernel (AVX2 and FMA), included by
 * m2dp.c on x86; it serves up to 8 rings and 8, 16, 24 or 32 sectors.
 *
 * No square root and no division.  The ring is the number of ring edges at
 * or below r2 = u^2 + v^2.  The sector comes from folding (u, v) into the
 * first octant, where it is the number s of boundary lines
 * mn = tan(2 pi j / t) mx (mn = min(|u|, |v|), mx = max) on or below it;
 * the octant o (0..7, counter-clockwise) follows from the signs of u and v
 * and from |v| > |u|, and the sector is o K + s, or o K + K - 1 - s in the
 * odd octants, which run mirrored (K = t / 8):
 *
 *     u >= 0, v >= 0:  |v| <= |u| octant 0, else 1
 *     u <  0, v >= 0:  |v| >  |u| octant 2, else 3
 *     u <  0, v <  0:  |v| <= |u| octant 4, else 5
 *     u >= 0, v <  0:  |v| >  |u| octant 6, else 7
 *
 * Float moves u and v by at most M2DP_ETA r_max (five roundings of 2^-24
 * |q| each, by Cauchy-Schwarz, rounded up; FMA only drops roundings) and
 * r2 by at most 1.4e-6 r_max^2 with the edges' own rounding.  A lane goes
 * to m2dp_bin_exact when r2 - M2DP_FOLD_R2 r_max^2 and r2 + M2DP_FOLD_R2
 * r_max^2 do not both lie in its ring, or when (u, v) lies within 2
 * M2DP_ETA r_max of an axis, 4 of a diagonal or 6 of another boundary
 * line; every other lane gets the bin of the double computation.
 *
 * The ring is found for r2 - tau (tau = M2DP_FOLD_R2 r_max^2) by a binary
 * search over the edges (three comparisons), and the lane is sent on when
 * r2 + tau reaches the next edge: both lie in one ring exactly when they
 * do not, and r2 lies between them, so the test is the one stated above.
 * The bins go out as bytes (at most 8 x 32 = 256 columns), a chunk at a
 * time, and a second loop counts them into one histogram copy per lane:
 * neighbouring points, which often share a bin, then never wait on each
 * other's count. */

#define M2F_CHUNK 512
typedef float m2f_vec __attribute__((vector_size(32)));
typedef int m2f_ivec __attribute__((vector_size(32)));

#define M2F_FMA(a, b, c) ((m2f_vec)_mm256_fmadd_ps((__m256)(a), (__m256)(b), (__m256)(c)))
#define M2F_PERM(tab, i) ((m2f_vec)_mm256_permutevar8x32_ps((__m256)(tab), (__m256i)(i)))
#define M2F_IPERM(tab, i) ((m2f_ivec)_mm256_permutevar8x32_epi32((__m256i)(tab), (__m256i)(i)))

/* The lookup tables of one scan: for the ring search the edges E_{i+1}
 * (half, which is also the edge above ring i) and E_{i+2} (quarter) at
 * the search's index i, and E_4; the first column of each ring; by octant index
 * (4 nu + 2 nv + (|v| > |u|)) the sector of s = 0 and whether the octant
 * runs mirrored (-1).  Edges past the last ring are +inf. */
struct m2f_tabs {
    m2f_vec half, quarter;
    m2f_ivec ring_col, oct_base, oct_mirror;
    float e4, tanb[4];
};

static void m2f_tabs_fill(const struct m2dp *m, const double *edge, struct m2f_tabs *b)
{
    static const int oct_of[8] = {0, 1, 7, 6, 3, 2, 4, 5};
    int per_oct = m->t / 8;
    float e[10];
    for (int j = 0; j < 10; j++) e[j] = j >= 1 && j < m->l ? (float)edge[j] : INFINITY;
    for (int j = 0; j < 8; j++) {
        b->half[j] = e[j + 1];
        b->quarter[j] = e[j + 2];
        b->ring_col[j] = j * m->t;
        b->oct_mirror[j] = oct_of[j] % 2 ? -1 : 0;
        b->oct_base[j] = oct_of[j] * per_oct + (oct_of[j] % 2 ? per_oct - 1 : 0);
    }
    b->e4 = e[4];
    for (int j = 0; j < 4; j++) b->tanb[j] = j >= 1 && j < per_oct ? (float)tan(2 * M2DP_PI * j / m->t) : 0;
}

/* The kernel for K = t / 8 sectors per octant (1 to 4), a constant here. */
__attribute__((target("avx2,fma"), always_inline)) static inline void
m2f_fold(const struct m2dp *m, const struct m2dp_plane *pl, const struct m2dp_pts *q, const double *edge,
         uint32_t *hist, double *row, const int per_oct)
{
    const int cols = m->l * m->t;
    const m2f_vec e10 = (m2f_vec){0} + (float)pl->e1[0], e11 = (m2f_vec){0} + (float)pl->e1[1];
    const m2f_vec e12 = (m2f_vec){0} + (float)pl->e1[2], e20 = (m2f_vec){0} + (float)pl->e2[0];
    const m2f_vec e21 = (m2f_vec){0} + (float)pl->e2[1], e22 = (m2f_vec){0} + (float)pl->e2[2];
    const float rmax = (float)sqrt(q->rmax2), tau = (float)(M2DP_FOLD_R2 * q->rmax2);
    const float t_axis = 2 * M2DP_ETA * rmax, t_diag = 4 * M2DP_ETA * rmax, t_line = 6 * M2DP_ETA * rmax;
    const m2f_ivec abs_bits = (m2f_ivec){0} + 0x7fffffff;
    const m2f_ivec four = (m2f_ivec){0} + 4, two = (m2f_ivec){0} + 2, one = (m2f_ivec){0} + 1;
    const __m256i pick = _mm256_setr_epi8(0, 4, 8, 12, -1, -1, -1, -1, -1, -1, -1, -1, -1, -1, -1, -1,
                                          0, 4, 8, 12, -1, -1, -1, -1, -1, -1, -1, -1, -1, -1, -1, -1);
    struct m2f_tabs b;
    m2f_tabs_fill(m, edge, &b);
    m2f_vec tanb[4];
    for (int j = 1; j < per_oct; j++) tanb[j] = (m2f_vec){0} - b.tanb[j];
    memset(hist, 0, sizeof *hist * M2DP_COPIES * (size_t)cols);
    uint8_t chunk[M2F_CHUNK];
    size_t k = 0;
    while (k + 8 <= q->used) {
        size_t fill = 0;
        for (; k + 8 <= q->used && fill < M2F_CHUNK; k += 8, fill += 8) {
            m2f_vec x, y, z;
            memcpy(&x, q->fx + k, sizeof x);
            memcpy(&y, q->fy + k, sizeof y);
            memcpy(&z, q->fz + k, sizeof z);
            m2f_vec u = M2F_FMA(e10, x, M2F_FMA(e11, y, e12 * z)), v = M2F_FMA(e20, x, M2F_FMA(e21, y, e22 * z));
            m2f_vec r2 = M2F_FMA(u, u, v * v), lo = r2 - tau;
            m2f_ivec ring = (lo >= b.e4) & four;
            ring |= (lo >= M2F_PERM(b.quarter, ring)) & two;
            ring |= (lo >= M2F_PERM(b.half, ring)) & one;
            m2f_ivec bad = r2 + tau >= M2F_PERM(b.half, ring);   /* the edge above the ring */
            m2f_vec au = (m2f_vec)((m2f_ivec)u & abs_bits), av = (m2f_vec)((m2f_ivec)v & abs_bits);
            m2f_vec mx = (m2f_vec)_mm256_max_ps((__m256)au, (__m256)av);
            m2f_vec mn = (m2f_vec)_mm256_min_ps((__m256)au, (__m256)av);
            bad |= (mn < t_axis) | (mx - mn < t_diag);
            m2f_ivec so = {0};
            for (int j = 1; j < per_oct; j++) {
                m2f_vec c = M2F_FMA(tanb[j], mx, mn);
                so -= c >= 0;
                bad |= (m2f_vec)((m2f_ivec)c & abs_bits) < t_line;
            }
            m2f_ivec idx = ((u < 0) & four) | ((v < 0) & two) | ((av > au) & one);
            m2f_ivec mirror = M2F_IPERM(b.oct_mirror, idx);
            m2f_ivec bin = M2F_IPERM(b.ring_col, ring) + M2F_IPERM(b.oct_base, idx) + ((so ^ mirror) - mirror);
            int any = _mm256_movemask_ps((__m256)bad);
            while (any) {
                int l = __builtin_ctz((unsigned)any);
                bin[l] = m2dp_bin_exact(m, pl, q, k + (size_t)l, edge);
                any &= any - 1;
            }
            __m256i by = _mm256_shuffle_epi8((__m256i)bin, pick);
            __m128i blo = _mm256_castsi256_si128(by), bhi = _mm256_extracti128_si256(by, 1);
            _mm_storel_epi64((__m128i *)(chunk + fill), _mm_unpacklo_epi32(blo, bhi));
        }
        for (size_t i = 0; i < fill; i += 8) {
            uint64_t w;
            memcpy(&w, chunk + i, sizeof w);
#pragma GCC unroll 8
            for (int l = 0; l < 8; l++) hist[(size_t)l * cols + ((w >> (8 * l)) & 255)]++;
        }
    }
    for (; k < q->used; k++) hist[m2dp_bin_exact(m, pl, q, k, edge)]++;
    for (int c = 0; c < cols; c++) {
        uint32_t sum = 0;
        for (int l = 0; l < 8; l++) sum += hist[(size_t)l * cols + c];
        row[c] += sum;
    }
}

__attribute__((target("avx2,fma"))) static void m2dp_fold_avx2(const struct m2dp *m, const struct m2dp_plane *pl,
                                                               const struct m2dp_pts *q, const double *edge,
                                                               uint32_t *hist, double *row)
{
    switch (m->t / 8) {
    case 1: m2f_fold(m, pl, q, edge, hist, row, 1); break;
    case 2: m2f_fold(m, pl, q, edge, hist, row, 2); break;
    case 3: m2f_fold(m, pl, q, edge, hist, row, 3); break;
    default: m2f_fold(m, pl, q, edge, hist, row, 4); break;
    }
}
