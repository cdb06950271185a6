/* oppoint_json.h: the "operating_point" object of result.json.
 *
 *     "operating_point": {"tuned_on": "runs/clean", "rule": "precision", "target": 0.99,
 *       "threshold": 0.31, "threshold_lo": 0.28, "threshold_hi": 0.35, "threshold_missing": 0,
 *       "paired": true, "resamples": 1000,
 *       "scores": {"precision": {"value": 0.97, "lo": 0.95, "hi": 0.99, "reference": 1,
 *                                "diff": -0.03, "diff_lo": -0.05, "diff_hi": -0.01}, ...}}
 *
 * Numbers that are not finite are written as null.  Cannot fail (cJSON
 * allocation failures leave keys out).
 */
#ifndef RV_OPPOINT_JSON_H
#define RV_OPPOINT_JSON_H

#include <cjson/cJSON.h>
#include "metrics/oppoint.h"

/* A new object; tuned_on names where the threshold was chosen. */
cJSON *oppoint_json(const struct oppoint_result *r, const char *tuned_on);

#endif
