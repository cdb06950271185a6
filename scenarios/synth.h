/* synth.h: make a synthetic recording from a loaded scenario.
 *
 * Builds the district and the route, casts every scan on a thread pool and
 * writes a normal recording through the recording writer:
 *
 *     OUT/recording.json     manifest (sensor with its vertical angles and mount)
 *     OUT/scans/NNNNNN.pcd   PCD binary, x y z intensity ring time, sensor frame
 *     OUT/poses.csv          sensor-to-world pose of each scan (noisy if pose noise is on)
 *     OUT/poses_exact.csv    exact poses, only when pose noise is on
 *     OUT/route.json         the legs, and every revisit stretch with its kind
 *
 * Scan i starts its sweep at t_i = i / rate_hz.  With scans > 0 the scans are
 * spread evenly over the whole drive instead (a small recording that still
 * holds every revisit); with duration_s > 0 the drive is cut after that time.
 * Every scan depends only on the scenario, the seed and its index, so the
 * output is byte-identical for any number of jobs.
 *
 *     struct synth_run r = {"out/port", 0, 0, 0, 0};
 *     struct synth_summary s;
 *     if (synth_make(&conf, &r, &s, e)) ...
 */
#ifndef RV_SYNTH_H
#define RV_SYNTH_H

#include <stddef.h>
#include "harness/base/err.h"
#include "scenarios/synconf.h"

struct synth_run {
    const char *out_dir;
    long scans;          /* > 0: this many scans over the whole drive */
    double duration_s;   /* > 0: stop the drive after this long */
    int jobs;            /* <= 0: every core */
    int quiet;           /* no progress bar */
};

struct synth_summary {
    size_t scans, points;
    size_t primitives, movers;
    double duration_s, length_m, rate_hz;
    size_t revisits[3];  /* revisiting scans by kind (same, reverse, crossing) */
    size_t never;        /* scans never revisited */
    int interrupted;
};

/* 0, or -1 with e set (nothing is complete under out_dir without its
 * recording.json).  Interruption (pool_request_stop) returns -1 with
 * summary->interrupted = 1. */
int synth_make(const struct synconf *c, const struct synth_run *r, struct synth_summary *s,
               struct err *e);

#endif
