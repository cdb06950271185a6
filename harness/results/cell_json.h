/* cell_json.h: the JSON that says which point of a sweep's grid a cell is,
 * shared by the sweep runner (cell.json, a failed cell's result.json) and
 * the summary (summary.json), so the three files describe a cell alike.
 *
 *   "axis": {"stage": "sector", "key": "width", "value": 90}
 *
 *     cJSON *o = cJSON_CreateObject();
 *     cell_json_axis(o, plan, k);
 *
 * Cannot fail: out of memory leaves keys out, as cJSON_Add* do.  Borrows
 * the plan; thread-safe on distinct objects.
 */
#ifndef RV_CELL_JSON_H
#define RV_CELL_JSON_H

#include <stddef.h>
#include <cjson/cJSON.h>

#include "harness/plan/plan.h"

/* Add "axis" to o when cell k of p has an axis value; nothing otherwise. */
void cell_json_axis(cJSON *o, const struct plan *p, size_t k);

#endif
