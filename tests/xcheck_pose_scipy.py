"""xcheck_pose_scipy.py: pose conversions and pose files against scipy.

Reference: scipy.spatial.transform.Rotation (SciPy 1.10, Debian
python3-scipy): from_quat takes scalar-last quaternions (x, y, z, w) and
normalises them; as_matrix gives the rotation matrix; from_matrix/as_quat go
back.  Run with /usr/bin/python3 through tests/run.sh.
"""
import os
import subprocess
import sys
import tempfile

import numpy as np
from scipy.spatial.transform import Rotation

from checklib import check, done, tool_path

TOOL = tool_path("tool_pose")


def run(args, stdin=""):
    r = subprocess.run([TOOL] + args, input=stdin, capture_output=True, text=True)
    return r.returncode, r.stdout, r.stderr


def quats():
    rng = np.random.default_rng(20261201)
    q = rng.normal(size=(300, 4)) * rng.uniform(0.01, 10, size=(300, 1))
    # Edge cases: identity, half turns about each axis (w = 0), negative w,
    # tiny and large norms, a near-half-turn.
    edge = np.array([[0, 0, 0, 1], [1, 0, 0, 0], [0, 1, 0, 0], [0, 0, 1, 0],
                     [0, 0, 0, -1], [1e-9, 0, 0, 1e-9], [3e6, -4e6, 0, 0],
                     [1, 1e-12, 0, 1e-12], [-0.5, 0.5, -0.5, 0.5]], dtype=float)
    return np.vstack([edge, q])


def test_quat_to_matrix():
    q = quats()
    text = "\n".join(" ".join(repr(float(v)) for v in row) for row in q) + "\n"
    rc, out, _ = run(["q2m"], text)
    rows = [line.split() for line in out.splitlines()]
    check(rc == 0 and len(rows) == len(q), "tool converts every quaternion")
    ours = np.array([[float(v) for v in r] for r in rows]).reshape(-1, 3, 3)
    # Reference: scipy.spatial.transform.Rotation.from_quat(...).as_matrix()
    ref = Rotation.from_quat(q).as_matrix()
    err = np.abs(ours - ref).max()
    check(err < 1e-12, "quaternion -> matrix matches scipy Rotation.as_matrix (max diff %.2e)" % err)
    rc, out, _ = run(["q2m"], "0 0 0 0\nnan 0 0 1\n")
    lines = out.splitlines()
    check(len(lines) == 2 and "zero norm" in lines[0], "a zero quaternion is refused (scipy refuses it too)")
    check(len(lines) == 2 and "not finite" in lines[1], "a NaN quaternion is refused")


def test_matrix_to_quat():
    rng = np.random.default_rng(7)
    rots = Rotation.random(300, random_state=rng)
    extra = Rotation.from_rotvec([[np.pi, 0, 0], [0, np.pi, 0], [0, 0, np.pi],
                                  [np.pi / np.sqrt(2), np.pi / np.sqrt(2), 0], [0, 0, 0]])
    R = np.vstack([rots.as_matrix(), extra.as_matrix()])
    text = "\n".join(" ".join(repr(float(v)) for v in m.ravel()) for m in R) + "\n"
    rc, out, _ = run(["m2q"], text)
    ours = np.array([[float(v) for v in line.split()] for line in out.splitlines()])
    # Reference: scipy Rotation.from_matrix(...).as_quat(); q and -q are the
    # same rotation, so compare up to sign.
    ref = Rotation.from_matrix(R).as_quat()
    d = np.minimum(np.abs(ours - ref).max(axis=1), np.abs(ours + ref).max(axis=1))
    check(rc == 0 and len(ours) == len(R), "tool converts every matrix")
    check(d.max() < 1e-12, "matrix -> quaternion matches scipy as_quat up to sign (max diff %.2e)" % d.max())
    check(bool((ours[:, 3] >= 0).all()), "every quaternion is returned with w >= 0")


def test_pose_files():
    """Round trip: files written here with numpy, read by revisit, written back."""
    rng = np.random.default_rng(3)
    n = 50
    t = np.cumsum(rng.uniform(0.05, 0.2, n)) + 1.7e9
    p = rng.uniform(-100, 100, (n, 3))
    rot = Rotation.random(n, random_state=rng)
    q = rot.as_quat()
    with tempfile.TemporaryDirectory() as d:
        # CSV with the columns in another order and an extra column.
        cols = ["qw", "x", "extra", "t", "qz", "y", "qy", "z", "qx"]
        vals = {"t": t, "x": p[:, 0], "y": p[:, 1], "z": p[:, 2], "qx": q[:, 0], "qy": q[:, 1],
                "qz": q[:, 2], "qw": q[:, 3], "extra": np.zeros(n)}
        with open(os.path.join(d, "a.csv"), "w") as f:
            f.write(",".join(cols) + "\n")
            for k in range(n):
                f.write(",".join(repr(float(vals[c][k])) for c in cols) + "\n")
        np.savetxt(os.path.join(d, "b.txt"), np.column_stack([t, p, q]), fmt="%.17g")
        M = np.concatenate([rot.as_matrix(), p[:, :, None]], axis=2).reshape(n, 12)
        np.savetxt(os.path.join(d, "c.txt"), M, fmt="%.17g")
        np.savetxt(os.path.join(d, "c_times.txt"), t, fmt="%.17g")
        cases = [("a.csv", "auto", None, "csv"), ("b.txt", "auto", None, "text"),
                 ("c.txt", "auto", "c_times.txt", "matrix"), ("b.txt", "text", None, "text")]
        for name, lay, times, want in cases:
            args = ["read", os.path.join(d, name), lay] + ([os.path.join(d, times)] if times else [])
            rc, out, err = run(args + [os.path.join(d, "out.csv")])
            check(rc == 0 and out.split() == [want, str(n)], "%s read as %s (got %r %r)" % (name, want, out, err))
            if rc:
                continue
            back = np.genfromtxt(os.path.join(d, "out.csv"), delimiter=",", names=True)
            check(np.abs(back["t"] - t).max() == 0, "%s: times survive exactly" % name)
            pos = np.column_stack([back["x"], back["y"], back["z"]])
            check(np.abs(pos - p).max() < 1e-12, "%s: positions survive" % name)
            qb = np.column_stack([back["qx"], back["qy"], back["qz"], back["qw"]])
            # Same rotation: compare matrices from scipy, not raw quaternion signs.
            diff = np.abs(Rotation.from_quat(qb).as_matrix() - rot.as_matrix()).max()
            check(diff < 1e-12, "%s: rotations survive (max diff %.2e)" % (name, diff))
        # Written by revisit in each layout, read here with numpy.
        for lay in ("text", "matrix"):
            out = os.path.join(d, "w_" + lay)
            extra = [out + ".times"] if lay == "matrix" else []
            rc, _, err = run(["write", os.path.join(d, "a.csv"), lay, out] + extra)
            check(rc == 0, "revisit writes the %s layout (%s)" % (lay, err))
            if rc:
                continue
            a = np.loadtxt(out)
            if lay == "text":
                ok = np.abs(a[:, 0] - t).max() == 0 and np.abs(a[:, 1:4] - p).max() < 1e-12
                ok = ok and np.abs(Rotation.from_quat(a[:, 4:8]).as_matrix() - rot.as_matrix()).max() < 1e-12
            else:
                Rm = a.reshape(n, 3, 4)
                ok = np.abs(Rm[:, :, :3] - rot.as_matrix()).max() < 1e-12 and np.abs(Rm[:, :, 3] - p).max() < 1e-12
                ok = ok and np.abs(np.loadtxt(out + ".times") - t).max() == 0
            check(bool(ok), "the %s file revisit wrote reads back in numpy with the same poses" % lay)


test_quat_to_matrix()
test_matrix_to_quat()
test_pose_files()
sys.exit(done())
