#!/usr/bin/python3
"""xcheck_kinds.py: recall and R@100P per kind of revisit (same direction,
reverse, crossing), recomputed with numpy and scipy from the recording's
poses and the run's queries.csv.

References: headings from the quaternions by scipy.spatial.transform.Rotation
(as_euler "zyx", the yaw), the kind rule (same within 45 degrees, reverse
from 135, else crossing) and the ground truth (revisit within 3 m outside
30 s, the nearest such scan is the one revisited): common practice, no
source; R@100P is the recall at the largest threshold without a false
positive (README "Evaluation protocol").  The synthetic route's own kinds
(route.json, written by the generator) must agree on the counts.
"""
import json
import os
import subprocess
import sys
import tempfile

import numpy as np
from scipy.spatial.transform import Rotation

from checklib import check, done

BIN = os.environ.get("REVISIT_BIN", "build/revisit")
R_POS, EXCL = 3.0, 30.0


def recompute(rec, qcsv, same_deg, rev_deg):
    P = np.loadtxt(os.path.join(rec, "poses.csv"), delimiter=",", skiprows=1)
    t, xyz = P[:, 0], P[:, 1:4]
    yaw = Rotation.from_quat(P[:, 4:8]).as_euler("zyx")[:, 0]
    n = len(t)
    rows = {}
    for line in open(qcsv):
        if line[0].isdigit():
            f = line.strip().split(",")
            rows[int(f[0])] = [(int(f[k]), float(f[k + 1])) for k in range(1, len(f) - 1, 2)]
    kind, d1, cls, top1 = np.full(n, -1), np.full(n, np.inf), np.zeros(n, int), np.zeros(n, int)
    for i in range(n):
        cand = np.where((np.arange(n) < i) & (t <= t[i] - EXCL))[0]
        dist = np.linalg.norm(xyz[cand] - xyz[i], axis=1)
        if len(cand) and dist.min() <= R_POS:
            j = cand[np.argmin(dist)]
            d = abs((yaw[i] - yaw[j] + np.pi) % (2 * np.pi) - np.pi) * 180 / np.pi
            kind[i] = 0 if d <= same_deg else 1 if d >= rev_deg else 2
        if rows.get(i):
            j, dd = rows[i][0]
            d1[i] = dd
            cls[i] = int(np.linalg.norm(xyz[j] - xyz[i]) <= R_POS)
            top1[i] = cls[i]
    # R@100P threshold: the largest d1 with no false positive at or below it
    order = np.argsort(d1, kind="stable")
    fp_seen, tau = False, np.nan
    for k, i in enumerate(order):
        if not np.isfinite(d1[i]):
            break
        if cls[i] == 0:
            fp_seen = True
        last_of_tie = k + 1 == len(order) or d1[order[k + 1]] != d1[i]
        if fp_seen:
            break
        if last_of_tie:
            tau = d1[i]
    out = {}
    for c, name in enumerate(["same", "reverse", "crossing"]):
        m = kind == c
        nrev = m.sum()
        acc = (m & (cls == 1) & (d1 <= tau)).sum() if np.isfinite(tau) else 0
        out[name] = (nrev, top1[m].sum() / nrev if nrev else 0.0, acc / nrev if nrev else 0.0)
    return out


def main():
    T = tempfile.mkdtemp()
    for scen, scans in (("port", 200), ("suburb", 200)):
        rec = os.path.join(T, scen)
        subprocess.run([BIN, "synth", "--scenario", scen, "--scans", str(scans), "--out", rec, "--quiet"],
                       capture_output=True, check=True)
        route = json.load(open(os.path.join(rec, "route.json")))["counts"]
        for same_deg, rev_deg, extra in ((45, 135, []), (20, 170, ["--same-within", "20", "--reverse-from", "170"])):
            out = os.path.join(T, "%s-%d" % (scen, same_deg))
            p = subprocess.run([BIN, "eval", "--map", rec, "--method", "scan-context", "--out", out, "--bootstrap", "0",
                                "--quiet"] + extra, capture_output=True, text=True)
            check(p.returncode == 0, "%s: eval runs %s" % (scen, p.stderr[-200:]))
            got = json.load(open(os.path.join(out, "result.json")))["kinds"]
            want = recompute(rec, os.path.join(out, "queries.csv"), same_deg, rev_deg)
            check(got["same_deg"] == same_deg and got["reverse_deg"] == rev_deg, "%s: the rule is recorded" % scen)
            for name, (nrev, r1, r100) in want.items():
                g = got[name]
                check(g["revisits"] == nrev and abs(g["recall_at_1"] - r1) <= 1e-12 and abs(g["r100p"] - r100) <= 1e-12,
                      "%s %d/%d: %s %r matches numpy (%d, %r, %r)" % (scen, same_deg, rev_deg, name, g, nrev, r1, r100))
            if same_deg == 45:
                check(all(got[k]["revisits"] == route[k] for k in ("same", "reverse", "crossing")),
                      "%s: kinds agree with the generator's route.json %r" % (scen, route))
                total = sum(want[k][0] for k in want)
                res = json.load(open(os.path.join(out, "result.json")))
                r100p = res["metrics"]["r100p"]["value"]
                mix = sum(want[k][0] * want[k][2] for k in want) / total
                check(abs(mix - r100p) <= 1e-12, "%s: per-kind R@100P weighted by revisits is R@100P" % scen)
    return done()


if __name__ == "__main__":
    sys.exit(main())
