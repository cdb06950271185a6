#!/usr/bin/python3
"""xcheck_scan_bytes.py: scan files byte for byte against outside writers.

References:
- numpy (structured dtypes, ndarray.tobytes, np.frombuffer) writes the
  expected files: PCD v0.7 binary bodies hold the points one after another,
  each the fields in header order, little-endian (the PCD file-format
  description of the Point Cloud Library documentation, "The PCD (Point
  Cloud Data) file format"); PLY binary_little_endian bodies hold the
  vertices one after another, the properties in header order (Turk, "The
  PLY polygon file format", 1994).  Python's '%.9g' prints a float as C's
  printf does (both correctly rounded), which the ascii bodies use.
- pcl-tools (Debian): `pcl_convert_pcd_ascii_binary IN OUT 1` parses an
  ascii PCD and writes it as DATA binary (its body, then zero padding).

Reading: files numpy writes in several layouts (revisit's own x y z
intensity ring time; 16-byte x y z intensity; other types with padding
fields; x y z alone) load with numpy's values, over bodies of many read
blocks, and the non-finite points are dropped exactly where numpy finds
them.  Writing: what revisit writes from those values is the bytes numpy
builds (the header as harness/io/pcd.h and ply.h document it, numpy's body),
its binary PCD body is the one pcl-tools writes for the same values, and
`revisit perturb` with a chain that keeps or drops whole points writes the
kept points' bytes unchanged.  Run with /usr/bin/python3 through
tests/run.sh.
"""
import json
import os
import shutil
import subprocess
import sys
import tempfile

import numpy as np

from checklib import check, done, tool_path

TOOL = tool_path("tool_scan")
BIN = os.environ.get("REVISIT_BIN", "build/revisit")
PCL = shutil.which("pcl_convert_pcd_ascii_binary")

REC = np.dtype([("x", "<f4"), ("y", "<f4"), ("z", "<f4"), ("intensity", "<f4"), ("ring", "<u2"),
                ("time", "<f4")])


def pcd_header(fields, sizes, types, n, data):
    return ("VERSION 0.7\nFIELDS %s\nSIZE %s\nTYPE %s\nCOUNT %s\nWIDTH %d\nHEIGHT 1\n"
            "VIEWPOINT 0 0 0 1 0 0 0\nPOINTS %d\nDATA %s\n" %
            (" ".join(fields), " ".join(map(str, sizes)), " ".join(types), " ".join("1" * len(fields)),
             n, n, data)).encode()


def revisit_pcd_header(n, ring, time, data):
    """The header pcd.h documents for what revisit writes."""
    f, s, t = ["x", "y", "z", "intensity"], [4, 4, 4, 4], ["F"] * 4
    if ring:
        f, s, t = f + ["ring"], s + [2], t + ["U"]
    if time:
        f, s, t = f + ["time"], s + [4], t + ["F"]
    return b"# .PCD v0.7 - written by revisit\n" + pcd_header(f, s, t, n, data)


def revisit_ply_header(n, fmt):
    return ("ply\nformat %s 1.0\ncomment written by revisit\nelement vertex %d\nproperty float x\n"
            "property float y\nproperty float z\nproperty float intensity\nproperty ushort ring\n"
            "property float time\nend_header\n" % (fmt, n)).encode()


def write_pcd(path, arr, types):
    """arr a structured array; types the PCD TYPE letter of each field."""
    names = list(arr.dtype.names)
    sizes = [arr.dtype[k].itemsize for k in names]
    with open(path, "wb") as f:
        f.write(pcd_header(names, sizes, types, len(arr), "binary"))
        f.write(arr.tobytes())


def tool(*args):
    r = subprocess.run([TOOL] + list(args), capture_output=True, text=True)
    return r.returncode, r.stdout, r.stderr


def load(path, mode="dump"):
    """tool_scan's view of a file: (columns as float64 array, flags, dropped)."""
    rc, out, err = tool(mode, path)
    if rc:
        return None, None, err
    lines = out.splitlines()
    head = lines[0].split()
    dropped = int(lines[1].split()[1]) if mode == "finite" else None
    body = lines[2:] if mode == "finite" else lines[1:]
    a = np.array([[float(v) for v in l.split()] for l in body]).reshape(int(head[1]), -1)
    return a, (int(head[3]), int(head[5])), dropped


def same_f32(got, want):
    """got: printed with 9 significant digits (exact for float32); compare bits,
    NaN with NaN."""
    g = got.astype(np.float32)
    w = np.asarray(want, dtype=np.float32)
    return g.shape == w.shape and bool(np.all((g.view(np.uint32) == w.view(np.uint32)) |
                                              (np.isnan(g) & np.isnan(w))))


def points(n, seed):
    rng = np.random.default_rng(seed)
    a = np.zeros(n, REC)
    for k in ("x", "y", "z"):
        a[k] = rng.uniform(-90, 90, n)
    a["intensity"] = rng.uniform(0, 255, n)
    a["ring"] = rng.integers(0, 65536, n)
    a["time"] = rng.uniform(0, 0.1, n)
    # values whose bits a conversion could change: signed zero, subnormals, extremes
    a["x"][:4] = [-0.0, 1e-40, -3.4e38, 3.4e38]
    a["intensity"][4:6] = [-0.0, 1e-45]
    return a


with tempfile.TemporaryDirectory() as d:
    P = lambda name: os.path.join(d, name)
    # ---- reading ---------------------------------------------------------
    # 40,000 records of 22 bytes: the body spans the first read and four
    # blocks, records cut at every block edge.
    a = points(40000, 1)
    write_pcd(P("own.pcd"), a, "FFFFUF")
    got, flags, err = load(P("own.pcd"))
    ok = got is not None and flags == (1, 1) and \
        all(same_f32(got[:, j], a[key]) for j, key in enumerate(("x", "y", "z", "intensity"))) and \
        bool((got[:, 4] == a["ring"]).all()) and same_f32(got[:, 5], a["time"])
    check(ok, "a PCD of x y z intensity ring time that numpy wrote loads with numpy's values, bit for bit (%s)" % err)
    # one non-finite coordinate in the fourth block alone, then one in the first read as well
    bad = a.copy()
    bad["y"][30000] = np.nan
    bad["intensity"][20000] = np.nan   # kept: only coordinates count
    for name, where in (("late", "four blocks on"), ("both", "in the first read and four blocks on")):
        if name == "both":
            bad["z"][5] = np.inf
        write_pcd(P(name + ".pcd"), bad, "FFFFUF")
        got, _, dropped = load(P(name + ".pcd"), "finite")
        keep = np.isfinite(bad["x"]) & np.isfinite(bad["y"]) & np.isfinite(bad["z"])
        k = bad[keep]
        ok = got is not None and dropped == (~keep).sum() and len(got) == len(k) and \
            same_f32(got[:, 1], k["y"]) and same_f32(got[:, 3], k["intensity"]) and same_f32(got[:, 5], k["time"])
        check(ok, "the points numpy finds non-finite (%s) are dropped, the rest kept in order (dropped %s)" %
              (where, dropped))

    # 16-byte x y z intensity records: read straight into place.
    x16 = np.zeros(30000, [("x", "<f4"), ("y", "<f4"), ("z", "<f4"), ("intensity", "<f4")])
    for key in x16.dtype.names:
        x16[key] = a[key][:30000]
    x16["x"][25000] = -np.inf
    write_pcd(P("xyzi.pcd"), x16, "FFFF")
    got, flags, dropped = load(P("xyzi.pcd"), "finite")
    k = np.delete(x16, 25000)
    ok = got is not None and flags == (0, 0) and dropped == 1 and \
        all(same_f32(got[:, j], k[key]) for j, key in enumerate(x16.dtype.names))
    check(ok, "16-byte x y z intensity records load with numpy's values; an infinity after the first read is dropped")

    # Other types, padding fields and a signed ring: converted value by value.
    o = np.zeros(15000, [("x", "<f8"), ("_", "<u4"), ("y", "<f8"), ("z", "<f4"), ("intensity", "u1"),
                         ("ring", "<i2"), ("t", "<f8")])
    o["x"], o["y"], o["z"] = a["x"][:15000], a["y"][:15000] * 1.000000001, a["z"][:15000]
    o["_"] = 0xffffffff
    o["intensity"] = np.arange(15000) % 256
    o["ring"] = np.arange(15000) % 200 - 50
    o["t"] = a["time"][:15000].astype(np.float64) / 3
    write_pcd(P("other.pcd"), o, ["F", "U", "F", "F", "U", "I", "F"])
    got, flags, err = load(P("other.pcd"))
    ok = got is not None and flags == (1, 1) and same_f32(got[:, 0], o["x"].astype(np.float32)) and \
        same_f32(got[:, 1], o["y"].astype(np.float32)) and same_f32(got[:, 3], o["intensity"]) and \
        bool((got[:, 4] == np.maximum(o["ring"], 0)).all()) and same_f32(got[:, 5], o["t"].astype(np.float32))
    # numpy's astype rounds to nearest, as C's conversion does; a negative ring reads as 0 (pcd.c)
    check(ok, "float64, uint8 and int16 fields with a padding field load as numpy converts them (%s)" % err)
    xyz = np.zeros(20000, [("x", "<f4"), ("y", "<f4"), ("z", "<f4")])
    xyz["x"], xyz["y"], xyz["z"] = a["x"][:20000], a["y"][:20000], a["z"][:20000]
    write_pcd(P("xyz.pcd"), xyz, "FFF")
    got, flags, err = load(P("xyz.pcd"))
    ok = got is not None and same_f32(got[:, 2], xyz["z"]) and bool((got[:, 3] == 0).all())
    check(ok, "x y z alone load, intensity 0 (%s)" % err)

    # ---- writing ---------------------------------------------------------
    n = len(a)
    rc, _, err = tool("convert", P("own.pcd"), P("w.pcd"))
    want = revisit_pcd_header(n, 1, 1, "binary") + a.tobytes()
    check(rc == 0 and open(P("w.pcd"), "rb").read() == want,
          "revisit's binary PCD is the documented header and numpy's body (%s)" % err)
    rc, _, err = tool("convert", P("own.pcd"), P("w.ply"))
    want = revisit_ply_header(n, "binary_little_endian") + a.tobytes()
    check(rc == 0 and open(P("w.ply"), "rb").read() == want,
          "revisit's binary PLY is the documented header and numpy's body (%s)" % err)
    big = points(250000, 3)   # 5.5 MB: the writer hands it to the file in several blocks
    write_pcd(P("big.pcd"), big, "FFFFUF")
    for ext, head in ((".pcd", revisit_pcd_header(len(big), 1, 1, "binary")),
                      (".ply", revisit_ply_header(len(big), "binary_little_endian"))):
        rc, _, err = tool("convert", P("big.pcd"), P("wbig" + ext))
        check(rc == 0 and open(P("wbig" + ext), "rb").read() == head + big.tobytes(),
              "a scan of several MiB is written as the header and numpy's body (%s %s)" % (ext, err))
    rc, _, err = tool("convert", P("xyzi.pcd"), P("w16.pcd"))
    want = revisit_pcd_header(len(x16), 0, 0, "binary") + x16.tobytes()
    check(rc == 0 and open(P("w16.pcd"), "rb").read() == want,
          "a cloud without ring and time is written as 16-byte records (%s)" % err)
    rc, _, err = tool("convert", P("xyzi.pcd"), P("w16.bin"))
    check(rc == 0 and open(P("w16.bin"), "rb").read() == x16.tobytes(), "the raw layout is numpy's records (%s)" % err)
    m = 3000
    lines = "".join("%.9g %.9g %.9g %.9g %d %.9g\n" % (float(r["x"]), float(r["y"]), float(r["z"]),
                                                      float(r["intensity"]), int(r["ring"]), float(r["time"]))
                    for r in a[:m])
    write_pcd(P("own3k.pcd"), a[:m], "FFFFUF")
    rc, _, err = tool("convert", P("own3k.pcd"), P("w-ascii.pcd"))
    check(rc == 0 and open(P("w-ascii.pcd"), "rb").read() == revisit_pcd_header(m, 1, 1, "ascii") + lines.encode(),
          "revisit's ascii PCD is the documented header and Python's '%%.9g' lines (%s)" % err)
    rc, _, err = tool("convert", P("own3k.pcd"), P("w-ascii.ply"))
    check(rc == 0 and open(P("w-ascii.ply"), "rb").read() == revisit_ply_header(m, "ascii") + lines.encode(),
          "revisit's ascii PLY is the documented header and Python's '%%.9g' lines (%s)" % err)
    empty = np.zeros(0, REC)
    write_pcd(P("empty.pcd"), empty, "FFFFUF")
    rc, _, err = tool("convert", P("empty.pcd"), P("w0.pcd"))
    check(rc == 0 and open(P("w0.pcd"), "rb").read() == revisit_pcd_header(0, 1, 1, "binary"),
          "an empty scan is the header alone (%s)" % err)

    # pcl-tools writes the binary body from the ascii values: revisit's must be the same bytes.
    check(PCL is not None, "pcl-tools is installed (pcl_convert_pcd_ascii_binary; run 'make deps')")
    if PCL:
        with open(P("in-ascii.pcd"), "wb") as f:
            f.write(pcd_header(list(REC.names), [4, 4, 4, 4, 2, 4], list("FFFFUF"), m, "ascii") + lines.encode())
        r = subprocess.run([PCL, P("in-ascii.pcd"), P("pcl.pcd"), "1"], capture_output=True, text=True)
        rc, _, err = tool("convert", P("in-ascii.pcd"), P("rv.pcd"))
        pcl = open(P("pcl.pcd"), "rb").read() if os.path.exists(P("pcl.pcd")) else b""
        ours = open(P("rv.pcd"), "rb").read() if rc == 0 else b""
        sep = b"DATA binary\n"
        pb, ob = pcl.split(sep, 1)[-1], ours.split(sep, 1)[-1]
        check(r.returncode == 0 and rc == 0 and sep in pcl and len(ob) == m * 22 and pb[:len(ob)] == ob and
              not pb[len(ob):].strip(b"\0"),
              "revisit's binary PCD body is the body pcl_convert_pcd_ascii_binary writes for the same values "
              "(%s %s)" % (r.stderr[-200:], err))

    # ---- revisit perturb: whole points kept or dropped, bytes unchanged ----
    rec = P("rec")
    os.makedirs(os.path.join(rec, "scans"))
    scans = [points(14000 + 1000 * i, 10 + i) for i in range(4)]
    for i, s in enumerate(scans):
        write_pcd(os.path.join(rec, "scans", "%06d.pcd" % i), s, "FFFFUF")
    with open(os.path.join(rec, "poses.csv"), "w") as f:
        f.write("t,x,y,z,qx,qy,qz,qw\n" + "".join("%d,%d,0,0,0,0,0,1\n" % (i, i) for i in range(4)))
    with open(os.path.join(rec, "recording.json"), "w") as f:
        json.dump({"format": "revisit-recording-1", "sensor": {"channels": 64},
                   "scans": {"dir": "scans", "pattern": "*.pcd"}, "scan_layout": "pcd",
                   "poses": {"file": "poses.csv", "layout": "csv"}}, f)
    for layout, ext in (("pcd", ".pcd"), ("ply", ".ply"), ("raw", ".bin")):
        out = P("p_" + layout)
        r = subprocess.run([BIN, "perturb", "--in", rec, "--out", out, "--chain", "range:max=100m",
                            "--layout", layout, "--quiet"], capture_output=True, text=True)
        ok = r.returncode == 0
        for i, s in enumerate(scans):
            # the range stage's membership in float32, as stage_cull.c documents it
            with np.errstate(over="ignore"):   # 3.4e38 squared is infinite, as in C
                r2 = (s["x"] * s["x"] + s["y"] * s["y"]) + s["z"] * s["z"]
            k = s[(r2 >= np.float32(0)) & (r2 <= np.float32(100) * np.float32(100))]
            if layout == "pcd":
                want = revisit_pcd_header(len(k), 1, 1, "binary") + k.tobytes()
            elif layout == "ply":
                want = revisit_ply_header(len(k), "binary_little_endian") + k.tobytes()
            else:
                want = k[["x", "y", "z", "intensity"]].astype(x16.dtype).tobytes()
            path = os.path.join(out, "scans", "%06d%s" % (i, ext))
            ok = ok and os.path.exists(path) and open(path, "rb").read() == want and len(k) < len(s)
        check(ok, "revisit perturb --layout %s writes the kept points' bytes as numpy does (%s)" %
              (layout, r.stderr[-300:]))

sys.exit(done())
