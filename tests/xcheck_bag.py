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
import csv
import hashlib
import json
import os
import struct
import subprocess
import sys
import tempfile

import numpy as np
from scipy.spatial.transform import Rotation, Slerp

from checklib import check, done, tool_path

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

REVISIT = os.environ.get("REVISIT_BIN", "build/revisit")
SCAN = tool_path("tool_scan")
POSE = tool_path("tool_pose")
rng = np.random.default_rng(5)
T0 = 1000


def run(*args):
    r = subprocess.run([REVISIT] + [str(a) for a in args], capture_output=True, text=True)
    return r.returncode, r.stdout, r.stderr


def stamp(t):
    sec = int(np.floor(t))
    return rospy.Time(sec, int(round((t - sec) * 1e9)))


def stamp_s(t):
    """The stamp's time as revisit computes it: sec + nsec * 1e-9 in doubles."""
    s = stamp(t)
    return s.secs + s.nsecs * 1e-9


# The drive: odometry at 20 Hz over 2 s, with a hole from 1.0 s to 1.5 s.
ODOM_T = [stamp_s(T0 + 0.05 * k) for k in range(41) if not (1.0 < 0.05 * k < 1.5)]


def drive(t):
    u = t - T0
    pos = np.array([2.0 * u, np.sin(u), 0.1 * u])
    rot = Rotation.from_euler("zyx", [0.9 * u, 0.05 * u, -0.03 * u])
    return pos, rot


ODOM = [drive(t) for t in ODOM_T]
# Scans at 10 Hz, 13 ms after the pose ticks; one before the first pose,
# one in the hole, one after the last pose.
SCAN_T = [stamp_s(T0 + 0.1 * j + 0.013) for j in range(19)] + [stamp_s(T0 - 0.5), stamp_s(T0 + 3.0)]
# base -> lidar (static) and map -> odom (static)
B_L = (np.array([0.8, 0.0, 1.6]), Rotation.from_euler("xyz", [0.01, 0.02, 0.0]))
M_O = (np.array([5.0, -3.0, 0.0]), Rotation.from_euler("z", 0.5))


def cloud32(t, n):
    """float32 x y z intensity, uint16 ring at 16, padded to 24 bytes."""
    pts = rng.uniform(-50, 50, (n, 3)).astype(np.float32)
    inten = rng.uniform(0, 255, n).astype(np.float32)
    ring = rng.integers(0, 32, n).astype(np.uint16)
    m = PointCloud2()
    m.header.stamp = stamp(t)
    m.header.frame_id = "lidar"
    m.height, m.width = 1, n
    m.fields = [PointField("x", 0, 7, 1), PointField("y", 4, 7, 1), PointField("z", 8, 7, 1),
                PointField("intensity", 12, 7, 1), PointField("ring", 16, 4, 1)]
    m.point_step, m.row_step = 24, 24 * n
    m.data = b"".join(struct.pack("<4fH6x", *pts[k], inten[k], ring[k]) for k in range(n))
    m.is_dense = True
    return m, np.column_stack([pts, inten]), ring


def cloud64(t, w):
    """Organised 2 x w, float64 x y z with extra fields, rows padded by 8 bytes."""
    h = 2
    pts = rng.uniform(-20, 20, (h * w, 3))
    m = PointCloud2()
    m.header.stamp = stamp(t)
    m.header.frame_id = "lidar"
    m.height, m.width = h, w
    m.fields = [PointField("flag", 0, 2, 1), PointField("x", 8, 8, 1), PointField("y", 16, 8, 1),
                PointField("z", 24, 8, 1), PointField("noise", 32, 7, 1)]
    m.point_step, m.row_step = 40, 40 * w + 8
    rows = []
    for r in range(h):
        rows.append(b"".join(struct.pack("<B7x3df4x", 1, *pts[r * w + c], 0.5) for c in range(w)) + b"\0" * 8)
    m.data = b"".join(rows)
    return m, pts.astype(np.float32)


def odom_msg(t, pos, rot):
    m = Odometry()
    m.header.stamp = stamp(t)
    m.header.frame_id = "odom"
    m.child_frame_id = "base"
    m.pose.pose.position.x, m.pose.pose.position.y, m.pose.pose.position.z = pos
    q = rot.as_quat()
    o = m.pose.pose.orientation
    o.x, o.y, o.z, o.w = q
    return m


def tf_msg(t, parent, child, pos, rot):
    m = TransformStamped()
    m.header.stamp = stamp(t)
    m.header.frame_id = parent
    m.child_frame_id = child
    m.transform.translation.x, m.transform.translation.y, m.transform.translation.z = pos
    q = rot.as_quat()
    r = m.transform.rotation
    r.x, r.y, r.z, r.w = q
    return TFMessage([m])


def write_bag(path, compression):
    clouds = {}
    with rosbag.Bag(path, "w", compression=compression, chunk_threshold=20000) as b:
        b.write("/tf_static", tf_msg(T0, "map", "odom", *M_O), stamp(T0))
        b.write("/tf_static", tf_msg(T0, "base", "lidar", *B_L), stamp(T0))
        events = [(t, "o", k) for k, t in enumerate(ODOM_T)] + [(t, "s", j) for j, t in enumerate(SCAN_T)]
        for t, kind, k in sorted(events):
            if kind == "o":
                b.write("/odom", odom_msg(t, *ODOM[k]), stamp(t))
                b.write("/tf", tf_msg(t, "odom", "base", *ODOM[k]), stamp(t))
            else:
                m, pts, ring = cloud32(t, int(rng.integers(40, 90)))
                clouds[t] = (pts, ring)
                b.write("/points", m, stamp(t))
                m64, p64 = cloud64(t, 7)
                clouds[("64", t)] = p64
                b.write("/points64", m64, stamp(t))
    return clouds


def expected_odom(t):
    """Pose at t between odometry samples: numpy.interp and scipy Slerp."""
    ts = np.array(ODOM_T)
    pos = np.array([np.interp(t, ts, [p[i] for p, _ in ODOM]) for i in range(3)])
    rot = Slerp(ts, Rotation.concatenate([r for _, r in ODOM]))([t])[0]
    return pos, rot


def kept(t):
    """A scan has poses around it at most 0.2 s apart."""
    ts = np.array(ODOM_T)
    if t < ts[0] or t > ts[-1]:
        return False
    i = np.searchsorted(ts, t)
    return ts[i] == t or ts[i] - ts[i - 1] <= 0.2


def read_poses(path):
    with open(path) as f:
        rows = list(csv.DictReader(f))
    return [(float(r["t"]), np.array([float(r[k]) for k in "xyz"]),
             Rotation.from_quat([float(r[k]) for k in ("qx", "qy", "qz", "qw")])) for r in rows]


def dump(path):
    r = subprocess.run([SCAN, "dump", path], capture_output=True, text=True)
    lines = r.stdout.splitlines()
    head = lines[0].split()
    return np.array([[float(v) for v in l.split()] for l in lines[1:]]).reshape(int(head[1]), -1)


def pose_err(got, want):
    (p, r), (wp, wr) = got, want
    return max(np.abs(p - wp).max(), (r.inv() * wr).magnitude())


def check_recording(rec, clouds, bagpath, label):
    man = json.load(open(os.path.join(rec, "recording.json")))
    times = sorted(t for t in SCAN_T if kept(t))
    poses = read_poses(os.path.join(rec, "poses.csv"))
    check(len(poses) == len(times) and all(abs(a[0] - b) < 1e-9 for a, b in zip(poses, times)),
          "%s: one pose per kept scan, at the scan stamps (%d of %d)" % (label, len(poses), len(times)))
    worst = max(pose_err((p, r), expected_odom(t)) for t, p, r in poses)
    # scipy.spatial.transform.Slerp and numpy.interp give the reference.
    check(worst < 1e-9, "%s: poses between odometry samples match Slerp + interp (worst %.2e)" % (label, worst))
    ok = True
    for k, t in enumerate(times):
        a = dump(os.path.join(rec, "scans", "%06d.pcd" % k))
        pts, ring = clouds[t]
        ok = ok and a.shape[0] == pts.shape[0] and bool((a[:, :4].astype(np.float32) == pts).all()) and \
            bool((a[:, 4] == ring).all())
    check(ok, "%s: every scan holds exactly the points, intensity and ring written" % label)
    log = man.get("log", {})
    check(log.get("bytes") == os.path.getsize(bagpath) and
          log.get("sha256") == hashlib.sha256(open(bagpath, "rb").read()).hexdigest(),
          "%s: the manifest records the log's size and SHA-256 (hashlib.sha256)" % label)
    check(log.get("scans_topic") == "/points" and log.get("scans_in_log") == len(SCAN_T) and
          log.get("scans_dropped") == len(SCAN_T) - len(times), "%s: the manifest records topic and counts" % label)
    with open(os.path.join(rec, "dropped.csv")) as f:
        dropped = sorted(float(r["t"]) for r in csv.DictReader(f))
    want = sorted(t for t in SCAN_T if not kept(t))
    check(len(dropped) == len(want) and all(abs(a - b) < 1e-6 for a, b in zip(dropped, want)),
          "%s: dropped.csv names the scans with no pose near enough" % label)


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
        worst = 0
        for t, p, r in read_poses(os.path.join(rec, "poses.csv")):
            op, orr = expected_odom(t)
            wp = M_O[0] + M_O[1].apply(op + orr.apply(B_L[0]))
            wr = M_O[1] * orr * B_L[1]
            worst = max(worst, pose_err((p, r), (wp, wr)))
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

    def refused(name, data, want, *extra):
        p = os.path.join(d, name)
        with open(p, "wb") as f:
            f.write(data)
        out = os.path.join(d, "out-" + name)
        args = ["log", p] + list(extra or ("--scans", "/points", "--poses", "/odom")) + ["--out", out, "--quiet"]
        rc, _, err = run(*args)
        left = [x for x in os.listdir(d) if x.startswith("out-" + name)]
        check(rc == 2 and name in err and want in err and not left,
              "%s: refused with exit 2 naming the file and '%s', nothing left (%d, %s, %s)" %
              (name, want, rc, err.strip(), left))

    refused("cut.bag", raw[:len(raw) // 2], "record at byte")
    ci = raw.index(b"compression=lz4")
    refused("codec.bag", raw[:ci] + b"compression=lzz" + raw[ci + 15:], "chunk compression 'lzz', expected none, bz2 or lz4")
    si = raw.index(b"size=", ci)
    size = struct.unpack("<I", raw[si + 5:si + 9])[0]
    refused("size.bag", raw[:si + 5] + struct.pack("<I", size + 100) + raw[si + 9:], "unpacks to")
    refused("type.bag", raw, "type sensor_msgs/PointCloud2, expected nav_msgs/Odometry", "--scans", "/points",
            "--poses", "/points64")
    refused("notf.bag", raw, "no chain of transforms joins frame 'map' to frame 'nowhere'", "--scans", "/points",
            "--poses", "tf", "--frames", "map,nowhere")
    # a cloud whose row_step is shorter than its points
    bad = os.path.join(d, "rowstep.bag")
    with rosbag.Bag(bad, "w") as b:
        m, _, _ = cloud32(T0 + 0.05, 10)
        m.row_step = 200
        b.write("/points", m, stamp(T0 + 0.05))
        for k in range(3):
            b.write("/odom", odom_msg(ODOM_T[k], *ODOM[k]), stamp(ODOM_T[k]))
    refused("rowstep.bag", open(bad, "rb").read(), "width 10 x point_step 24 is more than row_step 200")

sys.exit(done())
