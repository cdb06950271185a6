/* m2dp_bins.h: the body of one M2DP binning kernel, included by m2dp.c
 * once per vector width.  Before including, define
 *   M2_VB       vector bytes (16: four floats, 32: eight)
 *   M2_NAME(x)  the name of helper x in this copy
 *   M2_TARGET   function attributes of the kernel (may be empty)
 *   M2_KERNEL   the kernel's name
 *
 * The lanes work in float, on the points and plane axes rounded to float;
 * a lane whose float result could differ from the double one goes to
 * m2dp_bin_exact, the plain double computation.  Float moves u and v by at
 * most 5 float units of r_max (3e-7 r_max: the rounding of the axes, the
 * points, three products and two sums, each at most 2^-24 |q| by
 * Cauchy-Schwarz), so r2 by at most 1e-6 r_max^2; the continuous ring
 * rc = sqrt(sqrt(r2) / r0) then errs by at most a factor 1 + 2.5e-7 r_max^2
 * / r2 + 2e-7, and, for radii above r_max / 300, the angle by at most
 * 1.3e-4 rad with the polynomial's own float rounding.  A lane is sent on
 * when its radius is below r_max / 300, when rc lies within four times its
 * error bound of a whole number (M2DP_BAND r_max^2 / r2 + 1e-6, relative),
 * or when its polynomial angle lies within the margin of a sector boundary
 * (the margin is twice the polynomial's error; the float error fits in the
 * other half).  The other lanes therefore get exactly the bins of the
 * double computation. */

typedef float M2_NAME(vec) __attribute__((vector_size(M2_VB)));
/* M2_SQRT(x): lane-wise square root of a vector; M2_ANY(m): some lane of
 * mask m is set (both defined per copy). */
typedef int M2_NAME(ivec) __attribute__((vector_size(M2_VB)));
#define M2_L ((int)(M2_VB / sizeof(float)))
#define M2_SEL(m, a, b) ((M2_NAME(vec))(((M2_NAME(ivec))(a) & (m)) | ((M2_NAME(ivec))(b) & ~(m))))

/* Sector of every lane by the polynomial arctangent; *bad gets the lanes
 * within the margin of a boundary. */
M2_INLINE void M2_NAME(sectors)(const struct m2dp *m, const M2_NAME(vec) *pu, const M2_NAME(vec) *pv,
                                M2_NAME(ivec) *sec, M2_NAME(ivec) *bad)
{
    const M2_NAME(vec) u = *pu, v = *pv, zero = {0}, one = zero + 1;
    const M2_NAME(ivec) abs_bits = (M2_NAME(ivec))zero + 0x7fffffff;
    M2_NAME(vec) ax = (M2_NAME(vec))((M2_NAME(ivec))u & abs_bits);
    M2_NAME(vec) ay = (M2_NAME(vec))((M2_NAME(ivec))v & abs_bits);
    M2_NAME(ivec) gx = ax > ay;
    M2_NAME(vec) mx = M2_SEL(gx, ax, ay), mn = M2_SEL(gx, ay, ax);
    M2_NAME(vec) a = mn / M2_SEL(mx > 0, mx, one), s = a * a;
    M2_NAME(vec) r = ((-0.0464964749f * s + 0.15931422f) * s - 0.327622764f) * s * a + a;
    r = M2_SEL(ay > ax, (float)(M2DP_PI / 2) - r, r);
    r = M2_SEL(u < 0, (float)M2DP_PI - r, r);
    r = M2_SEL(v < 0, (float)(2 * M2DP_PI) - r, r);
    M2_NAME(vec) x = r * (float)m->sec_scale;
    M2_NAME(ivec) si = __builtin_convertvector(x, M2_NAME(ivec));
    M2_NAME(vec) f = x - __builtin_convertvector(si, M2_NAME(vec));
    *bad |= ~((f > (float)m->margin) & (f < 1 - (float)m->margin)) | (x >= (float)m->t);
    *sec = si;
}

/* Add the counts of plane pl over the used points to row (l*t doubles).
 * q* are the points in double, f* the same in float; edge[1..l-1] the ring
 * edges of m2dp_ring_edges; hist is scratch for M2DP_COPIES * l * t counts
 * (a copy per lane, so consecutive points in one bin do not wait on each
 * other). */
M2_TARGET void M2_KERNEL(const struct m2dp *m, const struct m2dp_plane *pl, const struct m2dp_pts *q,
                         const double *edge, uint32_t *hist, double *row)
{
    const int cols = m->l * m->t, t = m->t;
    const float e10 = (float)pl->e1[0], e11 = (float)pl->e1[1], e12 = (float)pl->e1[2];
    const float e20 = (float)pl->e2[0], e21 = (float)pl->e2[1], e22 = (float)pl->e2[2];
    const float small = (float)(q->rmax2 / (300.0 * 300.0)), inv_r0 = (float)q->inv_r0;
    const float last = (float)(m->l - 1);
    const float tol_a = (float)(M2DP_BAND * q->rmax2), tol_b = 1e-6f;
    memset(hist, 0, sizeof *hist * M2DP_COPIES * (size_t)cols);
    size_t k = 0;
    for (; k + M2_L <= q->used; k += M2_L) {
        M2_NAME(vec) x, y, z;
        memcpy(&x, q->fx + k, sizeof x);
        memcpy(&y, q->fy + k, sizeof y);
        memcpy(&z, q->fz + k, sizeof z);
        M2_NAME(vec) u = e10 * x + e11 * y + e12 * z, v = e20 * x + e21 * y + e22 * z;
        M2_NAME(vec) r2 = u * u + v * v;
        M2_NAME(vec) rc = M2_SQRT(M2_SQRT(r2) * inv_r0);  /* ring, continuous */
        M2_NAME(ivec) ring = __builtin_convertvector(rc, M2_NAME(ivec)), sec;
        M2_NAME(vec) frac = rc - __builtin_convertvector(ring, M2_NAME(vec));
        M2_NAME(vec) gap = M2_SEL(frac < 0.5f, frac, 1 - frac);
        M2_NAME(ivec) bad = (r2 < small) | (gap * r2 < rc * (tol_a + tol_b * r2));
        ring = (ring & ~(rc >= last)) | ((ring - ring + (m->l - 1)) & (rc >= last));
        M2_NAME(sectors)(m, &u, &v, &sec, &bad);
        M2_NAME(ivec) bin = ring * t + sec;
        if (M2_ANY(bad))
            for (int l = 0; l < M2_L; l++)
                if (bad[l]) bin[l] = m2dp_bin_exact(m, pl, q, k + (size_t)l, edge);
        for (int l = 0; l < M2_L; l++) hist[(size_t)l * cols + bin[l]]++;
    }
    for (; k < q->used; k++) hist[m2dp_bin_exact(m, pl, q, k, edge)]++;
    for (int c = 0; c < cols; c++) {
        uint32_t sum = 0;
        for (int l = 0; l < M2_L; l++) sum += hist[(size_t)l * cols + c];
        row[c] += sum;
    }
}

#undef M2_L
#undef M2_SEL
