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

/* Median step between consecutive times (file units); 0 for fewer than 2. */
static int poses_median_step(const struct poses *ps, double *step)
{
    *step = 0;
    if (ps->n < 2) return 0;
    double *d = malloc((ps->n - 1) * sizeof *d);
    if (!d) return -1;
    for (size_t k = 1; k < ps->n; k++) d[k - 1] = ps->v[k].t - ps->v[k - 1].t;
    qsort(d, ps->n - 1, sizeof *d, poses_cmp_double);
    *step = d[(ps->n - 1) / 2];
    free(d);
    return 0;
}

/* 1 when times in unit u have a plausible magnitude and step. */
static int poses_unit_fits(enum poses_unit u, double big, double step, size_t n)
{
    double d = poses_unit_per_s[u];
    if (big / d > POSES_TIME_MAX_S) return 0;
    return n < 2 || (step / d >= POSES_STEP_MIN_S && step / d <= POSES_STEP_MAX_S);
}

int poses_apply_unit(struct poses *ps, enum poses_unit unit, const char *path, enum poses_unit *used,
                     struct err *e)
{
    double step, big = 0;
    if (poses_median_step(ps, &step)) return err_at(e, path, 0, "out of memory");
    for (size_t k = 0; k < ps->n; k++) if (fabs(ps->v[k].t) > big) big = fabs(ps->v[k].t);
    enum poses_unit u = unit;
    if (unit == POSES_UNIT_AUTO)
        for (u = POSES_UNIT_S; u <= POSES_UNIT_NS && !poses_unit_fits(u, big, step, ps->n); u++) {}
    if (u > POSES_UNIT_NS || !poses_unit_fits(u, big, step, ps->n)) {
        const char *as = unit == POSES_UNIT_AUTO ? "s" : poses_unit_names[u];
        double d = poses_unit_per_s[unit == POSES_UNIT_AUTO ? POSES_UNIT_S : u];
        return err_at(e, path, 0, "pose times have a median step of %.6g and reach %.6g: in %s that is "
                      "%.6g Hz, expected a step of %g to %g s (%g to %g Hz) and times below %g s%s",
                      step, big, as, step > 0 ? d / step : 0.0, POSES_STEP_MIN_S, POSES_STEP_MAX_S,
                      1 / POSES_STEP_MAX_S, 1 / POSES_STEP_MIN_S, POSES_TIME_MAX_S,
                      unit == POSES_UNIT_AUTO ? " in any of s, ms, us, ns (name the unit: poses.time_unit, or index --time-unit)" : "");
    }
    double d = poses_unit_per_s[u];
    if (d != 1)
        for (size_t k = 0; k < ps->n; k++) ps->v[k].t /= d;
    *used = u;
    return 0;
}
