/* result_json.h: read result.json of a results folder back (the writers
 * are eval, `metrics --json` and the sweep runner for a failed cell; the
 * objects they share are built by harness/results/result_metrics.h).
 *
 *   {"format": "revisit-result-1", "software": .., "command": ..,
 *    "scenario_hash": .., "method": {..}, "condition": {..},
 *    "protocol": {..}, "inputs": {"map", "query", "method": content digests},
 *    "counts": {..}, "metrics": {..}, "curve": {..},
 *    "status": "ok"}                    or "status": "failed", "error": ".."
 *
 * Every command that reads a result.json (metrics, sweep, merge, summary,
 * check, report) reads it here, so a malformed file gives the same message
 * whichever of them meets it.
 *
 *     cJSON *r = result_json_load("out/result.json", e);
 *     if (!r) return -1;
 *     int ok = result_json_status(r, path, e);   // 1 ok, 0 failed, -1 neither
 *     cJSON_Delete(r);
 *
 * Failure contract: NULL or -1 with e set as "FILE:LINE:COL: ..." for
 * broken JSON, "FILE: ..." for the rest; the caller deletes what it gets.
 * Thread-safe.
 */
#ifndef RV_RESULT_JSON_H
#define RV_RESULT_JSON_H

#include <stddef.h>
#include <cjson/cJSON.h>

#include "harness/base/err.h"
#include "metrics/protocol.h"

/* Parse text (len bytes) as a result: valid JSON, an object, format
 * "revisit-result-1".  path names the file in messages. */
cJSON *result_json_parse(const char *text, size_t len, const char *path, struct err *e);

/* Read and parse the file at path. */
cJSON *result_json_load(const char *path, struct err *e);

/* 1 for status "ok", 0 for "failed", -1 (e set) for anything else. */
int result_json_status(const cJSON *root, const char *path, struct err *e);

/* One metric of the "metrics" object: its value, and lo, hi and threshold
 * (NaN when the key is absent or null).  1 when root has the metric with a
 * numeric value, 0 when not (*out untouched).  Cannot fail. */
struct result_metric {
    double value, lo, hi, threshold;
};
int result_json_metric(const cJSON *root, const char *key, struct result_metric *out);

/* The "protocol" object into *p (defaults for keys it lacks; radius_neg
 * defaults to the radius).  1 when root has one, 0 when not (p holds the
 * defaults).  Cannot fail. */
int result_json_protocol(const cJSON *root, struct protocol *p);

#endif
