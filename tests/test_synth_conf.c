/* test_synth_conf.c: scenario and sensor files are read key by key, and every
 * bad input is refused with a message that names the key. */
#include <stdio.h>
#include <stdlib.h>
#include <string.h>

#include "scenarios/synconf.h"
#include "tests/check.h"

static void put(const char *path, const char *text)
{
    FILE *f = fopen(path, "w");
    if (!f) { perror(path); exit(1); }
    fputs(text, f);
    fclose(f);
}

/* A small valid scenario with one substitution: the text between the
 * markers is replaced by `part` (world, sensor and route as given). */
static void scenario(const char *path, const char *sensor, const char *world, const char *route)
{
    char buf[4096];
    snprintf(buf, sizeof buf,
             "{\"format\": \"revisit-synth-1\", \"name\": \"tiny\", \"seed\": 3,\n"
             " \"sensor\": %s,\n \"world\": %s,\n \"route\": %s}\n",
             sensor, world, route);
    put(path, buf);
}

static const char *world_ok = "{\"style\": \"suburb\", \"grid\": [3, 3], \"block_m\": [40, 50]}";
static const char *route_ok = "{\"legs\": [{\"path\": [[0, 0], [2, 0], [2, 2]], \"lane_m\": 1}]}";

static int load_msg(const char *path, const char *sensor, struct err *e)
{
    struct synconf c;
    return synconf_load(path, sensor, &c, e);
}

static void good_files(void)
{
    struct synconf c;
    struct err e;
    CHECK(!synconf_load("port", NULL, &c, &e), "the built-in port scenario loads by name");
    if (c.name[0]) {
        CHECK(!strcmp(c.name, "port") && c.sensor.channels == 32 && c.world.style == DISTRICT_PORT,
              "port uses the 32-channel profile and the port style");
        CHECK(c.route.n_legs == 3 && c.world.epochs == 3, "each route leg is one epoch");
        CHECK_NEAR(c.sensor.az_step_deg, 0.4, 1e-12, "port sensor steps 0.4 degrees");
    }
    CHECK(!synconf_load("campus", "spin64", &c, &e) && c.sensor.channels == 64 &&
          c.sensor.elev_deg[0] == -24 && c.sensor.elev_deg[63] == 3,
          "a sensor given by name replaces the scenario's, with its explicit angle list");
    scenario("s1.json", "{\"profile\": \"spin16\", \"channels\": 8, \"range_max_m\": 50}", world_ok, route_ok);
    CHECK(!synconf_load("s1.json", NULL, &c, &e), "an embedded sensor overriding a profile loads");
    CHECK(c.sensor.channels == 8 && c.sensor.range_max_m == 50 && c.sensor.elev_deg[0] == -15 &&
          c.sensor.elev_deg[7] == 15, "overrides keep the profile's field of view for the new channel count");
    CHECK(c.route.leg[0].n == 3 && c.route.leg[0].node[2] == 2 * 3 + 2, "path stops index j * nx + i");
}

static void bad_files(void)
{
    struct err e;
    CHECK(load_msg("no-such-place", NULL, &e) == -1, "unknown scenario refused");
    CHECK_MSG(e.msg, "unknown scenario 'no-such-place', expected a built-in name (port, campus, suburb)",
              "unknown scenario message lists the built-in names");
    put("bad.json", "{\"format\": \"revisit-synth-1\",\n  \"name\": \"x\" \"seed\": 1}\n");
    CHECK(load_msg("bad.json", NULL, &e) == -1, "malformed JSON refused");
    CHECK_MSG(e.msg, "bad.json:2:15: malformed JSON", "malformed JSON gives line and column");
    put("trail.json", "{} x");
    CHECK(load_msg("trail.json", NULL, &e) == -1, "trailing text after the JSON value refused");
    scenario("k.json", "\"spin16\"", "{\"style\": \"suburb\", \"blok_m\": [40, 50]}", route_ok);
    CHECK(load_msg("k.json", NULL, &e) == -1, "unknown world key refused");
    CHECK_MSG(e.msg, "k.json: $.world.blok_m: unknown key", "unknown key named with its path");
    scenario("t.json", "\"spin16\"", "{\"style\": \"suburb\", \"block_m\": 40}", route_ok);
    CHECK(load_msg("t.json", NULL, &e) == -1, "wrong type refused");
    CHECK_MSG(e.msg, "$.world.block_m: expected an array of 2 numbers in [10, 400]", "type message names the key");
    scenario("st.json", "\"spin16\"", "{\"style\": \"harbour\"}", route_ok);
    CHECK(load_msg("st.json", NULL, &e) == -1, "unknown style refused");
    CHECK_MSG(e.msg, "$.world.style: expected \"port\", \"campus\" or \"suburb\"", "style message");
    scenario("c0.json", "{\"profile\": \"spin16\", \"channels\": 0}", world_ok, route_ok);
    CHECK(load_msg("c0.json", NULL, &e) == -1, "zero channels refused");
    CHECK_MSG(e.msg, "$.sensor.channels: expected a whole number in [1, 256], got 0", "zero channels message");
    scenario("r.json", "{\"profile\": \"spin16\", \"range_min_m\": 5, \"range_max_m\": 2}", world_ok, route_ok);
    CHECK(load_msg("r.json", NULL, &e) == -1, "max range below min refused");
    CHECK_MSG(e.msg, "r.json: $.sensor.range_max_m: 2 is not above range_min_m 5", "range message names the key");
    scenario("v.json", "{\"channels\": 4, \"vertical_deg\": [-10, 0, 10]}", world_ok, route_ok);
    CHECK(load_msg("v.json", NULL, &e) == -1, "angle count unlike the channel count refused");
    CHECK_MSG(e.msg, "$.sensor.vertical_deg: 3 angles for 4 channels", "angle count message");
    scenario("p.json", "{\"profile\": \"spin99\"}", world_ok, route_ok);
    CHECK(load_msg("p.json", NULL, &e) == -1, "unknown sensor profile refused");
    CHECK_MSG(e.msg, "unknown sensor profile 'spin99'", "profile message names it");
    scenario("g.json", "\"spin16\"", world_ok, "{\"legs\": [{\"path\": [[0, 0], [3, 0]]}]}");
    CHECK(load_msg("g.json", NULL, &e) == -1, "stop outside the grid refused");
    CHECK_MSG(e.msg, "$.route.legs[0].path[1]: (3, 0) is outside the 3 x 3 grid", "grid message");
    scenario("l.json", "\"spin16\"", world_ok, "{\"legs\": [{\"path\": [[0, 0], [1, 0]], \"lane_m\": 4}]}");
    CHECK(load_msg("l.json", NULL, &e) == -1, "lane offset above 3 m refused");
    CHECK_MSG(e.msg, "$.route.legs[0].lane_m: expected a number in [0, 3], got 4", "lane message");
    put("f.json", "{\"format\": \"revisit-synth-0\", \"name\": \"x\"}");
    CHECK(load_msg("f.json", NULL, &e) == -1, "wrong format refused");
    CHECK_MSG(e.msg, "$.format: expected \"revisit-synth-1\"", "format message");
    scenario("n.json", "\"spin16\"", world_ok, "{\"legs\": []}");
    CHECK(load_msg("n.json", NULL, &e) == -1, "a route without legs refused");
    CHECK_MSG(e.msg, "$.route.legs: expected an array of 1 to 32 legs", "legs message");
    put("sens.json", "{\"channels\": 16, \"spin_hz\": \"fast\"}");
    CHECK(load_msg("port", "sens.json", &e) == -1, "a sensor file with a bad value refused");
    CHECK_MSG(e.msg, "sens.json: $.spin_hz: expected a number in [0, 100]", "sensor file message names the file");
    put("dup.json", "{\"channels\": 16, \"channels\": 8}");
    CHECK(load_msg("port", "dup.json", &e) == -1, "a duplicate key refused");
    CHECK_MSG(e.msg, "$.channels: duplicate key", "duplicate key message");
}

int main(void)
{
    good_files();
    bad_files();
    return check_done();
}
