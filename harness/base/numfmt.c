/* numfmt.c: shortest round-trip text of a double, for every JSON and CSV writer. */
#include "harness/base/numfmt.h"

#include <float.h>
#include <stdint.h>
#include <math.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>

/* The old way, one digit count after another: the first of %.Ng from
 * `from` to 17 digits that strtod reads back as v. */
static const char *numfmt_search(char buf[NUMFMT_LEN], double v, int from)
{
    for (int digits = from; digits <= 17; digits++) {
        int w = snprintf(buf, NUMFMT_LEN, "%.*g", digits, v);
        if (w > 0 && w < NUMFMT_LEN && (digits == 17 || strtod(buf, NULL) == v)) return buf;
    }
    return buf;   /* not reached: %.17g of a finite double fits in NUMFMT_LEN */
}

/* A decimal: digit[0..n) (digit[0] != 0) times 10^(exp - n + 1), and a sign. */
struct numfmt_dec {
    char digit[24];
    int n, exp, neg;
};

/* d rounded to p < d->n digits into out, half away from zero on the digit
 * string.  d is a correctly rounded text of the exact value, so this is
 * the correct rounding of the value unless the dropped digits are exactly
 * 5 followed by zeros (then the value may lie on either side): returns 0
 * there, 1 otherwise. */
static int numfmt_round(const struct numfmt_dec *d, int p, struct numfmt_dec *out)
{
    int tie = d->digit[p] == '5', up = d->digit[p] > '5';
    for (int k = p + 1; k < d->n && tie; k++) tie = d->digit[k] == '0';
    if (tie) return 0;
    up |= d->digit[p] == '5';
    *out = *d;
    out->n = p;
    for (int k = p - 1; up && k >= 0; k--) {
        up = out->digit[k] == '9';
        out->digit[k] = up ? '0' : (char)(out->digit[k] + 1);
    }
    if (up) {   /* 99..9 became 100..0 */
        out->digit[0] = '1';
        out->exp++;
    }
    return 1;
}

/* 1 when d reads back as v: exactly by one correctly rounded operation on
 * exact operands when the digits and the power of ten fit a double (the
 * decimal-to-binary fast path), else by strtod of text. */
static int numfmt_reads_back(const struct numfmt_dec *d, const char *text, double v)
{
    static const double pow10[23] = {1e0,  1e1,  1e2,  1e3,  1e4,  1e5,  1e6,  1e7,  1e8,  1e9,  1e10, 1e11,
                                     1e12, 1e13, 1e14, 1e15, 1e16, 1e17, 1e18, 1e19, 1e20, 1e21, 1e22};
    uint64_t m = 0;
    for (int k = 0; k < d->n; k++) m = 10 * m + (uint64_t)(d->digit[k] - '0');
    int k10 = d->exp - d->n + 1;
    if (m > ((uint64_t)1 << 53) || k10 < -22 || k10 > 22) return strtod(text, NULL) == v;
    double r = k10 >= 0 ? (double)m * pow10[k10] : (double)m / pow10[-k10];
    return (d->neg ? -r : r) == v;
}

/* d as %.{p}g writes it (p = d->n significant digits, trailing zeros
 * dropped): fixed when -4 <= exp < p, else with an exponent of at least
 * two digits. */
static void numfmt_text(const struct numfmt_dec *d, char buf[NUMFMT_LEN])
{
    int n = d->n, at = 0;
    while (n > 1 && d->digit[n - 1] == '0') n--;
    if (d->neg) buf[at++] = '-';
    if (d->exp < -4 || d->exp >= d->n) {
        buf[at++] = d->digit[0];
        if (n > 1) buf[at++] = '.';
        for (int k = 1; k < n; k++) buf[at++] = d->digit[k];
        snprintf(buf + at, (size_t)(NUMFMT_LEN - at), "e%c%02d", d->exp < 0 ? '-' : '+', abs(d->exp));
        return;
    }
    if (d->exp < 0) {
        buf[at++] = '0', buf[at++] = '.';
        for (int k = 0; k < -d->exp - 1; k++) buf[at++] = '0';
        for (int k = 0; k < n; k++) buf[at++] = d->digit[k];
    } else {
        for (int k = 0; k <= d->exp; k++) buf[at++] = k < n ? d->digit[k] : '0';
        if (n > d->exp + 1) buf[at++] = '.';
        for (int k = d->exp + 1; k < n; k++) buf[at++] = d->digit[k];
    }
    buf[at] = 0;
}

#ifdef __SIZEOF_INT128__
typedef unsigned __int128 numfmt_u128;

/* 10^k as a 128-bit integer, 0 <= k <= 38. */
static numfmt_u128 numfmt_p10(int k)
{
    static const uint64_t small[20] = {1u, 10u, 100u, 1000u, 10000u, 100000u, 1000000u, 10000000u, 100000000u,
                                       1000000000u, 10000000000u, 100000000000u, 1000000000000u,
                                       10000000000000u, 100000000000000u, 1000000000000000u,
                                       10000000000000000u, 100000000000000000u, 1000000000000000000u,
                                       10000000000000000000u};
    return k < 20 ? (numfmt_u128)small[k] : (numfmt_u128)small[19] * small[k - 19];
}

/* The texts of 15, 16 and 17 digits by exact integer arithmetic, for
 * 1e-6 < |v| < 1e14 (v = m 2^-s with 2^52 <= m < 2^53, 6 <= s <= 72,
 * and m 10^k < 2^127 for the k <= 22 this range needs).  The digits at p
 * are q = floor(m 10^k / 2^s), k = p - 1 - E for the decimal exponent E,
 * rounded up when the remainder passes half and sent to the search when
 * it is exactly half (glibc rounds those ties by its own rule).  The text
 * reads back as v when it lies nearer to v than half the gap to the
 * neighbouring doubles.  Two cases need no test in this range: a text of
 * at most 17 digits never lies exactly half way between two doubles (the
 * midpoint (2m + 1) 2^-(s+1) needs at least 21), and v = 2^j, whose gap
 * below is half as wide, has an exact text of at most 15 digits here.
 * Returns buf, or NULL when v is out of range. */
static const char *numfmt_exact(char buf[NUMFMT_LEN], double v)
{
    double a = fabs(v);
    if (!(a > 1e-6 && a < 1e14)) return NULL;   /* the double 1e-6 lies below 10^-6: E would be -7 */
    int ex;
    uint64_t m = (uint64_t)ldexp(frexp(a, &ex), 53);
    int s = 53 - ex, e10 = (int)floor(log10(a));
    const numfmt_u128 mask = ((numfmt_u128)1 << s) - 1, half = (numfmt_u128)1 << (s - 1);
    for (int fix = 0; fix < 2; fix++) {   /* log10 may be off by one at a power of ten */
        numfmt_u128 q = ((numfmt_u128)m * numfmt_p10(14 - e10)) >> s;
        if (q < numfmt_p10(14)) e10--;
        else if (q >= numfmt_p10(15)) e10++;
        else break;
    }
    for (int p = 15; p <= 17; p++) {
        int k = p - 1 - e10;
        numfmt_u128 x = (numfmt_u128)m * numfmt_p10(k), rem = x & mask, q = x >> s;
        if (rem == half) return numfmt_search(buf, v, p);
        q += rem > half;
        /* twice the distance to v against the gap, both in units of 10^-k 2^-s */
        numfmt_u128 qs = q << (s + 1), x2 = x << 1;
        if (p < 17 && (qs > x2 ? qs - x2 : x2 - qs) >= numfmt_p10(k)) continue;
        struct numfmt_dec d = {.n = p, .exp = e10, .neg = v < 0};
        uint64_t digits = (uint64_t)(q == numfmt_p10(p) ? (d.exp++, numfmt_p10(p - 1)) : q);   /* < 10^17 */
        for (int j = p - 1; j >= 0; j--, digits /= 10) d.digit[j] = (char)('0' + (int)(digits % 10));
        numfmt_text(&d, buf);
        return buf;
    }
    return buf;   /* not reached */
}
#endif

const char *numfmt(char buf[NUMFMT_LEN], double v)
{
    if (!isfinite(v)) {
        snprintf(buf, NUMFMT_LEN, "%g", v);   /* at most "-inf": cannot be cut */
        return buf;
    }
    if (v == floor(v) && fabs(v) < 1e15) {   /* whole numbers without an exponent, no "-0" */
        snprintf(buf, NUMFMT_LEN, "%.0f", v == 0 ? 0.0 : v);   /* at most 16 digits: cannot be cut */
        return buf;
    }
    /* A normal double has 15.95 decimal digits of precision, so when some
     * shorter text reads back, %.15g gives it too (trailing zeros dropped);
     * a subnormal one has fewer, so its search starts at one digit. */
    if (fabs(v) < DBL_MIN) return numfmt_search(buf, v, 1);
#ifdef __SIZEOF_INT128__
    const char *exact = numfmt_exact(buf, v);
    if (exact) return exact;
#endif
    /* One correctly rounded text of 21 digits; the texts of 15, 16 and 17
     * digits are rounded from it, as %.15g, %.16g and %.17g would write
     * them, and only the rare ties go back to the search. */
    char wide[40];
    struct numfmt_dec d, r;
    int w = snprintf(wide, sizeof wide, "%.20e", v);
    const char *e = strchr(wide, 'e');
    if (w <= 0 || w >= (int)sizeof wide || !e) return numfmt_search(buf, v, 15);
    d.neg = wide[0] == '-';
    d.n = 0;
    for (const char *c = wide + d.neg; c < e; c++)
        if (*c != '.') d.digit[d.n++] = *c;
    d.exp = atoi(e + 1);
    for (int p = 15; p <= 17; p++) {
        if (!numfmt_round(&d, p, &r)) return numfmt_search(buf, v, p);
        numfmt_text(&r, buf);
        if (p == 17 || numfmt_reads_back(&r, buf, v)) return buf;
    }
    return buf;   /* not reached */
}

const char *numfmt_noun(size_t n, const char *one, const char *many)
{
    return n == 1 ? one : many;
}

/* Turn every finite number of a (copied) tree into raw text from numfmt. */
static int numfmt_json_raw(cJSON *item)
{
    for (; item; item = item->next) {
        if (cJSON_IsNumber(item) && isfinite(item->valuedouble)) {
            char b[NUMFMT_LEN];
            size_t len = strlen(numfmt(b, item->valuedouble)) + 1;
            char *text = cJSON_malloc(len);
            if (!text) return -1;
            memcpy(text, b, len);
            item->type = cJSON_Raw;
            item->valuestring = text;
        }
        if (item->child && numfmt_json_raw(item->child)) return -1;
    }
    return 0;
}

char *numfmt_json_print(const cJSON *root)
{
    cJSON *copy = cJSON_Duplicate(root, 1);
    if (!copy) return NULL;
    char *text = numfmt_json_raw(copy) ? NULL : cJSON_Print(copy);
    cJSON_Delete(copy);
    return text;
}
