/* poses_csv.c: read and write poses.csv of a results folder. */
#include "harness/results/poses_csv.h"

#include <ctype.h>
#include <errno.h>
#include <math.h>
#include <stdlib.h>
#include <string.h>

#include "harness/base/fileio.h"
#include "harness/base/numfmt.h"
#include "harness/results/format.h"

#define PCSV_MAX_BYTES ((size_t)1 << 32)
#define PCSV_HEADER "set,index,t,x,y,z"

static const char *const pcsv_sets[2] = {"map", "query"};

struct pcsv_build {
    struct poses_csv *p;
    size_t cap[2];
    const char *path;
};

static int pcsv_push(struct pcsv_build *b, int s, const double v[4])
{
    struct poses_csv_set *set = &b->p->set[s];
    if (set->n == b->cap[s]) {
        size_t c = b->cap[s] ? 2 * b->cap[s] : 256;
        double *t = realloc(set->t, c * sizeof *t);
        if (t) set->t = t;
        double *xyz = t ? realloc(set->xyz, 3 * c * sizeof *xyz) : NULL;
        if (xyz) set->xyz = xyz;
        if (!t || !xyz) return -1;
        b->cap[s] = c;
    }
    set->t[set->n] = v[0];
    memcpy(set->xyz + 3 * set->n, v + 1, 3 * sizeof *v);
    set->n++;
    return 0;
}

/* The six comma-separated fields of line (cut in place); their count. */
static int pcsv_split(char *line, char *f[6])
{
    int n = 0;
    for (char *p = line; p; n++) {
        char *comma = strchr(p, ',');
        if (n < 6) f[n] = p;
        if (comma) *comma = 0;
        p = comma ? comma + 1 : NULL;
    }
    return n;
}

/* One "set,index,t,x,y,z" row. */
static int pcsv_row(struct pcsv_build *b, char *line, long ln, struct err *e)
{
    char *f[6], *end;
    int n = pcsv_split(line, f);
    if (n != 6) return err_at(e, b->path, ln, "%d fields, expected 6: set,index,t,x,y,z", n);
    int s = !strcmp(f[0], "map") ? POSES_CSV_MAP : !strcmp(f[0], "query") ? POSES_CSV_QUERY : -1;
    if (s < 0) return err_at(e, b->path, ln, "set '%.40s' unknown, expected map or query", f[0]);
    errno = 0;
    unsigned long long idx = strtoull(f[1], &end, 10);
    size_t want = b->p->set[s].n;
    if (!isdigit((unsigned char)f[1][0]) || *end || errno || idx != (unsigned long long)want)
        return err_at(e, b->path, ln, "%s index '%.40s', expected %zu (each set's scans in order 0, 1, 2, ...)",
                      f[0], f[1], want);
    double v[4];
    for (int k = 0; k < 4; k++) {
        v[k] = strtod(f[k + 2], &end);
        if (end == f[k + 2] || *end || !isfinite(v[k]))
            return err_at(e, b->path, ln, "field %d '%.40s' is not a finite number, expected set,index,t,x,y,z",
                          k + 3, f[k + 2]);
    }
    if (pcsv_push(b, s, v)) return err_at(e, b->path, ln, "out of memory");
    return 0;
}

static int pcsv_parse(struct pcsv_build *b, char *buf, struct err *e)
{
    long ln = 0;
    int header = 0;
    for (char *p = buf, *nl; p && *p; p = nl ? nl + 1 : NULL) {
        nl = strchr(p, '\n');
        if (nl) *nl = 0;
        ln++;
        size_t l = strlen(p);
        if (l && p[l - 1] == '\r') p[--l] = 0;
        if (*p == '#') {
            if (!header && results_format_line(p, RESULTS_POSES_KIND, b->path, ln, e) < 0) return -1;
            continue;
        }
        if (!l) continue;
        if (!header++) {
            if (strcmp(p, PCSV_HEADER)) return err_at(e, b->path, ln, "expected the header '" PCSV_HEADER "'");
            continue;
        }
        if (pcsv_row(b, p, ln, e)) return -1;
    }
    if (!b->p->set[0].n && !b->p->set[1].n)
        return err_at(e, b->path, 0, "no pose rows, expected the header then set,index,t,x,y,z rows");
    return 0;
}

int poses_csv_read(const char *path, struct poses_csv *out, struct err *e)
{
    char *buf;
    size_t len;
    if (fileio_read(path, PCSV_MAX_BYTES, &buf, &len, e)) return -1;
    struct poses_csv p;
    memset(&p, 0, sizeof p);
    struct pcsv_build b = {&p, {0, 0}, path};
    int rc = pcsv_parse(&b, buf, e);
    free(buf);
    if (rc) { poses_csv_free(&p); return -1; }
    *out = p;
    return 0;
}

void poses_csv_free(struct poses_csv *p)
{
    if (!p) return;
    for (int s = 0; s < 2; s++) {
        free(p->set[s].t);
        free(p->set[s].xyz);
    }
    memset(p, 0, sizeof *p);
}

int poses_csv_write(const char *path, const struct poses_csv_set *map, const struct poses_csv_set *query,
                    struct err *e)
{
    struct afile a;
    if (afile_open(&a, path, e)) return -1;
    results_format_write(a.f, RESULTS_POSES_KIND);
    fputs(PCSV_HEADER "\n", a.f);
    const struct poses_csv_set *sets[2] = {map, query};
    for (int s = 0; s < 2; s++)
        for (size_t i = 0; sets[s] && i < sets[s]->n; i++) {
            const double *x = sets[s]->xyz + 3 * i;
            char b[4][NUMFMT_LEN];
            fprintf(a.f, "%s,%zu,%s,%s,%s,%s\n", pcsv_sets[s], i, numfmt(b[0], sets[s]->t[i]), numfmt(b[1], x[0]),
                    numfmt(b[2], x[1]), numfmt(b[3], x[2]));
        }
    return afile_commit(&a, e);
}
