/* test_report_data.c: reading result.json / poses / queries / matrix files,
 * seed aggregation, per-query outcomes, revisit kinds and histograms.  The
 * files it writes go into a temporary folder of its own, removed at the
 * end, never into the folder it was started from. */
#include <math.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>
#include <unistd.h>

#include "check.h"
#include "harness/base/fileio.h"
#include "reports/rdata.h"
#include "reports/report_int.h"
#include "reports/rstat.h"

static const char good_json[] =
    "{\"format\": \"revisit-result-1\", \"software\": \"revisit 0.1.0\", \"command\": \"revisit eval x\",\n"
    " \"scenario_hash\": \"ab12\", \"method\": {\"name\": \"m\", \"label\": \"m:k=1\"},\n"
    " \"condition\": {\"name\": \"sector-90\", \"chain\": \"sector:width=90\", \"on\": \"query\", \"seed\": 7,\n"
    "   \"axis\": {\"stage\": \"sector\", \"key\": \"width\", \"value\": 90}},\n"
    " \"protocol\": {\"mode\": \"reloc\", \"r_pos_m\": 4, \"r_neg_m\": 6, \"exclusion_s\": 20, \"planar\": true,\n"
    "   \"counting\": \"lenient\", \"top_k\": 10},\n"
    " \"counts\": {\"queries\": 100, \"revisits\": 40},\n"
    " \"metrics\": {\"f1max\": {\"value\": 0.8, \"lo\": 0.7, \"hi\": 0.9, \"threshold\": 0.31},\n"
    "   \"r100p\": {\"value\": 0.2}},\n"
    " \"curve\": {\"threshold\": [0.1, 0.2], \"precision\": [1, 0.5], \"recall\": [0.25, 0.5]},\n"
    " \"unknown_key\": [1, 2, 3], \"status\": \"ok\"}\n";

static void parse_checks(void)
{
    struct rdata_cell c;
    struct err e = {{0}};
    memset(&c, 0, sizeof c);
    CHECK(rdata_cell_parse(good_json, "r.json", &c, &e) == 0, "a complete result.json parses");
    CHECK(!strcmp(c.label, "m:k=1") && !strcmp(c.cond, "sector-90") && c.seed == 7, "method label, condition, seed read");
    CHECK(c.has_axis && !strcmp(c.axis_stage, "sector") && c.axis_value == 90, "the swept axis is read");
    CHECK(c.proto.mode == PROTOCOL_RELOC && c.proto.r_pos_m == 4 && c.proto.r_neg_m == 6 && c.proto.planar &&
          c.proto.counting == PROTOCOL_LENIENT, "the protocol is read");
    CHECK(c.m[RDATA_F1MAX].present && c.m[RDATA_F1MAX].threshold == 0.31, "F1max and its threshold read");
    CHECK(c.m[RDATA_R100P].present && isnan(c.m[RDATA_R100P].lo), "a metric without an interval has NaN bounds");
    CHECK(!c.m[RDATA_EP].present, "an absent metric reads as absent");
    CHECK(c.curve_n == 2 && c.curve_r[1] == 0.5 && c.curve_p[1] == 0.5, "the PR curve is read");
    CHECK(c.ok, "status ok");
    rdata_cell_free(&c);

    memset(&c, 0, sizeof c);
    CHECK(rdata_cell_parse("{\n\"format\": \"revisit-result-1\",\n \"method\": {,}}", "r.json", &c, &e) < 0,
          "broken JSON is refused");
    CHECK_MSG(e.msg, "r.json:3:", "broken JSON is placed at its line");
    CHECK(rdata_cell_parse("{\"format\": \"other\", \"method\": {}}", "r.json", &c, &e) < 0, "a foreign format is refused");
    CHECK_MSG(e.msg, "format is 'other', expected 'revisit-result-1'", "the foreign format is named");
    CHECK(rdata_cell_parse("{\"format\": \"revisit-result-1\"}", "r.json", &c, &e) < 0, "a result without method is refused");
    CHECK_MSG(e.msg, "no method object", "the missing method is named");
    CHECK(rdata_cell_parse("{\"format\": \"revisit-result-1\", \"method\": {}, \"curve\": {\"threshold\": [1],"
                           " \"precision\": [1, 2], \"recall\": [1]}}", "r.json", &c, &e) < 0,
          "curve arrays of different length are refused");
    CHECK_MSG(e.msg, "curve arrays differ in length", "the curve mismatch is explained");
    CHECK(rdata_cell_parse("{\"format\": \"revisit-result-1\", \"method\": {}, \"curve\": {\"threshold\": [\"a\"],"
                           " \"precision\": [1], \"recall\": [1]}}", "r.json", &c, &e) < 0,
          "a non-number in the curve is refused");
    CHECK_MSG(e.msg, "curve.threshold[0] is not a number", "the bad curve entry is placed");
}

static void put(const char *path, const char *text)
{
    struct err e;
    fileio_write(path, text, strlen(text), &e);
}

static void file_checks(void)
{
    struct err e = {{0}};
    struct rdata_poses p;
    put("p1.csv", "# revisit scan poses, format 1\nset,index,t,x,y,z\nmap,0,0,1,2,3\nmap,1,1,4,5,6\nquery,0,9,7,8,9\n");
    CHECK(rdata_poses_load("p1.csv", &p, &e) == 0, "poses.csv with both sets loads");
    CHECK(p.map.n == 2 && p.map.has[0] && p.map.has[1] && p.map.x[1] == 4, "map poses are indexed by scan");
    CHECK(p.query.n == 1 && p.query.z[0] == 9, "query poses are kept apart");
    rdata_poses_free(&p);
    put("p2.csv", "set,index,t,x,y,z\nmap,0,0,1,2,3\nmap,1,0,1,zz,3\n");
    CHECK(rdata_poses_load("p2.csv", &p, &e) < 0, "a non-number pose field is refused");
    CHECK_MSG(e.msg, "p2.csv:3: field 5 'zz' is not a finite number", "the bad pose field is placed by line");
    put("p3.csv", "set,index,t,x,y,z\nside,0,0,1,2,3\n");
    CHECK(rdata_poses_load("p3.csv", &p, &e) < 0, "an unknown set is refused");
    CHECK_MSG(e.msg, "set 'side' unknown, expected map or query", "the unknown set is named");

    struct rdata_queries q;
    put("q1.csv", "# c\nquery,cand,dist\n5,3,0.25,4,0.5\n6\n7\n");
    CHECK(rdata_queries_load("q1.csv", &q, &e) == 0, "queries.csv loads");
    CHECK(q.n == 3 && q.q[0].query == 5 && q.q[0].cand == 3 && q.q[0].dist == 0.25, "the top candidate is kept");
    CHECK(q.q[1].cand == -1 && q.q[2].cand == -1, "a query without candidates has cand -1");
    rdata_queries_free(&q);
    put("q2.csv", "5,3,x\n");
    CHECK(rdata_queries_load("q2.csv", &q, &e) < 0, "a bad distance is refused");
    CHECK_MSG(e.msg, "q2.csv:1: field 3: distance 'x' is not a finite number", "the bad distance is placed");

    struct matrix_csv m;
    put("m1.csv", "# revisit distance matrix, format 1\n#rows,0,4\n#cols,1,2,3\n0.1,0.2,0.3\n0.4,nan,0.6\n");
    CHECK(matrix_csv_read("m1.csv", &m, &e) == 0, "matrix.csv loads");
    CHECK(m.rows == 2 && m.cols == 3 && m.row_idx[1] == 4 && m.col_idx[2] == 3 && m.d[5] == 0.6 && isnan(m.d[4]),
          "indices and distances are read, nan kept");
    matrix_csv_free(&m);
    put("m2.csv", "#rows,0,4\n#cols,1,2,3\n0.1,0.2\n0.4,0.5,0.6\n");
    CHECK(matrix_csv_read("m2.csv", &m, &e) < 0, "a short matrix row is refused");
    CHECK_MSG(e.msg, "m2.csv:3: 2 distances, expected 3", "the short row is placed");
    put("m3.csv", "#cols,1\n");
    CHECK(matrix_csv_read("m3.csv", &m, &e) < 0, "a matrix without #rows is refused");
    CHECK_MSG(e.msg, "does not start with '#rows'", "the missing #rows line is named");
}

/* Each handled bad input: the call fails and the message says what and where. */
static void message_checks(void)
{
    struct err e = {{0}};
    struct rdata_cell c;
    memset(&c, 0, sizeof c);
    CHECK(rdata_cell_parse("[1]", "r.json", &c, &e) < 0, "a top-level list is refused");
    CHECK_MSG(e.msg, "r.json:1:1: top level is not an object", "the top-level list is named");
    CHECK(rdata_cell_parse("{\"format\": \"revisit-result-1\", \"method\": {}, \"curve\": {\"threshold\": 1}}",
                           "r.json", &c, &e) < 0, "a curve that is not arrays is refused");
    CHECK_MSG(e.msg, "curve.threshold is not an array", "the non-array curve is named");

    struct rdata_poses p;
    const struct { const char *text, *frag, *desc; } poses[] = {
        {"set,index,t,x,y,z\nmap 0 0 1 2 3\n", "p.csv:2: 1 fields, expected 6", "a pose row without commas"},
        {"set,index,t,x,y,z\nmap,-4,0,1,2,3\n", "p.csv:2: map index '-4', expected 0", "a negative scan index"},
        {"set,index,t,x,y,z\nmap,0,0,1,2,3\nmap,2,0,1,2,3\n", "p.csv:3: map index '2', expected 1", "a gap in the scan indices"},
        {"# only a comment\nset,index,t,x,y,z\n", "p.csv: no pose rows", "a pose file without rows"},
        {"map,0,0,1,2,3\n", "p.csv:1: expected the header 'set,index,t,x,y,z'", "a pose file without its header"},
        {"set,index,t,x,y,z\nmap,0,0,1,2,3,xyz\n", "p.csv:2: 7 fields, expected 6", "a pose row with a trailing field"},
        {"# revisit per-query results, format 1\nset,index,t,x,y,z\n", "p.csv:1: a per-query results file", "a queries file as poses"},
    };
    for (size_t k = 0; k < sizeof poses / sizeof poses[0]; k++) {
        put("p.csv", poses[k].text);
        CHECK(rdata_poses_load("p.csv", &p, &e) < 0, poses[k].desc);
        CHECK_MSG(e.msg, poses[k].frag, poses[k].desc);
    }
    struct rdata_queries q;
    const struct { const char *text, *frag, *desc; } queries[] = {
        {"1,x,0.5\n", "q.csv:1: field 2: candidate 'x' is not a whole number", "a non-numeric candidate"},
        {"4,y,0.5\n", "q.csv:1: field 2: candidate 'y' is not a whole number", "a non-numeric candidate"},
        {"# revisit per-query results, format 7\n4,1,0.5\n", "q.csv:1: per-query results format 7, expected format 1", "a queries file of another version"},
    };
    for (size_t k = 0; k < sizeof queries / sizeof queries[0]; k++) {
        put("q.csv", queries[k].text);
        CHECK(rdata_queries_load("q.csv", &q, &e) < 0, queries[k].desc);
        CHECK_MSG(e.msg, queries[k].frag, queries[k].desc);
    }
    struct matrix_csv m;
    const struct { const char *text, *frag, *desc; } mats[] = {
        {"#rows,1,x\n#cols,1\n0\n", "m.csv:1: index 2 is not a whole number", "a bad row index"},
        {"#rows,1;2\n#cols,1\n0\n", "m.csv:1: unexpected text ';2'", "a bad separator in the index line"},
        {"#rows\n#cols,1\n", "m.csv: empty matrix", "a matrix without rows"},
        {"#rows,1\n#cols,1\n0.5\n0.6\n", "m.csv:4: more than 1 distance rows", "an extra distance row"},
        {"#rows,1\n#cols,1\n0.5,0.7\n", "m.csv:3: more than 1 distances", "an over-long distance row"},
        {"#rows,1,2\n#cols,1\n0.5\n", "m.csv: 1 distance rows, expected 2", "a missing distance row"},
        {"#rows,1\n#cols,1\nabc\n", "m.csv:3: distance 1 is not a number", "a non-numeric distance"},
        {"# revisit distance matrix, format 3\n#rows,1\n#cols,1\n0\n", "m.csv:1: distance matrix format 3, expected format 1",
         "a matrix of another version"},
    };
    for (size_t k = 0; k < sizeof mats / sizeof mats[0]; k++) {
        put("m.csv", mats[k].text);
        CHECK(matrix_csv_read("m.csv", &m, &e) < 0, mats[k].desc);
        CHECK_MSG(e.msg, mats[k].frag, mats[k].desc);
    }
}

/* Folder-level refusals: an empty cells/ and broken verdicts files. */
static void folder_checks(void)
{
    struct err e = {{0}};
    struct rdata_set s;
    fileio_mkdirs("sw/cells/a", &e);
    CHECK(rdata_load("sw", &s, &e) < 0, "a sweep folder without any cell result is refused");
    CHECK_MSG(e.msg, "no cell holds a result.json", "the empty sweep is explained");
    put("sw/cells/a/result.json", good_json);
    CHECK(rdata_load("sw", &s, &e) == 0 && s.is_sweep && s.n == 1 && !strcmp(s.cells[0].id, "a"),
          "a sweep with one cell loads");
    rdata_free(&s);
    const struct { const char *text, *frag, *desc; } v[] = {
        {"[{\"criterion\": 1,}]", "verdicts.json:1:", "broken verdicts JSON is placed"},
        {"{\"x\": 1}", "no list of criteria", "verdicts without a list are refused"},
        {"[3]", "criterion 1 is not an object", "a criterion that is not an object is refused"},
    };
    for (size_t k = 0; k < sizeof v / sizeof v[0]; k++) {
        put("sw/verdicts.json", v[k].text);
        CHECK(rdata_load("sw", &s, &e) < 0, v[k].desc);
        CHECK_MSG(e.msg, v[k].frag, v[k].desc);
    }
    put("sw/verdicts.json", "[{\"criterion\": \"c\", \"condition\": \"sector\", \"axis_value\": 90, "
                            "\"value\": 0.7, \"threshold\": 0.5, \"comparator\": \">=\", \"pass\": true}]");
    CHECK(rdata_load("sw", &s, &e) == 0 && s.n_verdicts == 1, "a verdicts list loads");
    CHECK(s.n_verdicts == 1 && !strcmp(s.verdicts[0].cond, "sector at 90") && s.verdicts[0].pass &&
          s.verdicts[0].measured == 0.7, "a verdict keeps its axis value, and measured falls back to value");
    rdata_free(&s);
}

int main(void)
{
    char home[4096], scratch[] = "/tmp/test_report_data.XXXXXX";
    struct err e;
    if (!getcwd(home, sizeof home) || !mkdtemp(scratch) || chdir(scratch)) {
        perror("test_report_data: a temporary folder to work in");
        return 1;
    }
    parse_checks();
    file_checks();
    message_checks();
    folder_checks();
    CHECK(chdir(home) == 0 && fileio_remove_tree(scratch, &e) == 0, "the temporary folder is removed");
    return check_done();
}
