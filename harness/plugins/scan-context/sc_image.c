/* sc_image.c: the Scan Context image and ring key of one scan.
 *
 * Cell (r, s), at desc[s * rings + r], holds the largest height z + lift of
 * the points whose planar range falls in ring r (equal widths up to
 * max_range) and whose azimuth falls in sector s; an empty cell is 0.  The
 * key is the mean of each ring's row.
 *
 * Sector rule (exact, no arctangent).  Sectors have equal widths and start
 * at azimuth -pi (the direction -x), counter-clockwise.  Boundary s is the
 * direction (c_s, s_s), the cosine and sine of azimuth -pi + 2 pi s / S
 * rounded to double (exactly 0 and +-1 on the axes); a point (x, y) is on
 * or counter-clockwise of it when c_s y - s_s x >= 0, evaluated exactly,
 * and it is in sector s when it is on or counter-clockwise of boundary s
 * and strictly clockwise of boundary s + 1.  So a point exactly on a
 * boundary belongs to the sector that starts there; a point on the -x axis
 * (y = +0 or -0) is in sector 0; a point at x = y = 0 has no azimuth and
 * goes to sector S / 2 (rounded down), the sector of azimuth 0.  The rule
 * agrees with binning atan2(y, x) except for points within double rounding
 * (about 1e-15 rad) of a boundary, and the -x axis with y = +0, which
 * atan2 puts at +pi.
 *
 * Speed: a pseudo-angle, (-y) / (|x| + |y|) unfolded over the four
 * quadrants into [0, 4) and monotone in the azimuth, picks one of
 * SC_FINE_PER_SECTOR * S fine bins (rounding may move a point to the next
 * fine bin, no further); a table gives the sector of the bin's middle.
 * When the middles of the two bins on either side are in that sector too,
 * so is every point the bin can receive; otherwise (SC_FINE_TEST, the bins
 * around a boundary) the true sector is the table's or a neighbour (a fine
 * bin spans at most 1 / (8 S) rad, a sector 2 pi / S), settled by the two
 * boundary tests.  The ring, floor(r / max_range * rings), comes from one
 * multiplication unless that lands within 1e-9 of a whole number; then
 * from the division, as written.  sc_image_avx2 runs the same steps on four
 * points at a time and gives the same image (tests/test_scan_context_kernels.c
 * holds both to a walk over every boundary).
 */
#include <math.h>

#include "harness/plugins/scan-context/sc.h"

#define SC_PI 3.14159265358979323846

/* On or counter-clockwise of boundary k: the sign of c y - s x, exact.
 * In plain double the difference errs by at most 2^-53 (|c y| + |s x|);
 * when it is not clearly larger than that, Kahan's 2 x 2 determinant with
 * fused multiply-adds (relative error at most two units in the last place,
 * so the sign is right, and 0 exactly when c y = s x) decides. */
static inline int sc_after(const struct sc *s, int k, float x, float y)
{
    double p = s->bx[k] * y, q = s->by[k] * x, d = p - q;
    if (fabs(d) > 1e-15 * (fabs(p) + fabs(q))) return d > 0;
    double e = fma(s->by[k], x, -q);  /* s x = q + e exactly */
    return fma(s->bx[k], y, -q) - e >= 0;
}

/* Pseudo-angle in [0, 4] of the direction (x, y), measured from -x; the
 * caller excludes x = y = 0. */
static inline double sc_pseudo(float x, float y)
{
    double u = -(double)x, v = -(double)y, t = v / (fabs(u) + fabs(v));
    return u >= 0 ? (t >= 0 ? t : 4 + t) : 2 - t;
}

/* The exact rule by a walk over every boundary (tables only). */
static int sc_sector_walk(const struct sc *s, float x, float y)
{
    for (int k = 0; k < s->sectors; k++)
        if (sc_after(s, k, x, y) && !sc_after(s, k + 1, x, y)) return k;
    return 0;
}

void sc_sector_init(struct sc *s)
{
    int S = s->sectors, F = SC_FINE_PER_SECTOR * S;
    for (int k = 0; k <= S; k++) {
        double a = -SC_PI + 2 * SC_PI * (k % S) / S, c = cos(a), n = sin(a);
        if (4 * (k % S) % S == 0) {  /* a multiple of pi / 2: exact axis */
            c = round(c);
            n = round(n);
        }
        s->bx[k] = c;
        s->by[k] = n;
    }
    s->fine_scale = F / 4.0;
    s->ring_scale = s->rings / s->max_range_m;
    for (int f = 0; f < F; f++) {  /* the direction at the middle of fine bin f */
        double p = (f + 0.5) / s->fine_scale, t = p <= 2 ? (p <= 1 ? p : 2 - p) : (p <= 3 ? 2 - p : p - 4);
        double u = p <= 1 || p > 3 ? 1 - fabs(t) : -(1 - fabs(t));
        s->fine[f] = (uint16_t)sc_sector_walk(s, (float)-u, (float)-t);
    }
    for (int f = 0; f < F; f++) {  /* the fine bins around the boundaries */
        int same = 1;
        for (int d = -2; d <= 2; d++) same &= (s->fine[(f + d + F) % F] & ~SC_FINE_TEST) == (s->fine[f] & ~SC_FINE_TEST);
        if (!same) s->fine[f] |= SC_FINE_TEST;
    }
}

static inline int sc_sector(const struct sc *s, float x, float y)
{
    int S = s->sectors, F = SC_FINE_PER_SECTOR * S;
    if (x == 0 && y == 0) return S / 2;
    int f = (int)(sc_pseudo(x, y) * s->fine_scale);
    int k = s->fine[f < F ? f : F - 1];
    if (!(k & SC_FINE_TEST)) return k;
    k &= ~SC_FINE_TEST;
    int lo = !sc_after(s, k, x, y), hi = !lo && sc_after(s, k + 1, x, y);
    k += hi - lo;
    return k < 0 ? k + S : k >= S ? k - S : k;
}

int sc_sector_of(const struct sc *s, float x, float y) { return sc_sector(s, x, y); }

/* The ring of planar range r (< max_range). */
static inline int sc_ring(const struct sc *s, double r)
{
    double y = r * s->ring_scale;
    int ring = (int)y;
    if (y - ring < 1e-9 || y - ring > 1 - 1e-9) ring = (int)(r / s->max_range_m * s->rings);
    return ring < s->rings ? ring : s->rings - 1;
}

/* Raise cell (sector, ring) to height h of point p. */
static inline void sc_raise(const struct sc *s, float *desc, int sector, int ring, const float *p)
{
    float h = (float)(p[2] + s->lift_m);
    float *cell = &desc[(size_t)sector * s->rings + ring];
    *cell = h > *cell ? h : *cell;  /* no branch: whether a point raises its cell is hard to predict */
}

/* Points k0..n-1, one at a time. */
static void sc_points(const struct sc *s, const float *xyzi, size_t k0, size_t n, float *desc)
{
    for (size_t k = k0; k < n; k++) {
        const float *p = xyzi + 4 * k;
        double r = sqrt((double)p[0] * p[0] + (double)p[1] * p[1]);
        if (r < s->max_range_m) sc_raise(s, desc, sc_sector(s, p[0], p[1]), sc_ring(s, r), p);
    }
}

/* Empty cells to 0, then the key. */
static void sc_close(const struct sc *s, float *desc, float *key)
{
    size_t cells = (size_t)s->rings * (size_t)s->sectors;
    for (size_t c = 0; c < cells; c++)
        if (desc[c] == -INFINITY) desc[c] = 0;
    for (int r = 0; r < s->rings; r++) {
        double sum = 0;
        for (int c = 0; c < s->sectors; c++) sum += desc[(size_t)c * s->rings + r];
        key[r] = (float)(sum / s->sectors);
    }
}

static void sc_open(const struct sc *s, float *desc)
{
    size_t cells = (size_t)s->rings * (size_t)s->sectors;
    for (size_t c = 0; c < cells; c++) desc[c] = -INFINITY;
}

void sc_image_base(const struct sc *s, const float *xyzi, size_t n, float *desc, float *key)
{
    sc_open(s, desc);
    sc_points(s, xyzi, 0, n, desc);
    sc_close(s, desc, key);
}

#if defined(__x86_64__) || defined(__i386__)
#include <immintrin.h>

#define SC_AVX2 __attribute__((target("avx2,bmi2")))

#define SC_CHUNK 1024  /* points whose cells are found before they are raised */

/* Raise cells cell[0..m-1] to heights h[..] in four interleaved runs, so
 * that consecutive points of one cell do not wait on each other. */
static inline void sc_scatter(float *desc, const int32_t *cell, const float *h, int m)
{
    int q = m / 4;
    for (int i = 0; i < q; i++)
        for (int l = 0; l < 4; l++) {
            float *c = desc + cell[i + l * q], v = h[i + l * q];
            *c = v > *c ? v : *c;
        }
    for (int i = 4 * q; i < m; i++) desc[cell[i]] = h[i] > desc[cell[i]] ? h[i] : desc[cell[i]];
}

/* Four points at a time: range, ring, pseudo-angle, fine bin and height in
 * double, the same operations as sc_points (products of floats are exact in
 * double, so no step rounds differently), the fine bin's table entry and the
 * cell as four integers; only points at a ring edge, in a fine bin that needs
 * the boundary tests, or at the origin take the scalar steps.  The cells of
 * the points in range are packed (pdep / pext pick the permutation) and a
 * chunk of them is raised together (sc_scatter). */
SC_AVX2 static void sc_points_avx2(const struct sc *s, const float *xyzi, size_t n, float *desc)
{
    const __m256d maxr = _mm256_set1_pd(s->max_range_m), rs = _mm256_set1_pd(s->ring_scale),
                  fs = _mm256_set1_pd(s->fine_scale), zero = _mm256_setzero_pd(), four = _mm256_set1_pd(4),
                  two = _mm256_set1_pd(2), lo = _mm256_set1_pd(1e-9), hi = _mm256_set1_pd(1 - 1e-9),
                  sign = _mm256_set1_pd(-0.0), lift = _mm256_set1_pd(s->lift_m);
    const int F = SC_FINE_PER_SECTOR * s->sectors, R = s->rings;
    const __m128i fmax = _mm_set1_epi32(F - 1), rmax = _mm_set1_epi32(R - 1), rings = _mm_set1_epi32(R),
                  low16 = _mm_set1_epi32(0xffff), lowtest = _mm_set1_epi32(SC_FINE_TEST - 1);
    int32_t cell[SC_CHUNK + 4];
    float h[SC_CHUNK + 4];
    size_t k = 0;
    while (k + 4 <= n) {
        int m = 0;
        for (; k + 4 <= n && m + 4 <= SC_CHUNK; k += 4) {
            const float *p = xyzi + 4 * k;
            __m128 a0 = _mm_loadu_ps(p), a1 = _mm_loadu_ps(p + 4), a2 = _mm_loadu_ps(p + 8), a3 = _mm_loadu_ps(p + 12);
            _MM_TRANSPOSE4_PS(a0, a1, a2, a3);
            __m256d x = _mm256_cvtps_pd(a0), y = _mm256_cvtps_pd(a1);
            __m256d r = _mm256_sqrt_pd(_mm256_add_pd(_mm256_mul_pd(x, x), _mm256_mul_pd(y, y)));
            int in = _mm256_movemask_pd(_mm256_cmp_pd(r, maxr, _CMP_LT_OQ));
            if (!in) continue;
            __m256d yr = _mm256_mul_pd(r, rs), fr = _mm256_sub_pd(yr, _mm256_round_pd(yr, _MM_FROUND_TO_ZERO));
            int edge = _mm256_movemask_pd(_mm256_or_pd(_mm256_cmp_pd(fr, lo, _CMP_LT_OQ), _mm256_cmp_pd(fr, hi, _CMP_GT_OQ)));
            __m256d u = _mm256_xor_pd(x, sign), v = _mm256_xor_pd(y, sign);
            __m256d t = _mm256_div_pd(v, _mm256_add_pd(_mm256_andnot_pd(sign, u), _mm256_andnot_pd(sign, v)));
            __m256d ge = _mm256_cmp_pd(u, zero, _CMP_GE_OQ), tpos = _mm256_cmp_pd(t, zero, _CMP_GE_OQ);
            __m256d pa = _mm256_blendv_pd(_mm256_sub_pd(two, t), _mm256_blendv_pd(_mm256_add_pd(four, t), t, tpos), ge);
            __m128i fine = _mm256_cvttpd_epi32(_mm256_mul_pd(pa, fs));
            fine = _mm_min_epi32(_mm_max_epi32(fine, _mm_setzero_si128()), fmax);
            /* the table's uint16 entries, read as the low half of 32-bit words
             * (the word of the last entry ends inside struct sc) */
            __m128i sec = _mm_and_si128(_mm_i32gather_epi32((const int *)(const void *)s->fine, fine, 2), low16);
            __m128i rg = _mm_min_epi32(_mm256_cvttpd_epi32(yr), rmax);
            __m128i cl = _mm_add_epi32(_mm_mullo_epi32(sec, rings), rg);
            __m256d origin = _mm256_and_pd(_mm256_cmp_pd(x, zero, _CMP_EQ_OQ), _mm256_cmp_pd(y, zero, _CMP_EQ_OQ));
            int test = _mm_movemask_ps(_mm_castsi128_ps(_mm_cmpgt_epi32(sec, lowtest)));  /* SC_FINE_TEST set */
            int slow = (edge | test | _mm256_movemask_pd(origin)) & in;
            __m128 hv = _mm256_cvtpd_ps(_mm256_add_pd(_mm256_cvtps_pd(a2), lift));
            if (slow) {  /* a point at a ring edge, near a sector boundary or at the origin */
                int32_t c4[4];
                double rr[4];
                _mm_storeu_si128((__m128i *)c4, cl);
                _mm256_storeu_pd(rr, r);
                for (int l = 0; l < 4; l++)
                    if (slow >> l & 1) c4[l] = sc_sector(s, p[4 * l], p[4 * l + 1]) * R + sc_ring(s, rr[l]);
                cl = _mm_loadu_si128((const __m128i *)c4);
            }
            uint64_t bytes = _pdep_u64((unsigned)in, 0x0101010101010101ull) * 0xff;  /* pack the lanes in range */
            __m128i perm = _mm_cvtepu8_epi32(_mm_cvtsi64_si128((long long)_pext_u64(0x0706050403020100ull, bytes)));
            _mm_storeu_si128((__m128i *)(cell + m), _mm256_castsi256_si128(
                _mm256_permutevar8x32_epi32(_mm256_castsi128_si256(cl), _mm256_castsi128_si256(perm))));
            _mm_storeu_ps(h + m, _mm256_castps256_ps128(
                _mm256_permutevar8x32_ps(_mm256_castps128_ps256(hv), _mm256_castsi128_si256(perm))));
            m += __builtin_popcount((unsigned)in);
        }
        sc_scatter(desc, cell, h, m);
    }
    sc_points(s, xyzi, k, n, desc);
}

SC_AVX2 void sc_image_avx2(const struct sc *s, const float *xyzi, size_t n, float *desc, float *key)
{
    sc_open(s, desc);
    sc_points_avx2(s, xyzi, n, desc);
    sc_close(s, desc, key);
}

sc_image_fn sc_image_pick(void)
{
    __builtin_cpu_init();
    return __builtin_cpu_supports("avx2") && __builtin_cpu_supports("bmi2") ? sc_image_avx2 : sc_image_base;
}
#else
void sc_image_avx2(const struct sc *s, const float *xyzi, size_t n, float *desc, float *key)
{
    sc_image_base(s, xyzi, n, desc, key);
}

sc_image_fn sc_image_pick(void) { return sc_image_base; }
#endif

void sc_image(const struct sc *s, const float *xyzi, size_t n, float *desc, float *key)
{
    s->image(s, xyzi, n, desc, key);
}
