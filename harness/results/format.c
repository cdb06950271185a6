/* format.c: format markers of the results files, written and checked. */
#include "harness/results/format.h"

#include <stdlib.h>
#include <string.h>

#define FMT_PREFIX "# revisit "

int results_format_line(const char *line, const char *kind, const char *path, long lineno,
                        struct err *e)
{
    size_t pl = strlen(FMT_PREFIX);
    if (strncmp(line, FMT_PREFIX, pl)) return 0;
    const char *comma = strstr(line + pl, ", format ");
    if (!comma) return 0;
    size_t kl = (size_t)(comma - (line + pl));
    char *end;
    long v = strtol(comma + 9, &end, 10);
    while (*end == ' ' || *end == '\r') end++;
    if (*end || end == comma + 9) return 0;
    if (kl != strlen(kind) || strncmp(line + pl, kind, kl))
        return err_at(e, path, lineno, "a %.*s file (its first line says so), expected %s", (int)kl,
                      line + pl, kind);
    if (v != RESULTS_FORMAT_VERSION)
        return err_at(e, path, lineno, "%s format %ld, expected format %d (written by another version of revisit)",
                      kind, v, RESULTS_FORMAT_VERSION);
    return 1;
}

void results_format_write(FILE *f, const char *kind)
{
    fprintf(f, FMT_PREFIX "%s, format %d\n", kind, RESULTS_FORMAT_VERSION);
}

void results_format_json_name(char *out, size_t n, const char *name)
{
    snprintf(out, n, "revisit-%s-%d", name, RESULTS_FORMAT_VERSION);
}

int results_format_json(const cJSON *root, const char *name, const char *path, struct err *e)
{
    char want[64];
    results_format_json_name(want, sizeof want, name);
    const cJSON *f = cJSON_GetObjectItemCaseSensitive(root, "format");
    const char *got = cJSON_IsString(f) ? f->valuestring : "";
    if (strcmp(got, want)) return err_at(e, path, 0, "format is '%s', expected '%s'", got, want);
    return 0;
}
