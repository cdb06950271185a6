"""logdrive.py: the drive that tests/xcheck_bag.py and tests/xcheck_mcap.py
write into robot logs, what the recording made from it must hold, and the
checks both scripts share.

The expected poses come from scipy.spatial.transform.Slerp (rotation) and
numpy.interp (position) between the odometry samples, chained transforms
from scipy.spatial.transform.Rotation composition.  Imported by the
xcheck scripts (tests/ is sys.path[0] there).
"""
import csv
import hashlib
import json
import os
import struct
import subprocess

import numpy as np
from scipy.spatial.transform import Rotation, Slerp

from checklib import check, tool_path

REVISIT = os.environ.get("REVISIT_BIN", "build/revisit")
SCAN = tool_path("tool_scan")
POSE = tool_path("tool_pose")
T0 = 1000


def run(*args):
    r = subprocess.run([REVISIT] + [str(a) for a in args], capture_output=True, text=True)
    return r.returncode, r.stdout, r.stderr


def stamp(t):
    """(sec, nsec) of a time in seconds."""
    sec = int(np.floor(t))
    return sec, int(round((t - sec) * 1e9))


def stamp_s(t):
    """The stamp's time as revisit computes it: sec + nsec * 1e-9 in doubles."""
    s, n = stamp(t)
    return s + n * 1e-9


# Odometry at 20 Hz over 2 s, with a hole from 1.0 s to 1.5 s.
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

# PointField datatypes (sensor_msgs/PointField): 2 uint8, 4 uint16, 7 float32, 8 float64
FIELDS32 = [("x", 0, 7), ("y", 4, 7), ("z", 8, 7), ("intensity", 12, 7), ("ring", 16, 4)]
FIELDS64 = [("flag", 0, 2), ("x", 8, 8), ("y", 16, 8), ("z", 24, 8), ("noise", 32, 7)]


def cloud32(rng, n):
    """float32 x y z intensity, uint16 ring at 16, padded to 24 bytes a point:
    (layout, data bytes, x y z i as float32, ring)."""
    pts = rng.uniform(-50, 50, (n, 3)).astype(np.float32)
    inten = rng.uniform(0, 255, n).astype(np.float32)
    ring = rng.integers(0, 32, n).astype(np.uint16)
    data = b"".join(struct.pack("<4fH6x", *pts[k], inten[k], ring[k]) for k in range(n))
    layout = dict(height=1, width=n, fields=FIELDS32, point_step=24, row_step=24 * n)
    return layout, data, np.column_stack([pts, inten]), ring


def cloud64(rng, w):
    """Organised 2 x w, float64 x y z among extra fields, rows padded by 8 bytes."""
    h = 2
    pts = rng.uniform(-20, 20, (h * w, 3))
    rows = [b"".join(struct.pack("<B7x3df4x", 1, *pts[r * w + c], 0.5) for c in range(w)) + b"\0" * 8
            for r in range(h)]
    layout = dict(height=h, width=w, fields=FIELDS64, point_step=40, row_step=40 * w + 8)
    return layout, b"".join(rows), pts.astype(np.float32)


def events():
    """(time, kind, index) of every message in time order: 'o' odometry, 's' scan."""
    ev = [(t, "o", k) for k, t in enumerate(ODOM_T)] + [(t, "s", j) for j, t in enumerate(SCAN_T)]
    return sorted(ev)


def expected_odom(t):
    """Pose at t between odometry samples: numpy.interp and scipy Slerp."""
    ts = np.array(ODOM_T)
    pos = np.array([np.interp(t, ts, [p[i] for p, _ in ODOM]) for i in range(3)])
    rot = Slerp(ts, Rotation.concatenate([r for _, r in ODOM]))([t])[0]
    return pos, rot


def expected_tf(t):
    """map -> lidar: M_O * odometry(t) * B_L, by scipy Rotation composition."""
    op, orr = expected_odom(t)
    return M_O[0] + M_O[1].apply(op + orr.apply(B_L[0])), M_O[1] * orr * B_L[1]


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


def worst_pose(path, want):
    return max(pose_err((p, r), want(t)) for t, p, r in read_poses(path))


def check_recording(rec, clouds, logpath, label):
    """The recording from the scans topic and the odometry: poses, points,
    manifest and the dropped list."""
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
    check(log.get("bytes") == os.path.getsize(logpath) and
          log.get("sha256") == hashlib.sha256(open(logpath, "rb").read()).hexdigest(),
          "%s: the manifest records the log's size and SHA-256 (hashlib.sha256)" % label)
    check(log.get("scans_topic") == "/points" and log.get("scans_in_log") == len(SCAN_T) and
          log.get("scans_dropped") == len(SCAN_T) - len(times), "%s: the manifest records topic and counts" % label)
    with open(os.path.join(rec, "dropped.csv")) as f:
        dropped = sorted(float(r["t"]) for r in csv.DictReader(f))
    want = sorted(t for t in SCAN_T if not kept(t))
    check(len(dropped) == len(want) and all(abs(a - b) < 1e-6 for a, b in zip(dropped, want)),
          "%s: dropped.csv names the scans with no pose near enough" % label)


def refused(d, name, data, want, *args):
    """A log that `revisit log` must refuse: exit 2, the file and want in the
    message, nothing left at the output folder."""
    p = os.path.join(d, name)
    with open(p, "wb") as f:
        f.write(data)
    out = os.path.join(d, "out-" + name)
    rc, _, err = run("log", p, *(args or ("--scans", "/points", "--poses", "/odom")), "--out", out, "--quiet")
    left = [x for x in os.listdir(d) if x.startswith("out-" + name)]
    check(rc == 2 and name in err and want in err and not left,
          "%s: refused with exit 2 naming the file and '%s', nothing left (%d, %s, %s)" %
          (name, want, rc, err.strip(), left))
