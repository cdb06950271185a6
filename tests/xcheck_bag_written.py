"""xcheck_bag_written.py: the ROS 1 bags revisit writes (`revisit synth
--log FILE.bag`) read by Debian's python3-rosbag, which opens a bag through
its index (bag header index_pos, connection and chunk info records after
the chunks, index data records after each chunk) and refuses one without.

References: python3-rosbag (rosbag.Bag(path) in read mode,
Bag.get_type_and_topic_info, Bag.get_start_time/get_end_time from the
chunk info records, Bag.read_messages with and without a time window, the
window answered from the index data records); the message classes of
python3-sensor-msgs (PointCloud2._md5sum, sensor_msgs.point_cloud2.read_points)
and python3-nav-msgs (Odometry._md5sum), against which the classes rosbag
builds from the bag's message definitions are compared.  What rosbag
reads is compared with what revisit's own reader makes of the same bag
(`revisit log FILE` and `revisit log FILE --scans /points --poses /odom`):
message counts, topics, stamps, points and poses.  Run with /usr/bin/python3
through tests/run.sh.
"""
import contextlib
import io
import os
import re
import sys
import tempfile

import numpy as np

from checklib import check, done
from logdrive import dump, read_poses, run

try:
    import rosbag
    import sensor_msgs.point_cloud2 as pc2
    from nav_msgs.msg import Odometry
    from sensor_msgs.msg import PointCloud2
except ImportError as exc:
    check(False, "python3-rosbag and the message packages are installed (%s; run 'make deps')" % exc)
    sys.exit(done())


def rosbag_read(path):
    """Every message rosbag reads from the bag, and what it printed."""
    err = io.StringIO()
    with contextlib.redirect_stderr(err):
        b = rosbag.Bag(path)
        msgs = list(b.read_messages())
    return b, msgs, err.getvalue()


def listing(path):
    """`revisit log FILE`: {topic: (type, count)} from its table."""
    rc, out, err = run("log", path)
    rows = {}
    for line in out.splitlines():
        m = re.match(r"^(/\S+)\s+(\S+)\s+(\d+)$", line)
        if m:
            rows[m.group(1)] = (m.group(2), int(m.group(3)))
    return rc, rows, err


with tempfile.TemporaryDirectory() as d:
    syn, bag = os.path.join(d, "syn"), os.path.join(d, "syn.bag")
    rc, _, err = run("synth", "--scenario", "port", "--duration", "0.9", "--out", syn, "--log", bag, "--quiet")
    check(rc == 0 and os.path.getsize(bag) > 0, "synth --log writes a bag (%s)" % err.strip())
    try:
        b, msgs, warned = rosbag_read(bag)
    except Exception as exc:  # rosbag.ROSBagUnindexedException and the like: reported as a failed check
        check(False, "python3-rosbag opens revisit's bag through its index (%s: %s)" % (type(exc).__name__, exc))
        sys.exit(done())
    check(True, "python3-rosbag opens revisit's bag through its index")
    check(warned == "", "rosbag builds the message classes from the bag's definitions without a warning (%s)" %
          warned.strip())
    check(len(b._chunks) >= 2 and b._chunk_headers and sum(len(c.connection_counts) for c in b._chunks) >=
          len(b._chunks), "the bag holds several chunks, each with its chunk info (%d)" % len(b._chunks))

    # rosbag's view of topics and counts against revisit's listing.
    info = b.get_type_and_topic_info()
    theirs = {t: (v.msg_type, v.message_count) for t, v in info.topics.items()}
    rc, ours, err = listing(bag)
    check(rc == 0 and theirs == ours and ours.get("/points", ("", 0))[1] == 10,
          "rosbag and revisit list the same topics, types and counts (%s vs %s)" % (theirs, ours))
    check(info.msg_types == {"sensor_msgs/PointCloud2": PointCloud2._md5sum, "nav_msgs/Odometry": Odometry._md5sum},
          "the connections' MD5 sums are those of python3-sensor-msgs and python3-nav-msgs (%s)" % info.msg_types)
    got = {m.message._md5sum for m in msgs}
    check(got == {PointCloud2._md5sum, Odometry._md5sum},
          "the classes rosbag builds from the stored definitions have the packages' MD5 sums (%s)" % got)

    # revisit's own reader: the recording it makes from the bag.
    back = os.path.join(d, "back")
    rc, _, err = run("log", bag, "--scans", "/points", "--poses", "/odom", "--out", back, "--quiet")
    check(rc == 0, "revisit log reads the bag into a recording (%s)" % err.strip())
    poses = read_poses(os.path.join(back, "poses.csv")) if rc == 0 else []
    clouds = [m for m in msgs if m.topic == "/points"]
    odoms = [m for m in msgs if m.topic == "/odom"]
    ok = len(clouds) == len(odoms) == len(poses) == 10
    for c, o, (t, p, q) in zip(clouds, odoms, poses):
        ok = ok and abs(c.message.header.stamp.to_sec() - t) < 1e-9 and c.timestamp == c.message.header.stamp
        ok = ok and o.message.header.stamp == c.message.header.stamp
    check(ok, "rosbag's message stamps (record time and header) are the recording's pose times")
    ok = len(odoms) == len(poses)
    for o, (t, p, q) in zip(odoms, poses):
        pp, qq = o.message.pose.pose.position, o.message.pose.pose.orientation
        ok = ok and [pp.x, pp.y, pp.z] == list(p) and np.allclose([qq.x, qq.y, qq.z, qq.w], q.as_quat(), atol=1e-15)
    check(ok, "rosbag's Odometry poses are the recording's poses")
    ok = len(clouds) == 10
    for k, c in enumerate(clouds):
        names = [f.name for f in c.message.fields]
        pts = np.array(list(pc2.read_points(c.message, field_names=names)), dtype=np.float64)
        a = dump(os.path.join(back, "scans", "%06d.pcd" % k))
        ok = ok and names == ["x", "y", "z", "intensity", "ring", "time"] and pts.shape == a.shape and \
            bool((pts.astype(np.float32) == a.astype(np.float32)).all())
    check(ok, "point_cloud2.read_points gives the points, intensity, ring and time of revisit's scans")

    # The index answers a time window: the stamps rosbag finds between two
    # times, and the first and last stamps of the chunk infos.
    stamps = [c.message.header.stamp for c in clouds]
    if len(stamps) == 10:
        win = list(b.read_messages(topics=["/points"], start_time=stamps[3], end_time=stamps[6]))
        check([m.timestamp for m in win] == stamps[3:7], "read_messages over a time window finds stamps 3 to 6")
        check(abs(b.get_start_time() - stamps[0].to_sec()) < 1e-9 and
              abs(b.get_end_time() - stamps[-1].to_sec()) < 1e-9, "the chunk infos span the first to the last stamp")
    else:
        check(False, "ten scans to look up by time (%d)" % len(stamps))
        check(False, "the chunk infos span the first to the last stamp")
    b.close()

sys.exit(done())
