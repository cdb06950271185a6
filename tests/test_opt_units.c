/* test_opt_units.c: length, time, speed and angle options take the units
 * chains take (the commands' options: tests/e2e_option_units.sh). */
#include "harness/base/opt.h"
#include "tests/check.h"

static int parse1(const char *flag, const char *val, double *out, struct err *e)
{
    double r = -1, t = -1, s = -1, d = -1;
    const struct opt table[] = {
        {"--radius", OPT_METRES, &r, "M", "a length"},
        {"--exclude-s", OPT_SECONDS, &t, "S", "a time"},
        {"--max-speed", OPT_SPEED, &s, "M/S", "a speed"},
        {"--same-within", OPT_DEGREES, &d, "DEG", "an angle"},
        {0}};
    char *argv[] = {"test", (char *)flag, (char *)val};
    struct opt_args a;
    int rc = opt_parse("test", 3, argv, table, &a, e);
    *out = flag[2] == 'r' ? r : flag[2] == 'e' ? t : flag[2] == 'm' ? s : d;
    return rc;
}

int main(void)
{
    struct err e;
    double v;
    CHECK(!parse1("--radius", "3m", &v, &e) && v == 3, "--radius 3m is 3 metres");
    CHECK(!parse1("--radius", "3", &v, &e) && v == 3, "--radius 3 is 3 metres too");
    CHECK(!parse1("--radius", "2.5m", &v, &e) && v == 2.5, "a fractional length with its unit");
    CHECK(!parse1("--exclude-s", "30s", &v, &e) && v == 30, "--exclude-s 30s is 30 seconds");
    CHECK(!parse1("--exclude-s", "0.5", &v, &e) && v == 0.5, "a bare time is in seconds");
    CHECK(parse1("--radius", "3km", &v, &e) == -1, "a unit of another scale is refused");
    CHECK_MSG(e.msg, "option '--radius' expects a length in metres such as 3 or 3m, got '3km'",
              "the refusal names the option, the unit and what was given");
    CHECK(parse1("--exclude-s", "30m", &v, &e) == -1, "a length unit on a time is refused");
    CHECK_MSG(e.msg, "expects a time in seconds such as 30 or 30s, got '30m'", "the time refusal says seconds");
    CHECK(parse1("--radius", "m", &v, &e) == -1, "a unit without a number is refused");
    CHECK(parse1("--radius", "inf", &v, &e) == -1 && parse1("--radius", "nan", &v, &e) == -1,
          "no infinite or not-a-number length");
    CHECK(parse1("--radius", "1e999m", &v, &e) == -1, "an overflowing number is refused");
    CHECK(parse1("--radius", "3m ", &v, &e) == -1, "nothing may follow the unit");
    CHECK(!parse1("--max-speed", "70m/s", &v, &e) && v == 70, "--max-speed 70m/s is 70 metres per second");
    CHECK(!parse1("--max-speed", "12.5", &v, &e) && v == 12.5, "a bare speed is in metres per second");
    CHECK(parse1("--max-speed", "70m", &v, &e) == -1, "a length unit on a speed is refused");
    CHECK_MSG(e.msg, "option '--max-speed' expects a speed in metres per second such as 70 or 70m/s, got '70m'",
              "the speed refusal names the unit");
    CHECK(parse1("--max-speed", "70km/h", &v, &e) == -1, "a speed in another unit is refused, not converted");
    CHECK(!parse1("--same-within", "45deg", &v, &e) && v == 45, "--same-within 45deg is 45 degrees");
    CHECK(parse1("--same-within", "1rad", &v, &e) == -1, "an angle in radians is refused");

    long c = 0;
    const struct opt count[] = {{"--jobs", OPT_COUNT, &c, "N", "threads"}, {0}};
    char *one[] = {"test", "--jobs", "3"}, *zero[] = {"test", "--jobs", "0"}, *neg[] = {"test", "--jobs=-2"};
    struct opt_args a;
    CHECK(!opt_parse("test", 3, one, count, &a, &e) && c == 3, "a count of 3 is read");
    CHECK(opt_parse("test", 3, zero, count, &a, &e) == -1 && c == 3, "a count of 0 is refused, the value left");
    CHECK_MSG(e.msg, "option '--jobs' expects a whole number 1 or more, got '0'", "the count refusal names the option");
    CHECK(opt_parse("test", 2, neg, count, &a, &e) == -1, "a negative count is refused");

    size_t n, u;
    CHECK(!opt_scan_number("40m", &v, &n, &u) && v == 40 && n == 2 && u == 1, "40m: two bytes of number, one of unit");
    CHECK(!opt_scan_number("2m/s,", &v, &n, &u) && v == 2 && n == 1 && u == 3, "2m/s stops before the comma");
    CHECK(!opt_scan_number("-0.5deg", &v, &n, &u) && v == -0.5 && n == 4 && u == 3, "a signed number with degrees");
    CHECK(opt_scan_number("x1", &v, &n, &u) == -1, "a word is not a number");
    return check_done();
}
