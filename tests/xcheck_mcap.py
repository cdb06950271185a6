"""xcheck_mcap.py: recordings made by `revisit log` from MCAP files written
by npm packages.

References: @mcap/core 2.2.2 (McapWriter, chunks through its compressChunk
hook), @foxglove/rosmsg 5.0.5 (parse, ROS 2 definitions) and
@foxglove/rosmsg2-serialization 3.1.0 (MessageWriter: CDR), chunk
compression by lz4js 0.2.0 (LZ4 frames) and @bokuweb/zstd-wasm 0.0.27, all
driven by tests/node/write_mcap.js and installed into tests/node/ by
`make deps-test`; and the other way round, the MCAP files revisit writes
(synth --log) read by @mcap/core's McapStreamReader and decoded by
@foxglove/rosmsg2-serialization's MessageReader (tests/node/read_mcap.js),
and through their index by @mcap/core's McapIndexedReader
(tests/node/read_mcap_indexed.js: summary, statistics, chunk and message
indexes, time windows), compared with what `revisit log` reads from the
same file; the data section's CRC-32 against Python's zlib.crc32.  The drive and the expected poses (scipy Slerp,
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
import zlib

import numpy as np

from checklib import check, done, skip
from logdrive import (B_L, M_O, ODOM, SCAN_T, T0, check_recording, cloud32, cloud64, dump, events, expected_tf,
                      kept, pose_err, read_poses, refused, run, stamp)

HERE = os.path.dirname(os.path.abspath(__file__))
NODE_DIR = os.path.join(HERE, "node")
N_CHECKS = 44
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


def listing(path):
    """`revisit log FILE`: {topic: (type, count)} from its table."""
    rc, out, _ = run("log", path)
    rows = [l.split() for l in out.splitlines()[1:]] if rc == 0 else []
    return {r[0]: [r[1], int(r[2])] for r in rows if len(r) == 3}


def check_indexed(d):
    syn, log = os.path.join(d, "synx"), os.path.join(d, "synx.mcap")
    rc, _, err = run("synth", "--scenario", "port", "--duration", "0.9", "--out", syn, "--log", log, "--quiet")
    rd = subprocess.run([node, os.path.join(NODE_DIR, "read_mcap_indexed.js"), log, "300000000", "600000000"],
                        capture_output=True, text=True, env=dict(os.environ, NODE_PATH=os.path.join(NODE_DIR, "node_modules")))
    got = json.loads(rd.stdout) if rc == 0 and rd.returncode == 0 and rd.stdout.strip() else {}
    check(got.get("chunks", 0) >= 2, "McapIndexedReader opens revisit's MCAP through its summary, CRCs checked, "
          "several chunk indexes (%s%s)" % (err.strip(), rd.stderr.strip()[-300:]))
    raw = open(log, "rb").read() if rc == 0 else b""
    # zlib.crc32 is the CRC-32 the MCAP format states for the data section (every byte before the data end record).
    check(got.get("data_crc") and got.get("data_crc") == zlib.crc32(raw[:got.get("data_end", 0)]),
          "the data end record's CRC-32 is zlib.crc32 of the data section (%s)" % got.get("data_crc"))
    ours = listing(log)
    theirs = got.get("topics", {})
    check(ours and theirs == ours and
          ours.get("/points", [0, 0])[1] == 10, "McapIndexedReader and revisit log list the same topics, types "
          "and counts (%s vs %s)" % (theirs, ours))
    st = got.get("stats") or {}
    check(st.get("messages") == 20 and st.get("channels") == {"/points": 10, "/odom": 10},
          "the statistics record counts the messages per channel (%s)" % st)
    back = os.path.join(d, "backx")
    rc, _, err = run("log", log, "--scans", "/points", "--poses", "/odom", "--out", back, "--quiet")
    poses = read_poses(os.path.join(back, "poses.csv")) if rc == 0 else []
    clouds, odoms = got.get("clouds", []), got.get("poses", [])
    ok = rc == 0 and len(poses) == len(clouds) == len(odoms) == 10
    for c, o, (t, p, q) in zip(clouds, odoms, poses):
        ok = ok and abs(c[0] + c[1] * 1e-9 - t) < 1e-9 and int(c[2]) == c[0] * 10**9 + c[1] and o[:3] == c[:3]
        ok = ok and o[3:6] == list(p) and np.allclose(o[6:], q.as_quat(), atol=1e-15)
    check(ok, "the indexed reader's stamps, log times and poses are those of the recording revisit log makes (%s)" %
          err.strip())
    # numpy decodes each cloud's bytes by its PointField list (datatypes 4 = uint16, 7 = float32: the
    # sensor_msgs/PointField constants); the scans revisit log wrote must hold the same values.
    kinds = {4: "<u2", 7: "<f4"}
    ok = len(clouds) == 10
    for k, c in enumerate(clouds):
        dt = np.dtype({"names": [f[0] for f in c[3]], "formats": [kinds[f[2]] for f in c[3]],
                       "offsets": [f[1] for f in c[3]], "itemsize": c[4]})
        pts = np.frombuffer(bytes.fromhex(c[5]), dtype=dt)
        a = dump(os.path.join(back, "scans", "%06d.pcd" % k)) if rc == 0 else np.zeros((0, 6))
        cols = np.stack([pts[n].astype(np.float64) for n in dt.names], axis=1)
        ok = ok and cols.shape == a.shape and bool((cols.astype(np.float32) == a.astype(np.float32)).all())
    check(ok, "the clouds' bytes, decoded by numpy from their fields, are the points revisit log read")
    want = [str(int(round(t * 1e9))) for t, _, _ in poses[3:7]]
    check(got.get("window") == want, "readMessages between 0.3 s and 0.6 s finds scans 3 to 6 by the message "
          "indexes (%s)" % got.get("window"))


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

    # The same file through its index: @mcap/core's McapIndexedReader (footer,
    # summary offsets, statistics, chunk and message indexes, every CRC)
    # against what revisit's own reader makes of it (`revisit log`).
    check_indexed(d)

sys.exit(done())
