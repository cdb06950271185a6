/* tool_numfmt.c: a helper for tests/xcheck_numfmt.py.
 *
 *   tool_numfmt        stdin: one double per line as 16 hex digits of its bits
 *                      stdout: numfmt's text of each, one per line
 *   tool_numfmt json   the same numbers as one JSON array through numfmt_json_print
 */
#include <inttypes.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>

#include "harness/base/numfmt.h"

int main(int argc, char **argv)
{
    int json = argc > 1 && !strcmp(argv[1], "json");
    cJSON *arr = json ? cJSON_CreateArray() : NULL;
    uint64_t bits;
    while (scanf("%" SCNx64, &bits) == 1) {
        double v;
        memcpy(&v, &bits, sizeof v);
        char b[NUMFMT_LEN];
        if (json) cJSON_AddItemToArray(arr, cJSON_CreateNumber(v));
        else printf("%s\n", numfmt(b, v));
    }
    if (json) {
        char *text = numfmt_json_print(arr);
        if (!text) return 2;
        printf("%s\n", text);
        free(text);
        cJSON_Delete(arr);
    }
    return 0;
}
