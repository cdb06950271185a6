/* bag.h: ROS 1 bag files, format version 2.0, walked record by record.
 *
 * The file is "#ROSBAG V2.0\n" and then records, each
 *
 *     | uint32 header_len | header | uint32 data_len | data |
 *
 * where the header is fields "| uint32 len | name=value |" and field "op"
 * (one byte) tells the record: 0x03 bag header, 0x05 chunk (header
 * compression = none | bz2 | lz4, size = unpacked bytes; data: connection
 * and message records), 0x07 connection (header conn, topic; data: a
 * header with type), 0x02 message (header conn, time = uint32 sec, uint32
 * nsec; data: the ROS 1 serialised message), 0x04 index and 0x06 chunk info
 * (skipped: the walk reads every record in order).  Integers are
 * little-endian.  lz4 chunks are LZ4 frames.
 *
 * Every length is checked against the record or chunk that holds it
 * before it is used.  Failure contract as in logfile.h; errors name the
 * record's byte (and the chunk's) and what was expected.
 */
#ifndef RV_BAG_H
#define RV_BAG_H

#include "harness/io/logfile.h"

/* Walk every message of an open bag (l->kind == LOGF_BAG). */
int bag_walk(struct logf *l, logf_fn fn, void *ctx, struct err *e);

#endif
