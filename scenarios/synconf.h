/* synconf.h: the synthetic scenario and sensor files (JSON) and where the
 * built-in ones are found.
 *
 * A scenario file (format "revisit-synth-1") holds "name", "seed",
 * "sensor" (a profile name, or an object that may name a "profile" and
 * override any of its keys), "world" (the district) and "route".  A sensor
 * file (format "revisit-sensor-1") holds the sensor keys; see README
 * "Synthetic recordings" for every key.  Every key is checked: an unknown
 * key, a wrong type or a value out of range is refused with its JSON path,
 *     port.json: $.world.block_m: expected an array of 2 numbers in [10, 400]
 * and malformed JSON with its line and column.
 *
 *     struct synconf c;
 *     if (synconf_load("port", NULL, &c, e)) return -1;     // name or .json path
 *     ... c.world, c.sensor, c.route, c.rate_hz ...
 *
 * Built-in names are looked up in $REVISIT_SCENARIOS, then in the
 * scenarios/ folder beside the running program (../scenarios,
 * ../../scenarios, ../share/revisit/scenarios); sensor profiles in its
 * sensors/ subfolder.  No state; thread-safe.
 */
#ifndef RV_SYNCONF_H
#define RV_SYNCONF_H

#include <stdint.h>
#include "harness/base/err.h"
#include "scenarios/district.h"
#include "scenarios/lidar.h"
#include "scenarios/route.h"

#define SYNCONF_PATH_MAX 4096

struct synconf {
    char name[64];
    char sensor_name[64];
    char path[SYNCONF_PATH_MAX];      /* the scenario file read */
    uint64_t seed;
    struct district_params world;
    struct lidar sensor;
    struct route_params route;
    double rate_hz;                   /* scans per second */
    double pose_sigma_m, pose_sigma_deg;  /* noise on the recorded poses (0: off) */
};

/* Load a scenario by built-in name or path; sensor (name or path, may be
 * NULL) replaces the scenario's sensor.  0, or -1 with e set. */
int synconf_load(const char *scenario, const char *sensor, struct synconf *c, struct err *e);

/* Load a sensor profile by name or path into L (starting from the
 * defaults).  0 or -1. */
int synconf_load_sensor(const char *name, const char *near_dir, struct lidar *L, char *label,
                        size_t label_n, struct err *e);

/* Resolve a built-in name ("port"; sub "" or "sensors") or a path into out.
 * 0, or -1 naming the folders searched. */
int synconf_find(const char *name, const char *sub, const char *near_dir, char *out, size_t n,
                 struct err *e);

#endif
