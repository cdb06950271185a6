"""xcheck_synth_route.py: every built-in scenario's route.json against its
poses, recomputed with numpy.

For each scenario a recording of about half the full scan rate is
made with a tiny sensor (4 channels, 6 degree step) so the test stays fast;
the route and the poses do not depend on the sensor's ray count.  Revisits are recomputed from
poses.csv alone with numpy: scan i revisits when an earlier scan j with
t_j <= t_i - 30 s lies within 3 m (the usual protocol of the trade: "a
revisit is commonly counted within 3 m, with the previous 30 s excluded",
common practice, no source); its kind follows the heading difference to the
nearest such j (< 45 degrees same, > 135 reverse, else crossing).  Heading is
the sensor x axis from the quaternion, R = quaternion matrix (common
practice, no source).  A second run with pose noise checks that the noisy
poses differ from the exact ones by the set sigma (numpy.std).
"""
import json
import os
import subprocess
import sys
import tempfile

import numpy as np

from checklib import check, done

BIN = os.environ["REVISIT_BIN"]


def read_poses(path):
    with open(path) as f:
        head = f.readline().strip().split(",")
        rows = np.array([[float(v) for v in line.split(",")] for line in f if line.strip()])
    col = {name: k for k, name in enumerate(head)}
    t = rows[:, col["t"]]
    xyz = rows[:, [col["x"], col["y"], col["z"]]]
    qx, qy, qz, qw = (rows[:, col[k]] for k in ("qx", "qy", "qz", "qw"))
    # first column of the rotation matrix of a unit quaternion: the sensor x axis
    hx = 1 - 2 * (qy * qy + qz * qz)
    hy = 2 * (qx * qy + qw * qz)
    return t, xyz, np.arctan2(hy, hx)


def recompute(t, xyz, yaw):
    n = len(t)
    kinds = np.full(n, -1)
    d = np.sqrt(((xyz[:, None, :2] - xyz[None, :, :2]) ** 2).sum(-1))
    for i in range(n):
        ok = (t <= t[i] - 30) & (d[i] <= 3)
        if not ok.any():
            continue
        j = np.flatnonzero(ok)[np.argmin(d[i][ok])]
        dh = abs((yaw[i] - yaw[j] + np.pi) % (2 * np.pi) - np.pi) * 180 / np.pi
        kinds[i] = 0 if dh < 45 else (1 if dh > 135 else 2)
    return kinds, d


def run(args):
    p = subprocess.run([BIN, "synth", "--quiet"] + args, capture_output=True, text=True)
    if p.returncode:
        print(p.stderr)
    return p.returncode


def scenario(name, scans, tmp, sensor):
    # about half the full rate: fewer files, every kind still present
    out = os.path.join(tmp, name)
    check(run(["--scenario", name, "--out", out, "--sensor", sensor, "--jobs", "4",
               "--scans", str(scans)]) == 0, f"{name}: synth runs")
    route = json.load(open(os.path.join(out, "route.json")))
    t, xyz, yaw = read_poses(os.path.join(out, "poses.csv"))
    check(route["scans"] == len(t), f"{name}: route.json counts every scan")
    kinds, d = recompute(t, xyz, yaw)
    names = ["same", "reverse", "crossing"]
    for k, kn in enumerate(names):
        check(route["counts"][kn] == int((kinds == k).sum()),
              f"{name}: {kn} count {route['counts'][kn]} equals numpy's {int((kinds == k).sum())}")
        check(any(r["kind"] == kn for r in route["revisits"]), f"{name}: at least one {kn} revisit")
    for r in route["revisits"]:
        for q, m in ((r["first"], r["match_first"]), (r["last"], r["match_last"])):
            check(d[q, m] <= 3 + 1e-6 and t[q] - t[m] >= 30 - 1e-9,
                  f"{name}: stretch {r['kind']} {q}->{m} within 3 m and 30 s before")
            check(kinds[q] == names.index(r["kind"]), f"{name}: scan {q} is of kind {r['kind']}")
    covered = sum(r["scans"] for r in route["revisits"])
    check(covered == int((kinds >= 0).sum()), f"{name}: the stretches cover every revisiting scan")
    return out


def pose_noise(tmp, sensor):
    src = json.load(open(os.path.join(os.environ.get("REVISIT_ROOT", "."), "scenarios", "suburb.json")))
    src["route"]["pose_noise"] = {"sigma_m": 0.2, "sigma_deg": 0.5}
    path = os.path.join(tmp, "noisy.json")
    json.dump(src, open(path, "w"))
    # the sensor file is found beside the scenario: give it by path
    out = os.path.join(tmp, "noisy")
    check(run(["--scenario", path, "--out", out, "--sensor", sensor, "--scans", "400"]) == 0,
          "pose noise: synth runs")
    t, a, ya = read_poses(os.path.join(out, "poses.csv"))
    t2, b, yb = read_poses(os.path.join(out, "poses_exact.csv"))
    check(np.array_equal(t, t2), "pose noise: exact and noisy poses share the times")
    sd = np.std(a - b, axis=0)
    check(np.all(np.abs(sd - 0.2) < 0.03), f"pose noise: position sigma {sd} is 0.2 m per axis")
    dy = np.degrees((ya - yb + np.pi) % (2 * np.pi) - np.pi)
    check(abs(np.std(dy) - 0.5) < 0.08, f"pose noise: heading sigma {np.std(dy):.3f} is 0.5 deg")
    route = json.load(open(os.path.join(out, "route.json")))
    check(route["poses_exact"] == "poses_exact.csv", "pose noise: route.json names the exact poses")


def main():
    with tempfile.TemporaryDirectory() as tmp:
        sensor = os.path.join(tmp, "tiny.json")
        with open(sensor, "w") as f:
            f.write('{"profile": "spin16", "channels": 4, "azimuth_step_deg": 6}')
        for name, scans in (("port", 1000), ("campus", 1100), ("suburb", 1100)):
            scenario(name, scans, tmp, sensor)
        pose_noise(tmp, sensor)
    return done()


if __name__ == "__main__":
    sys.exit(main())
