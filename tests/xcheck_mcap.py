"""xcheck_mcap.py: recordings made by `revisit log` from MCAP files written
by npm packages.

References: @mcap/core 2.2.2 (McapWriter, chunks through its compressChunk
hook), @foxglove/rosmsg 5.0.5 (parse, ROS 2 definitions) and
@foxglove/rosmsg2-serialization 3.1.0 (MessageWriter: CDR), chunk
compression by lz4js 0.2.0 (LZ4 frames) and @bokuweb/zstd-wasm 0.0.27, all
driven by tests/node/write_mcap.js and installed into tests/node/ by
`make deps-test`; and the other way round, the MCAP files revisit writes
(synth --log) read by @mcap/core's McapStreamReader and decoded by
@foxglove/rosmsg2-serialization's MessageReader (tests/node/read_mcap.js).  The drive and the expected poses (scipy Slerp,
numpy.interp, scipy Rotation composition) are those of tests/logdrive.py,
so the recording must hold exactly the points and poses written.  Without
node, or before `make deps-test` has installed the packages, the checks are
counted as skipped, never as passed.  Run with
/usr/bin/python3 through tests/run.sh.
"""
import json
import os
import shutil
import struct
import subprocess
import sys
import tempfile

import numpy as np

from checklib import check, done, skip
from logdrive import (B_L, M_O, ODOM, SCAN_T, T0, check_recording, cloud32, cloud64, dump, events, expected_tf,
                      kept, pose_err, read_poses, refused, run, stamp)

HERE = os.path.dirname(os.path.abspath(__file__))
NODE_DIR = os.path.join(HERE, "node")
N_CHECKS = 37
rng = np.random.default_rng(9)

node = shutil.which("node")
if not node or not shutil.which("npm"):
    for _ in range(N_CHECKS):
        skip("node and npm are not installed: the MCAP files of @mcap/core cannot be written here")
    sys.exit(done())
if not os.path.isdir(os.path.join(NODE_DIR, "node_modules", "@mcap", "core")):
    for _ in range(N_CHECKS):
        skip("the npm writers are not installed in tests/node: run 'make deps-test' (npm ci)")
    sys.exit(done())


def header(t, frame):
    s, n = stamp(t)
    return dict(sec=s, nsec=n, frame=frame)


def spec(compression):
    topics = [["/points", "cloud"], ["/points64", "cloud"], ["/odom", "odom"], ["/tf", "tf"], ["/tf_static", "tf"]]
    msgs, clouds = [], {}
    for parent, child, (p, r) in (("map", "odom", M_O), ("base", "lidar", B_L)):
        msgs.append(["/tf_static", "tf", dict(header(T0, parent), child=child, p=list(p), q=list(r.as_quat()))])
    for t, kind, k in events():
        if kind == "o":
            p, r = ODOM[k]
            pose = dict(p=list(p), q=list(r.as_quat()))
            msgs.append(["/odom", "odom", dict(header(t, "odom"), child="base", **pose)])
            msgs.append(["/tf", "tf", dict(header(t, "odom"), child="base", **pose)])
            continue
        for topic, (layout, data, *vals) in (("/points", cloud32(rng, int(rng.integers(40, 90)))),
                                             ("/points64", cloud64(rng, 7))):
            fields = [dict(name=n, offset=o, datatype=dt, count=1) for n, o, dt in layout["fields"]]
            m = dict(header(t, "lidar"), height=layout["height"], width=layout["width"], fields=fields,
                     is_bigendian=False, point_step=layout["point_step"], row_step=layout["row_step"],
                     data_hex=data.hex())
            msgs.append([topic, "cloud", m])
            clouds[t if topic == "/points" else ("64", t)] = tuple(vals) if topic == "/points" else vals[0]
    return dict(compression=compression, chunk_size=8192, topics=topics, messages=msgs), clouds


def write_mcap(d, compression):
    s, clouds = spec(compression)
    sp = os.path.join(d, "spec-%s.json" % compression)
    with open(sp, "w") as f:
        json.dump(s, f)
    out = os.path.join(d, "drive-%s.mcap" % compression)
    r = subprocess.run([node, os.path.join(NODE_DIR, "write_mcap.js"), sp, out], capture_output=True, text=True,
                       env=dict(os.environ, NODE_PATH=os.path.join(NODE_DIR, "node_modules")))
    return (out if r.returncode == 0 else None), clouds, r.stderr


def first_chunk(raw):
    """Byte of the first chunk record (opcode 0x06) after the magic."""
    off = 8
    while off + 9 <= len(raw):
        op, n = raw[off], struct.unpack("<Q", raw[off + 1:off + 9])[0]
        if op == 6:
            return off
        off += 9 + n
    return None


with tempfile.TemporaryDirectory() as d:
    for comp in ("none", "lz4", "zstd"):
        path, clouds, err = write_mcap(d, comp)
        check(path is not None, "%s: @mcap/core writes the MCAP file (%s)" % (comp, err.strip()[-300:]))
        if path is None:
            continue
        rc, out, err = run("log", path)
        counts = {l.split()[0]: (l.split()[1], int(l.split()[2])) for l in out.splitlines()[1:]}
        check(rc == 0 and counts.get("/points") == ("sensor_msgs/msg/PointCloud2", len(SCAN_T)) and
              counts.get("/odom", (0, 0))[1] == len(ODOM) and counts.get("/tf_static", (0, 0))[1] == 2,
              "%s: revisit log lists the MCAP topics with types and counts (%s)" % (comp, err.strip() or out))
        rec = os.path.join(d, "rec-" + comp)
        rc, _, err = run("log", path, "--scans", "/points", "--poses", "/odom", "--out", rec, "--quiet")
        check(rc == 0, "%s: revisit log makes a recording from MCAP (%s)" % (comp, err.strip()))
        if rc == 0:
            check_recording(rec, clouds, path, "mcap " + comp)
    path, clouds, _ = write_mcap(d, "zstd")
    rec = os.path.join(d, "rec64")
    rc, _, err = run("log", path, "--scans", "/points64", "--poses", "/odom", "--out", rec, "--channels", "2",
                     "--quiet")
    ok = rc == 0
    for k, t in enumerate(sorted(t for t in SCAN_T if kept(t)) if ok else []):
        a = dump(os.path.join(rec, "scans", "%06d.pcd" % k))
        ok = ok and a.shape[0] == 14 and bool((a[:, :3].astype(np.float32) == clouds[("64", t)]).all())
    check(ok, "CDR float64 x y z among extra fields, organised with row padding: exact points (%s)" % err.strip())
    rec = os.path.join(d, "rec-tf")
    rc, _, err = run("log", path, "--scans", "/points", "--poses", "tf", "--frames", "map,lidar", "--out", rec,
                     "--quiet")
    worst = max(pose_err((p, r), expected_tf(t)) for t, p, r in read_poses(os.path.join(rec, "poses.csv"))) \
        if rc == 0 else 1
    check(worst < 1e-9, "CDR transforms chained match scipy Rotation composition (worst %.2e; %s)" % (worst, err))

    raw = open(path, "rb").read()
    refused(d, "cut.mcap", raw[:len(raw) // 2], "record at byte")
    c = first_chunk(raw)
    ci = raw.index(b"zstd", c)
    refused(d, "codec.mcap", raw[:ci] + b"zstx" + raw[ci + 4:], "chunk compression 'zstx', expected none")
    size = struct.unpack("<Q", raw[c + 25:c + 33])[0]
    refused(d, "size.mcap", raw[:c + 25] + struct.pack("<Q", size + 64) + raw[c + 33:], "unpacks to")
    # one flipped byte inside an uncompressed chunk's records: its CRC-32 (written by @mcap/core) must catch it
    plain = open(os.path.join(d, "drive-none.mcap"), "rb").read()
    c0 = first_chunk(plain)
    cl = struct.unpack("<I", plain[c0 + 9 + 28:c0 + 9 + 32])[0]
    at = c0 + 9 + 32 + cl + 8 + 200
    refused(d, "crc.mcap", plain[:at] + bytes([plain[at] ^ 0x40]) + plain[at + 1:], "CRC-32")
    refused(d, "type.mcap", raw, "type sensor_msgs/msg/PointCloud2, expected nav_msgs/Odometry", "--scans",
            "/points", "--poses", "/points64")

    # An MCAP file revisit writes (synth --log) opens in @mcap/core's reader
    # (McapStreamReader with CRC checks) and decodes with MessageReader.
    syn = os.path.join(d, "syn")
    r = subprocess.run([os.environ.get("REVISIT_BIN", "build/revisit"), "synth", "--scenario", "port", "--duration", "0.4",
                        "--out", syn, "--log", syn + ".mcap", "--quiet"], capture_output=True, text=True)
    rd = subprocess.run([node, os.path.join(NODE_DIR, "read_mcap.js"), syn + ".mcap"], capture_output=True, text=True,
                        env=dict(os.environ, NODE_PATH=os.path.join(NODE_DIR, "node_modules")))
    got = json.loads(rd.stdout) if rd.returncode == 0 and rd.stdout.strip() else {}
    check(r.returncode == 0 and got.get("done") and got.get("topics") == {
        "/points": ["sensor_msgs/msg/PointCloud2", 5], "/odom": ["nav_msgs/msg/Odometry", 5]},
        "@mcap/core reads revisit's MCAP to its end with both topics (%s%s)" % (r.stderr.strip(), rd.stderr.strip()))
    scans = sorted(os.listdir(os.path.join(syn, "scans"))) if r.returncode == 0 else []
    ok = len(scans) == 5 and len(got.get("clouds", [])) == 5
    for name, c in zip(scans, got.get("clouds", [])):
        a = dump(os.path.join(syn, "scans", name))
        ok = ok and c[0] == a.shape[0] and c[1] == 22 and np.float32(c[2]) == np.float32(a[0, 0]) and \
            np.float32(c[4]) == np.float32(a[0, 2])
    check(ok, "MessageReader decodes revisit's PointCloud2 messages: point counts and first points match the scans")
    want = read_poses(os.path.join(syn, "poses.csv")) if r.returncode == 0 else []
    ok = len(want) == len(got.get("poses", [])) == 5
    for (t, p, q), g in zip(want, got.get("poses", [])):
        ok = ok and abs(g[0] + g[1] * 1e-9 - t) < 1e-9 and list(g[2:5]) == list(p) and \
            np.allclose(g[5:], q.as_quat(), atol=1e-15)
    check(ok, "MessageReader decodes revisit's Odometry messages: the recording's poses")

sys.exit(done())
