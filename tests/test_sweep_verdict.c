/* test_sweep_verdict.c: every comparator and target of the acceptance
 * criteria on a hand-built sweep folder with known values, and the
 * summary tables over it. */
#include <math.h>
#include <stdlib.h>
#include "harness/base/fileio.h"
#include "harness/results/summary.h"
#include "harness/run/sweep.h"
#include "metrics/pr.h"
#include "tests/check.h"

/* Loop mode, 6 scans on a line: 3, 4, 5 revisit 0, 1, 2 (0 m apart); 0, 1, 2
 * are 10 m apart, so a match between them is wrong.  No time exclusion. */
static const char poses[] =
    "set,index,t,x,y,z\nmap,0,0,0,0,0\nmap,1,1,10,0,0\nmap,2,2,20,0,0\n"
    "map,3,3,0,0,0\nmap,4,4,10,0,0\nmap,5,5,20,0,0\n";
/* Worked by hand from the definitions (design.md, "Evaluation protocol"),
 * strict counting, thresholds at every distinct top-1 distance:
 *   clean:   TP at 0.1, 0.2, 0.3, then FP at 0.8, 0.9          -> F1max 1
 *   mount 1: query 5 matches scan 0 (20 m, FP) at 0.25:
 *            at 0.2 TP 2 FP 0 FN 1: P 1, R 2/3                  -> F1max 0.8
 *   mount 2: query 4 matches scan 0 (10 m, FP) at 0.15:
 *            at 0.3 TP 2 FP 1 FN 1: P 2/3, R 2/3                -> F1max 2/3
 * Paired differences: -0.2 and -1/3, mean -4/15. */
static const char q_clean[] = "# revisit per-query results, format 1\n0\n1,0,0.9\n2,1,0.8\n3,0,0.1\n4,1,0.2\n5,2,0.3\n";
static const char q_m1[] = "0\n1,0,0.9\n2,1,0.8\n3,0,0.1\n4,1,0.2\n5,0,0.25\n";
static const char q_m2[] = "0\n1,0,0.9\n2,1,0.8\n3,0,0.1\n4,0,0.15\n5,2,0.3\n";

static const char scen[] =
    "{\"format\": \"revisit-sweep-1\", \"name\": \"hand\", \"recordings\": {\"map\": \"rec\"},\n"
    " \"protocol\": {\"exclude_s\": 0}, \"bootstrap\": {\"resamples\": 0},\n"
    " \"methods\": [{\"name\": \"a\"}], \"seeds\": 2,\n"
    " \"conditions\": [{\"name\": \"clean\"}, {\"name\": \"mount\", \"chain\": \"sector:width=60\"}],\n"
    " \"criteria\": [\n"
    "  {\"metric\": \"f1max\", \"condition\": \"mount\", \"target\": \"mean\", \"comparator\": \">=\", \"threshold\": 0.7},\n"
    "  {\"metric\": \"f1max\", \"condition\": \"mount\", \"target\": \"mean\", \"comparator\": \">\", \"threshold\": 0.75},\n"
    "  {\"metric\": \"f1max\", \"condition\": \"mount\", \"target\": \"lo\", \"comparator\": \">=\", \"threshold\": 0.5},\n"
    "  {\"metric\": \"f1max\", \"condition\": \"mount\", \"target\": \"lo\", \"comparator\": \">\", \"threshold\": 0.5},\n"
    "  {\"metric\": \"f1max\", \"condition\": \"mount\", \"target\": \"hi\", \"comparator\": \"<=\", \"threshold\": 0.9},\n"
    "  {\"metric\": \"f1max\", \"condition\": \"mount\", \"target\": \"hi\", \"comparator\": \"<\", \"threshold\": 0.9},\n"
    "  {\"metric\": \"f1max\", \"condition\": \"mount\", \"target\": \"diff\", \"baseline\": \"clean\", \"comparator\": \">=\", \"threshold\": -0.3},\n"
    "  {\"metric\": \"f1max\", \"condition\": \"mount\", \"target\": \"diff_lo\", \"baseline\": \"clean\", \"comparator\": \">=\", \"threshold\": -0.3},\n"
    "  {\"metric\": \"f1max\", \"condition\": \"mount\", \"target\": \"diff_hi\", \"baseline\": \"clean\", \"comparator\": \"<\", \"threshold\": -0.1}\n"
    " ]}\n";

static int put(const char *path, const char *text)
{
    struct err e;
    return fileio_write(path, text, strlen(text), &e);
}

static int put_cell(const char *id, const char *q, double v, double lo, double hi)
{
    char path[512], text[1024];
    struct err e;
    snprintf(path, sizeof path, "out/cells/%s", id);
    if (fileio_mkdirs(path, &e)) return -1;
    snprintf(path, sizeof path, "out/cells/%s/poses.csv", id);
    if (fileio_write(path, poses, strlen(poses), &e)) return -1;
    snprintf(path, sizeof path, "out/cells/%s/queries.csv", id);
    if (fileio_write(path, q, strlen(q), &e)) return -1;
    int n = snprintf(text, sizeof text,
                     "{\"format\": \"revisit-result-1\", \"status\": \"ok\", \"counts\": {\"queries\": 6, \"revisits\": 3},\n"
                     " \"metrics\": {\"f1max\": {\"value\": %.17g, \"lo\": %.17g, \"hi\": %.17g}}}\n", v, lo, hi);
    snprintf(path, sizeof path, "out/cells/%s/result.json", id);
    return fileio_write(path, text, (size_t)n, &e);
}

/* Every metric of the table (metrics/pr.h) has its columns in both
 * summary tables. */
static void check_table_columns(void)
{
    static const char *const files[2] = {"out/summary.csv", "out/summary_seeds.csv"};
    static const char *const forms[2] = {",%s,%s_lo,%s_hi", ",%s_mean,%s_sd,%s_min"};
    for (int f = 0; f < 2; f++) {
        char *text = NULL, want[128], desc[160];
        size_t len;
        struct err e;
        if (fileio_read(files[f], 1 << 20, &text, &len, &e)) { CHECK(0, "summary file readable"); continue; }
        for (int m = 0; m < PR_N_METRICS; m++) {
            const char *k = pr_metric_name((enum pr_metric)m);
            snprintf(want, sizeof want, forms[f], k, k, k);
            snprintf(desc, sizeof desc, "%s holds metric %s of the table", files[f], k);
            CHECK(strstr(text, want) != NULL, desc);
        }
        free(text);
    }
}

int main(void)
{
    struct err e;
    struct plan p;
    CHECK(!fileio_write("s.json", scen, strlen(scen), &e), "scenario written");
    if (plan_load(&p, "s.json", &e)) { fprintf(stderr, "%s\n", e.msg); return 1; }
    CHECK(p.n_cells == 3, "one clean cell and two mount seeds");
    CHECK(!sweep_prepare(&p, "out", &e), "sweep folder prepared");
    CHECK(!put_cell("a__clean__s1", q_clean, 1.0, 1.0, 1.0), "clean cell");
    CHECK(!put_cell("a__mount__s1", q_m1, 0.8, 0.6, 0.9), "mount seed 1");

    struct summary s;
    struct summary_verdict *v = NULL;
    size_t n = 0;
    CHECK(!summary_load(&s, &p, "out", &e) && s.n_done == 2, "two cells done");
    CHECK(summary_judge(&s, &v, &n, &e) == -1, "a missing cell makes the check an error");
    CHECK_MSG(e.msg, "incomplete sweep: cell a__mount__s2 has no result", "the message names the missing cell");
    summary_free(&s);

    CHECK(!put_cell("a__mount__s2", q_m2, 2.0 / 3.0, 0.5, 0.8), "mount seed 2");
    CHECK(!summary_load(&s, &p, "out", &e) && s.n_done == 3 && s.n_ok == 3, "three cells done");
    int rc = summary_judge(&s, &v, &n, &e);
    CHECK(rc == 0 && n == 9, "nine verdicts, one per criterion");
    if (rc) { fprintf(stderr, "%s\n", e.msg); return check_done(); }
    static const int want[] = {1, 0, 1, 0, 1, 0, 1, 0, 1};
    for (size_t k = 0; k < 9; k++) {
        char d[64];
        snprintf(d, sizeof d, "criterion %zu passes or fails as worked out", k);
        CHECK(v[k].pass == want[k], d);
    }
    CHECK_NEAR(v[0].value, (0.8 + 2.0 / 3.0) / 2, 1e-12, "mean over seeds");
    CHECK_NEAR(v[2].measured, 0.5, 1e-12, "lo: the lowest lower bound over seeds");
    CHECK_NEAR(v[4].measured, 0.9, 1e-12, "hi: the highest upper bound over seeds");
    CHECK_NEAR(v[6].measured, -4.0 / 15.0, 1e-12, "paired difference, mean over seeds, from the queries");
    CHECK_NEAR(v[7].measured, -1.0 / 3.0, 1e-12, "diff_lo without resampling: the worse seed");
    CHECK_NEAR(v[8].measured, -0.2, 1e-12, "diff_hi without resampling: the better seed");
    CHECK(v[6].seeds == 2, "the paired difference rests on two pairs");
    CHECK(!summary_write_verdicts(&s, v, n, &e), "verdicts.json written");
    char *text;
    size_t len;
    CHECK(!fileio_read("out/verdicts.json", 1 << 20, &text, &len, &e), "verdicts.json readable");
    CHECK(strstr(text, "\"criterion\":") && strstr(text, "\"comparator\":\t\">=\"") && strstr(text, "\"target\":\t\"diff_lo\"") &&
          strstr(text, "\"pass\":\tfalse") && strstr(text, "\"threshold\":") && strstr(text, "\"lo\":"),
          "verdicts.json holds the agreed keys");
    free(text);
    summary_verdicts_free(v, n);

    CHECK(!summary_write(&s, &e), "summary tables written");
    CHECK(!fileio_read("out/summary_seeds.csv", 1 << 20, &text, &len, &e), "summary_seeds.csv readable");
    /* F1max 2/3 and 0.8 over the two seeds: mean, min and max as Python's
     * statistics.mean/min/max print them (repr, shortest round-trip), the
     * sample sd (n - 1) 0.09428090415820639 there, ours one ulp away. */
    CHECK(strstr(text, "\"a\",mount,,,,2,2,0.7333333333333334,0.0942809041582064,0.6666666666666666,0.8,"),
          "seed mean, sd (n - 1), min and max of F1max for the mount group, every digit");
    free(text);
    CHECK(!fileio_read("out/summary.csv", 1 << 20, &text, &len, &e), "summary.csv readable");
    CHECK(strstr(text, "a__mount__s2,\"a\",mount,,,,2,ok,6,3,0.6666666666666666,0.5,0.8,"), "a cell row, every digit");
    free(text);
    check_table_columns();
    summary_free(&s);

    /* A bad poses.csv in a cell is named with its line. */
    static const char *const bad_poses[][2] = {
        {"set,index,t,x,y,z\nmap,0,0,0,0\n", "poses.csv:2: 5 fields, expected 6: set,index,t,x,y,z"},
        {"set,index,t,x,y,z\nmap,0,0,0,0,0\nroad,1,1,10,0,0\n", "poses.csv:3: set 'road' unknown, expected map or query"},
        {"set,index,t,x,y,z\nmap,0,0,0,0,0\nmap,5,1,10,0,0\n", "poses.csv:3: map index '5', expected 1"},
        {"map,0,0,0,0,0\nmap,1,1,10,0,0\n", "poses.csv:1: expected the header 'set,index,t,x,y,z'"},
        {"set,index,t,x,y,z\nmap,0,0,0,0,0xyz\n", "poses.csv:2: field 6 '0xyz' is not a finite number"},
        {"# revisit scan poses, format 2\nset,index,t,x,y,z\nmap,0,0,0,0,0\n", "poses.csv:1: scan poses format 2, expected format 1"},
    };
    for (int b = 0; b < 6; b++) {
        CHECK(!put("out/cells/a__mount__s1/poses.csv", bad_poses[b][0]), "bad poses written");
        CHECK(!summary_load(&s, &p, "out", &e), "the folder still loads");
        CHECK(summary_judge(&s, &v, &n, &e) == -1, "a bad poses.csv stops the paired difference");
        CHECK_MSG(e.msg, bad_poses[b][1], "the message names the line and what was expected");
        summary_free(&s);
    }
    CHECK(!put("out/cells/a__mount__s1/poses.csv", poses), "poses restored");

    /* A failed cell is an error for the criteria that need it. */
    CHECK(!put("out/cells/a__mount__s2/result.json", "{\"format\": \"revisit-result-1\", \"status\": \"failed\", \"error\": \"plugin 'a': crashed\"}"),
          "cell marked failed");
    CHECK(!summary_load(&s, &p, "out", &e) && s.n_failed == 1, "the failed cell is counted");
    CHECK(summary_judge(&s, &v, &n, &e) == -1, "a failed cell makes the check an error");
    CHECK_MSG(e.msg, "cell a__mount__s2 failed (plugin 'a': crashed)", "the message carries the cell's error");
    summary_free(&s);

    /* A cell of another scenario is refused. */
    CHECK(!put("out/cells/a__mount__s2/result.json", "{\"format\": \"revisit-result-1\", \"status\": \"ok\", \"scenario_hash\": \"0000000000000000\"}"),
          "foreign cell");
    CHECK(summary_load(&s, &p, "out", &e) == -1, "a cell with another scenario hash is refused");
    CHECK_MSG(e.msg, "scenario_hash 0000000000000000, expected", "the message names both hashes");
    CHECK(summary_compare(PLAN_GE, NAN, 0) == 0, "a missing value never passes");
    plan_free(&p);
    return check_done();
}
