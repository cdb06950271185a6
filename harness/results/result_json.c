/* result_json.c: read result.json back: parse, format, status, protocol. */
#include "harness/results/result_json.h"

#include <math.h>
#include <stdlib.h>
#include <string.h>

#include "harness/base/fileio.h"
#include "harness/results/format.h"

#define RJ_MAX_BYTES ((size_t)256 << 20)

cJSON *result_json_parse(const char *text, size_t len, const char *path, struct err *e)
{
    const char *end = NULL;
    cJSON *root = cJSON_ParseWithLengthOpts(text, len, &end, 0);
    if (!root) {
        long line, col;
        err_line_col(text, end ? (size_t)(end - text) : 0, &line, &col);
        err_set(e, "%s:%ld:%ld: not valid JSON, expected an object", path, line, col);
        return NULL;
    }
    if (!cJSON_IsObject(root)) {
        cJSON_Delete(root);
        err_set(e, "%s:1:1: top level is not an object, expected an object", path);
        return NULL;
    }
    if (results_format_json(root, "result", path, e)) {
        cJSON_Delete(root);
        return NULL;
    }
    return root;
}

cJSON *result_json_load(const char *path, struct err *e)
{
    char *text;
    size_t len;
    if (fileio_read(path, RJ_MAX_BYTES, &text, &len, e)) return NULL;
    cJSON *root = result_json_parse(text, len, path, e);
    free(text);
    return root;
}

int result_json_status(const cJSON *root, const char *path, struct err *e)
{
    const cJSON *st = cJSON_GetObjectItemCaseSensitive(root, "status");
    const char *s = cJSON_IsString(st) ? st->valuestring : NULL;
    if (s && !strcmp(s, "ok")) return 1;
    if (s && !strcmp(s, "failed")) return 0;
    return err_at(e, path, 0, "status '%s', expected \"ok\" or \"failed\"", s ? s : "(none)");
}

static double rj_num(const cJSON *o, const char *key, double dflt)
{
    const cJSON *v = cJSON_GetObjectItemCaseSensitive(o, key);
    return cJSON_IsNumber(v) ? v->valuedouble : dflt;
}

int result_json_metric(const cJSON *root, const char *key, struct result_metric *out)
{
    const cJSON *m = cJSON_GetObjectItemCaseSensitive(cJSON_GetObjectItemCaseSensitive(root, "metrics"), key);
    const cJSON *v = cJSON_GetObjectItemCaseSensitive(m, "value");
    if (!cJSON_IsObject(m) || !cJSON_IsNumber(v)) return 0;
    *out = (struct result_metric){v->valuedouble, rj_num(m, "lo", NAN), rj_num(m, "hi", NAN),
                                  rj_num(m, "threshold", NAN)};
    return 1;
}

int result_json_protocol(const cJSON *root, struct protocol *p)
{
    protocol_defaults(p);
    const cJSON *o = cJSON_GetObjectItemCaseSensitive(root, "protocol");
    if (!cJSON_IsObject(o)) return 0;
    const cJSON *mode = cJSON_GetObjectItemCaseSensitive(o, "mode");
    const cJSON *counting = cJSON_GetObjectItemCaseSensitive(o, "counting");
    if (cJSON_IsString(mode)) protocol_mode_parse(mode->valuestring, &p->mode);
    if (cJSON_IsString(counting)) protocol_counting_parse(counting->valuestring, &p->counting);
    p->r_pos_m = rj_num(o, "r_pos_m", p->r_pos_m);
    p->r_neg_m = rj_num(o, "r_neg_m", p->r_pos_m);
    p->exclusion_s = rj_num(o, "exclusion_s", p->exclusion_s);
    p->exclusion_scans = (long)rj_num(o, "exclusion_scans", -1);
    p->top_k = (int)rj_num(o, "top_k", p->top_k);
    p->planar = cJSON_IsTrue(cJSON_GetObjectItemCaseSensitive(o, "planar"));
    return 1;
}
