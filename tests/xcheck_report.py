#!/usr/bin/python3
"""xcheck_report.py: the numbers behind the report's plots and tables,
recomputed with outside references on a hand-made results folder:

- revisits and true pairs: scipy.spatial.cKDTree.query_ball_point (SciPy
  reference, scipy.spatial.cKDTree), r = r_pos, with the loop exclusion;
- accepted correct / wrong / missed at the F1max threshold: the definitions
  of design.md "Evaluation protocol" applied to those revisits;
- top-1 distance histograms: numpy.histogram with 40 equal bins over the
  range of top-1 distances (NumPy reference, numpy.histogram);
- the scalar table: numpy.mean and numpy.std(ddof=1) over seeds.
"""
import csv
import json
import os
import shutil
import subprocess
import sys
import tempfile

import numpy as np
from scipy.spatial import cKDTree

from checklib import check, done

ROOT = os.environ["REVISIT_ROOT"]
BIN = os.environ["REVISIT_BIN"]


def load_block(path, block=0):
    """Rows of one gnuplot data block (blocks apart by two blank lines)."""
    rows, b, blank = [], 0, 0
    for line in open(path):
        s = line.strip()
        if not s:
            blank += 1
            if blank == 2:
                b += 1
            continue
        blank = 0
        if s.startswith("#"):
            continue
        if b == block:
            rows.append([float(v) for v in s.split()])
    return rows


def main():
    tmp = tempfile.mkdtemp()
    sweep = os.path.join(tmp, "sweep")
    subprocess.run([sys.executable, os.path.join(ROOT, "reports/fixture.py"), sweep, "--seeds", "3",
                    "--conditions", "2"], check=True)
    op_marks(tmp)
    subprocess.run([BIN, "report", sweep, "--quiet"], check=True)
    cell = os.path.join(sweep, "cells", "m0-c0-s1")
    plots = os.path.join(sweep, "report", "plots")
    res = json.load(open(os.path.join(cell, "result.json")))
    pr = res["protocol"]
    r_pos, excl = pr["r_pos_m"], pr["exclusion_s"]
    tau = res["metrics"]["f1max"]["threshold"]

    P = {}
    for row in csv.DictReader(ln for ln in open(os.path.join(cell, "poses.csv")) if not ln.startswith("# ")):
        P[int(row["index"])] = (float(row["t"]), float(row["x"]), float(row["y"]), float(row["z"]))
    idx = np.array(sorted(P))
    xyz = np.array([P[i][1:] for i in idx])
    t = np.array([P[i][0] for i in idx])
    tree = cKDTree(xyz)

    def true_cands(i):
        return [int(idx[j]) for j in tree.query_ball_point(xyz[i], r_pos) if t[j] <= t[i] - excl]

    top = {}
    for line in open(os.path.join(cell, "queries.csv")):
        if line.startswith("#") or line.startswith("query"):
            continue
        f = line.strip().split(",")
        top[int(f[0])] = (int(f[1]), float(f[2])) if len(f) >= 3 and f[1] else None

    want = {"correct": set(), "wrong": set(), "missed": set()}
    pos = {int(i): k for k, i in enumerate(idx)}
    for q, c in top.items():
        rev = bool(true_cands(pos[q]))
        acc = c is not None and c[1] <= tau
        d = np.linalg.norm(xyz[pos[q]] - xyz[pos[c[0]]]) if c else None
        if acc and d <= r_pos:
            want["correct"].add(q)
        elif acc and d > pr["r_neg_m"]:
            want["wrong"].add(q)
        elif not acc and rev:
            want["missed"].add(q)
    for layer, col in (("correct", 2), ("wrong", 4), ("missed", 2)):
        got = set(int(r[col]) for r in load_block(os.path.join(plots, "trajectory-0-ring-key-%s.dat" % layer)))
        check(got == want[layer], "top view: %s queries match the scipy ground truth (%d vs %d)"
              % (layer, len(got), len(want[layer])))
    check(len(want["correct"]) > 10 and len(want["wrong"]) > 5 and len(want["missed"]) > 5,
          "the fixture exercises every outcome")
    wrong = load_block(os.path.join(plots, "trajectory-0-ring-key-wrong.dat"))
    ok = all(abs(r[0] + r[2] - xyz[pos[top[int(r[4])][0]]][0]) < 1e-6 for r in wrong)
    check(ok, "each wrong-match segment ends at the wrongly matched place")

    # Histograms of top-1 distances (numpy.histogram, 40 bins, last bin closed).
    d1 = np.array([c[1] for c in top.values() if c])
    pd = np.array([np.linalg.norm(xyz[pos[q]] - xyz[pos[c[0]]]) for q, c in top.items() if c])
    rng = (d1.min(), d1.max())
    hc, _ = np.histogram(d1[pd <= r_pos], bins=40, range=rng)
    rv = np.array([bool(true_cands(pos[q])) for q, c in top.items() if c])
    hw, _ = np.histogram(d1[(pd > r_pos) & rv], bins=40, range=rng)
    hn, _ = np.histogram(d1[(pd > r_pos) & ~rv], bins=40, range=rng)
    h = np.array(load_block(os.path.join(plots, "top1-distances-0-ring-key.dat")))
    check(h.shape == (40, 5), "the distance histogram has 40 bins of three counts")
    check(np.array_equal(h[:, 2].astype(int), hc), "correct top-1 counts equal numpy.histogram")
    check(np.array_equal(h[:, 3].astype(int), hw), "wrong top-1 counts of queries with a revisit (scipy) equal numpy.histogram")
    check(np.array_equal(h[:, 4].astype(int), hn) and hn.sum() > 0,
          "top-1 counts of queries without a revisit (scipy) equal numpy.histogram")
    check(abs(h[0, 0] - rng[0]) < 1e-9 and abs(h[-1, 1] - rng[1]) < 1e-6, "bins span the top-1 distance range")
    gp = open(os.path.join(plots, "top1-distances-0-ring-key.gp")).read()
    check(("from %.9g," % tau) in gp, "the F1max threshold of result.json is marked")
    check(("'F1max threshold %.4g'" % tau) in gp, "the F1max threshold's value is written beside its mark")

    # Matrix truth rings against the k-d tree.
    rows = [ln for ln in open(os.path.join(cell, "matrix.csv")) if not ln.startswith("# ")]
    ri = [int(v) for v in rows[0].strip().split(",")[1:]]
    ci = [int(v) for v in rows[1].strip().split(",")[1:]]
    want_pairs = set()
    for r, qi in enumerate(ri):
        tc = set(true_cands(pos[qi]))
        for c, mj in enumerate(ci):
            if mj in tc:
                want_pairs.add((c, r))
    got_pairs = set((int(a), int(b)) for a, b in load_block(os.path.join(plots, "distance-matrix-0-ring-key.dat"), 0))
    check(got_pairs == want_pairs and want_pairs, "matrix: true-revisit marks equal the scipy pairs (%d)" % len(want_pairs))

    # Table: mean and sample standard deviation over three seeds.
    rows = list(csv.DictReader(open(os.path.join(sweep, "report", "scalars.csv"))))
    for m in ("f1max", "r100p", "ap"):
        for cond in ("none", "sector"):
            vals = []
            for s in (1, 2, 3):
                ci_ = 0 if cond == "none" else 1
                r = json.load(open(os.path.join(sweep, "cells", "m0-c%d-s%d" % (ci_, s), "result.json")))
                vals.append(r["metrics"][m]["value"])
            row = [r for r in rows if r["metric"] == m and r["condition"] == cond and r["method"].startswith("ring-key")][0]
            check(abs(float(row["mean"]) - np.mean(vals)) < 1e-9, "scalars.csv mean of %s on %s equals numpy.mean" % (m, cond))
            check(abs(float(row["sd"]) - np.std(vals, ddof=1)) < 1e-9, "scalars.csv sd of %s on %s equals numpy.std(ddof=1)" % (m, cond))
            check(row["seeds"] == "3", "three seeds counted for %s on %s" % (m, cond))
    summary_chart(sweep, plots)
    pr_marks(sweep, plots)
    shutil.rmtree(tmp, ignore_errors=True)
    return done()


def op_marks(tmp):
    """Operating points on the PR curves: the threshold a verdict carries
    from 'none' to 'dropout-0.5' is marked on both conditions' curves of its
    method, at the curve point of the largest threshold not above it
    (numpy.searchsorted(side='right') - 1 on result.json's ascending
    thresholds: a query is accepted when its distance <= the threshold),
    with its label."""
    sweep = os.path.join(tmp, "ops")
    subprocess.run([sys.executable, os.path.join(ROOT, "reports/fixture.py"), sweep, "--verdicts"], check=True)
    # A cell's own operating point (result.json "operating_point", as a sweep
    # with a scenario operating point writes it): plain-hist's F1max
    # threshold on none, carried to its dropout cell.
    tau1 = json.load(open(os.path.join(sweep, "cells", "m1-c0-s1", "result.json")))["metrics"]["f1max"]["threshold"]
    p1 = os.path.join(sweep, "cells", "m1-c4-s1", "result.json")
    r1 = json.load(open(p1))
    r1["operating_point"] = {"tuned_on": "m1-c0-s1", "rule": "f1max", "threshold": tau1}
    json.dump(r1, open(p1, "w"))
    subprocess.run([BIN, "report", sweep, "--quiet", "--format", "md"], check=True)
    plots = os.path.join(sweep, "report", "plots")
    v = [c for c in json.load(open(os.path.join(sweep, "verdicts.json")))["criteria"] if "operating_point" in c][0]
    tau = v["operating_point"]["threshold"]
    for cell, plot in (("m0-c0-s1", "pr-0-none"), ("m0-c4-s1", "pr-1-dropout-0-5")):
        cv = json.load(open(os.path.join(sweep, "cells", cell, "result.json")))["curve"]
        k = int(np.searchsorted(cv["threshold"], tau, side="right")) - 1
        path = os.path.join(plots, plot + "-oppoints.dat")
        got = [r for r in load_block(path) if r[2] == 0] if os.path.exists(path) else []
        check(len(got) == 1 and k >= 0 and np.allclose(got[0][:3], [cv["recall"][k], cv["precision"][k], 0]),
              "%s: the operating point lies on ring-key's curve at the carried threshold %.4g" % (plot, tau))
        gp = open(os.path.join(plots, plot + ".gp")).read()
        check(("\"ring-key at %.4g (tuned on none, precision 0.99)\"" % tau) in gp, "%s: the point is labelled" % plot)
    cv = r1["curve"]
    k = int(np.searchsorted(cv["threshold"], tau1, side="right")) - 1
    got = [r for r in load_block(os.path.join(plots, "pr-1-dropout-0-5-oppoints.dat")) if r[2] == 1]
    check(len(got) == 1 and np.allclose(got[0][:2], [cv["recall"][k], cv["precision"][k]]),
          "a cell's own operating point lies on its curve at its threshold")
    gp = open(os.path.join(plots, "pr-1-dropout-0-5.gp")).read()
    check(("\"plain-hist at %.4g (tuned on none, f1max)\"" % tau1) in gp, "a cell's own operating point is labelled")
    check(not os.path.exists(os.path.join(plots, "pr-2-sector-width-30-oppoints.dat")),
          "no operating point on a condition no verdict names")


def pr_marks(sweep, plots):
    """PR curves of the perturbed condition: the dotted reference curve is the
    unperturbed cell's curve, and the marked point is the curve's (recall,
    precision) at the F1max threshold result.json names."""
    for m in (0, 1):
        ref = json.load(open(os.path.join(sweep, "cells", "m%d-c0-s1" % m, "result.json")))["curve"]
        got = np.array(load_block(os.path.join(plots, "pr-1-sector-width-30-reference.dat"), m))
        check(np.allclose(got[:, 0], ref["recall"]) and np.allclose(got[:, 1], ref["precision"]),
              "PR curve behind method %d: the reference condition's curve" % m)
        r = json.load(open(os.path.join(sweep, "cells", "m%d-c1-s1" % m, "result.json")))
        k = r["curve"]["threshold"].index(r["metrics"]["f1max"]["threshold"])
        pt = load_block(os.path.join(plots, "pr-1-sector-width-30-f1max.dat"), m)
        check(len(pt) == 1 and np.allclose(pt[0], [r["curve"]["recall"][k], r["curve"]["precision"][k]]),
              "the F1max point of method %d lies at the result's F1max threshold on its curve" % m)
    gp = open(os.path.join(plots, "pr-1-sector-width-30.gp")).read()
    check(gp.index("pr-1-sector-width-30-reference.dat") < gp.index("'pr-1-sector-width-30.dat'"), "the reference curves are drawn first, behind")


def summary_chart(sweep, plots):
    """Summary chart: per panel (F1max, R@100P), method and condition row, the
    point is numpy.mean of the seeds' values and the interval numpy.mean of
    their bounds; the dashed baseline is the method's unperturbed mean."""
    gp = open(os.path.join(plots, "summary-by-condition.gp")).read()
    check('set ytics ("none" 0, "sector (width=30)" 1)' in gp, "summary chart: one row per condition, in table order")
    for p, key in enumerate(("f1max", "r100p")):
        for m in (0, 1):
            rows = load_block(os.path.join(plots, "summary-by-condition.dat"), p * 2 + m)
            check(len(rows) == 2, "summary chart: both conditions of method %d on %s" % (m, key))
            for c, row in enumerate(rows):
                ms = [json.load(open(os.path.join(sweep, "cells", "m%d-c%d-s%d" % (m, c, s), "result.json")))
                      ["metrics"][key] for s in (1, 2, 3)]
                want = [c] + [np.mean([x[k] for x in ms]) for k in ("value", "lo", "hi")]
                check(np.allclose(row, want, atol=1e-9), "summary chart: %s of method %d on row %d equals numpy.mean "
                      "of value, lo, hi over seeds" % (key, m, c))
                if c == 0:
                    check(("set arrow from %.9g," % want[1]) in gp, "summary chart: the baseline of method %d on %s "
                          "is its unperturbed mean" % (m, key))


if __name__ == "__main__":
    sys.exit(main())
