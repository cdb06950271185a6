"""xcheck_bag.py: recordings made by `revisit log` from ROS 1 bags written by
Debian's python3-rosbag.

References: python3-rosbag (rosbag.Bag(path, "w", compression=...) and
Bag.write; compression none, bz2 and lz4), the message classes of
python3-sensor-msgs (PointCloud2, PointField), python3-nav-msgs (Odometry),
python3-geometry-msgs (TransformStamped) and python3-tf2-msgs (TFMessage);
poses between samples against scipy.spatial.transform.Slerp (rotation) and
numpy.interp (position); chained transforms and the extrinsic against
scipy.spatial.transform.Rotation composition; the manifest's checksum
against hashlib.sha256.  The recording must hold exactly the points and
poses the script wrote.  Run with /usr/bin/python3 through tests/run.sh.
"""
import os
import struct
import subprocess
import sys
import tempfile

import numpy as np

from checklib import check, done
from logdrive import (B_L, M_O, ODOM, ODOM_T, POSE, SCAN_T, T0, check_recording, cloud32, cloud64, dump, events,
                      expected_odom, expected_tf, kept, pose_err, read_poses, refused, run, stamp)

try:
    import rosbag
    import rospy
    from geometry_msgs.msg import TransformStamped
    from nav_msgs.msg import Odometry
    from sensor_msgs.msg import PointCloud2, PointField
    from tf2_msgs.msg import TFMessage
except ImportError as exc:
    check(False, "python3-rosbag and the message packages are installed (%s; run 'make deps')" % exc)
    sys.exit(done())

rng = np.random.default_rng(5)


def rtime(t):
    return rospy.Time(*stamp(t))


def cloud_msg(t, layout, data):
    m = PointCloud2()
    m.header.stamp = rtime(t)
    m.header.frame_id = "lidar"
    m.height, m.width = layout["height"], layout["width"]
    m.fields = [PointField(n, o, dt, 1) for n, o, dt in layout["fields"]]
    m.point_step, m.row_step = layout["point_step"], layout["row_step"]
    m.data = data
    m.is_dense = True
    return m


def odom_msg(t, pos, rot):
    m = Odometry()
    m.header.stamp = rtime(t)
    m.header.frame_id = "odom"
    m.child_frame_id = "base"
    m.pose.pose.position.x, m.pose.pose.position.y, m.pose.pose.position.z = pos
    o = m.pose.pose.orientation
    o.x, o.y, o.z, o.w = rot.as_quat()
    return m


def tf_msg(t, parent, child, pos, rot):
    m = TransformStamped()
    m.header.stamp = rtime(t)
    m.header.frame_id = parent
    m.child_frame_id = child
    m.transform.translation.x, m.transform.translation.y, m.transform.translation.z = pos
    r = m.transform.rotation
    r.x, r.y, r.z, r.w = rot.as_quat()
    return TFMessage([m])


def write_bag(path, compression):
    clouds = {}
    with rosbag.Bag(path, "w", compression=compression, chunk_threshold=20000) as b:
        b.write("/tf_static", tf_msg(T0, "map", "odom", *M_O), rtime(T0))
        b.write("/tf_static", tf_msg(T0, "base", "lidar", *B_L), rtime(T0))
        for t, kind, k in events():
            if kind == "o":
                b.write("/odom", odom_msg(t, *ODOM[k]), rtime(t))
                b.write("/tf", tf_msg(t, "odom", "base", *ODOM[k]), rtime(t))
                continue
            layout, data, pts, ring = cloud32(rng, int(rng.integers(40, 90)))
            clouds[t] = (pts, ring)
            b.write("/points", cloud_msg(t, layout, data), rtime(t))
            layout, data, p64 = cloud64(rng, 7)
            clouds[("64", t)] = p64
            b.write("/points64", cloud_msg(t, layout, data), rtime(t))
    return clouds


with tempfile.TemporaryDirectory() as d:
    for comp in ("none", "bz2", "lz4"):
        bag = os.path.join(d, "drive-%s.bag" % comp)
        clouds = write_bag(bag, comp)
        rc, out, err = run("log", bag)
        counts = {l.split()[0]: (l.split()[1], int(l.split()[2])) for l in out.splitlines()[1:]}
        check(rc == 0 and counts.get("/points") == ("sensor_msgs/PointCloud2", len(SCAN_T)) and
              counts.get("/odom") == ("nav_msgs/Odometry", len(ODOM_T)) and
              counts.get("/tf_static") == ("tf2_msgs/TFMessage", 2),
              "%s: revisit log lists topics with types and counts (%s)" % (comp, err.strip() or out))
        rec = os.path.join(d, "rec-" + comp)
        rc, out, err = run("log", bag, "--scans", "/points", "--poses", "/odom", "--out", rec, "--quiet")
        check(rc == 0, "%s: revisit log makes a recording (%s)" % (comp, err.strip()))
        if rc == 0:
            check_recording(rec, clouds, bag, comp)
            rc, _, err = run("inspect", rec, "--quiet")
            check(rc == 0, "%s: revisit inspect reads the recording (%s)" % (comp, err.strip()))

    bag = os.path.join(d, "drive-lz4.bag")
    clouds = write_bag(bag, "lz4")
    # float64 xyz, extra fields, organised rows with padding
    rec = os.path.join(d, "rec64")
    rc, _, err = run("log", bag, "--scans", "/points64", "--poses", "/odom", "--out", rec, "--channels", "2",
                     "--quiet")
    ok = rc == 0
    times = sorted(t for t in SCAN_T if kept(t))
    for k, t in enumerate(times if ok else []):
        a = dump(os.path.join(rec, "scans", "%06d.pcd" % k))
        ok = ok and a.shape[0] == 14 and bool((a[:, :3].astype(np.float32) == clouds[("64", t)]).all())
    check(ok, "float64 x y z among extra fields, organised 2 x 7 with row padding: exact points (%s)" % err.strip())

    # tf: map -> odom (static) -> base (dynamic) -> lidar (static), by scipy Rotation composition.
    rec = os.path.join(d, "rec-tf")
    rc, _, err = run("log", bag, "--scans", "/points", "--poses", "tf", "--frames", "map,lidar", "--out", rec,
                     "--quiet")
    check(rc == 0, "a recording from /tf and /tf_static (%s)" % err.strip())
    if rc == 0:
        worst = max(pose_err((p, r), expected_tf(t)) for t, p, r in read_poses(os.path.join(rec, "poses.csv")))
        check(worst < 1e-9, "chained transforms match scipy Rotation composition (worst %.2e)" % worst)

    # extrinsic on a pose topic: stored in the manifest, applied on load.
    rec = os.path.join(d, "rec-ext")
    q = B_L[1].as_quat()
    ext = ",".join("%.17g" % v for v in list(B_L[0]) + list(q))
    rc, _, err = run("log", bag, "--scans", "/points", "--poses", "/odom", "--extrinsic", ext, "--out", rec, "--quiet")
    loaded = os.path.join(d, "loaded.csv")
    ok = rc == 0 and subprocess.run([POSE, "loaded", rec, loaded]).returncode == 0
    worst = 1
    if ok:
        worst = 0
        for t, p, r in read_poses(loaded):
            op, orr = expected_odom(t)
            worst = max(worst, pose_err((p, r), (op + orr.apply(B_L[0]), orr * B_L[1])))
    check(ok and worst < 1e-9, "the extrinsic is applied on load: pose * extrinsic by scipy Rotation "
          "composition (worst %.2e; %s)" % (worst, err.strip()))

    # the same extrinsic through `revisit index` on the plain pose file, as a 3x4 row in a file
    plain = os.path.join(d, "rec")
    rc0, _, _ = run("log", bag, "--scans", "/points", "--poses", "/odom", "--out", plain, "--quiet")
    row = os.path.join(d, "extrinsic.txt")
    m = np.hstack([B_L[1].as_matrix(), B_L[0].reshape(3, 1)])
    with open(row, "w") as f:
        f.write("# lidar in the base frame\n" + " ".join("%.17g" % v for v in m.ravel()) + "\n")
    man = os.path.join(plain, "indexed.json")
    rc, _, err = run("index", os.path.join(plain, "scans"), "--poses", os.path.join(plain, "poses.csv"),
                     "--extrinsic", row, "--out", man, "--quiet")
    ok = rc0 == 0 and rc == 0 and subprocess.run([POSE, "loaded", man, loaded]).returncode == 0
    worst = 1
    if ok:
        worst = max(pose_err((p, r), (expected_odom(t)[0] + expected_odom(t)[1].apply(B_L[0]),
                                      expected_odom(t)[1] * B_L[1])) for t, p, r in read_poses(loaded))
    check(ok and worst < 1e-9, "revisit index --extrinsic FILE (a 3x4 row) applies on load as well (worst %.2e; %s)" %
          (worst, err.strip()))
    rc, _, err = run("log", bag, "--scans", "/points", "--poses", "/odom", "--extrinsic", "1,2,3", "--out",
                     os.path.join(d, "x"), "--quiet")
    check(rc == 2 and "3 numbers, expected 7" in err and not os.path.exists(os.path.join(d, "x")),
          "an extrinsic of 3 numbers is refused (%s)" % err.strip())

    # Bad input: exit 2, a message naming the file and where, nothing left behind.
    raw = open(bag, "rb").read()

    refused(d, "cut.bag", raw[:len(raw) // 2], "record at byte")
    ci = raw.index(b"compression=lz4")
    refused(d, "codec.bag", raw[:ci] + b"compression=lzz" + raw[ci + 15:], "chunk compression 'lzz', expected none, bz2 or lz4")
    si = raw.index(b"size=", ci)
    size = struct.unpack("<I", raw[si + 5:si + 9])[0]
    refused(d, "size.bag", raw[:si + 5] + struct.pack("<I", size + 100) + raw[si + 9:], "unpacks to")
    refused(d, "type.bag", raw, "type sensor_msgs/PointCloud2, expected nav_msgs/Odometry", "--scans", "/points",
            "--poses", "/points64")
    refused(d, "notf.bag", raw, "no chain of transforms joins frame 'map' to frame 'nowhere'", "--scans", "/points",
            "--poses", "tf", "--frames", "map,nowhere")
    # a cloud whose row_step is shorter than its points
    bad = os.path.join(d, "rowstep.bag")
    with rosbag.Bag(bad, "w") as b:
        layout, data, _, _ = cloud32(rng, 10)
        layout["row_step"] = 200
        b.write("/points", cloud_msg(T0 + 0.05, layout, data), rtime(T0 + 0.05))
        for k in range(3):
            b.write("/odom", odom_msg(ODOM_T[k], *ODOM[k]), rtime(ODOM_T[k]))
    refused(d, "rowstep.bag", open(bad, "rb").read(), "width 10 x point_step 24 is more than row_step 200")

sys.exit(done())
