#!/usr/bin/python3
"""xcheck_perturb_cmd.py: `revisit perturb` end to end, checked with numpy/scipy.

Builds a small raw recording with numpy, perturbs it with 1 and 2 jobs, and
checks identical bytes, the manifest, the poses, the per-stage counts, that
each scan equals the library applied with its scan index, and every error
the command handles.
"""
import filecmp
import json
import glob
import os
import subprocess
import sys
import tempfile

import numpy as np
from scipy import stats

from checklib import check, done, tool_path

BIN = os.environ.get("REVISIT_BIN", "build/revisit")
TOOL = tool_path("tool_perturb")
T = tempfile.mkdtemp()
CHAIN = "yaw+sector:width=180+dropout:p=0.3+range:max=45m+noise:sigma=0.02"
SCANS = 10
PER_SCAN = 4000


def rv(*args):
    return subprocess.run([BIN, "perturb", *args], capture_output=True, text=True)


def make_recording(d):
    os.makedirs(os.path.join(d, "scans"))
    rng = np.random.default_rng(4)
    with open(os.path.join(d, "poses.csv"), "w") as f:
        f.write("t,x,y,z,qx,qy,qz,qw\n")
        for k in range(SCANS):
            az = np.arange(PER_SCAN) * (2 * np.pi / PER_SCAN)   # uniform azimuths
            el = np.radians(rng.integers(0, 16, PER_SCAN) * 2.0 - 15)
            r = rng.uniform(2, 50, PER_SCAN)
            p = np.stack([r * np.cos(el) * np.cos(az), r * np.cos(el) * np.sin(az),
                          r * np.sin(el), rng.uniform(0, 1, PER_SCAN)], 1).astype("<f4")
            p.tofile(os.path.join(d, "scans", "%06d.bin" % k))
            f.write("%.1f,%.1f,0,0,0,0,0,1\n" % (k * 0.1, k * 1.0))
    manifest = {"format": "revisit-recording-1", "sensor": {"channels": 16},
                "scans": {"dir": "scans", "pattern": "*.bin"}, "scan_layout": "raw",
                "poses": {"file": "poses.csv", "layout": "csv"}}
    with open(os.path.join(d, "recording.json"), "w") as f:
        json.dump(manifest, f)


def same_tree(a, b):
    cmp = filecmp.dircmp(a, b)
    if cmp.left_only or cmp.right_only or cmp.diff_files:
        return False
    names = sorted(os.listdir(os.path.join(a, "scans")))
    _, mismatch, errors = filecmp.cmpfiles(os.path.join(a, "scans"), os.path.join(b, "scans"),
                                           names, shallow=False)
    return not mismatch and not errors and len(names) == SCANS


def main_checks():
    rec = os.path.join(T, "rec")
    make_recording(rec)
    o1, o2, o3 = (os.path.join(T, n) for n in ("o1", "o2", "o3"))
    p1 = rv("--in", rec, "--out", o1, "--chain", CHAIN, "--seed", "7", "--jobs", "1", "--stats",
            "--quiet")
    check(p1.returncode == 0, "perturb with 1 job succeeds: " + p1.stderr)
    p2 = rv("--in", rec, "--out", o2, "--chain", CHAIN, "--seed", "7", "--jobs", "2", "--quiet")
    check(p2.returncode == 0, "perturb with 2 jobs succeeds")
    check(same_tree(o1, o2), "1 and 2 jobs write identical bytes")
    rv("--in", rec, "--out", o3, "--chain", CHAIN, "--seed", "8", "--quiet")
    check(not same_tree(o1, o3), "another seed writes other scans")

    man = json.load(open(os.path.join(o1, "recording.json")))
    pert = man.get("perturbation", {})
    # Every value, defaults included, with units: the defaults of `revisit perturb --list`.
    check(pert.get("chain") == "yaw:deg=random,draw=scan+sector:width=180deg,at=random,count=1,draw=scan+"
          "dropout:p=0.3,burst=0deg,draw=scan+range:min=0m,max=45m+noise:sigma=0.02m,mode=ray,outliers=0,draw=scan",
          "the manifest records the chain in full (got %s)" % pert.get("chain"))
    check(pert.get("seed") == 7 and pert.get("on") == "query", "the manifest records seed and side")
    a = np.loadtxt(os.path.join(rec, "poses.csv"), delimiter=",", skiprows=1)
    b = np.loadtxt(os.path.join(o1, "poses.csv"), delimiter=",", skiprows=1)
    check(a.shape == b.shape and np.allclose(a, b, atol=1e-9), "poses are unchanged")

    # every scan equals the library applied with its own scan index
    ok = True
    for k in (0, 3, 9):
        src = os.path.join(rec, "scans", "%06d.bin" % k)
        dst = os.path.join(T, "lib.bin")
        subprocess.run([TOOL, CHAIN, "7", str(k), src, dst], check=True, capture_output=True)
        ok &= filecmp.cmp(dst, os.path.join(o1, "scans", "%06d.bin" % k), shallow=False)
    check(ok, "scan k of the output is the chain applied with scan index k")

    rows = {ln.split()[0]: ln.split() for ln in p1.stdout.splitlines()[1:-1]}
    total = SCANS * PER_SCAN
    check(rows.get("yaw", [0, 0])[1] == str(total), "stats: every point enters the chain")
    s_in, s_out = int(rows["sector"][1]), int(rows["sector"][2])
    # common practice, no source: a 180 degree sector removes about half
    check(abs(1 - s_out / s_in - 0.5) < 0.01, "stats: a 180 degree sector removes half")
    d_in, d_out = int(rows["dropout"][1]), int(rows["dropout"][2])
    lo, hi = stats.binom.interval(0.999, d_in, 0.7)   # scipy.stats.binom.interval
    check(lo <= d_out <= hi, "stats: dropout keeps a binomial share")
    got = sum(os.path.getsize(os.path.join(o1, "scans", f)) // 16
              for f in os.listdir(os.path.join(o1, "scans")))
    check(int(rows["noise"][2]) == got, "stats: the last stage's output is what was written")
    check("%d scans" % SCANS in p1.stdout, "stats name the scan count")

    p = rv("--in", rec, "--out", os.path.join(T, "o4"), "--chain", "sector:width=90",
           "--layout", "pcd", "--quiet")
    check(p.returncode == 0 and os.path.exists(os.path.join(T, "o4", "scans", "000000.pcd")),
          "--layout pcd writes PCD scans")
    return rec


def error_checks(rec):
    p = rv("--in", rec, "--out", os.path.join(T, "e1"), "--chain", "sector:width=abc")
    check(p.returncode == 2, "a bad chain exits 2")
    check("--chain: chain:14: expected a number of degrees from 0 to 360 for 'width'" in p.stderr,
          "a bad chain names position and what was expected")
    check("\n               ^" in p.stderr, "a bad chain shows a caret under the fault")
    p = rv("--out", os.path.join(T, "e2"), "--chain", "yaw")
    check(p.returncode == 2 and "option '--in' is required" in p.stderr, "--in is required")
    p = rv("--in", rec, "--chain", "yaw")
    check(p.returncode == 2 and "option '--out' is required" in p.stderr, "--out is required")
    p = rv("--in", rec, "--out", os.path.join(T, "e3"))
    check(p.returncode == 2 and "option '--chain' is required" in p.stderr, "--chain is required")
    p = rv("--in", rec, "--out", rec, "--chain", "yaw")
    check(p.returncode == 2 and "is the input recording's folder" in p.stderr,
          "writing over the input is refused")
    check(os.path.exists(os.path.join(rec, "recording.json")), "the input manifest survives")
    p = rv("--in", rec, "--out", os.path.join(T, "e4"), "--chain", "yaw", "--layout", "text")
    check(p.returncode == 2 and "expects raw, pcd, ply or pcd-compressed, got 'text'" in p.stderr, "--layout text refused")
    p = rv("--in", rec, "--out", os.path.join(T, "e5"), "--chain", "yaw", "--on", "maps")
    check(p.returncode == 2 and "unknown chain target 'maps', expected query, map or both" in p.stderr,
          "--on names the choices")
    p = rv("--in", rec, "--out", os.path.join(T, "e6"), "--chain", "yaw", "--jobs", "999")
    check(p.returncode == 2 and "'--jobs' expects 1 to 256, got 999" in p.stderr, "--jobs bound")
    p = rv("--in", rec, "--out", os.path.join(T, "e7"), "--chain", "yaw", "extra")
    check(p.returncode == 2 and "unexpected argument 'extra'" in p.stderr, "stray argument refused")
    p = rv("--in", os.path.join(T, "nothere"), "--out", os.path.join(T, "e8"), "--chain", "yaw")
    check(p.returncode == 2 and "nothere" in p.stderr, "a missing recording is named")
    p = rv("--in", rec, "--out", os.path.join(T, "e9"), "--chain", "yaw", "--layout", "xyz")
    check(p.returncode == 2 and "revisit: perturb: --layout: " in p.stderr and "xyz" in p.stderr,
          "an unknown --layout word is named")
    one = ("clutter:count=3,size=0.41234567890123457,near=1.1234567890123457,"
           "far=2.1234567890123457,height=0.31234567890123457,at=12.123456789012346,"
           "res=0.51234567890123457")
    p = rv("--in", rec, "--out", os.path.join(T, "e10"), "--chain", "+".join([one] * 32))
    check(p.returncode == 2 and "the chain is longer than 4096 characters" in p.stderr,
          "a chain whose normalised text is too long is refused")
    p = rv("--list")
    names = ["yaw", "sector", "dropout", "range", "noise", "channels", "fov", "tilt", "shift",
             "clutter", "density", "skew", "intensity"]
    check(p.returncode == 0 and all("\n%s: " % n in p.stdout for n in names), "--list shows every stage")
    check("  width     default 90deg; a number of degrees from 0 to 360" in p.stdout,
          "--list shows defaults and ranges")
    p = rv("--help")
    check(p.returncode == 0 and "--chain CHAIN" in p.stdout and "--stats" in p.stdout, "--help")


def interrupt_check():
    # SIGINT once the first scan is written (an event, not a delay): the
    # command stops, exits 130 and leaves no manifest behind.
    import signal
    import time
    rec = os.path.join(T, "big")
    os.makedirs(os.path.join(rec, "scans"))
    rng = np.random.default_rng(2)
    pts = rng.uniform(-30, 30, (8000, 4)).astype("<f4")
    with open(os.path.join(rec, "poses.csv"), "w") as f:
        f.write("t,x,y,z,qx,qy,qz,qw\n")
        for k in range(80):
            pts.tofile(os.path.join(rec, "scans", "%06d.bin" % k))
            f.write("%.1f,%.1f,0,0,0,0,0,1\n" % (k * 0.1, k * 1.0))
    with open(os.path.join(rec, "recording.json"), "w") as f:
        json.dump({"format": "revisit-recording-1", "sensor": {"channels": 16},
                   "scans": {"dir": "scans", "pattern": "*.bin"}, "scan_layout": "raw",
                   "poses": {"file": "poses.csv", "layout": "csv"}}, f)
    out = os.path.join(T, "stopped")
    proc = subprocess.Popen([BIN, "perturb", "--in", rec, "--out", out, "--jobs", "1", "--quiet",
                             "--chain", "clutter:res=0.1+density:leaf=0.05"],
                            stdout=subprocess.PIPE, stderr=subprocess.PIPE, text=True)
    # scans go to a staged folder beside --out until the recording is whole
    first = os.path.join(T, ".staged-stopped-*", "scans", "000000.bin")
    while proc.poll() is None and not glob.glob(first):
        time.sleep(0.005)
    proc.send_signal(signal.SIGINT)
    _, err = proc.communicate()
    check(proc.returncode == 130, "SIGINT stops perturb with exit 130 (got %s)" % proc.returncode)
    check("perturb interrupted; %s has no recording.json" % out in err, "the interruption is reported")
    check(not os.path.exists(os.path.join(out, "recording.json")), "no manifest after an interruption")
    check(not os.path.exists(out) and not glob.glob(os.path.join(T, ".staged-stopped-*")),
          "an interrupted perturb leaves neither a folder at --out nor its staged folder")


def recovery_check():
    # Channel recovery against the truth: the synthetic sensor writes each
    # point's channel in the ring field; a raw copy drops it, so `channels`
    # must recover it from elevations and keep exactly the same points.
    for sensor, every in (("spin64", 3), ("spin16", 2)):
        syn = os.path.join(T, "syn-" + sensor)
        p = subprocess.run([BIN, "synth", "--scenario", "port", "--sensor", sensor, "--out", syn,
                            "--scans", "4", "--quiet"], capture_output=True, text=True)
        check(p.returncode == 0, "synth %s for the recovery check: %s" % (sensor, p.stderr))
        raw, a, b = (os.path.join(T, "%s-%s" % (n, sensor)) for n in ("raw", "ring", "recov"))
        chain = "channels:every=%d" % every
        rv("--in", syn, "--out", raw, "--chain", "yaw:deg=0", "--layout", "raw", "--quiet")
        rv("--in", syn, "--out", a, "--chain", chain, "--layout", "raw", "--quiet")
        rv("--in", raw, "--out", b, "--chain", chain, "--quiet")
        names = sorted(os.listdir(os.path.join(a, "scans")))
        _, bad, errs = filecmp.cmpfiles(os.path.join(a, "scans"), os.path.join(b, "scans"), names,
                                        shallow=False)
        check(len(names) == 4 and not bad and not errs,
              "%s: channels recovered from elevations equal the ring field" % sensor)


def main():
    try:
        rec = main_checks()
        error_checks(rec)
        interrupt_check()
        recovery_check()
    except Exception as ex:
        check(False, "raised %r" % ex)
    return done()


if __name__ == "__main__":
    sys.exit(main())
