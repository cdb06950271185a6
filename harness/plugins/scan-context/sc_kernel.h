/* sc_kernel.h: one build of the Scan Context distance (see sc_distance.c),
 * included by sc_distance.c once per vector width.  Before including, define
 *   SC_VB       vector bytes of pass 1 (16: four floats, 32: eight)
 *   SC_NAME(x)  the name of helper x in this copy
 *   SC_TARGET   function attributes of this copy (may be empty)
 * Pass 2 and the norms use four doubles per vector in either copy and the
 * same operations in the same order, so both copies give the same numbers
 * there (no sum in them adds a product that is not exact in double, so a
 * fused multiply-add changes nothing).  A block of pass 1 is eight float
 * vectors of shifts; K is a multiple of SC_KB = 64, so of a block for
 * either width. */

typedef float SC_NAME(fv) __attribute__((vector_size(SC_VB)));
typedef double SC_NAME(dv) __attribute__((vector_size(SC_VB)));
typedef double SC_NAME(d4) __attribute__((vector_size(32)));
typedef float SC_NAME(f4) __attribute__((vector_size(16)));
typedef long long SC_NAME(m4) __attribute__((vector_size(32)));
#define SC_LANES ((int)(SC_VB / sizeof(float)))
/* SC_CVT4: four floats to four doubles; SC_LO, SC_HI: the halves of a
 * float vector in double (intrinsics where the compiler would split them). */
#if SC_VB == 16
#define SC_CVT4(u) __builtin_convertvector(u, SC_NAME(d4))
#define SC_LO(f) __builtin_convertvector(__builtin_shufflevector(f, f, 0, 1), SC_NAME(dv))
#define SC_HI(f) __builtin_convertvector(__builtin_shufflevector(f, f, 2, 3), SC_NAME(dv))
#elif SC_VB == 32
#define SC_CVT4(u) ((SC_NAME(d4))_mm256_cvtps_pd((__m128)(u)))
#define SC_LO(f) ((SC_NAME(dv))_mm256_cvtps_pd(_mm256_castps256_ps128((__m256)(f))))
#define SC_HI(f) ((SC_NAME(dv))_mm256_cvtps_pd(_mm256_extractf128_ps((__m256)(f), 1)))
#else
#error "sc_kernel.h: SC_VB must be 16 or 32"
#endif

/* Dot products x_q . y_q of four pairs of columns in double into *out: per
 * pair four lanes over rings r = l mod 4, then (l0 + l1) + (l2 + l3).  The
 * squared norms (x = y) come from here too, so equal columns give equal
 * numbers. */
SC_TARGET static inline void SC_NAME(dot4)(const float *const x[4], const float *const y[4], int R,
                                           SC_NAME(d4) *out)
{
    SC_NAME(d4) s0 = {0, 0, 0, 0}, s1 = s0, s2 = s0, s3 = s0;
    int r = 0;
    for (; r + 4 <= R; r += 4) {
        SC_NAME(f4) u0, v0, u1, v1, u2, v2, u3, v3;
        SC_LOAD(u0, x[0] + r), SC_LOAD(v0, y[0] + r), SC_LOAD(u1, x[1] + r), SC_LOAD(v1, y[1] + r);
        SC_LOAD(u2, x[2] + r), SC_LOAD(v2, y[2] + r), SC_LOAD(u3, x[3] + r), SC_LOAD(v3, y[3] + r);
        s0 += SC_CVT4(u0) * SC_CVT4(v0);
        s1 += SC_CVT4(u1) * SC_CVT4(v1);
        s2 += SC_CVT4(u2) * SC_CVT4(v2);
        s3 += SC_CVT4(u3) * SC_CVT4(v3);
    }
    for (int l = 0; r < R; r++, l++) {
        s0[l] += (double)x[0][r] * y[0][r];
        s1[l] += (double)x[1][r] * y[1][r];
        s2[l] += (double)x[2][r] * y[2][r];
        s3[l] += (double)x[3][r] * y[3][r];
    }
    SC_NAME(d4) h0 = __builtin_shufflevector(s0, s1, 0, 4, 2, 6) + __builtin_shufflevector(s0, s1, 1, 5, 3, 7);
    SC_NAME(d4) h1 = __builtin_shufflevector(s2, s3, 0, 4, 2, 6) + __builtin_shufflevector(s2, s3, 1, 5, 3, 7);
    *out = __builtin_shufflevector(h0, h1, 0, 1, 4, 5) + __builtin_shufflevector(h0, h1, 2, 3, 6, 7);
}

/* Columns j0..j0+3 of img (past column S, zeros). */
static inline void SC_NAME(cols4)(const float *img, int R, int S, int j0, const float *col[4])
{
    for (int q = 0; q < 4; q++) col[q] = j0 + q < S ? img + (size_t)(j0 + q) * R : sc_zero;
}

/* Squared norms and reciprocal norms of the S columns of img (0: empty);
 * n2 and inv hold S rounded up to 4. */
SC_TARGET static void SC_NAME(colnorms)(const float *img, int R, int S, double *n2, double *inv)
{
    for (int j = 0; j < S; j += 4) {
        const float *col[4];
        SC_NAME(cols4)(img, R, S, j, col);
        SC_NAME(d4) n;
        SC_NAME(dot4)(col, col, R, &n);
        for (int l = 0; l < 4; l++) {
            n2[j + l] = n[l];
            inv[j + l] = n[l] > 0 ? 1 / sqrt(n[l]) : 0;
        }
    }
}

/* Pass 2: the distance at shift k in double (nb, ib: b's column norms).
 * The cosines of four columns at a time, summed in four lanes, then
 * (l0 + l1) + (l2 + l3). */
SC_TARGET static double SC_NAME(shift)(const struct sc_prep *p, const float *b, const double *nb,
                                       const double *ib, int k)
{
    int R = p->R, S = p->S;
    SC_NAME(d4) sum = {0, 0, 0, 0}, used = sum, one = {1, 1, 1, 1};
    for (int j = 0; j < S; j += 4) {
        const float *x[4], *y[4];
        SC_NAME(d4) na, ia, nbk, ibk, g;
        SC_NAME(cols4)(p->a, R, S, j, x);
        SC_LOAD(na, p->na + j);
        SC_LOAD(ia, p->ia + j);
        for (int q = 0; q < 4; q++) {
            int jb = j + q + k < S ? j + q + k : j + q + k - S;
            int in = j + q < S;
            y[q] = in ? b + (size_t)jb * R : sc_zero;
            nbk[q] = in ? nb[jb] : 0;
            ibk[q] = in ? ib[jb] : 0;
        }
        SC_NAME(dot4)(x, y, R, &g);
        SC_NAME(m4) eq = (g == na) & (g == nbk), both = (ia > 0) & (ibk > 0);
        SC_NAME(m4) cosv = ((SC_NAME(m4))(g * ia * ibk) & ~eq) | ((SC_NAME(m4))one & eq);
        sum += (SC_NAME(d4))(cosv & both);
        used += (SC_NAME(d4))((SC_NAME(m4))one & both);
    }
    double n = (used[0] + used[1]) + (used[2] + used[3]);
    return n > 0 ? 1 - ((sum[0] + sum[1]) + (sum[2] + sum[3])) / n : 1;
}

/* The minimum over every shift by pass 2 alone: the path when no memory is
 * left for pass 1's buffers. */
SC_TARGET static double SC_NAME(exact_all)(const struct sc_prep *p, struct sc_cand *c, const float *b,
                                           int32_t *aux)
{
    SC_NAME(colnorms)(b, p->R, p->S, c->nb, c->ib);
    double best = 2;
    int32_t best_k = 0;
    for (int k = 0; k < p->S; k++) {
        double d = SC_NAME(shift)(p, b, c->nb, c->ib, k);
        if (d < best) best = d, best_k = k;
    }
    if (aux) *aux = best_k;
    return best < 0 ? 0 : best;
}

/* Query a into p: norms, and (buf holding sc_floats(R, S) floats, or NULL
 * for the norms alone) rev and occ. */
SC_TARGET static void SC_NAME(prepare)(struct sc_prep *p, int R, int S, const float *a, float *buf)
{
    p->R = R;
    p->S = S;
    p->a = a;
    p->K = (S + SC_KB - 1) / SC_KB * SC_KB;
    p->W = S + p->K;
    p->rev = buf;
    SC_NAME(colnorms)(a, R, S, p->na, p->ia);
    if (!buf) return;
    for (int j = 0; j < S; j++) {
        float col[SC_MAX_RINGS];
        for (int r = 0; r < R; r++) col[r] = (float)(a[(size_t)j * R + r] * p->ia[j]);
        for (int t = (S - j) % S; t < p->W; t += S) {
            p->occ[t] = p->na[j] > 0;
            for (int r = 0; r < R; r++) p->rev[(size_t)r * p->W + t] = col[r];
        }
    }
}

#if SC_VB == 16
/* The norms of b and its non-zero cells, normalised, with their offsets in
 * rev. */
SC_TARGET static void SC_NAME(gather)(const struct sc_prep *p, struct sc_cand *c, const float *b)
{
    int R = p->R, S = p->S, m = 0;
    SC_NAME(colnorms)(b, R, S, c->nb, c->ib);
    c->ncol = 0;
    for (int j = 0; j < S; j++) {
        if (!(c->ib[j] > 0)) continue;
        const float *col = b + (size_t)j * R;
        for (int r = 0; r < R; r++) {  /* branch-free: write always, keep the non-zero */
            c->val[m] = col[r] * (float)c->ib[j];
            c->off[m] = (int32_t)(r * p->W + S - j);
            m += col[r] != 0;
        }
        c->at[c->ncol] = S - j;
        c->end[c->ncol++] = m;
    }
}
#else
/* The same, eight cells at a time: a lane mask of the non-zero cells picks
 * (pdep / pext) the permutation that packs them to the front. */
SC_TARGET static void SC_NAME(gather)(const struct sc_prep *p, struct sc_cand *c, const float *b)
{
    const int R = p->R, S = p->S, W = p->W;
    const __m256i lane = _mm256_setr_epi32(0, 1, 2, 3, 4, 5, 6, 7);
    const __m256i step = _mm256_mullo_epi32(lane, _mm256_set1_epi32(W));
    SC_NAME(colnorms)(b, R, S, c->nb, c->ib);
    int m = 0;
    c->ncol = 0;
    for (int j = 0; j < S; j++) {
        if (!(c->ib[j] > 0)) continue;
        const float *col = b + (size_t)j * R;
        const __m256 f = _mm256_set1_ps((float)c->ib[j]);
        for (int r = 0; r < R; r += 8) {
            __m256i in = _mm256_cmpgt_epi32(_mm256_set1_epi32(R - r), lane);  /* lanes r + l < R */
            __m256 v = _mm256_maskload_ps(col + r, in);
            unsigned keep = (unsigned)_mm256_movemask_ps(_mm256_cmp_ps(v, _mm256_setzero_ps(), _CMP_NEQ_UQ)) &
                            (unsigned)_mm256_movemask_ps(_mm256_castsi256_ps(in));
            uint64_t bytes = _pdep_u64(keep, 0x0101010101010101ull) * 0xff;
            __m256i perm = _mm256_cvtepu8_epi32(_mm_cvtsi64_si128((long long)_pext_u64(0x0706050403020100ull, bytes)));
            __m256i off = _mm256_add_epi32(step, _mm256_set1_epi32(r * W + S - j));
            _mm256_storeu_ps(c->val + m, _mm256_permutevar8x32_ps(_mm256_mul_ps(v, f), perm));
            _mm256_storeu_si256((__m256i *)(c->off + m), _mm256_permutevar8x32_epi32(off, perm));
            m += __builtin_popcount(keep);
        }
        c->at[c->ncol] = S - j;
        c->end[c->ncol++] = m;
    }
}
#endif

/* cnt[k] for the block from kb: the columns of b non-empty with column
 * c - k of a non-empty (sums of 0 and 1, exact in float). */
SC_TARGET static void SC_NAME(count)(const struct sc_prep *p, struct sc_cand *c, int kb)
{
    SC_NAME(fv) n0 = {0}, n1 = {0}, n2 = {0}, n3 = {0};
    for (int q = 0; q < c->ncol; q++) {
        const float *o = p->occ + c->at[q] + kb;
        SC_NAME(fv) x0, x1, x2, x3;
        SC_LOAD(x0, o);
        SC_LOAD(x1, o + SC_LANES);
        SC_LOAD(x2, o + 2 * SC_LANES);
        SC_LOAD(x3, o + 3 * SC_LANES);
        n0 += x0, n1 += x1, n2 += x2, n3 += x3;
    }
    float *out = c->cnt + kb;
    SC_STORE(out, n0);
    SC_STORE(out + SC_LANES, n1);
    SC_STORE(out + 2 * SC_LANES, n2);
    SC_STORE(out + 3 * SC_LANES, n3);
}

/* Add float sums f (eight vectors from shift kb) to sum[kb..] in double. */
SC_TARGET static inline void SC_NAME(flush)(double *sum, const SC_NAME(fv) *f)
{
    const int H = SC_LANES / 2;
    for (int q = 0; q < 8; q++) {
        SC_NAME(dv) lo, hi;
        SC_LOAD(lo, sum + 2 * q * H);
        SC_LOAD(hi, sum + (2 * q + 1) * H);
        lo += SC_LO(f[q]);
        hi += SC_HI(f[q]);
        SC_STORE(sum + 2 * q * H, lo);
        SC_STORE(sum + (2 * q + 1) * H, hi);
    }
}

/* Pass 1: sum[k] and cnt[k] for every k < K, a block of eight float vectors
 * of shifts at a time (eight chains of multiply-adds in flight); the float
 * sums go to sum in double after every SC_GROUP columns. */
SC_TARGET static void SC_NAME(pass)(const struct sc_prep *p, struct sc_cand *c)
{
    enum { L = SC_LANES };
    memset(c->sum, 0, sizeof *c->sum * (size_t)p->K);
    for (int kb = 0; kb < p->K; kb += 8 * L) {
        const float *base = p->rev + kb;
        int e = 0;
        for (int q = 0; q < c->ncol; q += SC_GROUP) {
            SC_NAME(fv) f[8] = {{0}};
            int end = c->end[q + SC_GROUP < c->ncol ? q + SC_GROUP - 1 : c->ncol - 1];
            for (; e < end; e++) {
                const float *t = base + c->off[e];
                float v = c->val[e];
                SC_NAME(fv) x0, x1, x2, x3, x4, x5, x6, x7;
                SC_LOAD(x0, t), SC_LOAD(x1, t + L), SC_LOAD(x2, t + 2 * L), SC_LOAD(x3, t + 3 * L);
                SC_LOAD(x4, t + 4 * L), SC_LOAD(x5, t + 5 * L), SC_LOAD(x6, t + 6 * L), SC_LOAD(x7, t + 7 * L);
                f[0] += v * x0, f[1] += v * x1, f[2] += v * x2, f[3] += v * x3;
                f[4] += v * x4, f[5] += v * x5, f[6] += v * x6, f[7] += v * x7;
            }
            SC_NAME(flush)(c->sum + kb, f);
        }
        SC_NAME(count)(p, c, kb);
        SC_NAME(count)(p, c, kb + 4 * L);
    }
}

/* After pass 1: pass 2 on the shifts near the float minimum. */
SC_TARGET static double SC_NAME(finish)(const struct sc_prep *p, const struct sc_cand *c, const float *b,
                                        int32_t *aux)
{
    double df[SC_MAX_SECTORS], lo = 2;
    for (int k = 0; k < p->S; k++) {
        df[k] = c->cnt[k] > 0 ? 1 - c->sum[k] / c->cnt[k] : 1;
        if (df[k] < lo) lo = df[k];
    }
    double best = c->ncol ? 2 : 1, cut = lo + 2 * SC_ERR(p->R);  /* b empty: no column shared */
    int32_t best_k = 0;
    for (int k = 0; k < p->S && c->ncol; k++)
        if (df[k] <= cut) {
            double d = SC_NAME(shift)(p, b, c->nb, c->ib, k);
            if (d < best) best = d, best_k = k;
        }
    if (aux) *aux = best_k;
    return best < 0 ? 0 : best;
}

/* The distances of a to b[0..n-1] into out (aux, when not NULL, the
 * shifts); rev and the cells of b on the stack, or for large images on
 * the heap, or, when that fails, pass 2 alone over every shift. */
SC_TARGET void SC_NAME(many)(int R, int S, const float *a, const float *const *b, size_t n, double *out,
                             int32_t *aux)
{
    struct sc_prep p;
    struct sc_cand c;
    float stack[SC_STACK_FLOATS] __attribute__((aligned(32)));
    size_t need = sc_floats(R, S);
    float *buf = need <= SC_STACK_FLOATS ? stack : malloc(need * sizeof *buf);
    SC_NAME(prepare)(&p, R, S, a, buf);
    for (size_t t = 0; t < n; t++) {
        if (!buf) {
            out[t] = SC_NAME(exact_all)(&p, &c, b[t], aux ? aux + t : NULL);
            continue;
        }
        if (t == 0) sc_cells(&p, &c);
        SC_NAME(gather)(&p, &c, b[t]);
        SC_NAME(pass)(&p, &c);
        out[t] = SC_NAME(finish)(&p, &c, b[t], aux ? aux + t : NULL);
    }
    if (buf != stack) free(buf);
}

#undef SC_LANES
#undef SC_LO
#undef SC_HI
#undef SC_CVT4
