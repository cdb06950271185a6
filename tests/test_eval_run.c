/* test_eval_run.c: eval_run end to end on a small synthetic recording:
 * the results folder, the descriptor cache (reuse, corruption), yaw
 * invariance, the external Python example, reloc mode and input errors. */
#include <cjson/cJSON.h>
#include <math.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>

#include "harness/run/eval.h"
#include "harness/base/fileio.h"
#include "harness/results/queries_csv.h"
#include "tests/check.h"
#include "tests/evalrec.h"

static int run(const char *method, const char *chain, const char *out, const char *cache, int boot,
               uint64_t seed, struct eval_summary *sum, struct err *e)
{
    struct eval_spec s;
    eval_spec_defaults(&s);
    s.map_rec = "rec";
    s.method = method;
    s.chain = chain;
    s.on = chain ? "both" : NULL;
    s.seed = seed;
    s.out_dir = out;
    s.cache_dir = cache;
    s.bootstrap = boot;
    s.top_c = 10;
    s.jobs = 2;
    s.quiet = 1;
    int rc = eval_run(&s, sum, e);
    if (rc) fprintf(stderr, "eval: %s\n", e->msg);
    return rc;
}

static char *slurp(const char *path)
{
    char *b = NULL;
    size_t n;
    struct err e;
    return fileio_read(path, 1 << 26, &b, &n, &e) ? NULL : b;
}

static void test_folder(void)
{
    char *text = slurp("o1/result.json");
    cJSON *j = text ? cJSON_Parse(text) : NULL;
    CHECK(j != NULL, "result.json is JSON");
    if (!j) return;
    cJSON *m = cJSON_GetObjectItem(j, "metrics"), *f1 = cJSON_GetObjectItem(m, "f1max");
    CHECK(!strcmp(cJSON_GetObjectItem(j, "format")->valuestring, "revisit-result-1"), "format is revisit-result-1");
    CHECK(!strcmp(cJSON_GetObjectItem(j, "status")->valuestring, "ok"), "status ok");
    CHECK(!strcmp(cJSON_GetObjectItem(cJSON_GetObjectItem(j, "method"), "label")->valuestring,
                  "scan-context:rings=20,sectors=60,max_range=80,lift=2"), "the method label spells out settings");
    double v = cJSON_GetObjectItem(f1, "value")->valuedouble, lo = cJSON_GetObjectItem(f1, "lo")->valuedouble,
           hi = cJSON_GetObjectItem(f1, "hi")->valuedouble;
    CHECK(lo <= v && v <= hi && hi > lo, "F1max carries a bootstrap interval around it");
    CHECK(cJSON_GetArraySize(cJSON_GetObjectItem(cJSON_GetObjectItem(j, "curve"), "precision")) > 1, "the curve is written");
    CHECK(cJSON_GetObjectItem(cJSON_GetObjectItem(j, "counts"), "queries")->valuedouble == 240, "240 queries scored");
    cJSON_Delete(j);
    free(text);
    struct queries_csv q;
    struct err e;
    CHECK(queries_csv_read("o1/queries.csv", &q, &e) == 0 && q.n_rows == 240, "queries.csv reads back, one row per query");
    if (q.n_rows == 240) {
        CHECK(q.off[1] == 0, "the first query (no earlier scan) has no candidate");
        CHECK(q.off[240] - q.off[239] == 25, "a late query lists top-K = 25 candidates");
        queries_csv_free(&q);
    }
    char *poses = slurp("o1/poses.csv"), *mx = slurp("o1/matrix.csv");
    size_t lines = 0;
    for (char *p = poses; p && *p; p++) lines += *p == '\n';
    static const char pose_head[] = "# revisit scan poses, format 1\nset,index,t,x,y,z\nmap,0,";
    static const char mx_head[] = "# revisit distance matrix, format 1\n#rows,0,";
    CHECK(poses && !strncmp(poses, pose_head, strlen(pose_head)) && lines == 482,
          "poses.csv: format line, header, map and query rows");
    CHECK(mx && !strncmp(mx, mx_head, strlen(mx_head)) && strstr(mx, "\n#cols,0,"),
          "matrix.csv: format line, then the row and column indices");
    free(poses);
    free(mx);
}

/* Flip one byte in the middle of the only cache file. */
static int corrupt_cache(void)
{
    FILE *p = popen("ls cache/desc-*.bin", "r");
    char path[512] = "";
    if (!p || !fgets(path, sizeof path, p)) return -1;
    pclose(p);
    path[strcspn(path, "\n")] = 0;
    FILE *f = fopen(path, "r+b");
    if (!f) return -1;
    fseek(f, 0, SEEK_END);
    long n = ftell(f);
    fseek(f, n / 2, SEEK_SET);
    int c = fgetc(f);
    fseek(f, n / 2, SEEK_SET);
    fputc(c ^ 0x10, f);
    fclose(f);
    return 0;
}

static void test_cache(void)
{
    struct eval_summary a, b, c;
    struct err e;
    CHECK(run("scan-context", NULL, "o1", "cache", 200, 1, &a, &e) == 0, "scan-context runs in loop mode");
    CHECK(a.described == 240 && a.cache_hits == 0, "the first run describes every scan");
    test_folder();
    CHECK(run("scan-context", NULL, "o2", "cache", 200, 1, &b, &e) == 0, "the second run works");
    CHECK(b.described == 0 && b.cache_hits == 1, "an identical second run describes nothing: the cache is read");
    char *q1 = slurp("o1/queries.csv"), *q2 = slurp("o2/queries.csv");
    CHECK(q1 && q2 && !strcmp(q1, q2) && a.f1max == b.f1max && a.ap == b.ap, "results from the cache are identical");
    CHECK(corrupt_cache() == 0, "a cache file can be damaged for the test");
    CHECK(run("scan-context", NULL, "o3", "cache", 200, 1, &c, &e) == 0, "a run over a damaged cache works");
    CHECK(c.cache_rejected == 1 && c.described == 240, "the damaged file is detected by its checksum and rebuilt");
    char *q3 = slurp("o3/queries.csv");
    CHECK(q3 && q1 && !strcmp(q1, q3), "the rebuilt descriptors give the same results");
    free(q1);
    free(q2);
    free(q3);
}

/* Fact of the trade (common practice, no source): a method built to be
 * yaw-invariant changes F1max by less than 1% when every scan is turned by a
 * random yaw. */
static void test_yaw(const char *method)
{
    struct eval_summary base, turned;
    struct err e;
    char msg[256];
    if (run(method, NULL, "oy", NULL, 0, 1, &base, &e)) {
        CHECK(0, "the unperturbed run works");
        return;
    }
    for (uint64_t seed = 1; seed <= 2; seed++) {
        if (run(method, "yaw:deg=random", "oy", NULL, 0, seed, &turned, &e)) {
            CHECK(0, "the turned run works");
            return;
        }
        double rel = fabs(turned.f1max - base.f1max) / base.f1max;
        snprintf(msg, sizeof msg, "%s: random yaw (seed %llu) changes F1max by %.2f%% (< 1%%): %.4f -> %.4f",
                 method, (unsigned long long)seed, 100 * rel, base.f1max, turned.f1max);
        CHECK(rel < 0.01, msg);
    }
    CHECK(base.f1max > 0.3 && base.f1max < 1, "the recording is neither trivial nor hopeless for this method");
}

static void test_external(void)
{
    const char *root = getenv("REVISIT_ROOT");
    char prog[4096];
    snprintf(prog, sizeof prog, "%s/harness/external/range_height.py", root ? root : ".");
    struct eval_summary c, py;
    struct err e;
    CHECK(run("range-height", "noise:sigma=0.05", "oc", NULL, 0, 3, &c, &e) == 0, "range-height runs with a chain");
    CHECK(run(prog, "noise:sigma=0.05", "op", NULL, 0, 3, &py, &e) == 0, "the Python example runs in eval");
    CHECK(c.f1max == py.f1max && c.ap == py.ap && c.r100p == py.r100p, "Python and C give the same scores");
    char *a = slurp("oc/queries.csv"), *b = slurp("op/queries.csv");
    CHECK(a && b && !strcmp(a, b), "Python and C give the same queries.csv");
    free(a);
    free(b);
}

static void test_reloc_and_errors(void)
{
    struct err e;
    struct eval_summary sum;
    CHECK(evalrec_make("rec2", 80, 1, 0.6, 0.3, &e) == 0, "a second recording for reloc");
    struct eval_spec s;
    eval_spec_defaults(&s);
    s.map_rec = "rec";
    s.query_rec = "rec2";
    s.protocol.mode = PROTOCOL_RELOC;
    s.method = "range-height";
    s.chain = "dropout:p=0.2";
    s.out_dir = "or";
    s.bootstrap = 0;
    s.quiet = 1;
    CHECK(eval_run(&s, &sum, &e) == 0, "reloc mode runs with a chain on the queries");
    CHECK(sum.queries == 80 && sum.revisits == 80, "every reloc query has a map scan within 3 m");
    s.protocol.mode = PROTOCOL_LOOP;
    CHECK(eval_run(&s, &sum, &e) == -1, "loop mode with a query recording is refused");
    CHECK_MSG(e.msg, "mode loop does not take a query recording", "the mode error says why");
    s.protocol.mode = PROTOCOL_RELOC;
    s.chain = "dropout:p=7";
    CHECK(eval_run(&s, &sum, &e) == -1, "a bad chain is refused");
    CHECK_MSG(e.msg, "chain:", "the chain error points into the chain");
    s.chain = NULL;
    s.isolate = 1;
    s.out_dir = "iso";
    CHECK(eval_run(&s, &sum, &e) == 0, "an isolated run works");
    s.out_dir = "plain";
    s.isolate = 0;
    struct eval_summary plain;
    CHECK(eval_run(&s, &plain, &e) == 0, "the same run in process works");
    char *qi = slurp("iso/queries.csv"), *qp = slurp("plain/queries.csv");
    CHECK(qi && qp && !strcmp(qi, qp) && sum.f1max == plain.f1max,
          "isolated and in-process runs give identical results");
    free(qi);
    free(qp);
    s.out_dir = NULL;
    CHECK(eval_run(&s, &sum, &e) == -1, "a spec without an output folder is refused");
    CHECK_MSG(e.msg, "a map recording, a method and an output folder are needed", "the missing-field message");
    s.out_dir = "or";
    s.method = "no-such-method";
    CHECK(eval_run(&s, &sum, &e) == -1, "an unknown method is refused");
    CHECK_MSG(e.msg, "method 'no-such-method' not found", "the unknown method is named");
    char *res = slurp("or/result.json");
    CHECK(res != NULL, "the good reloc run left result.json");
    free(res);
}

int main(void)
{
    struct err e;
    if (evalrec_make("rec", 80, 3, 1.2, 0.3, &e)) {
        fprintf(stderr, "%s\n", e.msg);
        CHECK(0, "the synthetic recording is written");
        return check_done();
    }
    test_cache();
    test_yaw("scan-context");
    test_external();
    test_reloc_and_errors();
    return check_done();
}
