#!/usr/bin/python3
"""xcheck_oppoint_sklearn.py: an operating point chosen on one set and
carried to another, against scikit-learn and numpy.

References: sklearn.metrics.precision_recall_curve (with sample_weight for
the resamples) and sklearn.metrics.confusion_matrix (false positives at the
threshold), scikit-learn, Debian python3-sklearn; numpy.percentile (linear
interpolation, its default) for the intervals.

The mapping is that of tests/xcheck_metrics_sklearn.py (score = -d1; label 1
= a revisit whose top-1 lies within r_pos, label 0 = a top-1 beyond r_neg),
extended by the strict-counting scaling: a revisit whose top-1 is wrong is a
label-0 sample for scikit-learn (accepted, it is a false positive for both),
and in strict counting it still counts as a revisit, so our recall is
scikit-learn's recall times (label-1 weight) / (revisit weight).  In lenient
counting such a revisit, when accepted, is no miss; the sets below give
lenient counting only queries without that case, where both coincide.
Reading a curve at a threshold tau: scikit-learn's point at the smallest
threshold >= -tau accepts exactly the samples with d1 <= tau; with none,
nothing is accepted (precision 1, recall 0 in both).
"""
import os
import subprocess
import sys

import numpy as np
from sklearn.metrics import confusion_matrix, precision_recall_curve

from checklib import check, done

ROOT = os.environ.get("REVISIT_ROOT", os.path.join(os.path.dirname(__file__), ".."))
BUILD = os.environ.get("REVISIT_BUILD", os.path.join(ROOT, "build"))
TOOL = os.path.join(BUILD, "tests", "tool_oppoint")
TOL = 1e-9
RULES = {"f1max": 0, "precision": 1, "recall": 2, "fixed": 3}
NAMES = ["precision", "recall", "f1", "false_positives", "false_positives_per_km", "false_positives_per_hour"]


def run_tool(ref, at, counting, rule, target, resamples, seed, km, hours):
    lines = ["%d %d %d %d %.17g %d %d %.17g %.17g" % (len(ref[0]), len(at[0]), counting, RULES[rule], target,
                                                     resamples, seed, km, hours)]
    for d1, cls, rev in (ref, at):
        lines += ["%.17g %d %d" % t for t in zip(d1, cls, rev)]
    out = subprocess.run([TOOL], input="\n".join(lines) + "\n", capture_output=True, text=True, check=True).stdout
    res = {"at": {}, "ref": {}, "w": []}
    for line in out.splitlines():
        f = line.split()
        if f[0] == "tau":
            res["tau"] = [float(x) for x in f[1:4]] + [int(f[4])]
        elif f[0] == "paired":
            res["paired"] = int(f[1])
        elif f[0] in ("at", "ref"):
            res[f[0]][f[1]] = [float(x) for x in f[2:]]
        elif f[0] == "w":
            a, b = line.split("|")
            res["w"].append((np.array(a.split()[2:], dtype=float), np.array(b.split(), dtype=float)))
    return res


def sk_points(d1, cls, rev, w):
    """Curve points (tau, precision, strict recall) ascending in tau, from scikit-learn."""
    keep = w > 0
    d1, cls, rev, w = d1[keep], cls[keep], rev[keep], w[keep]
    label = (cls == 1).astype(int)
    if label.sum() == 0:
        return []
    # a query without candidates (d1 = inf) is never accepted: a score below
    # every other, whose own point is dropped
    p, r, thr = precision_recall_curve(label, np.where(np.isfinite(d1), -d1, -1e300), sample_weight=w)
    scale = (w * label).sum() / (w * rev).sum()
    return sorted((-t, a, b * scale) for t, a, b in zip(thr, p[:-1], r[:-1]) if t > -1e299)


def sk_choose(pts, rule, target, d1, cls, rev, w):
    if rule == "fixed":
        return target
    if rule == "precision":
        ok = [t for t, p, _ in pts if p >= target]
        return max(ok) if ok else np.nan
    if rule == "recall":
        ok = [t for t, _, r in pts if r >= target]
        return min(ok) if ok else np.nan
    f1 = [(2 * p * r / (p + r) if p + r > 0 else 0.0, t) for t, p, r in pts]
    best = max((f for f, _ in f1), default=0.0)
    return min(t for f, t in f1 if f == best) if best > 0 else np.nan


def sk_scores(d1, cls, rev, w, tau, km, hours):
    """Scores at tau: the curve read at the smallest threshold >= -tau, FP by confusion_matrix."""
    if np.isnan(tau):
        return [np.nan] * 6
    pts = sk_points(d1, cls, rev, w)
    below = [(t, p, r) for t, p, r in pts if t <= tau]
    p, r = (below[-1][1], below[-1][2]) if below else (1.0, 0.0)
    pred = (-d1 >= -tau).astype(int)
    neg = (cls == 0).astype(int)   # a top-1 beyond r_neg: accepted, a false positive
    fp = confusion_matrix(neg, pred, labels=[0, 1], sample_weight=w)[1, 1] if w.sum() else 0.0
    f1 = 2 * p * r / (p + r) if p + r > 0 else 0.0
    return [p, r, f1, fp, fp / km, fp / hours]


def close(a, b):
    return (np.isnan(a) and np.isnan(b)) or abs(a - b) <= TOL


def compare(ref, at, counting, rule, target, desc, resamples=0, seed=7, km=2.5, hours=0.25):
    res = run_tool(ref, at, counting, rule, target, resamples, seed, km, hours)
    r_arr = [np.asarray(x, dtype=float) for x in ref]
    a_arr = [np.asarray(x, dtype=float) for x in at]
    one_r, one_a = np.ones(len(r_arr[0])), np.ones(len(a_arr[0]))
    tau = sk_choose(sk_points(*r_arr, one_r), rule, target, *r_arr, one_r)
    check(close(res["tau"][0], tau), "%s: tau %r matches %r from precision_recall_curve" % (desc, res["tau"][0], tau))
    want_at = sk_scores(*a_arr, one_a, tau, km, hours)
    want_ref = sk_scores(*r_arr, one_r, tau, km, hours)
    ok = all(close(res["at"][n][0], v) for n, v in zip(NAMES, want_at))
    check(ok, "%s: carried scores %s match %s" % (desc, [res["at"][n][0] for n in NAMES], want_at))
    ok = all(close(res["ref"][n][0], v) for n, v in zip(NAMES, want_ref))
    check(ok, "%s: reference scores at tau match" % desc)
    ok = all(close(res["at"][n][3], va - vr) for n, va, vr in zip(NAMES, want_at, want_ref))
    check(ok, "%s: the difference is carried minus reference" % desc)
    if not resamples:
        return
    check(len(res["w"]) == resamples, "%s: %d resamples reported" % (desc, resamples))
    taus, ats, diffs = [], [], []
    for wr, wa in res["w"]:
        taus.append(sk_choose(sk_points(*r_arr, wr), rule, target, *r_arr, wr))
        sa, sr = sk_scores(*a_arr, wa, tau, km, hours), sk_scores(*r_arr, wr, tau, km, hours)
        ats.append(sa)
        diffs.append([x - y for x, y in zip(sa, sr)])
    taus = np.array(taus)
    fin = taus[~np.isnan(taus)]
    lo, hi = np.percentile(fin, [2.5, 97.5]) if len(fin) else (np.nan, np.nan)
    check(close(res["tau"][1], lo) and close(res["tau"][2], hi) and res["tau"][3] == int(np.isnan(taus).sum()),
          "%s: interval of the choice [%r, %r] matches numpy.percentile [%r, %r]" % (desc, res["tau"][1], res["tau"][2], lo, hi))
    for k, n in enumerate(NAMES):
        col = np.array([a[k] for a in ats])
        col = col[~np.isnan(col)]
        lo, hi = np.percentile(col, [2.5, 97.5])
        dcol = np.array([d[k] for d in diffs])
        dcol = dcol[~np.isnan(dcol)]
        dlo, dhi = np.percentile(dcol, [2.5, 97.5])
        v = res["at"][n]
        check(close(v[1], lo) and close(v[2], hi) and close(v[4], dlo) and close(v[5], dhi),
              "%s: intervals of %s match numpy.percentile over the resamples" % (desc, n))


def make_set(rng, n, p_rev, p_wrong, spread, lenient_safe=False):
    rev = (rng.random(n) < p_rev).astype(int)
    wrong = (rng.random(n) < p_wrong) & (rev == 1)
    if lenient_safe:
        wrong[:] = False
    cls = np.where((rev == 1) & ~wrong, 1, 0)
    d1 = np.where(cls == 1, rng.random(n) * spread, rng.random(n) * spread + 0.3 * spread)
    rev[0], cls[0] = 1, 1
    return d1, cls, rev


def main():
    if not os.access(TOOL, os.X_OK):
        check(False, "tool not built: " + TOOL)
        return done()
    # the worked case of metrics/oppoint.h
    ref = ([0.1, 0.2, 0.3, 0.4], [1, 1, 0, 1], [1, 1, 0, 1])
    at = ([0.15, 0.18, 0.5], [0, 1, 1], [0, 1, 1])
    compare(ref, at, 0, "precision", 0.99, "worked case")
    rng = np.random.default_rng(20261202)
    for k in range(10):
        n = int(rng.integers(40, 300))
        ref = make_set(rng, n, 0.5, 0.15, 1.0)
        at = make_set(rng, n, 0.5, 0.25, 1.3)   # same size: paired
        rule, target = [("f1max", 0), ("precision", 0.9), ("precision", 0.99), ("recall", 0.5),
                        ("fixed", 0.6)][k % 5]
        compare(ref, at, 0, rule, target, "strict %d %s:%g (n=%d)" % (k, rule, target, n))
    for k in range(4):
        ref = make_set(rng, 120, 0.5, 0, 1.0, lenient_safe=True)
        at = make_set(rng, 90, 0.5, 0, 1.2, lenient_safe=True)
        compare(ref, at, 1, ["precision", "recall", "f1max", "fixed"][k], [0.95, 0.7, 0, 0.4][k],
                "lenient %d, unpaired" % k)
    # tied distances
    ref = (np.round(rng.random(80) * 4) / 4, (rng.random(80) < 0.6).astype(int), None)
    ref = (ref[0], ref[1], ref[1].copy())
    at = (np.round(rng.random(80) * 4) / 4, (rng.random(80) < 0.4).astype(int), None)
    at = (at[0], at[1], at[1].copy())
    compare(ref, at, 0, "precision", 0.5, "tied distances")
    # no tau reaches the target: everything NaN
    ref = ([0.1, 0.2, 0.3], [0, 1, 0], [0, 1, 0])
    compare(ref, ref, 0, "precision", 1.0, "no threshold reaches precision 1")
    # bootstrap intervals, paired and unpaired
    ref = make_set(rng, 150, 0.5, 0.1, 1.0)
    at = make_set(rng, 150, 0.5, 0.2, 1.2)
    compare(ref, at, 0, "precision", 0.95, "bootstrap paired", resamples=200)
    at = make_set(rng, 110, 0.5, 0.2, 1.2)
    compare(ref, at, 0, "recall", 0.6, "bootstrap unpaired", resamples=200)
    compare(ref, at, 0, "f1max", 0, "bootstrap of the F1max choice", resamples=100)
    return done()


if __name__ == "__main__":
    sys.exit(main())
