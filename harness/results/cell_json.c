/* cell_json.c: the axis object of a plan cell. */
#include "harness/results/cell_json.h"

void cell_json_axis(cJSON *o, const struct plan *p, size_t k)
{
    const struct plan_cell *c = &p->cells[k];
    if (!c->has_axis) return;
    const struct plan_cond *d = &p->conds[c->cond];
    cJSON *a = cJSON_AddObjectToObject(o, "axis");
    cJSON_AddStringToObject(a, "stage", d->axis_stage);
    cJSON_AddStringToObject(a, "key", d->axis_key);
    cJSON_AddNumberToObject(a, "value", c->axis_value);
}
