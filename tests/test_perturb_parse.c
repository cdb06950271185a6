/* test_perturb_parse.c: the chain parser, its error messages, the normalised
 * text, the stage table and the query/map/both target. */
#include <stdlib.h>
#include <string.h>

#include "harness/base/side.h"
#include "perturb/chain.h"
#include "tests/check.h"

/* Parse text, expect failure with a message holding frag and a caret under
 * 1-based position pos. */
static void bad(const char *text, size_t pos, const char *frag, const char *desc)
{
    struct chain *ch = (struct chain *)1;
    struct err e = {{0}};
    int rc = chain_parse(text, &ch, &e);
    CHECK(rc == -1 && ch == NULL, desc);
    CHECK_MSG(e.msg, frag, desc);
    char where[32];
    snprintf(where, sizeof where, "chain:%zu: ", pos);
    CHECK(!strncmp(e.msg, where, strlen(where)), desc);
    /* the caret line: two spaces, pos-1 spaces, '^' (short texts are shown whole) */
    if (strlen(text) > 60) return;
    const char *caret = strrchr(e.msg, '\n');
    CHECK(caret && strlen(caret + 1) == pos + 2 && caret[pos + 2] == '^', desc);
    if (!caret || strlen(caret + 1) != pos + 2) fprintf(stderr, "  message was: %s\n", e.msg);
}

static void good(const char *text, const char *norm, const char *desc)
{
    struct chain *ch = NULL;
    struct err e = {{0}};
    CHECK(chain_parse(text, &ch, &e) == 0, desc);
    if (!ch) {
        fprintf(stderr, "  %s\n", e.msg);
        return;
    }
    char buf[512];
    size_t need = chain_format(ch, buf, sizeof buf);
    CHECK(!strcmp(buf, norm) && need == strlen(norm), desc);
    if (strcmp(buf, norm)) fprintf(stderr, "  got '%s' want '%s'\n", buf, norm);
    /* the normalised text parses back to the same text */
    struct chain *again = NULL;
    char buf2[512];
    CHECK(chain_parse(buf, &again, &e) == 0, "normalised text parses back");
    if (again) chain_format(again, buf2, sizeof buf2);
    CHECK(again && !strcmp(buf, buf2), "normalised text is a fixed point");
    chain_free(again);
    chain_free(ch);
}

static void errors(void)
{
    bad("sector:width=abc", 14, "expected a number of degrees from 0 to 360 for 'width'",
        "a word where a number of degrees belongs");
    bad("sectr:width=90", 1, "unknown stage 'sectr', expected one of yaw, sector",
        "an unknown stage lists the stages");
    bad("", 1, "expected a stage name (one of yaw", "an empty chain");
    bad("yaw++sector", 5, "expected a stage name", "an empty stage between '+'");
    bad("yaw+", 5, "expected a stage name", "a trailing '+'");
    bad("sector:wdth=90", 8, "stage 'sector' has no parameter 'wdth', expected one of width, at, count, draw",
        "an unknown key lists the keys");
    bad("sector:", 8, "expected a parameter of 'sector' (one of width", "':' with no parameter");
    bad("sector:width", 13, "expected '=' after 'width'", "a key without '='");
    bad("sector:width=400", 14, "width=400 is out of range, expected a number of degrees from 0 to 360",
        "a value out of range");
    bad("range:max=-1", 11, "max=-1 is out of range, expected metres from 0 to 1000000",
        "a negative range");
    bad("sector:width=90m", 16, "unit 'm' does not fit 'width', expected deg or no unit",
        "a unit that does not fit");
    bad("dropout:p=0.3m", 14, "unit 'm' does not fit 'p', expected no unit", "a unit on a plain number");
    bad("sector:width=random", 14, "'random' is not allowed for 'width', expected a number of degrees",
        "random where it is not allowed");
    bad("sector:draw=sometimes", 13, "expected scan or recording for 'draw'", "a bad choice");
    bad("noise:mode=ray2", 12, "expected ray or xyz for 'mode'", "a bad mode");
    bad("sector:width=90,width=80", 17, "parameter 'width' given twice", "a duplicated key");
    bad("yaw:deg=10 sector", 12, "expected '+', ',' or the end of the chain, found 's'",
        "junk after a stage");
    bad("range:min=50,max=40", 7, "stage 'range': 'min' must not exceed 'max'", "min above max");
    bad("fov:down=10,up=-10", 5, "stage 'fov': 'down' must not exceed 'up'", "down above up");
    bad("sector:count=2.5", 8, "stage 'sector': 'count' must be a whole number", "a fractional count");
    bad("channels:list=1/x", 17, "expected channel numbers from 0 to 255 separated by '/' for 'list'",
        "a bad channel list");
    bad("channels:list=300", 15, "expected channel numbers from 0 to 255", "a channel out of range");
    bad("clutter:near=0.2,size=1", 9, "'near' must exceed size / sqrt(2)", "a sensor inside a box");
    bad("dropout:burst=0.001", 9, "'burst' must be 0 or at least 0.01 degrees", "a tiny burst");
    bad("yaw:deg=nan", 9, "expected a number of degrees from -360 to 360 for 'deg' (or random)",
        "a non-finite number");
    /* too many stages: 33 yaws */
    char many[33 * 4 + 1] = "";
    for (int k = 0; k < 33; k++) strcat(many, k ? "+yaw" : "yaw");
    bad(many, 129, "too many stages, expected at most 32", "more stages than the limit");
    struct chain *ok32;
    struct err e32;
    many[32 * 4 - 1] = 0;
    CHECK(chain_parse(many, &ok32, &e32) == 0 && chain_stage_count(ok32) == 32,
          "exactly the limit of stages parses");
    chain_free(ok32);
    /* a long chain shows a window of the text with the caret still under the fault */
    char longc[400] = "";
    for (int k = 0; k < 20; k++) strcat(longc, "yaw:deg=1+");
    strcat(longc, "bogus");
    struct chain *ch;
    struct err e = {{0}};
    CHECK(chain_parse(longc, &ch, &e) == -1, "long chain with a bad stage fails");
    const char *line = strchr(e.msg, '\n'), *caret = strrchr(e.msg, '\n');
    CHECK(line && caret && strstr(line, "...") && caret[1 + (strstr(line, "bogus") - line - 1)] == '^',
          "the caret of a long chain sits under the bad stage");
}

static void normalised(void)
{
    good("yaw", "yaw", "defaults print as the bare name");
    good(" yaw : deg = 90deg + sector:width=90 ", "yaw:deg=90+sector",
         "spaces and units are dropped, defaults omitted");
    good("sector:at=10,width=45", "sector:width=45,at=10", "parameters in table order");
    good("range:max=40m,min=0", "range", "default values are omitted");
    good("dropout:p=0.1+noise:mode=xyz,sigma=0.01m", "dropout:p=0.1+noise:sigma=0.01,mode=xyz",
         "choices print as their word");
    good("channels:list=4/0/2", "channels:list=0/2/4", "channel lists print sorted");
    good("sector:draw=recording", "sector:draw=recording", "per-recording draw is kept");
    good("yaw:deg=0.1", "yaw:deg=0.1", "shortest exact number form");
    good("skew:speed=5m/s,yawrate=10deg/s,period=0.05s", "skew:speed=5,yawrate=10,period=0.05",
         "compound units parse");
    struct chain *ch;
    struct err e;
    CHECK(chain_parse("yaw+sector:width=90+dropout", &ch, &e) == 0, "three-stage chain parses");
    CHECK(chain_stage_count(ch) == 3, "stage count");
    CHECK(!strcmp(chain_stage_name(ch, 1), "sector"), "stage names in order");
    CHECK(chain_stage_name(ch, 3) == NULL, "no name past the last stage");
    char small[8];
    size_t need = chain_format(ch, small, sizeof small);
    CHECK(need == strlen("yaw+sector+dropout") && strlen(small) == 7,
          "format truncates like snprintf and reports the full length");
    chain_free(ch);
    chain_free(NULL);
}

static void table(void)
{
    const struct chain_stage_info *in;
    const char *want[] = {"yaw", "sector", "dropout", "range", "noise", "channels", "fov",
                          "tilt", "shift", "clutter", "density", "skew", "intensity"};
    size_t n = 0;
    for (; (in = chain_stage_info(n)); n++) {
        CHECK(n < 13 && !strcmp(in->name, want[n]), "stage table order");
        CHECK(in->meaning && *in->meaning, "every stage has a meaning line");
        for (size_t k = 0; k < in->n_params; k++) {
            const struct chain_param_info *p = &in->params[k];
            CHECK(p->expect && p->meaning && p->min <= p->max, "every parameter is described");
            CHECK(p->kind != CHAIN_NUM || p->def_random || (p->def >= p->min && p->def <= p->max),
                  "numeric defaults lie in range");
        }
    }
    CHECK(n == 13, "thirteen stages");
    CHECK(chain_stage_find("clutter") == chain_stage_info(9), "find by name");
    CHECK(chain_stage_find("nope") == NULL, "find of an unknown name");
}

static void targets(void)
{
    enum chain_on on;
    struct err e = {{0}};
    CHECK(chain_on_parse("map", &on, &e) == 0 && on == CHAIN_ON_MAP, "'map' parses");
    CHECK(chain_on_parse("both", &on, &e) == 0 && chain_on_map(on) && chain_on_query(on),
          "'both' touches map and queries");
    CHECK(chain_on_parse("query", &on, &e) == 0 && !chain_on_map(on) && chain_on_query(on),
          "'query' touches queries only");
    CHECK(!strcmp(chain_on_name(CHAIN_ON_QUERY), "query"), "target names");
    CHECK(chain_on_parse("maps", &on, &e) == -1, "an unknown target fails");
    CHECK_MSG(e.msg, "unknown chain target 'maps', expected query, map or both", "target message");
    /* one word list (harness/base/side.h) behind the chains, the scenario loader and the manifest */
    int same = 1;
    for (int k = 0; side_names[k]; k++) {
        same = same && side_lookup(side_names[k]) == k && chain_on_parse(side_names[k], &on, &e) == 0 &&
               (int)on == k && !strcmp(chain_on_name(on), side_names[k]);
    }
    CHECK(same && side_names[3] == NULL, "each side word parses to its own value and prints back the same");
    CHECK(side_lookup("Map") == -1 && side_lookup("") == -1 && side_lookup(NULL) == -1,
          "the side words are exact: another case, empty or none is no side");
}

/* The full text names every parameter of every stage (defaults included,
 * with units), hides nothing the short text leaves out, and parses back to
 * the same chain. */
static void full_text(void)
{
    const char *text = "sector:width=60,at=180+tilt:pitch=2+noise";
    struct chain *ch = NULL, *back = NULL;
    struct err e = {{0}};
    CHECK(chain_parse(text, &ch, &e) == 0, "the chain parses");
    if (!ch) return;
    char full[2048], a[512], b[512];
    size_t need = chain_format_full(ch, full, sizeof full);
    CHECK(need == strlen(full) && need < sizeof full, "the full text fits and its length is returned");
    for (size_t i = 0; i < chain_stage_count(ch); i++) {
        const struct chain_stage_info *si = chain_stage_find(chain_stage_name(ch, i));
        for (size_t k = 0; si && k < si->n_params; k++) {
            char key[80];
            snprintf(key, sizeof key, "%s=", si->params[k].key);
            CHECK(strstr(full, key) != NULL, "every parameter of the stage table is in the full text");
        }
    }
    CHECK(strstr(full, "sector:width=60deg,at=180deg,") != NULL, "numbers carry their units");
    CHECK(strstr(full, "+tilt:") && strstr(full, "pitch=2deg"), "the 2 degree pitch is shown");
    CHECK(strstr(full, "draw=") != NULL, "choice parameters are shown with their word");
    CHECK(chain_parse(full, &back, &e) == 0, "the full text parses back");
    if (back) {
        chain_format(ch, a, sizeof a);
        chain_format(back, b, sizeof b);
        CHECK(!strcmp(a, b), "the full text is the same chain as the original");
    }
    char small[8];
    CHECK(chain_format_full(ch, small, sizeof small) == need && strlen(small) == sizeof small - 1,
          "a short buffer gets a cut, terminated text and the whole length");
    chain_free(back);
    chain_free(ch);
}

int main(void)
{
    errors();
    full_text();
    normalised();
    table();
    targets();
    return check_done();
}
