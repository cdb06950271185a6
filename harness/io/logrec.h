/* logrec.h: a recording made from a robot log (harness/io/logfile.h).
 *
 * From one PointCloud2 topic and one pose source -- a pose topic
 * (nav_msgs/Odometry, geometry_msgs/PoseStamped or
 * PoseWithCovarianceStamped) or the transforms on /tf and /tf_static
 * chained from a world frame to the sensor frame -- write a recording
 * folder: scans/NNNNNN.EXT in the layout asked for, poses.csv with the pose
 * at each kept scan's stamp (track.h: interpolated between poses at most
 * pose_gap_s apart, never extrapolated), dropped.csv naming each scan that
 * had no pose near enough, and recording.json with a "log" object (the log
 * file, its size and SHA-256, topics, frames, counts) and the extrinsic.
 *
 * The folder is written as a whole by the recording writer (recording.h:
 * staged in a hidden folder beside OUT, renamed into place only when
 * complete); on any error the staged folder is removed, and OUT must not
 * exist beforehand.
 *
 *     struct logrec_opts o = {.log = "drive.bag", .out = "rec", .scans_topic = "/points",
 *                             .poses_topic = "/odom", .pose_gap_s = 0.2, .layout = SCAN_PCD};
 *     struct logrec_result r;
 *     if (logrec_make(&o, &r, e)) return -1;
 *
 * Failure contract: 0, or -1 with "FILE: message N (topic T): what,
 * expected what" or a record error from the log reader in e; nothing is
 * left at OUT.  Not thread-safe (one call at a time per output folder).
 */
#ifndef RV_LOGREC_H
#define RV_LOGREC_H

#include <stdio.h>

#include "harness/base/err.h"
#include "harness/base/pose.h"
#include "harness/io/scan_io.h"

#define LOGREC_TF "tf"   /* poses_topic value: use /tf and /tf_static */

struct logrec_opts {
    const char *log, *out;
    const char *scans_topic;
    const char *poses_topic;                 /* a pose topic, or LOGREC_TF */
    const char *world_frame, *sensor_frame;  /* LOGREC_TF: the chain's ends */
    double pose_gap_s;                       /* largest time between two poses */
    enum scan_layout layout;                 /* a format recordings are written in */
    int channels;                            /* 0: from the ring field */
    const struct pose *extrinsic;            /* the sensor in the pose frame, or NULL */
    int quiet;                               /* no progress on stderr */
};

struct logrec_result {
    size_t scans;      /* written */
    size_t dropped;    /* scans without a pose near enough */
    size_t in_log;     /* messages on the scans topic */
};

/* Print the log's topics: one line each, "TOPIC TYPE COUNT". */
int logrec_list(const char *log, FILE *out, struct err *e);
int logrec_make(const struct logrec_opts *o, struct logrec_result *r, struct err *e);

#endif
