#!/usr/bin/python3
"""xcheck_oppoint_metrics.py: the scores at an operating point as rows of the
metric table (op_precision, op_recall, op_f1, op_false_positives, per km, per
hour): a sweep with the scenario's "operating_point" writes them into every
cell's result.json and into summary.csv, criteria judge them like any other
metric, and `revisit metrics --tuned-on` gives them for a results file.

References: the threshold and the scores are read off
sklearn.metrics.precision_recall_curve and the false positives come from
sklearn.metrics.confusion_matrix (scikit-learn, Debian python3-sklearn), with
the strict-counting scaling documented in tests/xcheck_oppoint_sklearn.py;
the ground truth is recomputed with numpy from each cell's poses.csv
(tests/xcheck_oppoint_sweep.py, common practice, no source).
"""
import csv
import json
import os
import shutil
import subprocess
import sys
import tempfile

import numpy as np

from checklib import check, done
from xcheck_oppoint_sklearn import sk_choose, sk_points, sk_scores
from xcheck_oppoint_sweep import R_POS, EXCL, cell_outcomes

BIN = os.environ.get("REVISIT_BIN", "build/revisit")
NAMES = ["precision", "recall", "f1", "false_positives", "false_positives_per_km", "false_positives_per_hour"]
KEYS = ["op_" + n for n in NAMES]


def close(a, b):
    if a is None or b is None:
        return a is None and (b is None or np.isnan(b))
    return (np.isnan(a) and np.isnan(b)) or abs(a - b) <= 1e-9


def sk_at(cell_dir, tau):
    """scikit-learn's scores of a cell at tau."""
    o, km, hours = cell_outcomes(cell_dir)
    return sk_scores(*o, np.ones(len(o[0])), tau, km, hours)


def sk_tau(cell_dir, rule, target):
    o, _, _ = cell_outcomes(cell_dir)
    one = np.ones(len(o[0]))
    return sk_choose(sk_points(*o, one), rule, target, *o, one)


def check_sweep(T, rec):
    scen = {"format": "revisit-sweep-1", "name": "oprows", "recordings": {"map": rec},
            "protocol": {"mode": "loop", "radius_m": R_POS, "exclude_s": EXCL, "counting": "strict"},
            "bootstrap": {"resamples": 40},
            "methods": [{"name": "scan-context"}],
            "operating_point": {"tuned_on": "clean", "rule": "precision:0.9"},
            "conditions": [{"name": "clean"},
                           {"name": "mount", "chain": "sector:width=60,at=180+tilt:pitch=2", "on": "query"},
                           {"name": "drop", "chain": "dropout:p=0.6", "on": "query"}],
            "criteria": [
                {"metric": "op_precision", "condition": "mount", "comparator": ">=", "threshold": 0.9},
                {"metric": "op_recall", "condition": "mount", "target": "diff", "baseline": "clean",
                 "comparator": ">=", "threshold": -0.2},
                {"metric": "op_false_positives_per_km", "condition": "drop", "target": "hi",
                 "comparator": "<=", "threshold": 1},
                {"metric": "precision", "condition": "mount", "tuned_on": "clean",
                 "operating_point": "precision:0.9", "comparator": ">=", "threshold": 0.9}]}
    sj = os.path.join(T, "s.json")
    json.dump(scen, open(sj, "w"))
    sw = os.path.join(T, "sw")
    p = subprocess.run([BIN, "sweep", sj, "--out", sw, "--quiet"], capture_output=True, text=True)
    check(p.returncode == 0, "the sweep runs: " + p.stderr[-300:])
    cell = lambda c: os.path.join(sw, "cells", "scan-context__%s__s1" % c)
    tau = sk_tau(cell("clean"), "precision", 0.9)
    check(not np.isnan(tau), "precision 0.9 is reached on the clean cell (tau %r)" % tau)
    rows = {r["condition"]: r for r in csv.DictReader(open(os.path.join(sw, "summary.csv")))}
    want = {}
    for c in ("clean", "mount", "drop"):
        want[c] = sk_at(cell(c), tau)
        res = json.load(open(os.path.join(cell(c), "result.json")))
        op = res.get("operating_point", {})
        check(close(op.get("threshold"), tau) and op.get("tuned_on") == "scan-context__clean__s1",
              "%s: result.json names the threshold %r chosen on the clean cell (sklearn %r)" % (c, op.get("threshold"), tau))
        for k, n in zip(KEYS, want[c]):
            m = res["metrics"].get(k, {})
            check(close(m.get("value"), n), "%s: result.json %s %r matches scikit-learn %r" % (c, k, m.get("value"), n))
            got = rows[c][k]
            check((got == "" and np.isnan(n)) or (got != "" and float(got) == m["value"]),
                  "%s: summary.csv %s %r is result.json's value" % (c, k, got))
            lo, hi = rows[c][k + "_lo"], rows[c][k + "_hi"]
            check(np.isnan(n) or (lo != "" and hi != "" and float(lo) <= float(got) <= float(hi)),
                  "%s: summary.csv %s has an interval around it [%s, %s]" % (c, k, lo, hi))
    p = subprocess.run([BIN, "check", sj, sw], capture_output=True, text=True)
    check(p.returncode in (0, 1), "check judges the criteria: " + p.stderr[-300:])
    v = json.load(open(os.path.join(sw, "verdicts.json")))["criteria"]
    check(len(v) == 4, "four verdicts")
    check(close(v[0]["value"], want["mount"][0]) and v[0]["pass"] == (want["mount"][0] >= 0.9),
          "op_precision under the mount: verdict %r matches scikit-learn %r" % (v[0]["value"], want["mount"][0]))
    d = want["mount"][1] - want["clean"][1]
    check(close(v[1]["value"], d), "op_recall paired difference mount - clean %r matches scikit-learn %r" % (v[1]["value"], d))
    check(v[1]["lo"] is not None and v[1]["lo"] <= v[1]["value"] <= v[1]["hi"], "the paired difference has an interval")
    hi = float(rows["drop"]["op_false_positives_per_km_hi"])
    check(close(v[2]["value"], want["drop"][4]) and v[2]["measured"] == hi,
          "op_false_positives_per_km of dropout: value %r (scikit-learn %r), judged at its upper bound %r" %
          (v[2]["value"], want["drop"][4], hi))
    check(close(v[3]["value"], v[0]["value"]), "a tuned_on criterion and the op_ row agree (%r, %r)" % (v[3]["value"], v[0]["value"]))
    # a cell whose threshold has nowhere to come from is named by check
    shutil.copytree(sw, sw + "2")
    shutil.rmtree(os.path.join(sw + "2", "cells", "scan-context__clean__s1"))
    p = subprocess.run([BIN, "check", sj, sw + "2"], capture_output=True, text=True)
    check(p.returncode == 2 and "incomplete sweep: cell scan-context__clean__s1 has no result" in p.stderr,
          "check names the missing tuned_on cell an op_ criterion needs: " + p.stderr[-300:])
    p = subprocess.run([BIN, "merge", "--out", sw + "2", sw + "2"], capture_output=True, text=True)
    rows2 = {r["condition"]: r for r in csv.DictReader(open(os.path.join(sw + "2", "summary.csv")))}
    r2 = json.load(open(os.path.join(sw + "2", "cells", "scan-context__mount__s1", "result.json")))
    check(p.returncode == 0 and rows2["mount"]["op_precision"] == "" and r2["metrics"]["op_precision"]["value"] is None
          and "operating_point" not in r2, "rows whose tuned_on cell is gone are cleared, not kept stale: " + p.stderr[-200:])
    out = subprocess.run([BIN, "merge", "--out", sw, sw], capture_output=True, text=True)
    check(out.returncode == 0 and close(json.load(open(os.path.join(cell("mount"), "result.json")))["metrics"]["op_precision"]["value"],
                                        want["mount"][0]), "a merge rewrites the same rows: " + out.stderr[-200:])


def check_metrics_cmd(T, rec):
    """revisit metrics --tuned-on: a results folder's threshold carried to a results file."""
    ref_dir, at_dir = os.path.join(T, "m_ref"), os.path.join(T, "m_at")
    base = [BIN, "eval", "--map", rec, "--method", "scan-context", "--quiet", "--bootstrap", "30"]
    subprocess.run(base + ["--out", ref_dir], capture_output=True, check=True)
    subprocess.run(base + ["--out", at_dir, "--chain", "dropout:p=0.6"], capture_output=True, check=True)
    js = os.path.join(T, "m.json")
    p = subprocess.run([BIN, "metrics", "--results", os.path.join(at_dir, "queries.csv"), "--tuned-on", ref_dir,
                        "--operating-point", "recall:0.4", "--bootstrap", "30", "--json", js, "--quiet"],
                       capture_output=True, text=True)
    check(p.returncode == 0, "metrics --tuned-on runs: " + p.stderr[-300:])
    tau = sk_tau(ref_dir, "recall", 0.4)
    want = sk_at(at_dir, tau)
    res = json.load(open(js))
    check(close(res.get("operating_point", {}).get("threshold"), tau),
          "metrics: the threshold %r matches precision_recall_curve on --tuned-on (%r)" %
          (res.get("operating_point", {}).get("threshold"), tau))
    for k, n in zip(KEYS, want):
        m = res["metrics"][k]
        check(close(m["value"], n), "metrics --json %s %r matches scikit-learn %r" % (k, m["value"], n))
        check(np.isnan(n) or m["lo"] <= m["value"] <= m["hi"], "metrics --json %s has an interval" % k)
        line = [l for l in p.stdout.splitlines() if l.startswith(k + " ")]
        check(len(line) == 1 and abs(float(line[0].split()[1]) - n) < 5e-5 if not np.isnan(n) else len(line) == 1,
              "metrics prints the %s row (%s)" % (k, line))
    check("operating point: threshold" in p.stdout and "recall" in p.stdout, "metrics says where the threshold came from")
    p = subprocess.run([BIN, "metrics", "--results", os.path.join(at_dir, "queries.csv"), "--quiet"],
                       capture_output=True, text=True)
    check(p.returncode == 0 and "op_precision" not in p.stdout, "without --tuned-on no op_ row is printed")
    p = subprocess.run([BIN, "metrics", "--results", os.path.join(at_dir, "queries.csv"), "--operating-point", "f1max"],
                       capture_output=True, text=True)
    check(p.returncode == 2 and "--operating-point needs --tuned-on" in p.stderr, "a rule without --tuned-on is refused")
    p = subprocess.run([BIN, "metrics", "--results", os.path.join(at_dir, "queries.csv"), "--tuned-on", ref_dir,
                        "--operating-point", "precision:3"], capture_output=True, text=True)
    check(p.returncode == 2 and "expected a number above 0 and at most 1" in p.stderr, "a bad rule is refused")
    p = subprocess.run([BIN, "metrics", "--results", os.path.join(at_dir, "queries.csv"), "--tuned-on",
                        os.path.join(T, "nowhere"), "--quiet"], capture_output=True, text=True)
    check(p.returncode == 2 and "--tuned-on" in p.stderr and "nowhere" in p.stderr, "a missing --tuned-on folder is named")
    # eval --tuned-on: its metric rows and its operating_point object agree
    e_dir = os.path.join(T, "e_at")
    subprocess.run(base + ["--out", e_dir, "--chain", "dropout:p=0.6", "--tuned-on", ref_dir,
                           "--operating-point", "recall:0.4"], capture_output=True, check=True)
    r = json.load(open(os.path.join(e_dir, "result.json")))
    for k, n in zip(KEYS, NAMES):
        a, b = r["metrics"][k], r["operating_point"]["scores"][n]
        check(a["value"] == b["value"] and a["lo"] == b["lo"] and a["hi"] == b["hi"],
              "eval --tuned-on: metrics.%s is operating_point.scores.%s" % (k, n))


def main():
    T = tempfile.mkdtemp()
    rec = os.path.join(T, "rec")
    subprocess.run([BIN, "synth", "--scenario", "port", "--scans", "150", "--out", rec, "--quiet"],
                   capture_output=True, check=True)
    check_sweep(T, rec)
    check_metrics_cmd(T, rec)
    return done()


if __name__ == "__main__":
    sys.exit(main())
