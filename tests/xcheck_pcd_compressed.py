"""xcheck_pcd_compressed.py: PCD DATA binary_compressed exchanged with Open3D
and pcl-tools.

References: Open3D 0.16 (Debian python3-open3d), open3d.io.write_point_cloud
with compressed=True and open3d.io.read_point_cloud; pcl-tools
(Debian), pcl_convert_pcd_ascii_binary IN OUT 2 (binary_compressed) and
0 (ascii, with a precision argument).  A compressed file either writes must
load in revisit with the coordinates of the uncompressed file, and the
compressed files revisit writes must open in both.  Run with /usr/bin/python3
through tests/run.sh.
"""
import os
import shutil
import subprocess
import sys
import tempfile

import numpy as np

from checklib import check, done, tool_path

TOOL = tool_path("tool_scan")

try:
    import open3d as o3d
except ImportError:
    o3d = None
check(o3d is not None, "python3-open3d is installed (run 'make deps')")
PCL = shutil.which("pcl_convert_pcd_ascii_binary")
check(PCL is not None, "pcl-tools is installed (pcl_convert_pcd_ascii_binary; run 'make deps')")


def tool(*args):
    r = subprocess.run([TOOL] + list(args), capture_output=True, text=True)
    return r.returncode, r.stdout, r.stderr


def dump(path):
    """Points as tool_scan prints them (9 significant digits: exact float32)."""
    rc, out, err = tool("dump", path)
    if rc:
        return None, err
    lines = out.splitlines()
    n = int(lines[0].split()[1])
    a = np.array([[float(v) for v in l.split()] for l in lines[1:]]).reshape(n, -1)
    return a.astype(np.float32), ""


def data_kind(path):
    with open(path, "rb") as f:
        head = f.read(4096)
    for line in head.split(b"\n"):
        if line.startswith(b"DATA "):
            return line[5:].strip().decode()
    return None


def pcl(src, dst, fmt):
    args = [PCL, src, dst, str(fmt)] + (["9"] if fmt == 0 else [])
    r = subprocess.run(args, capture_output=True, text=True)
    return r.returncode == 0 and os.path.exists(dst)


def ascii_body(path):
    """The numbers of a DATA ascii PCD file, one row a point."""
    with open(path, "rb") as f:
        raw = f.read()
    body = raw.split(b"DATA ascii\n", 1)[1].decode()
    return np.loadtxt(body.splitlines(), ndmin=2)


rng = np.random.default_rng(23)
N = 3000
# Repeated values make the LZF block really compress (back references).
xyz = np.round(rng.uniform(-40, 40, (N, 3)), 1).astype(np.float32)
inten = np.round(rng.uniform(0, 100, N)).astype(np.float32)

with tempfile.TemporaryDirectory() as d:
    src = os.path.join(d, "src.txt")
    np.savetxt(src, np.column_stack([xyz, inten]), fmt="%.9g")
    plain = os.path.join(d, "plain.pcd")
    rc, _, err = tool("convert", src, plain)
    check(rc == 0, "revisit writes the uncompressed reference file (%s)" % err)
    ref, _ = dump(plain)

    if o3d is not None:
        pc = o3d.geometry.PointCloud()
        pc.points = o3d.utility.Vector3dVector(xyz.astype(np.float64))
        oc = os.path.join(d, "o3d-c.pcd")
        check(o3d.io.write_point_cloud(oc, pc, compressed=True) and data_kind(oc) == "binary_compressed",
              "Open3D write_point_cloud(compressed=True) writes DATA binary_compressed")
        a, err = dump(oc)
        check(a is not None and a.shape[0] == N and bool((a[:, :3] == ref[:, :3]).all()),
              "revisit reads Open3D's compressed PCD with the coordinates of the uncompressed file (%s)" % err)

    if PCL is not None:
        pa = os.path.join(d, "pcl-c.pcd")
        check(pcl(plain, pa, 2) and data_kind(pa) == "binary_compressed",
              "pcl_convert_pcd_ascii_binary format 2 writes DATA binary_compressed")
        a, err = dump(pa)
        check(a is not None and a.shape[0] == N and bool((a == ref).all()),
              "revisit reads pcl-tools' compressed PCD with the same x y z intensity (%s)" % err)

    # revisit writes compressed, both open it.
    ours = os.path.join(d, "ours-compressed.pcd")
    rc, _, err = tool("convert", src, ours)
    check(rc == 0 and data_kind(ours) == "binary_compressed", "revisit writes DATA binary_compressed (%s)" % err)
    check(os.path.getsize(ours) < os.path.getsize(plain), "revisit's compressed file is smaller than the binary one")
    if o3d is not None:
        pts = np.asarray(o3d.io.read_point_cloud(ours).points)
        check(pts.shape == (N, 3) and bool((pts.astype(np.float32) == xyz).all()),
              "Open3D read_point_cloud opens revisit's compressed PCD with the same positions")
    if PCL is not None:
        back = os.path.join(d, "ours-ascii.pcd")
        ok = pcl(ours, back, 0)
        check(ok, "pcl_convert_pcd_ascii_binary opens revisit's compressed PCD")
        if ok:
            b = ascii_body(back).astype(np.float32)
            check(b.shape == (N, 4) and bool((b[:, :3] == xyz).all()) and bool((b[:, 3] == inten).all()),
                  "pcl-tools reads back the same x y z intensity from revisit's compressed PCD")

sys.exit(done())
