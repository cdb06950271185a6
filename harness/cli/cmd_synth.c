/* cmd_synth.c: `revisit synth`: make a synthetic recording of an invented
 * district (scenarios/synth.h). */
#include <signal.h>
#include <math.h>
#include <stdio.h>
#include <string.h>

#include "harness/cli/cmd.h"
#include "harness/base/numfmt.h"
#include "harness/base/opt.h"
#include "harness/base/pool.h"
#include "harness/io/logwrite.h"
#include "scenarios/synconf.h"
#include "scenarios/synth.h"

static const char about[] =
    "Make a synthetic recording: a procedural district (built in: port, campus,\n"
    "suburb) driven along a route that revisits places in the same direction, in\n"
    "reverse and crossing at right angles, with parked vehicles moved between\n"
    "visits and moving traffic, scanned by a spinning multi-channel sensor\n"
    "(built in: spin16, spin32, spin64, spin128).  DIR receives recording.json,\n"
    "scans/ (PCD binary with ring and time), poses.csv, route.json (every\n"
    "revisit stretch with its kind) and, with pose noise on, poses_exact.csv.\n"
    "--scans N spreads N scans evenly over the whole drive (fewer scans per\n"
    "second; the whole drive and its revisits stay, though a very small N may\n"
    "step over a short crossing); --duration S cuts the drive after S seconds.\n"
    "The same scenario and seed give byte-identical files for any --jobs.\n"
    "--log FILE also writes the recording as a robot log, a ROS 1 bag (.bag) or\n"
    "an MCAP file (.mcap), with the scans on /points and the poses on /odom, so\n"
    "the demo can start from a log: revisit log FILE --scans /points --poses\n"
    "/odom --out DIR gives the same points and poses back.\n\n";

static void synth_on_sigint(int sig)
{
    (void)sig;
    pool_request_stop();
}

static void synth_print(const struct synconf *c, const struct synth_summary *s, const char *out)
{
    printf("synth: scenario %s, sensor %s, seed %llu\n", c->name, c->sensor_name,
           (unsigned long long)c->seed);
    printf("  %zu scans at %.2f Hz over %.1f s, %.0f m driven, %.0f points per scan\n", s->scans,
           s->rate_hz, s->duration_s, s->length_m, s->scans ? (double)s->points / s->scans : 0.0);
    printf("  world: %zu primitives, %zu moving %s\n", s->primitives, s->movers,
           numfmt_noun(s->movers, "vehicle", "vehicles"));
    printf("  revisiting scans (3 m, 30 s): same %zu, reverse %zu, crossing %zu; never revisited %zu\n",
           s->revisits[0], s->revisits[1], s->revisits[2], s->never);
    printf("  wrote %s\n", out);
}

int cmd_synth(int argc, char **argv)
{
    const char *scenario = NULL, *out = NULL, *sensor = NULL, *log = NULL;
    unsigned long long seed = 0;
    long scans = -1, jobs = 0;
    double duration = NAN;   /* not given */
    int quiet = 0, seed_given = 0;
    struct err e;
    const struct opt opts[] = {
        {"--scenario", OPT_STR, &scenario, "NAME|FILE", "built-in district (port, campus, suburb) or a scenario .json"},
        {"--out", OPT_STR, &out, "DIR", "folder to write the recording to"},
        {"--seed", OPT_U64, &seed, "S", "seed of the district, scene change, range and pose noise (default: the file's)"},
        {"--scans", OPT_COUNT, &scans, "N", "N scans spread over the whole drive"},
        {"--duration", OPT_SECONDS, &duration, "S", "stop the drive after S seconds (60 or 60s)"},
        {"--sensor", OPT_STR, &sensor, "NAME|FILE", "sensor profile (spin16, spin32, spin64, spin128) or a sensor .json"},
        {"--log", OPT_STR, &log, "FILE.bag|FILE.mcap", "also write the recording as a ROS 1 bag or an MCAP file"},
        {"--jobs", OPT_COUNT, &jobs, "N", "threads (default: every core)"},
        {"--quiet", OPT_FLAG, &quiet, NULL, "no progress bar"},
        {0}};
    struct opt_args args;
    int go = cmd_parse("synth", about, argc, argv, opts, &args, &e);
    if (go != CMD_GO_ON) return go;
    for (int k = 1; k < argc; k++) if (!strncmp(argv[k], "--seed", 6)) seed_given = 1;
    if (args.n) { err_set(&e, "revisit synth: unexpected argument '%s'", args.v[0]); return cmd_report(&e); }
    if (!scenario || !out) {
        err_set(&e, "revisit synth: option '%s' is required", !scenario ? "--scenario" : "--out");
        return cmd_report(&e);
    }
    if (scans != -1 && !isnan(duration)) {
        err_set(&e, "revisit synth: give --scans or --duration, not both");
        return cmd_report(&e);
    }
    if (!isnan(duration) && !(duration > 0)) {
        err_set(&e, "revisit synth: option '--duration' expects seconds above 0");
        return cmd_report(&e);
    }
    if (jobs < 0 || jobs > 256) { err_set(&e, "revisit synth: option '--jobs' expects 1 to 256, got %ld", jobs); return cmd_report(&e); }
    if (log && !logw_kind_of(log)) {
        err_set(&e, "revisit synth: --log '%s', expected a file ending in .bag or .mcap", log);
        return cmd_report(&e);
    }
    struct synconf c;
    if (synconf_load(scenario, sensor, &c, &e)) return cmd_report(&e);
    if (seed_given) c.seed = seed;
    struct synth_run r = {out, scans > 0 ? scans : 0, duration > 0 ? duration : 0, (int)jobs, quiet};
    struct synth_summary s;
    struct sigaction sa, old;
    memset(&sa, 0, sizeof sa);
    sa.sa_handler = synth_on_sigint;
    sigemptyset(&sa.sa_mask);
    sigaction(SIGINT, &sa, &old);
    int rc = synth_make(&c, &r, &s, &e);
    sigaction(SIGINT, &old, NULL);
    if (rc && s.interrupted) { fprintf(stderr, "revisit: synth interrupted; %s has no recording.json\n", out); return CMD_INTERRUPTED; }
    if (rc) return cmd_report(&e);
    if (log && logw_recording(out, log, logw_kind_of(log), &e)) return cmd_report(&e);
    synth_print(&c, &s, out);
    if (log) printf("  wrote %s (/points, /odom)\n", log);
    return CMD_OK;
}
