/* numfmt.c: shortest round-trip text of a double, for every JSON and CSV writer. */
#include "harness/base/numfmt.h"

#include <float.h>
#include <math.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>

const char *numfmt(char buf[NUMFMT_LEN], double v)
{
    if (!isfinite(v)) {
        snprintf(buf, NUMFMT_LEN, "%g", v);   /* at most "-inf": cannot be cut */
        return buf;
    }
    if (v == floor(v) && fabs(v) < 1e15) {   /* whole numbers without an exponent, no "-0" */
        snprintf(buf, NUMFMT_LEN, "%.0f", v == 0 ? 0.0 : v);   /* at most 16 digits: cannot be cut */
        return buf;
    }
    /* A normal double has 15.95 decimal digits of precision, so when some
     * shorter text reads back, %.15g gives it too (trailing zeros dropped);
     * a subnormal one has fewer, so its search starts at one digit. */
    for (int digits = fabs(v) < DBL_MIN ? 1 : 15; digits <= 17; digits++) {
        int w = snprintf(buf, NUMFMT_LEN, "%.*g", digits, v);
        if (w > 0 && w < NUMFMT_LEN && (digits == 17 || strtod(buf, NULL) == v)) return buf;
    }
    return buf;   /* not reached: %.17g of a finite double fits in NUMFMT_LEN */
}

const char *numfmt_noun(size_t n, const char *one, const char *many)
{
    return n == 1 ? one : many;
}

/* Turn every finite number of a (copied) tree into raw text from numfmt. */
static int numfmt_json_raw(cJSON *item)
{
    for (; item; item = item->next) {
        if (cJSON_IsNumber(item) && isfinite(item->valuedouble)) {
            char b[NUMFMT_LEN];
            size_t len = strlen(numfmt(b, item->valuedouble)) + 1;
            char *text = cJSON_malloc(len);
            if (!text) return -1;
            memcpy(text, b, len);
            item->type = cJSON_Raw;
            item->valuestring = text;
        }
        if (item->child && numfmt_json_raw(item->child)) return -1;
    }
    return 0;
}

char *numfmt_json_print(const cJSON *root)
{
    cJSON *copy = cJSON_Duplicate(root, 1);
    if (!copy) return NULL;
    char *text = numfmt_json_raw(copy) ? NULL : cJSON_Print(copy);
    cJSON_Delete(copy);
    return text;
}
