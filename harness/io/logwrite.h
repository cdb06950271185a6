/* logwrite.h: write a recording as a robot log, so a demo can start from a
 * log as users' drives do.
 *
 * The log holds two topics: /points (sensor_msgs/PointCloud2, fields x y z
 * intensity as float32, then ring as uint16 and time as float32 when the
 * scans have them, frame "sensor", stamped with the scan's pose time) and
 * /odom (nav_msgs/Odometry, frame "world", child "sensor", the scan's pose
 * at the same stamp).  LOGF_BAG writes a ROS 1 bag 2.0 with its index:
 * uncompressed chunks of about 1 MiB, each followed by its index data
 * records, then the connection and chunk info records the bag header
 * points at, and the full ROS 1 message definitions (logwrite_bag.c;
 * tests/xcheck_bag_written.py opens it with python3-rosbag);
 * LOGF_MCAP writes an MCAP file with ros2msg schemas and CDR messages in
 * uncompressed chunks, each followed by its message indexes, then the
 * summary (schemas, channels, statistics, chunk indexes), its offsets and
 * every CRC-32 (logwrite_mcap.c; tests/xcheck_mcap.py opens it with
 * @mcap/core's stream and indexed readers).  Reading it back
 * with `revisit log FILE --scans /points --poses /odom` gives the same
 * points and poses (non-finite points are dropped on load, as in any
 * recording).
 *
 *     if (logw_recording("rec", "rec.mcap", LOGF_MCAP, e)) return -1;
 *
 * Failure contract: 0, or -1 with e naming the scan or the file; the log is
 * written atomically (harness/base/fileio.h), so nothing half-written is
 * left.  Not thread-safe on one output file.
 */
#ifndef RV_LOGWRITE_H
#define RV_LOGWRITE_H

#include "harness/base/err.h"
#include "harness/io/logfile.h"

/* kind from the extension of path: ".bag" or ".mcap"; 0 if neither. */
enum logf_kind logw_kind_of(const char *path);
int logw_recording(const char *rec_path, const char *log_path, enum logf_kind kind, struct err *e);

#endif
