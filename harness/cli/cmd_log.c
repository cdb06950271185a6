/* cmd_log.c: `revisit log FILE`: list a robot log's topics, or with --out
 * make a recording from one cloud topic and one pose source. */
#include <stdio.h>
#include <stdlib.h>
#include <string.h>

#include "harness/base/opt.h"
#include "harness/cli/cmd.h"
#include "harness/io/logrec.h"
#include "harness/io/recording.h"

static const char about[] =
    "Read a robot log: a ROS 1 bag (format 2.0; chunks uncompressed, bz2 or lz4)\n"
    "or an MCAP file (chunks uncompressed, lz4 or zstd; CDR or ROS 1 messages).\n"
    "Without --out, list its topics with their message types and counts.  With\n"
    "--out, make a recording folder from one sensor_msgs/PointCloud2 topic and one\n"
    "pose source: a nav_msgs/Odometry, geometry_msgs/PoseStamped or\n"
    "PoseWithCovarianceStamped topic, or 'tf': the transforms on /tf and /tf_static\n"
    "chained from frame WORLD to frame SENSOR.  Each scan gets the pose at its\n"
    "stamp, interpolated (position linear, rotation slerp) between two poses at\n"
    "most --pose-gap apart; a scan with no such poses around it is dropped,\n"
    "counted and named (stderr and DIR/dropped.csv), never extrapolated.  With a\n"
    "pose topic that does not give the sensor itself, --extrinsic gives the\n"
    "sensor in the pose's frame (stored in the manifest, applied on load).  The\n"
    "manifest records the log file, its size and SHA-256, topics and frames.  The\n"
    "folder is built beside DIR and renamed into place only when complete.\n\n";

struct log_opts {
    const char *scans, *poses, *frames, *out, *layout, *extrinsic;
    double gap;
    long channels;
    int quiet;
};

/* "WORLD,SENSOR" into two strings (in buf). */
static int log_frames(const char *s, char *buf, size_t n, const char **a, const char **b, struct err *e)
{
    const char *comma = s ? strchr(s, ',') : NULL;
    if (!s || !comma || comma == s || !comma[1] || strchr(comma + 1, ','))
        return err_set(e, "revisit log: --frames '%s', expected WORLD,SENSOR (two frame names)", s ? s : "");
    if (snprintf(buf, n, "%s", s) >= (int)n) return err_set(e, "revisit log: --frames too long");
    buf[comma - s] = 0;
    *a = buf;
    *b = buf + (comma - s) + 1;
    return 0;
}

static int log_make(const char *file, const struct log_opts *lo, struct err *e)
{
    if (!lo->scans || !lo->poses) return err_set(e, "revisit log: --out needs --scans TOPIC and --poses TOPIC|tf");
    struct logrec_opts o = {.log = file, .out = lo->out, .scans_topic = lo->scans, .poses_topic = lo->poses,
                            .pose_gap_s = lo->gap, .channels = (int)lo->channels, .quiet = lo->quiet,
                            .layout = SCAN_PCD};
    char fr[1024];
    int tf = !strcmp(lo->poses, LOGREC_TF);
    if (tf && log_frames(lo->frames, fr, sizeof fr, &o.world_frame, &o.sensor_frame, e)) return -1;
    if (!tf && lo->frames) return err_set(e, "revisit log: --frames goes with --poses tf only");
    if (tf && lo->extrinsic)
        return err_set(e, "revisit log: --extrinsic goes with a pose topic; with --poses tf name the sensor frame");
    if (!(lo->gap > 0)) return err_set(e, "revisit log: --pose-gap %g, expected seconds above 0", lo->gap);
    if (lo->channels < 0 || lo->channels > 65535)
        return err_set(e, "revisit log: --channels %ld, expected 1 to 65535", lo->channels);
    if (lo->layout && scan_layout_parse(lo->layout, &o.layout, e)) return err_wrap(e, "revisit log: --scan-layout");
    const struct scan_format *f = scan_format_of(o.layout);
    if (!f || !f->recording) {
        char words[256];
        scan_format_list(words, sizeof words, ", ", " or ", SCAN_LIST_RECORDING);
        return err_set(e, "revisit log: --scan-layout %s, expected %s", lo->layout, words);
    }
    struct pose ext;
    if (lo->extrinsic) {
        if (recording_extrinsic_parse(lo->extrinsic, &ext, e)) return err_wrap(e, "revisit log: --extrinsic");
        o.extrinsic = &ext;
    }
    struct logrec_result r;
    if (logrec_make(&o, &r, e)) return -1;
    if (!lo->quiet)
        printf("wrote %s: %zu scans of %zu on %s (%zu dropped: no pose within %.3f s), poses from %s\n", lo->out,
               r.scans, r.in_log, lo->scans, r.dropped, lo->gap, tf ? "/tf and /tf_static" : lo->poses);
    return 0;
}

int cmd_log(int argc, char **argv)
{
    struct log_opts lo = {.gap = 0.2};
    const struct opt opts[] = {
        {"--scans", OPT_STR, &lo.scans, "TOPIC", "the sensor_msgs/PointCloud2 topic"},
        {"--poses", OPT_STR, &lo.poses, "TOPIC|tf", "the pose topic, or tf for /tf and /tf_static"},
        {"--frames", OPT_STR, &lo.frames, "WORLD,SENSOR", "with --poses tf: the frames to chain between"},
        {"--out", OPT_STR, &lo.out, "DIR", "recording folder to create (must not exist)"},
        {"--pose-gap", OPT_SECONDS, &lo.gap, "S", "largest time between the two poses around a scan (default 0.2)"},
        {"--scan-layout", OPT_STR, &lo.layout, "FORMAT", "format of the scan files, one recordings are written in (default pcd)"},
        {"--extrinsic", OPT_STR, &lo.extrinsic, "X,Y,Z,QX,QY,QZ,QW|12 NUMBERS|FILE",
         "the sensor in the pose frame: position + quaternion, a 3x4 row, or a file holding either"},
        {"--channels", OPT_INT, &lo.channels, "N", "sensor channels (default: from the ring field)"},
        {"--quiet", OPT_FLAG, &lo.quiet, NULL, "no progress or summary"},
        {0}};
    struct opt_args a;
    struct err e;
    int go = cmd_parse("log", about, argc, argv, opts, &a, &e);
    if (go != CMD_GO_ON) return go;
    if (a.n != 1) return err_set(&e, "revisit log: expected one log file, got %d arguments", a.n), cmd_report(&e);
    if (!lo.out) {
        if (lo.scans || lo.poses || lo.frames || lo.extrinsic)
            return err_set(&e, "revisit log: --scans, --poses, --frames and --extrinsic go with --out DIR"),
                   cmd_report(&e);
        return logrec_list(a.v[0], stdout, &e) ? cmd_report(&e) : CMD_OK;
    }
    return log_make(a.v[0], &lo, &e) ? cmd_report(&e) : CMD_OK;
}
