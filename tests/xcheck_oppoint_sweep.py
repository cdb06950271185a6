#!/usr/bin/python3
"""xcheck_oppoint_sweep.py: an operating-point criterion of a sweep (the
threshold tuned on the clean condition, scores under a perturbed one),
recomputed from the cells' poses.csv and queries.csv.

References: the ground truth is recomputed with numpy from the poses (a
revisit has an earlier scan within r_pos outside the exclusion window, the
top-1 pair within r_pos is correct: common practice, no source; the protocol
is the one of README "Evaluation protocol"); the threshold and the scores are
read off sklearn.metrics.precision_recall_curve, and the false positives come
from sklearn.metrics.confusion_matrix (scikit-learn, Debian python3-sklearn),
with the strict-counting scaling of tests/xcheck_oppoint_sklearn.py.
"""
import json
import os
import subprocess
import sys
import tempfile

import numpy as np

from checklib import check, done
from xcheck_oppoint_sklearn import sk_choose, sk_points, sk_scores

BIN = os.environ.get("REVISIT_BIN", "build/revisit")
R_POS, EXCL = 3.0, 30.0


def cell_outcomes(d):
    """Per query (d1, class, revisit) and the km and hours driven, from a cell folder."""
    # loop mode: the map rows (the query rows repeat the same poses for the perturbed copy)
    rows = [l.split(",") for l in open(os.path.join(d, "poses.csv")) if l.startswith("map,")]
    t = np.array([float(r[2]) for r in rows])
    xyz = np.array([[float(v) for v in r[3:6]] for r in rows])
    d1, cls, rev = [], [], []
    for line in open(os.path.join(d, "queries.csv")):
        if line.startswith("#") or line.startswith("query"):
            continue
        f = line.strip().split(",")
        i = int(f[0])
        cand = (np.arange(len(t)) < i) & (t <= t[i] - EXCL)
        dist = np.linalg.norm(xyz - xyz[i], axis=1)
        rev.append(int(np.any(cand & (dist <= R_POS))))
        if len(f) > 1:
            j = int(f[1])
            d1.append(float(f[2]))
            cls.append(int(dist[j] <= R_POS))
        else:
            d1.append(np.inf)
            cls.append(0)
    km = np.sum(np.linalg.norm(np.diff(xyz, axis=0), axis=1)) / 1000
    hours = (t[-1] - t[0]) / 3600
    return (np.array(d1), np.array(cls), np.array(rev)), km, hours


def main():
    T = tempfile.mkdtemp()
    rec = os.path.join(T, "rec")
    subprocess.run([BIN, "synth", "--scenario", "port", "--scans", "150", "--out", rec, "--quiet"],
                   capture_output=True, check=True)
    scen = {"format": "revisit-sweep-1", "name": "op", "recordings": {"map": rec},
            "protocol": {"mode": "loop", "radius_m": R_POS, "exclude_s": EXCL, "counting": "strict"},
            "bootstrap": {"resamples": 50},
            "methods": [{"name": "scan-context"}],
            "conditions": [{"name": "clean"}, {"name": "mount", "chain": "sector:width=60,at=180+tilt:pitch=2",
                                                "on": "query"}],
            "criteria": [
                {"metric": "precision", "condition": "mount", "tuned_on": "clean",
                 "operating_point": "precision:0.9", "comparator": ">=", "threshold": 0.9},
                {"metric": "recall", "condition": "mount", "tuned_on": "clean", "target": "diff",
                 "operating_point": "recall:0.5", "comparator": ">=", "threshold": -0.2},
                {"metric": "false_positives_per_km", "condition": "mount", "tuned_on": "clean",
                 "comparator": "<=", "threshold": 1}]}
    sj = os.path.join(T, "s.json")
    json.dump(scen, open(sj, "w"))
    sw = os.path.join(T, "sw")
    p = subprocess.run([BIN, "sweep", sj, "--out", sw, "--quiet"], capture_output=True, text=True)
    check(p.returncode == 0, "the sweep runs: " + p.stderr[-300:])
    p = subprocess.run([BIN, "check", sj, sw], capture_output=True, text=True)
    check(p.returncode in (0, 1), "check judges the criteria: " + p.stderr[-300:])
    verdicts = json.load(open(os.path.join(sw, "verdicts.json")))["criteria"]
    check(len(verdicts) == 3, "three verdicts")
    ref, _, _ = cell_outcomes(os.path.join(sw, "cells", "scan-context__clean__s1"))
    at, km, hours = cell_outcomes(os.path.join(sw, "cells", "scan-context__mount__s1"))
    check(ref[2].sum() > 5, "the recording holds revisits (%d)" % ref[2].sum())
    one_r, one_a = np.ones(len(ref[0])), np.ones(len(at[0]))
    names = ["precision", "recall", "f1", "false_positives", "false_positives_per_km", "false_positives_per_hour"]
    for v, (rule, target) in zip(verdicts, [("precision", 0.9), ("recall", 0.5), ("f1max", 0)]):
        tau = sk_choose(sk_points(*ref, one_r), rule, target, *ref, one_r)
        sa = sk_scores(*at, one_a, tau, km, hours)
        sr = sk_scores(*ref, one_r, tau, km, hours)
        k = names.index(v["metric"])
        want = sa[k] - sr[k] if v["target"] == "diff" else sa[k]
        op = v.get("operating_point", {})
        check(op.get("tuned_on") == "clean" and op.get("rule") == rule, "%s: the verdict names its operating point" % rule)
        got_tau = op.get("threshold")
        check(got_tau is not None and abs(got_tau - tau) <= 1e-9,
              "%s: threshold %r matches precision_recall_curve on the clean cell (%r)" % (rule, got_tau, tau))
        check(v["value"] is not None and abs(v["value"] - want) <= 1e-9,
              "%s: %s %s %r matches %r" % (rule, v["metric"], v["target"], v["value"], want))
        passed = {">=": want >= v["threshold"], "<=": want <= v["threshold"]}[v["comparator"]]
        check(v["pass"] == passed, "%s: the verdict follows the recomputed value" % rule)
    check_report(sw, rec, verdicts)
    check_eval(T, rec, names)
    return done()


def check_report(sw, rec, verdicts):
    """The report shows the carried thresholds and the per-kind table, as recomputed."""
    from xcheck_kinds import recompute
    p = subprocess.run([BIN, "report", sw, "--format", "md", "--quiet"], capture_output=True, text=True)
    check(p.returncode == 0, "the report is written: " + p.stderr[-300:])
    md = open(os.path.join(sw, "report", "report.md")).read()
    check("\n## Operating points\n" in md, "the report has an operating-point section (in the contents)")
    v = verdicts[0]
    op = v["operating_point"]
    row = "| scan-context | mount | clean | precision 0.9 | %.4f [%.4f, %.4f] | precision | %.3f [%.3f, %.3f] |" % (
        op["threshold"], op["threshold_lo"], op["threshold_hi"], v["value"], v["lo"], v["hi"])
    check(row in md, "the operating-point row shows the threshold and the carried score: " + row)
    check("\n## Scores per kind of revisit\n" in md, "the report has a per-kind section (in the contents)")
    for cond in ("clean", "mount"):
        k = recompute(rec, os.path.join(sw, "cells", "scan-context__%s__s1" % cond, "queries.csv"), 45, 135)
        cells = []
        for name in ("same", "reverse", "crossing"):
            n, r1, r100 = k[name]
            cells += ["%d" % n] + (["%.3f" % r1, "%.3f" % r100] if n else ["-", "-"])
        line = "| %s | " % cond + " | ".join(cells) + " |"
        check(any(l.startswith("| scan-context | ") and l.endswith(line) for l in md.splitlines()),
              "per-kind row of %s (the method's short name) matches numpy: %s" % (cond, line))


def check_eval(T, rec, names):
    """eval --tuned-on: the operating point of an earlier results folder carried to a new run."""
    ref_dir, at_dir = os.path.join(T, "e_ref"), os.path.join(T, "e_at")
    base = [BIN, "eval", "--map", rec, "--method", "scan-context", "--quiet", "--bootstrap", "50"]
    subprocess.run(base + ["--out", ref_dir], capture_output=True, check=True)
    p = subprocess.run(base + ["--out", at_dir, "--chain", "dropout:p=0.6", "--tuned-on", ref_dir,
                               "--operating-point", "recall:0.4"], capture_output=True, text=True)
    check(p.returncode == 0, "eval --tuned-on runs: " + p.stderr[-300:])
    op = json.load(open(os.path.join(at_dir, "result.json"))).get("operating_point", {})
    ref, _, _ = cell_outcomes(ref_dir)
    at, km, hours = cell_outcomes(at_dir)
    one_r, one_a = np.ones(len(ref[0])), np.ones(len(at[0]))
    tau = sk_choose(sk_points(*ref, one_r), "recall", 0.4, *ref, one_r)
    check(op.get("rule") == "recall" and op.get("target") == 0.4 and op.get("paired") is True,
          "result.json names the rule and pairs the runs (same queries)")
    check(op.get("threshold") is not None and abs(op["threshold"] - tau) <= 1e-9,
          "eval: threshold %r matches precision_recall_curve on the tuned_on folder (%r)" % (op.get("threshold"), tau))
    sa, sr = sk_scores(*at, one_a, tau, km, hours), sk_scores(*ref, one_r, tau, km, hours)
    for k, n in enumerate(names):
        got = op.get("scores", {}).get(n, {})
        want = sa[k]
        check(got.get("value") is not None and abs(got["value"] - want) <= 1e-9
              and abs(got["reference"] - sr[k]) <= 1e-9 and got["lo"] <= got["value"] <= got["hi"],
              "eval: %s %r (reference %r) matches %r (%r)" % (n, got.get("value"), got.get("reference"), want, sr[k]))
    p = subprocess.run(base + ["--out", os.path.join(T, "e_bad"), "--operating-point", "f1max"], capture_output=True, text=True)
    check(p.returncode == 2 and "--operating-point needs --tuned-on" in p.stderr, "a rule without --tuned-on is refused")
    p = subprocess.run(base + ["--out", os.path.join(T, "e_bad"), "--tuned-on", ref_dir, "--operating-point", "recall:7"],
                       capture_output=True, text=True)
    check(p.returncode == 2 and "expected a number above 0 and at most 1" in p.stderr, "a bad rule is refused")
    p = subprocess.run(base + ["--out", os.path.join(T, "e_bad"), "--tuned-on", os.path.join(T, "nowhere")],
                       capture_output=True, text=True)
    check(p.returncode == 2 and "--tuned-on" in p.stderr and "queries.csv, expected a results folder" in p.stderr,
          "a missing tuned_on folder is named before any work")


if __name__ == "__main__":
    sys.exit(main())
