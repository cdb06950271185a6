/* result_metrics.h: the "protocol", "counts", "metrics" and "curve" objects
 * of result.json (DEVELOPERS.md "Results folder"), written the same way by
 * `revisit metrics --json` and `revisit eval`.
 *
 *   "protocol": {"mode": "loop", "r_pos_m": 3, "r_neg_m": 3, "exclusion_s": 30,
 *                "exclusion_scans": null, "planar": false, "counting": "strict",
 *                "top_k": 25}   (eval may add "prefilter" after these)
 *   "counts":  {"queries": 1500, "revisits": 420}
 *   "metrics": {"f1max": {"value": 0.81, "lo": 0.77, "hi": 0.84, "threshold": 0.31},
 *               "r100p": {"value": .., "lo": .., "hi": .., "threshold": ..},
 *               "p_r0": {"value": .., "lo": .., "hi": ..}, "ep", "ap",
 *               "recall_at_1", "recall_at_5", "recall_at_10", "recall_at_25",
 *               "recall_at_1pct": the same three keys,
 *               "op_precision", "op_recall", "op_f1", "op_false_positives",
 *               "op_false_positives_per_km", "op_false_positives_per_hour": the
 *               same at an operating point, every number null without one}
 *   "curve":   {"threshold": [..], "precision": [..], "recall": [..]}
 *
 * "lo"/"hi" are null without a bootstrap; a threshold is null when it is
 * undefined (F1max 0, or no FP-free point).  Printed through json_file_write
 * (harness/base/numfmt.h), every number reads back as the same double.
 *
 *     cJSON *root = cJSON_CreateObject();
 *     if (result_metrics_add(root, &point, ci_or_NULL, curve, n, revisits, e)) ...
 *
 * Failure contract: 0, or -1 with e set (out of memory); root may then hold
 * some of the keys and is still the caller's to delete.  Thread-safe.
 */
#ifndef RV_RESULT_METRICS_H
#define RV_RESULT_METRICS_H

#include <stddef.h>
#include <cJSON.h>

#include "harness/base/err.h"
#include "metrics/boot.h"
#include "metrics/oppoint.h"
#include "metrics/pr.h"
#include "metrics/protocol.h"

/* The "protocol" object for p ("exclusion_scans" null when p has none);
 * the caller owns it.  NULL or an object missing keys when out of memory,
 * as cJSON_CreateObject and cJSON_Add* allow. */
cJSON *result_metrics_protocol(const struct protocol *p);

/* Add "counts", "metrics" and "curve" to root (an object).  ci may be NULL
 * (no intervals), curve may be NULL (no "curve" key). */
int result_metrics_add(cJSON *root, const struct pr_scalars *point, const struct boot_result *ci,
                       const struct pr_curve *curve, size_t queries, size_t revisits,
                       struct err *e);

/* Read the "metrics" object back (values; thresholds NaN when null).  Keys it
 * does not know are ignored.  -1 with e set when a metric is missing or not a
 * number (a score at an operating point may be null or absent: NaN); lo/hi
 * may be NULL. */
int result_metrics_read(const cJSON *root, struct pr_scalars *value, double *lo, double *hi,
                        struct err *e);

/* The scores of an operating point carried here (metrics/oppoint.h) as the
 * PR_OP_* rows of point, lo and hi (the rest untouched), so they are
 * written like every other metric.  Cannot fail. */
void result_metrics_oppoint(const struct oppoint_result *o, struct pr_scalars *point, double *lo, double *hi);

/* Replace the PR_OP_* rows of root's "metrics" object by those of point, lo
 * and hi.  0, or -1 with e set (no "metrics" object, out of memory). */
int result_metrics_replace_op(cJSON *root, const struct pr_scalars *point, const double *lo, const double *hi,
                              struct err *e);

#endif
