/* test_report_data.c: reading result.json / poses / queries / matrix files,
 * seed aggregation, per-query outcomes, revisit kinds and histograms. */
#include <math.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>

#include "check.h"
#include "harness/fileio.h"
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
    put("p1.csv", "set,index,t,x,y,z\nmap,0,0,1,2,3\nmap,2,1,4,5,6\nquery,0,9,7,8,9\n");
    CHECK(rdata_poses_load("p1.csv", &p, &e) == 0, "poses.csv with both sets loads");
    CHECK(p.map.n == 3 && p.map.has[0] && !p.map.has[1] && p.map.has[2] && p.map.x[2] == 4,
          "map poses are indexed by scan, gaps marked");
    CHECK(p.query.n == 1 && p.query.z[0] == 9, "query poses are kept apart");
    rdata_poses_free(&p);
    put("p2.csv", "set,index,t,x,y,z\nmap,0,0,1,2,3\nmap,1,0,1,zz,3\n");
    CHECK(rdata_poses_load("p2.csv", &p, &e) < 0, "a non-number pose field is refused");
    CHECK_MSG(e.msg, "p2.csv:3: field 5 is not a finite number", "the bad pose field is placed by line");
    put("p3.csv", "side,0,0,1,2,3\n");
    CHECK(rdata_poses_load("p3.csv", &p, &e) < 0, "an unknown set is refused");
    CHECK_MSG(e.msg, "set 'side' unknown, expected map or query", "the unknown set is named");

    struct rdata_queries q;
    put("q1.csv", "# c\nquery,cand,dist\n5,3,0.25,4,0.5\n6\n7,\n");
    CHECK(rdata_queries_load("q1.csv", &q, &e) == 0, "queries.csv loads");
    CHECK(q.n == 3 && q.q[0].query == 5 && q.q[0].cand == 3 && q.q[0].dist == 0.25, "the top candidate is kept");
    CHECK(q.q[1].cand == -1 && q.q[2].cand == -1, "a query without candidates has cand -1");
    rdata_queries_free(&q);
    put("q2.csv", "5,3,x\n");
    CHECK(rdata_queries_load("q2.csv", &q, &e) < 0, "a bad distance is refused");
    CHECK_MSG(e.msg, "q2.csv:1: bad distance", "the bad distance is placed");

    struct rdata_matrix m;
    put("m1.csv", "#rows,0,4\n#cols,1,2,3\n0.1,0.2,0.3\n0.4,nan,0.6\n");
    CHECK(rdata_matrix_load("m1.csv", &m, &e) == 0, "matrix.csv loads");
    CHECK(m.rows == 2 && m.cols == 3 && m.row_idx[1] == 4 && m.col_idx[2] == 3 && m.d[5] == 0.6 && isnan(m.d[4]),
          "indices and distances are read, nan kept");
    rdata_matrix_free(&m);
    put("m2.csv", "#rows,0,4\n#cols,1,2,3\n0.1,0.2\n0.4,0.5,0.6\n");
    CHECK(rdata_matrix_load("m2.csv", &m, &e) < 0, "a short matrix row is refused");
    CHECK_MSG(e.msg, "m2.csv:3: 2 distances, expected 3", "the short row is placed");
    put("m3.csv", "#cols,1\n");
    CHECK(rdata_matrix_load("m3.csv", &m, &e) < 0, "a matrix without #rows is refused");
    CHECK_MSG(e.msg, "does not start with '#rows'", "the missing #rows line is named");
}

int main(void)
{
    parse_checks();
    file_checks();
    return check_done();
}
