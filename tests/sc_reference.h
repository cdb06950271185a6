/* sc_reference.h: the plain Scan Context kernels the plugin replaced, kept
 * as the reference of tests/test_scan_context_kernels.c and the speed
 * reference of tests/bench_methods.c.  Same layout as the plugin (sc.h):
 * sectors x rings floats, sector-major.
 *
 *   scref_image     bins by atan2: sector (atan2(y, x) + pi) / 2pi * S
 *   scref_distance  the scalar double loop over every column pair, with a
 *                   square root and a division per pair
 */
#ifndef RV_SC_REFERENCE_H
#define RV_SC_REFERENCE_H

#include <math.h>
#include <stddef.h>
#include <stdint.h>

static void scref_image(int R, int S, double max_r, double lift, const float *xyzi, size_t n, float *desc,
                        float *key)
{
    size_t cells = (size_t)R * (size_t)S;
    for (size_t c = 0; c < cells; c++) desc[c] = -INFINITY;
    for (size_t k = 0; k < n; k++) {
        const float *p = xyzi + 4 * k;
        double r = sqrt((double)p[0] * p[0] + (double)p[1] * p[1]);
        if (!(r < max_r)) continue;
        int ring = (int)(r / max_r * R);
        int sec = (int)((atan2(p[1], p[0]) + M_PI) / (2 * M_PI) * S);
        if (ring >= R) ring = R - 1;
        if (sec >= S) sec = S - 1;
        float h = (float)(p[2] + lift);
        float *cell = &desc[(size_t)sec * R + ring];
        if (h > *cell) *cell = h;
    }
    for (size_t c = 0; c < cells; c++)
        if (desc[c] == -INFINITY) desc[c] = 0;
    for (int r = 0; r < R; r++) {
        double sum = 0;
        for (int c = 0; c < S; c++) sum += desc[(size_t)c * R + r];
        key[r] = (float)(sum / S);
    }
}

static double scref_dot(const float *a, const float *b, int R)
{
    double s = 0;
    for (int r = 0; r < R; r++) s += (double)a[r] * b[r];
    return s;
}

/* 1 - mean cosine of column j of a and column j + k of b (ia, ib: squared
 * column norms). */
static double scref_shift(int R, int S, const float *a, const float *b, const double *ia, const double *ib, int k)
{
    double sum = 0;
    int used = 0;
    for (int j = 0; j < S; j++) {
        int jb = j + k < S ? j + k : j + k - S;
        if (ia[j] == 0 || ib[jb] == 0) continue;
        sum += scref_dot(a + (size_t)j * R, b + (size_t)jb * R, R) / sqrt(ia[j] * ib[jb]);
        used++;
    }
    return used ? 1 - sum / used : 1;
}

/* The minimum over shifts; *aux (may be NULL) the first k reaching it;
 * at_k, when >= 0, asks for the value at that shift instead. */
static double scref_distance_at(int R, int S, const float *a, const float *b, int32_t *aux, int at_k)
{
    double ia[720], ib[720];
    for (int j = 0; j < S; j++) {
        ia[j] = scref_dot(a + (size_t)j * R, a + (size_t)j * R, R);
        ib[j] = scref_dot(b + (size_t)j * R, b + (size_t)j * R, R);
    }
    if (at_k >= 0) return scref_shift(R, S, a, b, ia, ib, at_k);
    double best = 2;
    int32_t best_k = 0;
    for (int k = 0; k < S; k++) {
        double d = scref_shift(R, S, a, b, ia, ib, k);
        if (d < best) {
            best = d;
            best_k = k;
        }
    }
    if (aux) *aux = best_k;
    return best < 0 ? 0 : best;
}

static double scref_distance(int R, int S, const float *a, const float *b, int32_t *aux)
{
    return scref_distance_at(R, S, a, b, aux, -1);
}

#endif
