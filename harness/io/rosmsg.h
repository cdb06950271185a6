/* rosmsg.h: the robot messages a recording is made from, decoded over a
 * wire cursor (harness/io/wire.h), so ROS 1 and CDR share one decoder each.
 *
 *   sensor_msgs/PointCloud2        -> struct cloud (x y z, intensity, ring
 *                                     and time kept when present)
 *   nav_msgs/Odometry              -> pose of child_frame_id in frame_id
 *   geometry_msgs/PoseStamped      -> pose in frame_id
 *   geometry_msgs/PoseWithCovarianceStamped
 *   tf2_msgs/TFMessage             -> each transform, parent and child
 *
 * PointCloud2: every field the cloud needs is checked against point_step
 * (offset + size within a point), point_step * width against row_step, and
 * row_step * height against the data; datatypes 1..8 (int8 .. float64),
 * is_bigendian honoured, organised clouds (height > 1) read row by row.
 * Field names: x y z required; intensity, ring, and time or t kept.
 *
 *     struct wire w; struct rosmsg_header h;
 *     wire_begin(&w, data, len, WIRE_ROS1, e);
 *     if (rosmsg_cloud(&w, &h, &c, e)) return -1;
 *
 * Failure contract: 0, or -1 with "at byte B of N: what, expected what" in
 * e (the caller adds file and message index); the cloud then holds no
 * points.  No state; thread-safe.
 */
#ifndef RV_ROSMSG_H
#define RV_ROSMSG_H

#include "harness/base/cloud.h"
#include "harness/base/err.h"
#include "harness/base/pose.h"
#include "harness/io/wire.h"

#define ROSMSG_NAME_MAX 256

enum rosmsg_type {
    ROSMSG_OTHER = 0,
    ROSMSG_CLOUD,
    ROSMSG_ODOMETRY,
    ROSMSG_POSE,
    ROSMSG_POSE_COV,
    ROSMSG_TF
};

struct rosmsg_header {
    double t;                        /* stamp, seconds */
    char frame[ROSMSG_NAME_MAX];     /* frame_id */
};

/* "sensor_msgs/PointCloud2" or "sensor_msgs/msg/PointCloud2" -> type. */
enum rosmsg_type rosmsg_type_of(const char *name);
/* The ROS 1 type name of a type ("nav_msgs/Odometry"), "" for OTHER. */
const char *rosmsg_type_name(enum rosmsg_type t);

/* The std_msgs/Header alone (ROS 1: seq, stamp, frame_id; ROS 2: stamp, frame_id). */
int rosmsg_header_read(struct wire *w, struct rosmsg_header *h, struct err *e);

int rosmsg_cloud(struct wire *w, struct rosmsg_header *h, struct cloud *c, struct err *e);

/* ODOMETRY, POSE or POSE_COV: the header and the pose (time h->t);
 * child receives child_frame_id for odometry, "" otherwise. */
int rosmsg_pose(struct wire *w, enum rosmsg_type type, struct rosmsg_header *h, struct pose *p,
                char child[ROSMSG_NAME_MAX], struct err *e);

/* TFMessage: fn is called for each transform with its header (parent
 * frame, stamp), child frame and the child's pose in the parent frame. */
typedef int (*rosmsg_tf_fn)(void *ctx, const struct rosmsg_header *h, const char *child,
                            const struct pose *p, struct err *e);
int rosmsg_tf(struct wire *w, rosmsg_tf_fn fn, void *ctx, struct err *e);

#endif
