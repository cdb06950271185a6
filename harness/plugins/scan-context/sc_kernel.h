/* sc_kernel.h: the body of one Scan Context distance kernel, included by
 * sc_distance.c once per vector width.  Before including, define
 *   SC_VB       vector bytes (16: two doubles, 32: four)
 *   SC_NAME(x)  the name of helper x in this copy
 *   SC_TARGET   function attributes of the kernel (may be empty)
 *   SC_KERNEL   the kernel's name
 * Blocks of G are 4 rows x 2 vectors; the tile width is a multiple of 8,
 * so of 2 vectors for either width. */

typedef double SC_NAME(vec) __attribute__((vector_size(SC_VB)));
typedef long long SC_NAME(mask) __attribute__((vector_size(SC_VB)));
#define SC_LANES ((int)(SC_VB / sizeof(double)))

/* Add the cosines of a_j with the columns from c (dot products *gp) to
 * their diagonals. */
SC_INLINE void SC_NAME(diag)(struct sc_work *w, int j, int c, const SC_NAME(vec) *gp)
{
    SC_NAME(vec) one, ib, nb, s, g = *gp;
    for (int l = 0; l < SC_LANES; l++) one[l] = 1;
    SC_LOAD(ib, w->ib + c);
    SC_LOAD(nb, w->nb + c);
    SC_NAME(vec) v = g * w->ia[j] * ib;
    SC_NAME(mask) eq = (g == w->na[j]) & (g == nb) & (g > 0);
    v = (SC_NAME(vec))(((SC_NAME(mask))v & ~eq) | ((SC_NAME(mask))one & eq));
    double *ps = w->sum[j & 3] + w->S - j + c;
    SC_LOAD(s, ps);
    s += v;
    SC_STORE(ps, s);
}

/* cnt[k] = the number of columns j non-empty in a with b_(j+k) non-empty. */
SC_INLINE void SC_NAME(shared)(struct sc_work *w, int spad)
{
    memset(w->cnt, 0, sizeof *w->cnt * (size_t)spad);
    for (int j = 0; j < w->S; j++)
        if (w->ia[j] > 0)
            for (int k = 0; k < spad; k += SC_LANES) {
                SC_NAME(vec) n, o;
                SC_LOAD(n, w->cnt + k);
                SC_LOAD(o, w->ob + j + k);
                n += o;
                SC_STORE(w->cnt + k, n);
            }
}

/* Rows j0..j0+3 of G against the tile's W columns (from column t0). */
SC_INLINE void SC_NAME(rows4)(struct sc_work *w, const float *a, int j0, int t0, int W)
{
    const int R = w->R, S = w->S;
    for (int q = 0; q < 4; q++)
        for (int r = 0; r < R; r++) w->arow[q * R + r] = j0 + q < S ? a[(size_t)(j0 + q) * R + r] : 0;
    const double *a0 = w->arow, *a1 = a0 + R, *a2 = a1 + R, *a3 = a2 + R;
    for (int c = 0; c < W; c += 2 * SC_LANES) {
        SC_NAME(vec) g00 = {0}, g01 = {0}, g10 = {0}, g11 = {0}, g20 = {0}, g21 = {0}, g30 = {0}, g31 = {0};
        const double *t = w->tile + c;
        for (int r = 0; r < R; r++, t += W) {
            SC_NAME(vec) lo = *(const SC_NAME(vec) *)t, hi = *(const SC_NAME(vec) *)(t + SC_LANES);
            g00 += a0[r] * lo, g01 += a0[r] * hi;
            g10 += a1[r] * lo, g11 += a1[r] * hi;
            g20 += a2[r] * lo, g21 += a2[r] * hi;
            g30 += a3[r] * lo, g31 += a3[r] * hi;
        }
        const SC_NAME(vec) g[4][2] = {{g00, g01}, {g10, g11}, {g20, g21}, {g30, g31}};
        for (int q = 0; q < 4 && j0 + q < S; q++)
            if (w->ia[j0 + q] > 0) {
                SC_NAME(diag)(w, j0 + q, t0 + c, &g[q][0]);
                SC_NAME(diag)(w, j0 + q, t0 + c + SC_LANES, &g[q][1]);
            }
    }
}

SC_TARGET double SC_KERNEL(int R, int S, const float *a, const float *b, int32_t *aux)
{
    struct sc_work w;
    int spad = (S + 7) / 8 * 8, W = SC_TILE / R / 8 * 8;
    if (W > spad) W = spad;
    w.R = R;
    w.S = S;
    for (int q = 0; q < 4; q++) memset(w.sum[q], 0, sizeof *w.sum[q] * (size_t)(2 * spad));
    sc_columns(a, R, S, w.na, w.ia, NULL);
    sc_columns(b, R, S, w.nb, w.ib, w.ob);
    for (int c = S; c < spad; c++) w.nb[c] = w.ib[c] = 0;
    for (int c = S; c < 2 * spad; c++) w.ob[c] = w.ob[c - S];
    SC_NAME(shared)(&w, spad);
    for (int t0 = 0; t0 < S; t0 += W) {
        int wt = spad - t0 < W ? spad - t0 : W;
        sc_tile(&w, b, t0, wt);
        for (int j0 = 0; j0 < S; j0 += 4) SC_NAME(rows4)(&w, a, j0, t0, wt);
    }
    return sc_best(&w, aux);
}

#undef SC_LANES
