/* kinds.h: scores per kind of revisit (same direction, reverse, crossing).
 *
 * A revisit query is classed by the heading difference between the query's
 * pose and the pose it revisits (the nearest candidate of the ground truth,
 * gt.h), folded into [0, 180] degrees: same when <= same_deg (default 45),
 * reverse when >= reverse_deg (default 135), crossing in between (common
 * practice, no source).  Worked case: headings 10 and 350 degrees differ by
 * 20 (same); 0 and 200 by 160 (reverse); 0 and 90 by 90 (crossing).
 *
 * Per kind K, over the scored revisit queries of that kind:
 *     recall_at_1  share whose top-1 candidate is correct (within r_pos);
 *     r100p        share accepted as correct at the set's R@100P threshold
 *                  (the largest threshold with no false positive over all
 *                  queries: one threshold for every kind, as deployed);
 *                  0 when the set has no such threshold.
 * A kind without revisits has both at 0 and revisits 0.
 *
 * Nothing here allocates or fails; thread-safe.
 */
#ifndef RV_KINDS_H
#define RV_KINDS_H

#include <stddef.h>
#include "metrics/pr.h"

enum kind_id { KIND_SAME, KIND_REVERSE, KIND_CROSSING, KIND_N, KIND_NONE = 255 };

struct kind_rule {
    double same_deg, reverse_deg;   /* 0 <= same_deg < reverse_deg <= 180 */
};

struct kind_scores {
    struct kind_rule rule;
    double revisits[KIND_N];
    double recall_at_1[KIND_N], r100p[KIND_N];
};

/* Defaults 45 and 135 degrees. */
void kind_rule_defaults(struct kind_rule *r);

/* 0 when the rule is usable, else -1 (thresholds out of order or outside
 * [0, 180]). */
int kind_rule_check(const struct kind_rule *r);

/* The kind of a revisit whose query heading is a and revisited heading b
 * (radians, any range). */
enum kind_id kind_of(double a, double b, const struct kind_rule *r);

/* Scores of s per kind; kind[q] gives the kind of query index q (KIND_NONE
 * for a query that is not a revisit), n_kind entries. */
void kind_scores(const struct pr_set *s, const unsigned char *kind, size_t n_kind,
                 const struct kind_rule *r, struct kind_scores *out);

/* "same", "reverse", "crossing". */
const char *kind_name(enum kind_id k);

#endif
