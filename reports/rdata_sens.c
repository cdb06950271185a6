/* rdata_sens.c: DIR/sensitivity.csv as `revisit sweep` and `check` write it. */
#include "reports/rdata.h"

#include <math.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>

#include "harness/base/fileio.h"
#include "harness/results/format.h"

#define RS_FILE_MAX ((size_t)16 << 20)
#define RS_FIELDS 17

/* Split one CSV line (fields may be double-quoted, "" inside quotes) in
 * place; returns the field count, at most max. */
static int rs_split(char *l, char **f, int max)
{
    int n = 0;
    while (n < max) {
        char *out = l;
        f[n++] = l;
        if (*l == '"') {
            for (l++; *l; l++) {
                if (*l == '"' && l[1] == '"') { *out++ = '"'; l++; }
                else if (*l == '"') { l++; break; }
                else *out++ = *l;
            }
        } else {
            while (*l && *l != ',') *out++ = *l++;
        }
        char sep = *l;
        *out = 0;
        if (sep != ',') break;
        l++;
    }
    return n;
}

static double rs_num(const char *t)
{
    char *end;
    double v = strtod(t, &end);
    return *t && !*end ? v : NAN;
}

static void rs_fill(char **f, struct rdata_sens *r)
{
    r->stage = !strcmp(f[0], "stage");
    snprintf(r->method, sizeof r->method, "%s", f[1]);
    snprintf(r->cond, sizeof r->cond, "%s", f[2]);
    snprintf(r->parameter, sizeof r->parameter, "%s", f[3]);
    snprintf(r->unit, sizeof r->unit, "%s", f[4]);
    double *v[8] = {&r->from, &r->to, &r->per_unit, &r->per_unit_lo, &r->per_unit_hi, &r->loss, &r->loss_lo,
                    &r->loss_hi};
    for (int k = 0; k < 8; k++) *v[k] = rs_num(f[5 + k]);
    snprintf(r->compound, sizeof r->compound, "%s", f[13]);
    r->compound_loss = rs_num(f[14]);
    r->share = rs_num(f[15]);
    r->rank = atoi(f[16]);
}

int rdata_sens_read(struct rdata_set *s, struct err *e)
{
    char path[4200], *text, *save = NULL;
    size_t len, line = 0;
    fileio_join(path, sizeof path, s->root, "sensitivity.csv");
    FILE *probe = fopen(path, "rb");
    if (!probe) return 0;
    fclose(probe);
    if (fileio_read(path, RS_FILE_MAX, &text, &len, e)) return -1;
    size_t cap = 1;
    for (size_t k = 0; k < len; k++) cap += text[k] == '\n';
    s->sens = calloc(cap, sizeof *s->sens);
    int rc = s->sens ? 0 : err_at(e, path, 0, "out of memory");
    for (char *l = strtok_r(text, "\n", &save); !rc && l; l = strtok_r(NULL, "\n", &save)) {
        char *f[RS_FIELDS];
        ++line;
        if (l[0] == '#') {
            if (results_format_line(l, RESULTS_SENSITIVITY_KIND, path, (long)line, e) < 0) { rc = -1; break; }
            continue;
        }
        if (!strncmp(l, "kind,", 5)) continue;   /* the header */
        if (rs_split(l, f, RS_FIELDS) != RS_FIELDS || (strcmp(f[0], "axis") && strcmp(f[0], "stage"))) {
            rc = err_at(e, path, (long)line, "expected %d fields starting with axis or stage", RS_FIELDS);
            break;
        }
        rs_fill(f, &s->sens[s->n_sens++]);
    }
    free(text);
    if (rc) { free(s->sens); s->sens = NULL; s->n_sens = 0; }
    return rc;
}
