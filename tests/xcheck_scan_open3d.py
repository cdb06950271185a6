"""xcheck_scan_open3d.py: PCD and PLY files exchanged with Open3D.

Reference: Open3D 0.16 (Debian python3-open3d): open3d.io.read_point_cloud
and open3d.io.write_point_cloud (positions; write_ascii selects ascii or
binary bodies; compressed PCD is checked in xcheck_pcd_compressed.py), and the
tensor API open3d.t.io.read_point_cloud / write_point_cloud, which carries
an "intensity" attribute.  Files revisit writes must open there, and files
Open3D writes must load in revisit with the same values.  Run with
/usr/bin/python3 through tests/run.sh.
"""
import os
import subprocess
import sys
import tempfile

import numpy as np

from checklib import check, done, tool_path

TOOL = tool_path("tool_scan")


try:
    import open3d as o3d
except ImportError:
    check(False, "python3-open3d is installed (run 'make deps')")
    sys.exit(done())


def tool(*args):
    r = subprocess.run([TOOL] + list(args), capture_output=True, text=True)
    return r.returncode, r.stdout, r.stderr


def dump(path):
    """Points as printed by tool_scan with 9 significant digits: compare them
    after rounding to float32, where they are exact."""
    rc, out, err = tool("dump", path)
    if rc:
        return None, err
    lines = out.splitlines()
    head = lines[0].split()
    a = np.array([[float(v) for v in l.split()] for l in lines[1:]]).reshape(int(head[1]), -1)
    return a, ""


rng = np.random.default_rng(11)
N = 2000
xyz = rng.uniform(-60, 60, (N, 3)).astype(np.float32)
inten = rng.uniform(0, 255, N).astype(np.float32)

with tempfile.TemporaryDirectory() as d:
    src = os.path.join(d, "src.txt")
    np.savetxt(src, np.column_stack([xyz, inten]), fmt="%.9g")

    # revisit writes, Open3D reads (legacy API: positions).
    for name in ("w.pcd", "w-ascii.pcd", "w.ply", "w-ascii.ply"):
        out = os.path.join(d, name)
        rc, _, err = tool("convert", src, out)
        check(rc == 0, "revisit writes %s (%s)" % (name, err))
        pc = o3d.io.read_point_cloud(out)
        pts = np.asarray(pc.points)
        # ascii bodies hold 9 significant digits, which give back each
        # float32 exactly once rounded to float32 (Open3D parses to double).
        check(pts.shape == (N, 3) and bool((pts.astype(np.float32) == xyz).all()),
              "Open3D read_point_cloud reads revisit's %s with the same positions" % name)
    # Intensity through the tensor API.
    for name in ("w.pcd", "w.ply"):
        t = o3d.t.io.read_point_cloud(os.path.join(d, name))
        ok = "intensity" in dict(t.point.items()) if hasattr(t.point, "items") else "intensity" in t.point
        if ok:
            got = t.point["intensity"].numpy().ravel()
            ok = got.shape == (N,) and np.abs(got - inten).max() == 0
        check(bool(ok), "Open3D's tensor reader finds revisit's intensity in %s" % name)

    # Open3D writes, revisit reads.
    pc = o3d.geometry.PointCloud()
    pc.points = o3d.utility.Vector3dVector(xyz.astype(np.float64))
    for name, ascii_ in (("o.pcd", False), ("oa.pcd", True), ("o.ply", False), ("oa.ply", True)):
        out = os.path.join(d, name)
        check(o3d.io.write_point_cloud(out, pc, write_ascii=ascii_), "Open3D writes %s" % name)
        a, err = dump(out)
        want = xyz
        if ascii_:
            # Open3D prints ascii values with 6 significant digits: the
            # reference is then the numbers in the file, parsed by numpy.
            with open(out, "rb") as f:
                raw = f.read()
            sep = b"end_header\n" if name.endswith(".ply") else b"DATA ascii\n"
            check(sep in raw, "Open3D wrote %s as ascii (%r)" % (name, raw[:200]))
            lines = raw.split(sep, 1)[-1].decode("latin-1")
            want = np.loadtxt(lines.splitlines(), ndmin=2)[:, :3].astype(np.float32)
            check(np.abs(want - xyz).max() < 1e-3, "the numbers in Open3D's %s are the points, rounded" % name)
        ok = a is not None and a.shape[0] == N and bool((a[:, :3].astype(np.float32) == want).all())
        check(bool(ok), "revisit reads Open3D's %s%s with the same positions (%s)" %
              (name, " (ascii)" if ascii_ else "", err))
    # Tensor API with an intensity attribute (float32), both formats.
    t = o3d.t.geometry.PointCloud()
    t.point["positions"] = o3d.core.Tensor(xyz)
    t.point["intensity"] = o3d.core.Tensor(inten.reshape(-1, 1))
    for name in ("ti.pcd", "ti.ply"):
        out = os.path.join(d, name)
        o3d.t.io.write_point_cloud(out, t)
        a, err = dump(out)
        ok = a is not None and a.shape[0] == N and bool((a[:, :3].astype(np.float32) == xyz).all()) and \
            bool((a[:, 3].astype(np.float32) == inten).all())
        check(bool(ok), "revisit reads positions and intensity from Open3D's tensor %s (%s)" % (name, err))

sys.exit(done())
