/* oppoint.h: an operating point chosen on one set of outcomes and carried
 * to another, as a deployed system keeps its threshold.
 *
 * The threshold tau is chosen on a reference set (the clean condition, an
 * older mount's recording) by one rule:
 *     OPPOINT_F1MAX      the smallest tau reaching F1max (pr.h)
 *     OPPOINT_PRECISION  the largest tau with precision >= target
 *     OPPOINT_RECALL     the smallest tau with recall >= target
 *     OPPOINT_FIXED      tau = target
 * Another set is then scored at that tau with the counting of pr.h: a query
 * is accepted when d1 <= tau, precision TP / (TP + FP) (1 when nothing is
 * accepted), recall TP / (TP + FN) (0 without revisits), F1, and the false
 * positives (accepted matches beyond r_neg: false loop closures) as a count
 * and per km driven and per hour of the scored recording.  Worked case:
 * reference d1 0.1 (TP) 0.2 (TP) 0.3 (FP) 0.4 (TP), 3 revisits, strict; rule
 * precision >= 0.99 gives tau = 0.2; a condition with d1 0.15 (FP) 0.18 (TP)
 * 0.5 (TP) scores at tau 0.2: TP 1, FP 1, precision 0.5, recall 1/2.
 *
 * Uncertainty, with the resamples of boot.h (boot_weights):
 *   - of the choice: each resample of the reference chooses its own tau; the
 *     interval of those (resamples where the rule finds no tau are counted
 *     in tau_missing and left out);
 *   - of the carried scores at the fixed tau: resamples of the scored set;
 *   - of the difference scored minus reference at tau: when both sets score
 *     the same queries (boot_same_queries) the same weights enter both
 *     (paired); otherwise each set has its own resamples (seed + 1 for the
 *     reference), and the difference is taken resample by resample.
 *
 * Failure contract: oppoint_carry returns 0, or -1 with e set and *out
 * untouched (resamples < 0, level outside (0, 1), out of memory); a rule
 * that finds no tau on the reference is not an error: tau is NaN and every
 * score NaN.  The others cannot fail.  Nothing to free; thread-safe.
 */
#ifndef RV_OPPOINT_H
#define RV_OPPOINT_H

#include <stddef.h>
#include <stdint.h>
#include "harness/base/err.h"
#include "metrics/pr.h"

enum oppoint_rule { OPPOINT_F1MAX, OPPOINT_PRECISION, OPPOINT_RECALL, OPPOINT_FIXED };

struct oppoint_choice {
    enum oppoint_rule rule;
    double target;       /* precision or recall in (0, 1], or the fixed tau */
};

enum oppoint_score_id { OPP_PRECISION, OPP_RECALL, OPP_F1, OPP_FP, OPP_FP_PER_KM, OPP_FP_PER_HOUR, OPP_N };

/* What was driven while the scored set was recorded (0: unknown; the rates
 * are then NaN). */
struct oppoint_drive {
    double km, hours;
};

struct oppoint_scores {
    double v[OPP_N];           /* = the PR_OP_* rows of pr.h's metric table at tau */
};

struct oppoint_result {
    struct oppoint_choice choice;
    double tau, tau_lo, tau_hi;       /* chosen on the reference; interval of the choice */
    int tau_missing;                  /* resamples where the rule found no tau */
    struct oppoint_scores ref, at;    /* reference and scored set at tau */
    double lo[OPP_N], hi[OPP_N];      /* interval of the scored set at tau */
    double diff[OPP_N], diff_lo[OPP_N], diff_hi[OPP_N];   /* scored - reference */
    int paired, resamples;
};

/* The rule's tau on s (weights w as in pr.h, NULL = 1); NaN when none. */
double oppoint_choose(const struct pr_set *s, const uint32_t *w, const struct oppoint_choice *c);

/* Scores of s at tau (NaN tau: every score NaN): pr_scalars_compute's
 * PR_OP_* metrics with op_tau = tau and the drive's km and hours. */
void oppoint_score(const struct pr_set *s, const uint32_t *w, double tau,
                   const struct oppoint_drive *drive, struct oppoint_scores *out);

/* Choose on ref, score at on ref and at, with intervals from resamples
 * (0: point values only, intervals NaN). */
int oppoint_carry(const struct pr_set *ref, const struct pr_set *at, const struct oppoint_choice *c,
                  const struct oppoint_drive *ref_drive, const struct oppoint_drive *at_drive,
                  int resamples, uint64_t seed, double level, struct oppoint_result *out,
                  struct err *e);

/* "precision", "recall", "f1", "false_positives", "false_positives_per_km",
 * "false_positives_per_hour"; and "f1max", "precision", "recall", "fixed". */
const char *oppoint_score_name(enum oppoint_score_id k);
const char *oppoint_rule_name(enum oppoint_rule r);

/* Parse "f1max", "precision:0.99", "recall:0.9" or "fixed:0.31" (a bare
 * number is fixed too).  0, or -1 with e naming what was expected. */
int oppoint_parse(const char *text, struct oppoint_choice *c, struct err *e);

#endif
