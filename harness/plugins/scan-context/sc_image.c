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
 * from the division, as written.
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

void sc_image(const struct sc *s, const float *xyzi, size_t n, float *desc, float *key)
{
    size_t cells = (size_t)s->rings * (size_t)s->sectors;
    for (size_t c = 0; c < cells; c++) desc[c] = -INFINITY;
    for (size_t k = 0; k < n; k++) {
        const float *p = xyzi + 4 * k;
        double r = sqrt((double)p[0] * p[0] + (double)p[1] * p[1]);
        if (!(r < s->max_range_m)) continue;
        double y = r * s->ring_scale;
        int ring = (int)y;
        if (y - ring < 1e-9 || y - ring > 1 - 1e-9) ring = (int)(r / s->max_range_m * s->rings);
        if (ring >= s->rings) ring = s->rings - 1;
        float h = (float)(p[2] + s->lift_m);
        float *cell = &desc[(size_t)sc_sector(s, p[0], p[1]) * s->rings + ring];
        if (h > *cell) *cell = h;
    }
    for (size_t c = 0; c < cells; c++)
        if (desc[c] == -INFINITY) desc[c] = 0;
    for (int r = 0; r < s->rings; r++) {
        double sum = 0;
        for (int c = 0; c < s->sectors; c++) sum += desc[(size_t)c * s->rings + r];
        key[r] = (float)(sum / s->sectors);
    }
}
