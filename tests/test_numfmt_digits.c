/* test_numfmt_digits.c: numfmt's digits rounded from one wide text against
 * the plain search it replaced (glibc's snprintf "%.Ng" for N = 15, 16, 17
 * and strtod reading each back, the C library as the reference): the same
 * text for random bit patterns over the whole normal range, for values of
 * the kinds revisit writes (distances from float descriptors, fractions
 * k / n, seconds, metres), and for ties and carries (halves at the 15th
 * and 16th digit, runs of nines). */
#include "harness/base/numfmt.c"
#include "tests/check.h"

static uint64_t rnd_state = 88172645463325252ull;
static uint64_t rnd64(void)
{
    rnd_state ^= rnd_state << 13;
    rnd_state ^= rnd_state >> 7;
    rnd_state ^= rnd_state << 17;
    return rnd_state;
}

/* 1 when numfmt(v) is the text of the plain search. */
static int same(double v)
{
    char a[NUMFMT_LEN], b[NUMFMT_LEN];
    numfmt(a, v);
    if (isfinite(v) && !(v == floor(v) && fabs(v) < 1e15)) numfmt_search(b, v, fabs(v) < DBL_MIN ? 1 : 15);
    else return 1;   /* the branches before the digits are shared */
    if (strcmp(a, b)) fprintf(stderr, "  %.17g: got %s, want %s\n", v, a, b);
    return !strcmp(a, b);
}

int main(void)
{
    long bad = 0;
    for (int k = 0; k < 300000; k++) {   /* any bit pattern of a normal double */
        uint64_t bits = rnd64();
        double v;
        memcpy(&v, &bits, sizeof v);
        bad += !same(v);
    }
    CHECK(bad == 0, "random doubles over the normal range: the plain search's text");
    bad = 0;
    for (int k = 0; k < 300000; k++) {
        float a = (float)((rnd64() >> 11) * 0x1p-53), b = (float)((rnd64() >> 11) * 0x1p-53);
        double dist = sqrt((double)a * a + (double)b * b), frac = (double)(rnd64() % 1000) / (double)(1 + rnd64() % 999);
        bad += !same(dist) + !same(1 - (double)a) + !same(frac) + !same(1700000000.0 + (double)a) + !same(-frac * 1e-7);
    }
    CHECK(bad == 0, "distances, fractions, times and small negatives: the plain search's text");
    bad = 0;
    static const char *edge[] = {"0.1234567890123455", "0.12345678901234550001", "9.9999999999999995e22",
                                 "0.99999999999999994", "1.0000000000000005e-5", "123456789012345.5",
                                 "2.2250738585072014e-308", "1.7976931348623157e308", "5e-324", "0.30000000000000004",
                                 "9.99999999999999e-5", "0.000099999999999999995", "1e21", "1e-7", "1e-6", "1e14", "99999999999999.99"};
    for (size_t k = 0; k < sizeof edge / sizeof *edge; k++) {
        double v = strtod(edge[k], NULL);
        bad += !same(v) + !same(nextafter(v, 0)) + !same(nextafter(v, INFINITY)) + !same(-v);
    }
    for (int k = 0; k < 100000; k++) {   /* halves at the 15th and 16th digit, with their neighbours */
        double m = (double)(rnd64() % 100000000000000ull) + 0.5, s = pow(10, (int)(rnd64() % 40) - 20);
        double v = m * s;
        bad += !same(v) + !same(nextafter(v, 0)) + !same(nextafter(v, INFINITY));
    }
    CHECK(bad == 0, "ties, carries, range ends and their neighbouring doubles: the plain search's text");
    return check_done();
}
