/* oppoint_json.c: an operating point carried to a condition, as JSON. */
#include "harness/results/oppoint_json.h"

#include <math.h>

static void oj_num(cJSON *o, const char *key, double x)
{
    if (isfinite(x)) cJSON_AddNumberToObject(o, key, x);
    else cJSON_AddNullToObject(o, key);
}

cJSON *oppoint_json(const struct oppoint_result *r, const char *tuned_on)
{
    cJSON *o = cJSON_CreateObject();
    cJSON_AddStringToObject(o, "tuned_on", tuned_on);
    cJSON_AddStringToObject(o, "rule", oppoint_rule_name(r->choice.rule));
    if (r->choice.rule != OPPOINT_F1MAX) oj_num(o, "target", r->choice.target);
    oj_num(o, "threshold", r->tau);
    oj_num(o, "threshold_lo", r->tau_lo);
    oj_num(o, "threshold_hi", r->tau_hi);
    cJSON_AddNumberToObject(o, "threshold_missing", r->tau_missing);
    cJSON_AddBoolToObject(o, "paired", r->paired);
    cJSON_AddNumberToObject(o, "resamples", r->resamples);
    cJSON *s = cJSON_AddObjectToObject(o, "scores");
    for (int k = 0; k < OPP_N; k++) {
        cJSON *m = cJSON_AddObjectToObject(s, oppoint_score_name((enum oppoint_score_id)k));
        oj_num(m, "value", r->at.v[k]);
        oj_num(m, "lo", r->lo[k]);
        oj_num(m, "hi", r->hi[k]);
        oj_num(m, "reference", r->ref.v[k]);
        oj_num(m, "diff", r->diff[k]);
        oj_num(m, "diff_lo", r->diff_lo[k]);
        oj_num(m, "diff_hi", r->diff_hi[k]);
    }
    return o;
}
