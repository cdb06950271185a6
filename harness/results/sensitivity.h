/* sensitivity.h: which perturbation parameter costs the most, and which
 * stage dominates a compound condition.
 *
 * For each method and each condition with an axis (a swept parameter
 * stage.key over values v_1 < ... < v_n), with F(v) the metric (F1max) at v
 * averaged over seeds:
 *     per_unit   the loss per unit of the parameter: minus the least-squares
 *                slope of F(v) over v (F1max lost per degree, per metre, ...)
 *     range      the loss across the swept range: F(v_1) - F(v_n)
 * and for each stage run alone of a compound condition (plan.h is_part),
 * against the condition without a chain (the baseline):
 *     loss       F(baseline) - F(stage alone), beside the compound's own loss
 *     share      loss / compound loss; the stage with the largest loss dominates
 * Intervals come from one paired bootstrap (boot.h weights) over the
 * queries, which every cell of a loop sweep scores alike: each resample
 * recomputes every F with the same weights and then each figure, and the
 * interval is the 2.5% and 97.5% quantiles.  Axis rows are ranked by range
 * loss, largest first (rank 1 costs most).
 *
 * Failure contract: sens_compute returns 0 with *rows (freed by sens_free)
 * and *n set, or -1 with e set (a cell's folder unreadable, cells scoring
 * different queries, out of memory); conditions whose cells are not all done
 * and ok are left out.  sens_write writes DIR/sensitivity.csv atomically;
 * 0 or -1.
 */
#ifndef RV_SENSITIVITY_H
#define RV_SENSITIVITY_H

#include <stddef.h>
#include "harness/base/err.h"
#include "harness/results/summary.h"

enum sens_kind { SENS_AXIS, SENS_STAGE };

struct sens_row {
    enum sens_kind kind;
    size_t method, cond;     /* axis: the swept condition; stage: the stage-alone condition */
    char parameter[128];     /* axis: "sector.width"; stage: the stage's chain */
    char unit[16];           /* axis: the parameter's unit ("deg"), "" when none */
    double v_min, v_max;     /* axis: the swept range */
    double per_unit, per_unit_lo, per_unit_hi;
    double range, range_lo, range_hi;   /* axis: loss across the range; stage: the stage's loss */
    double compound, share;  /* stage: the compound condition's loss and this stage's share */
    int rank;                /* axis: 1 = the largest range loss for this method; stage: 1 = dominant */
};

int sens_compute(const struct summary *s, struct sens_row **rows, size_t *n, struct err *e);
int sens_write(const struct summary *s, const struct sens_row *rows, size_t n, struct err *e);
void sens_free(struct sens_row *rows);

#endif
