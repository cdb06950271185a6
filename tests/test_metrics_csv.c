/* test_metrics_csv.c: the per-query results CSV (read, check, write, round
 * trip) and the result.json metric objects. */
#include <math.h>
#include <stdio.h>
#include <stdlib.h>

#include "harness/results/queries_csv.h"
#include "harness/results/result_metrics.h"
#include "tests/check.h"

static void put(const char *path, const char *text)
{
    FILE *f = fopen(path, "w");
    fputs(text, f);
    fclose(f);
}

/* Loop, index window 1: scans 0..4 on the x axis, 1 m apart. */
static struct gt *line_gt(void)
{
    double xyz[15] = {0, 0, 0, 1, 0, 0, 2, 0, 0, 3, 0, 0, 40, 0, 0};
    struct gt_poses map = {xyz, NULL, 5};
    struct protocol p;
    protocol_defaults(&p);
    p.exclusion_scans = 1;
    struct gt *g = NULL;
    gt_build(&p, &map, NULL, NULL, 0, &g, NULL);
    return g;
}

static void read_ok(void)
{
    put("a.csv", "# revisit per-query results, format 1\n"
                 "query,cand,dist,cand,dist\n"
                 "\n"
                 "3, 0 ,0.25,1,0.5\r\n"
                 "# a comment between rows\n"
                 "1\n"
                 "4,2,1e-3");
    struct queries_csv q;
    struct err e = {{0}};
    CHECK(queries_csv_read("a.csv", &q, &e) == 0, "a file with comments, header, CRLF and no final newline reads");
    CHECK(q.n_rows == 3 && q.query[0] == 3 && q.query[1] == 1 && q.query[2] == 4, "rows in file order");
    CHECK(q.line[0] == 4 && q.line[2] == 7, "line numbers kept for messages");
    CHECK(q.off[1] - q.off[0] == 2 && q.off[2] == q.off[1] && q.c[2].idx == 2 && q.c[2].dist == 1e-3,
          "pairs parsed, an index alone has no candidates");
    struct gt *g = line_gt();
    size_t *off = NULL;
    struct pr_cand *c = NULL;
    CHECK(queries_csv_lists(&q, g, &off, &c, &e) == 0, "rows check against the ground truth");
    if (off) {
        CHECK(off[0] == 0 && off[3] == 0 && off[4] == 2 && off[5] == 3 && c[0].idx == 0 && c[2].idx == 2,
              "rows gathered by query index, missing queries empty");
        /* write -> read gives the same doubles (17 digits) */
        struct pr_lists l = {5, off, c};
        c[0].dist = 0.1 + 0.2;
        CHECK(queries_csv_write("b.csv", &l, &e) == 0, "results CSV written");
        struct queries_csv r;
        CHECK(queries_csv_read("b.csv", &r, &e) == 0 && r.n_rows == 5, "written file reads back, one row per query");
        CHECK(r.n_rows == 5 && r.c[0].dist == 0.1 + 0.2 && r.off[5] == 3 && r.query[4] == 4,
              "round trip keeps every double exactly");
        queries_csv_free(&r);
    }
    free(off);
    free(c);
    queries_csv_free(&q);
    put("e.csv", "# nothing\n");
    CHECK(queries_csv_read("e.csv", &q, &e) == 0 && q.n_rows == 0 && q.off[0] == 0, "an empty file reads as no rows");
    queries_csv_free(&q);
    gt_free(g);
}

static void read_bad(void)
{
    static const struct { const char *text, *frag; } cs[] = {
        {"query,c,d\n1,0,0.5\nx,0,1\n", "bad.csv:3: query index 'x' is not a whole number"},
        {"2,0,0.5,1\n", "bad.csv:1: field 4: candidate 1 has no distance"},
        {"2,0,nan\n", "bad.csv:1: field 3: distance 'nan' is not a finite number"},
        {"2,0,\n", "bad.csv:1: field 3: distance '' is not a finite number"},
        {"2,-1,0.5\n", "bad.csv:1: field 2: candidate '-1' is not a whole number"},
        {"2,1.5,0.5\n", "bad.csv:1: field 2: candidate '1.5' is not a whole number"},
        {"2,,0,0.5\n", "bad.csv:1: field 2: candidate '' is not a whole number"},
        {"#c\nscan,dist\n", "bad.csv:2: unknown header 'scan,dist'"},
        {"-3\n", "bad.csv:1: query index '-3' is not a whole number"},
    };
    for (size_t k = 0; k < sizeof cs / sizeof cs[0]; k++) {
        put("bad.csv", cs[k].text);
        struct queries_csv q;
        struct err e = {{0}};
        CHECK(queries_csv_read("bad.csv", &q, &e) == -1, "a malformed line is refused");
        CHECK_MSG(e.msg, cs[k].frag, cs[k].frag);
    }
    struct queries_csv q;
    struct err e = {{0}};
    CHECK(queries_csv_read("missing.csv", &q, &e) == -1, "a missing file is refused");
    CHECK_MSG(e.msg, "missing.csv", "message names the missing file");
}

static void lists_bad(void)
{
    static const struct { const char *text, *frag; } cs[] = {
        {"1,0,0.1\n9,0,0.2\n", "l.csv:2: query 9 is out of range, expected a query index from 0 to 4"},
        {"3,5,0.1\n", "l.csv:1: query 3: candidate 5 is out of range, expected a map index from 0 to 4"},
        {"3,3,0.1\n", "l.csv:1: query 3 lists itself"},
        {"2,4,0.1\n", "l.csv:1: query 2 lists scan 4, a later scan"},
        {"3,0,0.5,1,0.2\n", "l.csv:1: query 3: distance 0.2 after 0.5, expected candidates best first"},
        {"3,0,0.5\n#\n3,1,0.5\n", "l.csv:3: query 3 is listed again (first on line 1)"},
    };
    struct gt *g = line_gt();
    for (size_t k = 0; k < sizeof cs / sizeof cs[0]; k++) {
        put("l.csv", cs[k].text);
        struct queries_csv q;
        struct err e = {{0}};
        size_t *off = NULL;
        struct pr_cand *c = NULL;
        CHECK(queries_csv_read("l.csv", &q, &e) == 0, "the file itself is well formed");
        CHECK(queries_csv_lists(&q, g, &off, &c, &e) == -1 && !off, "a row the protocol forbids is refused");
        CHECK_MSG(e.msg, cs[k].frag, cs[k].frag);
        queries_csv_free(&q);
    }
    gt_free(g);
}

static void json_objects(void)
{
    struct pr_outcome o[3] = {{0.1, 0, 0, 1, GT_POS, 1}, {0.2, 1, 1, 0, GT_NEG, 0}, {INFINITY, 2, 2, 0, GT_NEG, 1}};
    struct pr_set *s = NULL;
    struct pr_curve *c = NULL;
    struct boot_result b;
    pr_set_from_outcomes(o, 3, 100, PROTOCOL_STRICT, &s, NULL);
    pr_curve_build(s, &c, NULL);
    boot_percentile(s, 50, 1, 0.95, 1, &b, NULL);
    cJSON *root = cJSON_CreateObject();
    struct err e = {{0}};
    CHECK(result_metrics_add(root, &b.point, &b, c, 3, 2, &e) == 0, "metric objects added");
    char *txt = cJSON_PrintUnformatted(root);
    CHECK(txt && strstr(txt, "\"counts\":{\"queries\":3,\"revisits\":2}"), "counts object as documented");
    CHECK(txt && strstr(txt, "\"curve\":{\"threshold\":[0.1,0.2],\"precision\":[1,0.5],\"recall\":[0.5,0.5]}"),
          "curve object: three parallel arrays");
    CHECK(txt && strstr(txt, "\"f1max\":{\"value\":0.66666666666666663,\"lo\":"), "f1max value, 17 digits");
    CHECK(txt && strstr(txt, "\"threshold\":0.1}"), "f1max carries its threshold");
    cJSON *back = cJSON_Parse(txt);
    struct pr_scalars v;
    double lo[PR_N_METRICS], hi[PR_N_METRICS];
    CHECK(result_metrics_read(back, &v, lo, hi, &e) == 0, "metrics read back");
    int same = 1;
    for (int m = 0; m < PR_N_METRICS; m++)
        same &= pr_metric_def((enum pr_metric)m)->at_op   /* no operating point: null, read back as NaN */
                ? isnan(v.v[m]) && isnan(lo[m]) && isnan(hi[m])
                : v.v[m] == b.point.v[m] && lo[m] == b.lo[m] && hi[m] == b.hi[m];
    CHECK(same && v.f1max_threshold == 0.1 && v.r100p_threshold == 0.1, "every value and interval read back exactly");
    cJSON_Delete(back);
    free(txt);
    cJSON_Delete(root);
    /* Without a bootstrap: null bounds; an undefined threshold is null. */
    struct pr_outcome z[1] = {{0.3, 0, 0, 0, GT_NEG, 0}};
    pr_set_free(s);
    pr_set_from_outcomes(z, 1, 100, PROTOCOL_STRICT, &s, NULL);
    pr_scalars_compute(s, NULL, &b.point);
    root = cJSON_CreateObject();
    CHECK(result_metrics_add(root, &b.point, NULL, NULL, 1, 0, &e) == 0, "metrics without intervals");
    txt = cJSON_PrintUnformatted(root);
    CHECK(txt && strstr(txt, "\"f1max\":{\"value\":0,\"lo\":null,\"hi\":null,\"threshold\":null}"),
          "no bootstrap: null bounds; F1max 0: null threshold");
    CHECK(txt && !strstr(txt, "\"curve\""), "no curve given: no curve key");
    free(txt);
    cJSON_DeleteItemFromObject(cJSON_GetObjectItem(root, "metrics"), "ep");
    CHECK(result_metrics_read(root, &v, NULL, NULL, &e) == -1, "a missing metric is refused");
    CHECK_MSG(e.msg, "$.metrics.ep.value is missing", "message gives the JSON path");
    cJSON_Delete(root);
    pr_curve_free(c);
    pr_set_free(s);
}

int main(void)
{
    read_ok();
    read_bad();
    lists_bad();
    json_objects();
    return check_done();
}
