/* test_plan_load.c: the scenario loader expands the grid and names the JSON
 * path of every bad value. */
#include <stdlib.h>
#include "harness/plan/plan.h"
#include "metrics/pr.h"
#include "tests/check.h"

static const char good[] =
    "{\"format\": \"revisit-sweep-1\", \"name\": \"t\",\n"
    " \"recordings\": {\"map\": \"rec\"},\n"
    " \"protocol\": {\"radius_m\": 4, \"exclude_s\": 20, \"counting\": \"lenient\", \"top_k\": 10},\n"
    " \"bootstrap\": {\"resamples\": 50, \"seed\": 9},\n"
    " \"methods\": [{\"name\": \"scan-context\", \"variants\": [{\"rings\": 20}, {\"rings\": 40, \"sectors\": 60}]},\n"
    "              {\"name\": \"m2dp\"}],\n"
    " \"seeds\": 2,\n"
    " \"conditions\": [{\"name\": \"clean\"},\n"
    "   {\"name\": \"sector\", \"chain\": \"yaw:deg=random\", \"on\": \"query\",\n"
    "    \"axis\": {\"stage\": \"sector\", \"key\": \"width\", \"values\": [0, 90, 180]}},\n"
    "   {\"name\": \"drop\", \"chain\": \"dropout:p=0.3\", \"seeds\": [7]}],\n"
    " \"criteria\": [{\"metric\": \"f1max\", \"method\": \"m2dp\", \"condition\": \"sector\", \"value\": 90,\n"
    "                \"target\": \"diff_lo\", \"baseline\": \"clean\", \"comparator\": \">=\", \"threshold\": -0.1}]}\n";

/* Parse text, expect failure, return the message. */
static const char *bad(const char *text)
{
    static struct err e;
    struct plan p;
    e.msg[0] = 0;
    if (!plan_parse(&p, text, strlen(text), "sw.json", &e)) {
        plan_free(&p);
        return "(accepted)";
    }
    return e.msg;
}

#define HEAD "{\"format\": \"revisit-sweep-1\", \"recordings\": {\"map\": \"r\"}, "
#define M1 "\"methods\": [{\"name\": \"m\"}], "
#define C1 "\"conditions\": [{\"name\": \"c\"}]"

static void check_good(void)
{
    struct plan p;
    struct err e;
    int rc = plan_parse(&p, good, strlen(good), "dir/sw.json", &e);
    CHECK(rc == 0, "a good scenario loads");
    if (rc) { fprintf(stderr, "%s\n", e.msg); return; }
    CHECK(p.n_methods == 3, "two variants and one plain method give three methods");
    CHECK(!strcmp(p.methods[1].label, "scan-context:rings=40,sectors=60"), "variant settings form the label");
    CHECK(p.n_conds == 3, "three conditions");
    /* cells: 3 methods x (clean 1 seed + sector 3 values x 2 seeds + drop 1 seed) = 3 x 8 */
    CHECK(p.n_cells == 24, "grid is methods x (values x seeds) per condition");
    CHECK(p.conds[0].n_seeds == 1, "a condition with nothing random runs one seed");
    CHECK(p.conds[2].seeds[0] == 7, "a condition's own seed list wins");
    CHECK(!strcmp(p.cells[0].id, "scan-context_rings-20__clean__s1"), "cell id of the first cell");
    CHECK(!strcmp(p.cells[3].id, "scan-context_rings-20__sector_width-90__s1"), "cell id of an axis cell");
    CHECK(p.cells[3].chain && !strcmp(p.cells[3].chain, "yaw+sector"),
          "the axis stage is appended to the parsed chain (normalised: random yaw and width 90 are the defaults)");
    CHECK(p.cells[4 + 2].chain && !strcmp(p.cells[4 + 2].chain, "yaw+sector:width=180"), "an axis value off the default");
    CHECK(!strcmp(p.conds[1].chain, "yaw:deg=random") && p.conds[1].parsed, "the condition keeps the chain as written, parsed");
    CHECK(p.cells[0].chain == NULL, "a clean cell has no chain");
    CHECK(!strcmp(p.map_rec, "dir/rec"), "the recording resolves against the scenario's folder");
    CHECK(p.protocol.r_pos_m == 4 && p.protocol.r_neg_m == 4, "radius_m sets both radii");
    CHECK(p.protocol.counting == PROTOCOL_LENIENT && p.protocol.top_k == 10, "protocol keys read");
    CHECK(p.bootstrap == 50 && p.bootstrap_seed == 9, "bootstrap keys read");
    CHECK(p.n_criteria == 1 && p.criteria[0].method == 2 && p.criteria[0].baseline == 0,
          "criterion selects method and baseline by name");
    CHECK(p.criteria[0].target == PLAN_DIFF_LO && p.criteria[0].has_value && p.criteria[0].value == 90,
          "criterion target and axis value read");
    CHECK(strlen(p.hash) == 16, "the scenario hash has 16 hex digits");
    CHECK(plan_find_cell(&p, "m2dp__drop__s7") == 23, "find a cell by id");
    int shard_total = 0;
    for (int i = 0; i < 3; i++)
        for (size_t k = 0; k < p.n_cells; k++) shard_total += plan_in_shard(k, i, 3);
    CHECK(shard_total == 24, "three shards cover every cell exactly once");
    plan_free(&p);
}

static void check_chain_axis(void)
{
    const char *t = HEAD M1 "\"conditions\": [{\"name\": \"s\", \"chain\": \"sector:width=30,at=180+noise:sigma=0.02\","
                    " \"axis\": {\"stage\": \"sector\", \"key\": \"width\", \"values\": [45.5]}}]}";
    struct plan p;
    struct err e;
    CHECK(!plan_parse(&p, t, strlen(t), "sw.json", &e), "axis over a stage already in the chain loads");
    CHECK(!strcmp(p.cells[0].chain, "sector:width=45.5,at=180+noise:sigma=0.02"),
          "the axis value replaces the key in the existing stage");
    CHECK(!strcmp(p.cells[0].id, "m__s_width-45.5__s1"), "axis value appears in the id");
    plan_free(&p);
}

/* Chains are parsed at load; messages quote the chain as the user wrote
 * it, and an axis value is checked against its stage's range. */
static void check_chain_text(void)
{
    CHECK_MSG(bad(HEAD M1 "\"conditions\": [{\"name\": \"s\", \"chain\": \"sectr:at=random\", "
                  "\"axis\": {\"stage\": \"sector\", \"key\": \"width\", \"values\": [0]}}]}"),
              "conditions[0].chain: chain:1: unknown stage 'sectr'", "a bad chain is refused at load");
    CHECK(!strstr(bad(HEAD M1 "\"conditions\": [{\"name\": \"s\", \"chain\": \"sectr:at=random\", "
                      "\"axis\": {\"stage\": \"sector\", \"key\": \"width\", \"values\": [0]}}]}"), "sector:width"),
          "the message shows the chain as written, not one with the axis stage added");
    CHECK_MSG(bad(HEAD M1 "\"conditions\": [{\"name\": \"s\", \"axis\": {\"stage\": \"sector\", \"key\": \"width\", "
                  "\"values\": [90, 400]}}]}"),
              "conditions[0].axis.values[1]: sector.width = 400 is out of range", "an axis value out of range is refused at load");
    CHECK_MSG(bad(HEAD M1 "\"conditions\": [{\"name\": \"s\", \"axis\": {\"stage\": \"sector\", \"key\": \"wide\", "
                  "\"values\": [90]}}]}"),
              "conditions[0].axis.values[0]: stage 'sector' has no parameter 'wide'", "an unknown axis key is refused at load");
    /* A chain longer than 4 KiB as written (spaces between tokens): the axis
     * stage is still set, nothing is cut. */
    size_t pad = 5000;
    char *t = malloc(pad + 512);
    int at = snprintf(t, pad + 512, HEAD M1 "\"conditions\": [{\"name\": \"s\", \"chain\": \"yaw:deg=random");
    memset(t + at, ' ', pad);
    snprintf(t + at + pad, 512, "+dropout:p=0.25\", \"axis\": {\"stage\": \"sector\", \"key\": \"width\", "
             "\"values\": [30, 60]}}]}");
    struct plan p;
    struct err e;
    int rc = plan_parse(&p, t, strlen(t), "sw.json", &e);
    CHECK(rc == 0, "a chain of more than 4 KiB loads");
    if (!rc) {
        CHECK(p.n_cells == 2 && !strcmp(p.cells[1].chain, "yaw+dropout:p=0.25+sector:width=60"),
              "past 4 KiB the axis stage is still set and no stage is cut");
        plan_free(&p);
    }
    free(t);
}

/* "sw.json:LINE:COL: " of the first occurrence of needle in text (1-based,
 * counted here by scanning the text, independently of the loader). */
static const char *where(const char *text, const char *needle)
{
    static char out[64];
    const char *at = strstr(text, needle);
    long line = 1, col = 1;
    for (const char *c = text; at && c < at; c++, col++)
        if (*c == '\n') line++, col = 0;
    snprintf(out, sizeof out, "sw.json:%ld:%ld: ", line, col);
    return out;
}

static void check_where(void)
{
    const char *t = HEAD M1 "\"conditions\": [{\"name\": \"a\"}, {\"name\": \"b\"}, {\"name\": \"c\", "
                    "\"axis\": {\"stage\": \"sector\", \"key\": \"width\", \"values\": [0, 30, 60, \"x\"]}}]}";
    char want[256];
    snprintf(want, sizeof want, "%sconditions[2].axis.values[3]: expected a number", where(t, "\"x\""));
    CHECK_MSG(bad(t), want, "a bad axis value names its line, column and path");
    const char *u = "{\"format\": \"revisit-sweep-1\",\n  \"recordings\": {\"map\": \"r\"},\n"
                    "  \"methods\": [{\"name\": \"m\"}],\n  \"conditions\": [{\"name\": \"c\"}],\n  \"seedz\": 3}\n";
    snprintf(want, sizeof want, "%sseedz: unknown key, expected one of format", where(u, "\"seedz\""));
    CHECK_MSG(bad(u), want, "an unknown key on line 5 is placed at its quote");
    CHECK_MSG(bad(u), "sw.json:5:3: seedz", "line 5, column 3, as counted by hand");
}

/* Each stage of a compound condition alone: conditions appended after the listed ones. */
static void check_stages_alone(void)
{
    const char *t = HEAD M1 "\"conditions\": [{\"name\": \"c\"}, {\"name\": \"mount\", \"on\": \"query\", "
                    "\"chain\": \"sector:width=60,at=180+tilt:pitch=2\", \"stages_alone\": true}]}";
    struct plan p;
    struct err e;
    CHECK(!plan_parse(&p, t, strlen(t), "sw.json", &e), "stages_alone loads");
    CHECK(p.n_conds == 4 && p.n_cells == 4, "two stages add two conditions and their cells");
    CHECK(p.n_conds == 4 && !strcmp(p.conds[2].name, "mount-only-sector") && !strcmp(p.conds[2].chain, "sector:width=60,at=180")
          && p.conds[2].is_part && p.conds[2].part_of == 1 && !strcmp(p.conds[2].on, "query"),
          "the first stage alone keeps its values and side");
    CHECK(p.n_conds == 4 && !strcmp(p.conds[3].name, "mount-only-tilt") && !strcmp(p.conds[3].chain, "tilt:pitch=2"),
          "the second stage alone");
    CHECK(!p.conds[0].is_part && !p.conds[1].is_part, "listed conditions are not parts");
    plan_free(&p);
    CHECK_MSG(bad(HEAD M1 "\"conditions\": [{\"name\": \"a\", \"chain\": \"yaw\", \"stages_alone\": true}]}"),
              "conditions[0].stages_alone: expected a chain of two or more stages and no axis", "one stage cannot be split");
    CHECK_MSG(bad(HEAD M1 "\"conditions\": [{\"name\": \"a\", \"chain\": \"yaw+noise\", \"stages_alone\": 1}]}"),
              "conditions[0].stages_alone: expected true or false", "stages_alone is a boolean");
    CHECK_MSG(bad(HEAD M1 "\"conditions\": [{\"name\": \"a-only-yaw\"}, {\"name\": \"a\", \"chain\": \"yaw+noise\", "
                  "\"stages_alone\": true}]}"),
              "condition 'a-only-yaw' is also the name of a stage run alone", "a clash with a listed name is refused");
}

static void check_bad(void)
{
    check_where();
    CHECK_MSG(bad(HEAD "\"methods\": [{\"name\": \"m\", \"variant\": []}], " C1 "}"),
              "methods[0].variant: unknown key", "an unknown method key is refused");
    CHECK_MSG(bad(HEAD M1 "\"conditions\": [{\"name\": \"c\", \"on\": \"maps\"}]}"),
              "conditions[0].on: 'maps' is not known, expected one of query, map, both", "bad 'on' names choices");
    CHECK_MSG(bad("{\"format\": \"revisit-sweep-2\"}"), "format: 'revisit-sweep-2' is not known",
              "an unknown format is refused");
    CHECK_MSG(bad("{\"format\": \"revisit-sweep-1\",\n \"methods\": [,]}"), "sw.json:2:",
              "a JSON syntax error gives line and column");
    CHECK_MSG(bad("{\"format\": \"revisit-sweep-1\", " M1 C1 "}"), "recordings: missing",
              "the map recording is required");
    CHECK_MSG(bad(HEAD "\"methods\": [], " C1 "}"), "methods: expected a non-empty list", "no methods refused");
    CHECK_MSG(bad(HEAD M1 "\"conditions\": [{\"name\": \"c\"}, {\"name\": \"c\"}]}"),
              "conditions[1].name: condition 'c' given twice", "duplicate condition refused");
    CHECK_MSG(bad(HEAD M1 "\"conditions\": [{\"name\": \"a b\"}]}"), "conditions[0].name: 'a b' expected a plain name",
              "a condition name with a space is refused");
    CHECK_MSG(bad(HEAD "\"protocol\": {\"radius_m\": -1}, " M1 C1 "}"), "protocol.radius_m: -1 is out of range",
              "a negative radius is refused");
    CHECK_MSG(bad(HEAD "\"protocol\": {\"mode\": \"reloc\"}, " M1 C1 "}"), "protocol.mode: 'reloc' needs recordings.query",
              "reloc without a query recording is refused");
    CHECK_MSG(bad(HEAD "\"protocol\": {\"top_k\": 2.5}, " M1 C1 "}"), "protocol.top_k: expected a whole number",
              "a fractional top_k is refused");
    CHECK_MSG(bad(HEAD "\"protocol\": {\"planar\": 1}, " M1 C1 "}"), "protocol.planar: expected true or false",
              "planar must be a boolean");
    CHECK_MSG(bad(HEAD M1 C1 ", \"seeds\": [1, 2, 1]}"), "seeds[2]: seed 1 given twice", "a repeated seed is refused");
    CHECK_MSG(bad(HEAD M1 C1 ", \"seeds\": 0}"), "seeds: 0 is out of range", "zero seeds refused");
    CHECK_MSG(bad(HEAD "\"methods\": [{\"name\": \"m:rings=3\"}], " C1 "}"), "methods[0].name: 'm:rings=3' holds settings",
              "settings in a method name are refused");
    CHECK_MSG(bad(HEAD "\"methods\": [{\"name\": \"m\", \"variants\": [{\"a\": [1]}]}], " C1 "}"),
              "methods[0].variants[0].a: expected a number", "a list as a setting value is refused");
    CHECK_MSG(bad(HEAD "\"methods\": [{\"name\": \"m\"}, {\"name\": \"m\"}], " C1 "}"),
              "methods[1].name: method 'm' given twice", "a repeated method is refused");
    CHECK_MSG(bad(HEAD M1 "\"conditions\": [{\"name\": \"c\", \"axis\": {\"stage\": \"sector\", \"values\": [1]}}]}"),
              "conditions[0].axis.key: missing, expected a string", "an axis needs its key");
    CHECK_MSG(bad(HEAD M1 "\"conditions\": [{\"name\": \"c\", \"axis\": {\"stage\": \"s\", \"key\": \"w\", \"values\": [1, 1]}}]}"),
              "conditions[0].axis.values[1]: value 1 given twice", "a repeated axis value is refused");
    CHECK_MSG(bad(HEAD M1 "\"conditions\": [{\"name\": \"c\", \"axis\": {\"stage\": \"s\", \"key\": \"w\", \"values\": [-0, 5, 0]}}]}"),
              "conditions[0].axis.values[2]: value 0 given twice", "-0 and 0 are one axis value");
    CHECK_MSG(bad(HEAD M1 C1 ", \"seeds\": [4, 1, 2, 3, 2, 4]}"), "seeds[4]: seed 2 given twice",
              "the first repeat in file order is named");
    CHECK_MSG(bad(HEAD M1 "\"conditions\": [{\"name\": \"c\", \"chain\": \"\"}]}"),
              "conditions[0].chain: expected a non-empty string", "an empty chain is refused");
    CHECK_MSG(bad(HEAD M1 C1 ", \"bootstrap\": {\"resamples\": -5}}"), "bootstrap.resamples: -5 is out of range",
              "negative resamples refused");
    CHECK_MSG(bad(HEAD M1 C1 ", \"seeds\": 2, \"seeds\": 3}"), "seeds: key given twice", "a repeated key is refused");
    CHECK_MSG(bad(HEAD "\"methods\": [{\"name\": \"/p/m.so\"}, {\"name\": \"/q/m.so\"}], " C1 "}"),
              "two cells share the id 'm.so__c__s1'", "methods whose cell ids collide are refused");
    CHECK_MSG(bad(HEAD "\"methods\": [{\"name\": \"./.part-m.so\"}], " C1 "}"),
              "method './.part-m.so' gives cell ids that start with '.'", "a cell id naming a hidden folder is refused");
    CHECK_MSG(bad(HEAD "\"methods\": [{\"name\": \"m\", \"variants\": [{\"a b\": 1}]}], " C1 "}"),
              "methods[0].variants[0].a b: expected a plain setting name", "a setting name with a space is refused");
    CHECK_MSG(bad(HEAD "\"methods\": [{\"name\": \"m\", \"variants\": [{\"k\": \"x,y\"}]}], " C1 "}"),
              "methods[0].variants[0].k: expected a number, true/false or a word", "a setting word with a comma is refused");
    CHECK_MSG(bad(HEAD M1 "\"conditions\": [{\"name\": \"c\", \"axis\": {\"stage\": \"sec tor\", \"key\": \"w\", \"values\": [1]}}]}"),
              "conditions[0].axis.stage: expected a plain name", "an axis stage with a space is refused");
    CHECK_MSG(bad(HEAD M1 C1 ", \"criteria\": {}}"), "criteria: expected a list of criteria", "criteria must be a list");
    CHECK_MSG(bad(HEAD M1 "\"conditions\": 3}"), "conditions: expected a non-empty list", "conditions must be a list");
    CHECK_MSG(bad(HEAD "\"methods\": [{\"name\": \"m\", \"variants\": {}}], " C1 "}"),
              "methods[0].variants: expected a non-empty list of setting objects", "variants must be a list");
    CHECK_MSG(bad(HEAD "\"methods\": [{\"name\": \"m\", \"variants\": [3]}], " C1 "}"),
              "methods[0].variants[0]: expected an object of settings", "a variant must be an object");
    CHECK_MSG(bad(HEAD M1 "\"conditions\": [{\"name\": \"c\", \"seeds\": [1.5]}]}"),
              "conditions[0].seeds[0]: expected a whole number", "a fractional seed is refused");
    CHECK_MSG(bad("[1, 2]"), "(top level): expected an object", "a scenario must be an object");
    CHECK_MSG(bad(HEAD "\"protocol\": {\"counting\": \"loose\"}, " M1 C1 "}"),
              "protocol.counting: 'loose' is not known, expected one of strict, lenient", "a bad counting names the choices");
    CHECK_MSG(bad(HEAD "\"protocol\": {\"radius_m\": 3, \"radius_neg_m\": 2}, " M1 C1 "}"), "protocol: ",
              "a wrong-match radius below the revisit radius is refused");
    CHECK_MSG(bad("{\"format\": \"revisit-sweep-1\", \"recordings\": {\"map\": \"r\", \"query\": \"q\"}, "
                  "\"protocol\": {\"mode\": \"loop\"}, " M1 C1 "}"),
              "protocol.mode: 'loop' uses one recording", "loop with a query recording is refused");
}

#define CRIT(x) HEAD M1 "\"conditions\": [{\"name\": \"c\"}, {\"name\": \"s\", \"axis\": {\"stage\": \"sector\", " \
    "\"key\": \"width\", \"values\": [30, 60]}}], \"criteria\": [" x "]}"

static void check_bad_criteria(void)
{
    CHECK_MSG(bad(CRIT("{\"metric\": \"f2\", \"condition\": \"c\", \"comparator\": \">=\", \"threshold\": 1}")),
              "criteria[0].metric: 'f2' is not known", "an unknown metric is refused");
    CHECK_MSG(bad(CRIT("{\"metric\": \"f1max\", \"condition\": \"x\", \"comparator\": \">=\", \"threshold\": 1}")),
              "criteria[0].condition: no condition named 'x'", "an unknown condition is refused");
    CHECK_MSG(bad(CRIT("{\"metric\": \"f1max\", \"condition\": \"c\", \"comparator\": \"=>\", \"threshold\": 1}")),
              "criteria[0].comparator: '=>' is not known, expected one of >=, >, <=, <", "a bad comparator is refused");
    CHECK_MSG(bad(CRIT("{\"metric\": \"f1max\", \"condition\": \"c\", \"comparator\": \">=\"}")),
              "criteria[0].threshold: missing, expected a number", "a threshold is required");
    CHECK_MSG(bad(CRIT("{\"metric\": \"f1max\", \"condition\": \"s\", \"comparator\": \">=\", \"threshold\": 1}")),
              "criteria[0].value: missing, condition 's' sweeps sector.width", "an axis condition needs a value");
    CHECK_MSG(bad(CRIT("{\"metric\": \"f1max\", \"condition\": \"s\", \"value\": 45, \"comparator\": \">=\", \"threshold\": 1}")),
              "criteria[0].value: 45 is not among the values of condition 's'", "an axis value not swept is refused");
    CHECK_MSG(bad(CRIT("{\"metric\": \"f1max\", \"condition\": \"c\", \"target\": \"diff\", \"comparator\": \">=\", \"threshold\": 1}")),
              "criteria[0].baseline: missing", "a paired difference needs a baseline");
    CHECK_MSG(bad(CRIT("{\"metric\": \"f1max\", \"condition\": \"c\", \"baseline\": \"c\", \"comparator\": \">=\", \"threshold\": 1}")),
              "criteria[0].baseline: only used with target diff", "a baseline without diff is refused");
    CHECK_MSG(bad(CRIT("{\"metric\": \"f1max\", \"condition\": \"c\", \"method\": \"sop\", \"comparator\": \">=\", \"threshold\": 1}")),
              "criteria[0].method: no method 'sop' in methods", "an unknown method is refused");
    CHECK_MSG(bad(CRIT("{\"metric\": \"f1max\", \"condition\": \"c\", \"tuned_on\": \"c\", \"comparator\": \">=\", \"threshold\": 1}")),
              "criteria[0].metric: 'f1max' is not a score at an operating point, expected precision", "tuned_on needs an operating-point score");
    CHECK_MSG(bad(CRIT("{\"metric\": \"precision\", \"condition\": \"c\", \"tuned_on\": \"x\", \"comparator\": \">=\", \"threshold\": 1}")),
              "criteria[0].tuned_on: no condition named 'x'", "an unknown tuned_on condition is refused");
    CHECK_MSG(bad(CRIT("{\"metric\": \"precision\", \"condition\": \"c\", \"tuned_on\": \"c\", \"operating_point\": \"precision:2\", \"comparator\": \">=\", \"threshold\": 1}")),
              "criteria[0].operating_point: operating point 'precision:2': expected a number above 0 and at most 1", "a bad operating point is refused");
    CHECK_MSG(bad(CRIT("{\"metric\": \"precision\", \"condition\": \"c\", \"operating_point\": \"f1max\", \"comparator\": \">=\", \"threshold\": 1}")),
              "criteria[0].operating_point: needs tuned_on", "an operating point without tuned_on is refused");
    CHECK_MSG(bad(CRIT("{\"metric\": \"precision\", \"condition\": \"c\", \"tuned_on\": \"c\", \"target\": \"diff\", \"baseline\": \"c\", \"comparator\": \">=\", \"threshold\": 1}")),
              "criteria[0].baseline: not used with tuned_on", "tuned_on differences need no baseline");
    CHECK_MSG(bad(CRIT("{\"metric\": \"precision\", \"condition\": \"c\", \"tuned_on\": \"s\", \"comparator\": \">=\", \"threshold\": 1}")),
              "criteria[0].tuned_on_value: missing, condition 's' sweeps sector.width", "an axis tuned_on needs a value");
    CHECK_MSG(bad(CRIT("{\"metric\": \"recall_at_0\", \"condition\": \"c\", \"comparator\": \">=\", \"threshold\": 1}")),
              "criteria[0].metric: 'recall_at_0' is not known", "recall at zero candidates is refused");
    CHECK_MSG(bad(CRIT("{\"metric\": \"ap\", \"condition\": \"c\", \"comparator\": \">=\", \"threshold\": 1, \"why\": 1}")),
              "criteria[0].why: unknown key", "an unknown criterion key is refused");
    CHECK_MSG(bad(HEAD "\"methods\": [{\"name\": \"m\", \"variants\": [{\"k\": 1}, {\"k\": 2}]}], \"conditions\": [{\"name\": \"c\"}], "
                  "\"criteria\": [{\"metric\": \"ap\", \"method\": \"m\", \"condition\": \"c\", \"comparator\": \">\", \"threshold\": 0}]}"),
              "criteria[0].method: 'm' names 2 variants, expected one full label", "an ambiguous method name is refused");
    CHECK_MSG(bad(CRIT("{\"metric\": \"f1max\", \"condition\": \"c\", \"value\": 30, \"comparator\": \">=\", \"threshold\": 1}")),
              "criteria[0].value: condition 'c' has no axis, expected no value", "a value for a plain condition is refused");
    CHECK(!strcmp(bad(CRIT("{\"metric\": \"recall_at_5\", \"condition\": \"c\", \"comparator\": \"<\", \"threshold\": 1}")),
                  "(accepted)"), "recall_at_K is a known metric");
    CHECK_MSG(bad(CRIT("{\"metric\": \"recall_at_3\", \"condition\": \"c\", \"comparator\": \">=\", \"threshold\": 1}")),
              "criteria[0].metric: 'recall_at_3' is not known, expected f1max, r100p, p_r0, ep, ap",
              "a recall@K no result holds is refused, naming the table's metrics");
}

/* Every metric of the table (metrics/pr.h) is a criterion, and the
 * refusal lists every one of them. */
static void check_metric_table(void)
{
    char text[1024], desc[128], msg[1024];
    snprintf(msg, sizeof msg, "%s", bad(CRIT("{\"metric\": \"nope\", \"condition\": \"c\", \"comparator\": \">=\", \"threshold\": 1}")));
    for (int m = 0; m < PR_N_METRICS; m++) {
        const char *key = pr_metric_name((enum pr_metric)m);
        int op = pr_metric_def((enum pr_metric)m)->at_op;
        snprintf(text, sizeof text, CRIT("{\"metric\": \"%s\", \"condition\": \"c\", \"comparator\": \">=\", \"threshold\": 0}"), key);
        if (op) {   /* a score at the operating point needs the scenario's one */
            snprintf(desc, sizeof desc, "%s is refused without the scenario's operating_point", key);
            CHECK_MSG(bad(text), "is a score at the operating point, expected the scenario's \"operating_point\"", desc);
            char *end = strrchr(text, '}');
            snprintf(end, sizeof text - (size_t)(end - text), ", \"operating_point\": {\"tuned_on\": \"c\"}}");
        }
        snprintf(desc, sizeof desc, "criteria accept the table's metric %s", key);
        CHECK(!strcmp(bad(text), "(accepted)"), desc);
        snprintf(desc, sizeof desc, "the refusal of an unknown metric lists %s", key);
        CHECK_MSG(msg, key, desc);
    }
}

/* Short names: an "alias" names a method in cell ids, criteria and
 * tables; the label keeps the full settings for eval. */
static void check_alias(void)
{
#define AL(methods, crit) HEAD "\"methods\": [" methods "], " C1 ", \"criteria\": [" crit "]}"
    const char *t = AL("{\"name\": \"scan-context\", \"variants\": [{\"alias\": \"sc-fine\", \"rings\": 40}, {\"rings\": 20}]},"
                       " {\"name\": \"m2dp\", \"alias\": \"m2\"}",
                       "{\"metric\": \"ap\", \"method\": \"sc-fine\", \"condition\": \"c\", \"comparator\": \">\", \"threshold\": 0},"
                       " {\"metric\": \"ap\", \"method\": \"scan-context:rings=20\", \"condition\": \"c\", \"comparator\": \">\", \"threshold\": 0}");
    struct plan p;
    struct err e;
    int rc = plan_parse(&p, t, strlen(t), "sw.json", &e);
    CHECK(rc == 0, "a scenario with aliases loads");
    if (rc) { fprintf(stderr, "%s\n", e.msg); return; }
    CHECK(!strcmp(p.methods[0].label, "scan-context:rings=40") && !strcmp(p.methods[0].name, "sc-fine") &&
          p.methods[0].has_alias, "a variant's alias is its name; the label keeps the settings without it");
    CHECK(!strcmp(p.methods[1].name, "scan-context:rings=20") && !p.methods[1].has_alias,
          "a variant without an alias is named by its label");
    CHECK(!strcmp(p.methods[2].label, "m2dp") && !strcmp(p.methods[2].name, "m2"), "a method's own alias");
    CHECK(!strcmp(p.cells[0].id, "sc-fine__c__s1") && !strcmp(p.cells[2].id, "m2__c__s1"), "cell ids use the alias");
    CHECK(!strcmp(p.cells[1].id, "scan-context_rings-20__c__s1"), "cell ids without an alias are unchanged");
    CHECK(p.criteria[0].method == 0 && p.criteria[1].method == 1, "criteria name a method by alias or by label");
    CHECK(strstr(p.criteria[0].text, "of sc-fine on c") != NULL, "a criterion's own text names the alias");
    plan_free(&p);
    CHECK_MSG(bad(AL("{\"name\": \"a\", \"variants\": [{\"alias\": \"x\", \"k\": 1}, {\"alias\": \"x\", \"k\": 2}]}", "")),
              "sw.json:1:123: methods[0].variants[1].alias: two methods are called 'x'", "two variants with one alias are refused");
    CHECK_MSG(bad(AL("{\"name\": \"a\", \"alias\": \"b\"}, {\"name\": \"b\"}", "")),
              "sw.json:1:101: methods[1].name: two methods are called 'b'", "an alias equal to another method's name is refused");
    CHECK_MSG(bad(AL("{\"name\": \"a\", \"variants\": [{\"alias\": \"x\", \"k\": 1}, {\"k\": 2, \"alias\": \"a:k=1\"}]}", "")),
              "methods[0].variants[1].alias: 'a:k=1' is not a plain word", "an alias that is not a plain word is refused");
    CHECK_MSG(bad(AL("{\"name\": \"a\", \"alias\": \"fine tuned\"}", "")),
              "methods[0].alias: 'fine tuned' is not a plain word", "an alias with a space is refused");
    CHECK_MSG(bad(AL("{\"name\": \"a\", \"alias\": \"x\", \"variants\": [{\"k\": 1}]}", "")),
              "methods[0].alias: a method with variants", "an alias beside variants is refused");
    CHECK_MSG(bad(AL("{\"name\": \"a\", \"variants\": [{\"alias\": 5, \"k\": 1}]}", "")),
              "methods[0].variants[0].alias: expected a non-empty string", "a number as alias is refused");
    CHECK_MSG(bad(AL("{\"name\": \"a\", \"alias\": \"x\"}",
                     "{\"metric\": \"ap\", \"method\": \"y\", \"condition\": \"c\", \"comparator\": \">\", \"threshold\": 0}")),
              "criteria[0].method: no method 'y' in methods, expected one of x", "a criterion naming no method is refused, listing the names");
#undef AL
}

/* The scenario's operating point: its keys checked on load. */
static void check_operating_point(void)
{
#define OPS(op) HEAD M1 "\"conditions\": [{\"name\": \"c\"}, {\"name\": \"s\", \"axis\": {\"stage\": \"sector\", " \
    "\"key\": \"width\", \"values\": [30, 60]}}], \"operating_point\": " op "}"
    struct plan p;
    struct err e;
    const char *t = OPS("{\"tuned_on\": \"s\", \"tuned_on_value\": 60, \"rule\": \"recall:0.5\"}");
    CHECK(!plan_parse(&p, t, strlen(t), "sw.json", &e) && p.op.on && p.op.tuned_on == 1 && p.op.has_value &&
          p.op.value == 60 && p.op.rule.rule == OPPOINT_RECALL && p.op.rule.target == 0.5, "an operating point loads");
    plan_free(&p);
    t = OPS("{\"tuned_on\": \"c\"}");
    CHECK(!plan_parse(&p, t, strlen(t), "sw.json", &e) && p.op.rule.rule == OPPOINT_F1MAX, "the rule defaults to f1max");
    plan_free(&p);
    CHECK_MSG(bad(OPS("{\"tuned_on\": \"x\"}")), "operating_point.tuned_on: no condition named 'x'", "an unknown tuned_on is refused");
    CHECK_MSG(bad(OPS("{\"tuned_on\": \"s\"}")), "operating_point.tuned_on_value: missing, condition 's' sweeps sector.width",
              "an axis tuned_on needs its value");
    CHECK_MSG(bad(OPS("{\"tuned_on\": \"c\", \"rule\": \"precision:7\"}")), "operating_point.rule: operating point 'precision:7'",
              "a bad rule is refused");
    CHECK_MSG(bad(OPS("{\"tuned_on\": \"c\", \"why\": 1}")), "operating_point.why: unknown key", "an unknown key is refused");
    CHECK_MSG(bad(OPS("{\"rule\": \"f1max\"}")), "operating_point.tuned_on: missing", "tuned_on is required");
#undef OPS
}

int main(void)
{
    check_good();
    check_metric_table();
    check_alias();
    check_operating_point();
    check_chain_axis();
    check_chain_text();
    check_stages_alone();
    check_bad();
    check_bad_criteria();
    char num[64];
    plan_format_number(num, sizeof num, 0.1);
    CHECK(!strcmp(num, "0.1"), "numbers print in their shortest form");
    int i, n;
    struct err e;
    CHECK(!plan_parse_shard("2/3", &i, &n, &e) && i == 2 && n == 3, "shard 2/3 parses");
    CHECK(plan_parse_shard("3/3", &i, &n, &e) == -1, "shard 3/3 is refused");
    CHECK_MSG(e.msg, "shard '3/3' is not valid, expected I/N", "shard message names the form");
    return check_done();
}
