/* oppoint.c: choose a threshold on one outcome set, score another at it.
 *
 * Both the choice and the scores come from pr_points, the walk behind every
 * scalar of pr.h, so a threshold read off the curve and a score at it use
 * one counting.  Resample layout: vals[b * OPP_N + k], one row per resample.
 */
#include "metrics/oppoint.h"

#include <math.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>

#include "metrics/boot.h"

static const char *const opp_names[OPP_N] = {
    "precision", "recall", "f1", "false_positives", "false_positives_per_km", "false_positives_per_hour",
};
static const char *const opp_rules[] = {"f1max", "precision", "recall", "fixed"};

const char *oppoint_score_name(enum oppoint_score_id k)
{
    return (unsigned)k < OPP_N ? opp_names[k] : "?";
}

const char *oppoint_rule_name(enum oppoint_rule r)
{
    return (unsigned)r <= OPPOINT_FIXED ? opp_rules[r] : "?";
}

/* ---- choosing ------------------------------------------------------------ */

struct opp_pick {
    const struct oppoint_choice *c;
    double tau;
};

static void opp_visit_pick(void *ctx, const struct pr_point *pt)
{
    struct opp_pick *k = ctx;
    if (k->c->rule == OPPOINT_PRECISION && pt->precision >= k->c->target) k->tau = pt->tau;
    if (k->c->rule == OPPOINT_RECALL && isnan(k->tau) && pt->recall >= k->c->target) k->tau = pt->tau;
}

double oppoint_choose(const struct pr_set *s, const uint32_t *w, const struct oppoint_choice *c)
{
    if (c->rule == OPPOINT_FIXED) return c->target;
    if (c->rule == OPPOINT_F1MAX) {
        struct pr_scalars sc;
        pr_scalars_compute(s, w, &sc);
        return sc.f1max_threshold;
    }
    struct opp_pick k = {c, NAN};
    pr_points(s, w, opp_visit_pick, &k);
    return k.tau;
}

/* ---- scoring ------------------------------------------------------------- */

/* The scores are rows of the one metric table (pr.h), in the same order. */
_Static_assert(PR_OP_FP_PER_HOUR - PR_OP_PRECISION == OPP_FP_PER_HOUR - OPP_PRECISION &&
               PR_OP_FP - PR_OP_PRECISION == OPP_FP, "oppoint scores follow the PR_OP_* metrics");

void oppoint_score(const struct pr_set *s, const uint32_t *w, double tau,
                   const struct oppoint_drive *drive, struct oppoint_scores *out)
{
    struct pr_set at = *s;   /* shares the outcomes; only the operating point differs */
    struct pr_scalars sc;
    at.op_tau = tau;
    at.km = drive ? drive->km : 0;
    at.hours = drive ? drive->hours : 0;
    pr_scalars_compute(&at, w, &sc);
    for (int k = 0; k < OPP_N; k++) out->v[k] = sc.v[PR_OP_PRECISION + k];
}

/* ---- carrying with intervals ---------------------------------------------- */

static int opp_cmp(const void *x, const void *y)
{
    double a = *(const double *)x, b = *(const double *)y;
    return (a > b) - (a < b);
}

/* Interval of the finite values among col[0..n-1] (sorted in place). */
static void opp_interval(double *col, size_t n, double level, double *lo, double *hi)
{
    size_t m = 0;
    for (size_t k = 0; k < n; k++)
        if (!isnan(col[k])) col[m++] = col[k];
    if (!m) { *lo = *hi = NAN; return; }
    qsort(col, m, sizeof *col, opp_cmp);
    *lo = boot_quantile(col, m, (1 - level) / 2);
    *hi = boot_quantile(col, m, (1 + level) / 2);
}

struct opp_boot {
    double *tau, *at, *diff;   /* resamples x 1, x OPP_N, x OPP_N */
    uint32_t *wr, *wa;
};

/* Resample b: the choice on the reference, and the scores at the fixed tau. */
static void opp_resample(const struct pr_set *ref, const struct pr_set *at, const struct oppoint_result *r,
                         const struct oppoint_drive *rd, const struct oppoint_drive *ad, uint64_t seed,
                         int b, struct opp_boot *bt)
{
    boot_weights(seed, b, at->n, bt->wa);
    if (r->paired) memcpy(bt->wr, bt->wa, (ref->n ? ref->n : 1) * sizeof *bt->wr);
    else boot_weights(seed + 1, b, ref->n, bt->wr);
    bt->tau[b] = oppoint_choose(ref, bt->wr, &r->choice);
    struct oppoint_scores sa, sr;
    oppoint_score(at, bt->wa, r->tau, ad, &sa);
    oppoint_score(ref, bt->wr, r->tau, rd, &sr);
    for (int k = 0; k < OPP_N; k++) {
        bt->at[(size_t)b * OPP_N + k] = sa.v[k];
        bt->diff[(size_t)b * OPP_N + k] = sa.v[k] - sr.v[k];
    }
}

/* Fill the intervals of r from resamples; 0 or -1 when out of memory. */
static int opp_intervals(const struct pr_set *ref, const struct pr_set *at, const struct oppoint_drive *rd,
                         const struct oppoint_drive *ad, int resamples, uint64_t seed, double level,
                         struct oppoint_result *r)
{
    size_t nb = (size_t)resamples;
    struct opp_boot bt = {malloc(nb * sizeof(double)), malloc(nb * OPP_N * sizeof(double)),
                          malloc(nb * OPP_N * sizeof(double)), malloc((ref->n ? ref->n : 1) * sizeof(uint32_t)),
                          malloc((at->n ? at->n : 1) * sizeof(uint32_t))};
    double *col = malloc(nb * sizeof *col);
    int rc = bt.tau && bt.at && bt.diff && bt.wr && bt.wa && col ? 0 : -1;
    for (int b = 0; !rc && b < resamples; b++) opp_resample(ref, at, r, rd, ad, seed, b, &bt);
    if (!rc) {
        r->tau_missing = 0;
        for (size_t b = 0; b < nb; b++) r->tau_missing += isnan(bt.tau[b]);
        opp_interval(bt.tau, nb, level, &r->tau_lo, &r->tau_hi);
        for (int k = 0; k < OPP_N; k++) {
            for (size_t b = 0; b < nb; b++) col[b] = bt.at[b * OPP_N + k];
            opp_interval(col, nb, level, &r->lo[k], &r->hi[k]);
            for (size_t b = 0; b < nb; b++) col[b] = bt.diff[b * OPP_N + k];
            opp_interval(col, nb, level, &r->diff_lo[k], &r->diff_hi[k]);
        }
    }
    free(bt.tau); free(bt.at); free(bt.diff); free(bt.wr); free(bt.wa); free(col);
    return rc;
}

int oppoint_carry(const struct pr_set *ref, const struct pr_set *at, const struct oppoint_choice *c,
                  const struct oppoint_drive *ref_drive, const struct oppoint_drive *at_drive,
                  int resamples, uint64_t seed, double level, struct oppoint_result *out,
                  struct err *e)
{
    if (resamples < 0) return err_set(e, "operating point: %d resamples, expected 0 or more", resamples);
    if (!(level > 0 && level < 1))
        return err_set(e, "operating point: level %g, expected a number between 0 and 1", level);
    struct oppoint_result r;
    memset(&r, 0, sizeof r);
    r.choice = *c;
    r.paired = boot_same_queries(ref, at, NULL) == 0;
    r.resamples = resamples;
    r.tau = oppoint_choose(ref, NULL, c);
    oppoint_score(ref, NULL, r.tau, ref_drive, &r.ref);
    oppoint_score(at, NULL, r.tau, at_drive, &r.at);
    for (int k = 0; k < OPP_N; k++) {
        r.diff[k] = r.at.v[k] - r.ref.v[k];
        r.lo[k] = r.hi[k] = r.diff_lo[k] = r.diff_hi[k] = NAN;
    }
    r.tau_lo = r.tau_hi = NAN;
    if (resamples > 0 && opp_intervals(ref, at, ref_drive, at_drive, resamples, seed, level, &r))
        return err_set(e, "operating point: out of memory for %d resamples", resamples);
    *out = r;
    return 0;
}

int oppoint_parse(const char *text, struct oppoint_choice *c, struct err *e)
{
    const char *colon = strchr(text, ':');
    size_t n = colon ? (size_t)(colon - text) : strlen(text);
    char *end;
    double v = strtod(colon ? colon + 1 : text, &end);
    int number = end != (colon ? colon + 1 : text) && !*end && isfinite(v);
    if (!colon && !strcmp(text, "f1max")) { *c = (struct oppoint_choice){OPPOINT_F1MAX, 0}; return 0; }
    if (!colon && number) { *c = (struct oppoint_choice){OPPOINT_FIXED, v}; return 0; }
    for (int r = OPPOINT_PRECISION; colon && r <= OPPOINT_FIXED; r++) {
        if (strlen(opp_rules[r]) != n || strncmp(text, opp_rules[r], n)) continue;
        if (!number || (r != OPPOINT_FIXED && !(v > 0 && v <= 1)))
            return err_set(e, "operating point '%s': expected %s after '%s:'", text,
                            r == OPPOINT_FIXED ? "a finite distance" : "a number above 0 and at most 1",
                            opp_rules[r]);
        *c = (struct oppoint_choice){(enum oppoint_rule)r, v};
        return 0;
    }
    return err_set(e, "operating point '%s': expected f1max, precision:P, recall:R, fixed:D or a number", text);
}
