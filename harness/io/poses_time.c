/* poses_time.c: the time unit of a pose file, named or detected from the
 * magnitude of the times and the rate their median step implies. */
#include "harness/io/poses_io.h"

#include <math.h>
#include <stdlib.h>
#include <string.h>

static const char *const poses_unit_names[] = {"auto", "s", "ms", "us", "ns"};
/* per second; times are divided (exact for whole multiples, unlike 1e-9 *) */
static const double poses_unit_per_s[] = {1, 1, 1e3, 1e6, 1e9};

int poses_unit_parse(const char *name, enum poses_unit *out, struct err *e)
{
    for (int k = 0; k < 5; k++)
        if (!strcmp(name, poses_unit_names[k])) { *out = (enum poses_unit)k; return 0; }
    return err_set(e, "unknown time unit '%s', expected auto, s, ms, us or ns", name);
}

const char *poses_unit_name(enum poses_unit unit)
{
    return (unsigned)unit < 5 ? poses_unit_names[unit] : "?";
}

static int poses_cmp_double(const void *a, const void *b)
{
    double x = *(const double *)a, y = *(const double *)b;
    return x < y ? -1 : x > y;
}

/* Median of the n values of d (sorted in place). */
static double poses_median(double *d, size_t n)
{
    qsort(d, n, sizeof *d, poses_cmp_double);
    return d[(n - 1) / 2];
}

/* Median step between consecutive times and median distance over time
 * (metres per file unit); both 0 for fewer than 2 poses. */
static int poses_median_step(const struct poses *ps, double *step, double *speed)
{
    *step = *speed = 0;
    if (ps->n < 2) return 0;
    double *d = malloc((ps->n - 1) * sizeof *d);
    if (!d) return -1;
    for (size_t k = 1; k < ps->n; k++) d[k - 1] = ps->v[k].t - ps->v[k - 1].t;
    *step = poses_median(d, ps->n - 1);
    for (size_t k = 1; k < ps->n; k++) {
        const double *a = ps->v[k - 1].p, *b = ps->v[k].p;
        double dist = sqrt((b[0] - a[0]) * (b[0] - a[0]) + (b[1] - a[1]) * (b[1] - a[1]) +
                           (b[2] - a[2]) * (b[2] - a[2]));
        d[k - 1] = dist / (ps->v[k].t - ps->v[k - 1].t);
    }
    *speed = poses_median(d, ps->n - 1);
    free(d);
    return 0;
}

/* Largest median step (s) accepted: wider for a unit that is named. */
static double poses_step_max(int named)
{
    return named ? POSES_STEP_MAX_NAMED_S : POSES_STEP_MAX_S;
}

/* 1 when times in unit u have a plausible magnitude and step and, when
 * detected (named == 0), a plausible speed. */
static int poses_unit_fits(enum poses_unit u, double big, double step, double speed, size_t n, int named)
{
    double d = poses_unit_per_s[u];
    if (big / d > POSES_TIME_MAX_S) return 0;
    if (n < 2) return 1;
    if (step / d < POSES_STEP_MIN_S || step / d > poses_step_max(named)) return 0;
    return named || speed * d <= POSES_SPEED_MAX_MPS;
}

int poses_apply_unit(struct poses *ps, enum poses_unit unit, const char *path, enum poses_unit *used,
                     struct err *e)
{
    double step, speed, big = 0;
    int named = unit != POSES_UNIT_AUTO;
    if (poses_median_step(ps, &step, &speed)) return err_at(e, path, 0, "out of memory");
    for (size_t k = 0; k < ps->n; k++) if (fabs(ps->v[k].t) > big) big = fabs(ps->v[k].t);
    enum poses_unit u = unit;
    if (unit == POSES_UNIT_AUTO)
        for (u = POSES_UNIT_S; u <= POSES_UNIT_NS && !poses_unit_fits(u, big, step, speed, ps->n, 0); u++) {}
    if (u > POSES_UNIT_NS || !poses_unit_fits(u, big, step, speed, ps->n, named)) {
        const char *as = unit == POSES_UNIT_AUTO ? "s" : poses_unit_names[u];
        double d = poses_unit_per_s[unit == POSES_UNIT_AUTO ? POSES_UNIT_S : u];
        double smax = poses_step_max(named);
        return err_at(e, path, 0, "pose times have a median step of %.6g and reach %.6g: in %s that is "
                      "%.6g Hz, expected a step of %g to %g s (%g to %g Hz), a median speed below %g m/s "
                      "(here %.6g m/s) and times below %g s%s",
                      step, big, as, step > 0 ? d / step : 0.0, POSES_STEP_MIN_S, smax,
                      1 / smax, 1 / POSES_STEP_MIN_S, POSES_SPEED_MAX_MPS, speed * d, POSES_TIME_MAX_S,
                      unit == POSES_UNIT_AUTO ? " in any of s, ms, us, ns (name the unit: poses.time_unit, or index --time-unit)" : "");
    }
    double d = poses_unit_per_s[u];
    if (d != 1)
        for (size_t k = 0; k < ps->n; k++) ps->v[k].t /= d;
    *used = u;
    return 0;
}
