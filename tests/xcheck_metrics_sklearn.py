#!/usr/bin/python3
"""xcheck_metrics_sklearn.py: our exact PR curve and AP against scikit-learn.

Reference: sklearn.metrics.precision_recall_curve and
sklearn.metrics.average_precision_score (scikit-learn, Debian python3-sklearn).

The mapping.  scikit-learn scores samples with binary labels: a sample above
the threshold is a predicted positive, TP = predicted and label 1, FN =
not predicted and label 1.  Our queries map onto it when a query's label says
both "is a revisit" and "its top-1 candidate is correct" at once:
  label 1 -> a revisit whose top-1 lies within r_pos   (accepted: TP, else FN)
  label 0 -> not a revisit, top-1 beyond r_neg         (accepted: FP)
with score = -d1 (a smaller descriptor distance is a stronger match).  Then
our strict and lenient counting coincide (no revisit has a wrong top-1) and
both equal scikit-learn's counting, so every (threshold, precision, recall)
point and AP must agree.  A revisit with a wrong top-1 has no scikit-learn
counterpart (it is an FP when accepted and, in strict counting, also an FN),
which is why "every query a revisit" alone is not enough for the mapping.
AP in both is sum_k (R_k - R_k-1) P_k over the thresholds.
"""
import os
import subprocess
import sys

import numpy as np
from sklearn.metrics import average_precision_score, precision_recall_curve

from checklib import check, done

ROOT = os.environ.get("REVISIT_ROOT", os.path.join(os.path.dirname(__file__), ".."))
BUILD = os.environ.get("REVISIT_BUILD", os.path.join(ROOT, "build"))
TOOL = os.path.join(BUILD, "tests", "tool_metrics_pr")
TOL = 1e-12


def run_tool(d1, labels, counting):
    lines = ["%d 1000 %d" % (len(d1), counting)]
    for d, y in zip(d1, labels):
        # class 1 = within r_pos, 0 = beyond r_neg; first correct rank 1 or none
        lines.append("%.17g %d %d %d" % (d, 1 if y else 0, 1 if y else 0, 1 if y else 0))
    out = subprocess.run([TOOL], input="\n".join(lines) + "\n", capture_output=True,
                         text=True, check=True).stdout
    curve, scalars = [], {}
    for line in out.splitlines():
        f = line.split()
        if f[0] == "curve":
            curve.append(tuple(float(x) for x in f[1:]))
        else:
            scalars[f[1]] = float(f[2])
    return curve, scalars


def compare(d1, labels, desc):
    d1 = np.asarray(d1, dtype=float)
    labels = np.asarray(labels, dtype=int)
    p, r, thr = precision_recall_curve(labels, -d1)
    # sklearn: thresholds ascending in score (= descending d1), plus a final
    # (P=1, R=0) point with no threshold; drop it and map score -> d1.
    ref = sorted(zip(-thr, p[:-1], r[:-1]))
    ap_ref = average_precision_score(labels, -d1)
    for counting in (0, 1):
        curve, sc = run_tool(d1, labels, counting)
        name = "%s (%s)" % (desc, "lenient" if counting else "strict")
        same = len(curve) == len(ref) and all(
            abs(a[0] - b[0]) <= TOL and abs(a[1] - b[1]) <= TOL and abs(a[2] - b[2]) <= TOL
            for a, b in zip(curve, ref))
        check(same, name + ": every curve point matches precision_recall_curve")
        check(abs(sc["ap"] - ap_ref) <= TOL, name + ": AP matches average_precision_score (%r vs %r)"
              % (sc["ap"], ap_ref))
        f1 = max((2 * a * b / (a + b) if a + b > 0 else 0.0) for _, a, b in ref)
        check(abs(sc["f1max"] - f1) <= TOL, name + ": F1max is the maximum over sklearn's points")


def compare_scaled(n, rng, desc):
    """Strict counting with revisits whose top-1 is wrong or missing: our AP is
    average_precision_score over the queries with a candidate (label 1 = the
    top-1 is correct, score -d1) times correct / revisits, since our recall
    divides the same true positives by every revisit instead of by the
    correct ones; precision is the same when r_neg = r_pos (no band)."""
    d1 = rng.random(n) * 3
    revisit = rng.random(n) < 0.6
    correct = revisit & (rng.random(n) < 0.7)      # a correct top-1 needs a revisit
    d1[revisit & ~correct & (rng.random(n) < 0.3)] = np.inf   # revisits with no candidate
    correct[0], revisit[0], d1[0] = True, True, 0.5
    lines = ["%d 1000 0" % n]
    for d, c, r in zip(d1, correct, revisit):
        lines.append("%s %d %d %d" % ("inf" if not np.isfinite(d) else "%.17g" % d, 1 if c else 0,
                                      1 if r else 0, 1 if c else -1))
    out = subprocess.run([TOOL], input="\n".join(lines) + "\n", capture_output=True, text=True,
                         check=True).stdout
    ap = [float(l.split()[2]) for l in out.splitlines() if l.startswith("scalar ap ")][0]
    fin = np.isfinite(d1)
    ref = average_precision_score(correct[fin].astype(int), -d1[fin]) * correct.sum() / revisit.sum()
    check(abs(ap - ref) <= TOL, desc + ": strict AP = average_precision_score x correct/revisits (%r vs %r)"
          % (ap, ref))


def main():
    if not os.access(TOOL, os.X_OK):
        check(False, "tool not built: " + TOOL)
        return done()
    rng = np.random.default_rng(20261201)
    for k in range(12):  # random scores
        n = int(rng.integers(20, 400))
        labels = (rng.random(n) < rng.uniform(0.1, 0.9)).astype(int)
        labels[0] = 1
        compare(rng.random(n) * 3, labels, "random scores %d (n=%d)" % (k, n))
    for k in range(12):  # heavily tied scores: few distinct values
        n = int(rng.integers(20, 300))
        labels = (rng.random(n) < 0.5).astype(int)
        labels[0] = 1
        d1 = rng.integers(0, int(rng.integers(2, 6)), n) * 0.25
        compare(d1, labels, "tied scores %d (n=%d)" % (k, n))
    tiny = [([0.5], [1]), ([0.1, 0.2], [0, 1]), ([0.3, 0.3], [1, 0]),
            ([0.2, 0.1, 0.4], [1, 1, 0]), ([1.0, 1.0, 1.0], [1, 1, 1]), ([0.1, 0.9], [1, 0])]
    for k, (d1, labels) in enumerate(tiny):
        compare(d1, labels, "tiny case %d" % k)
    for k in range(8):  # wrong and missing top-1 candidates among the revisits
        compare_scaled(int(rng.integers(20, 400)), rng, "wrong top-1 %d" % k)
    return done()


if __name__ == "__main__":
    sys.exit(main())
