#!/usr/bin/python3
"""xcheck_sensitivity.py: the sensitivity ranking of a sweep (loss per unit
and across the swept range of each axis, the loss of each stage of a
compound condition run alone) recomputed with numpy from summary.csv.

References: numpy.polyfit (degree 1, least squares) for the slope of F1max
over the swept values; the losses are differences of means over seeds of
summary.csv's F1max (plain arithmetic).  The intervals come from a paired
bootstrap over queries that summary.csv does not hold; they are checked to
bracket the point values.
"""
import csv
import json
import os
import subprocess
import sys
import tempfile

import numpy as np

from checklib import check, done

BIN = os.environ.get("REVISIT_BIN", "build/revisit")


def main():
    T = tempfile.mkdtemp()
    rec = os.path.join(T, "rec")
    subprocess.run([BIN, "synth", "--scenario", "port", "--scans", "120", "--out", rec, "--quiet"],
                   capture_output=True, check=True)
    scen = {"format": "revisit-sweep-1", "name": "sens", "recordings": {"map": rec},
            "bootstrap": {"resamples": 100}, "seeds": 2,
            "methods": [{"name": "range-height"}, {"name": "scan-context"}],
            "conditions": [
                {"name": "clean"},
                {"name": "mount", "chain": "sector:width=90,at=180+tilt:pitch=4+dropout:p=0.3", "on": "query",
                 "stages_alone": True},
                {"name": "sector", "chain": "sector:at=random", "on": "query",
                 "axis": {"stage": "sector", "key": "width", "values": [0, 60, 120, 180]}},
                {"name": "noise", "chain": "noise", "on": "query",
                 "axis": {"stage": "noise", "key": "sigma", "values": [0, 0.1, 0.3]}}]}
    sj = os.path.join(T, "s.json")
    json.dump(scen, open(sj, "w"))
    sw = os.path.join(T, "sw")
    p = subprocess.run([BIN, "sweep", sj, "--out", sw, "--quiet"], capture_output=True, text=True)
    check(p.returncode == 0, "the sweep runs: " + p.stderr[-300:])
    cells = list(csv.DictReader(open(os.path.join(sw, "summary.csv"))))
    check(any(c["condition"] == "mount-only-tilt" for c in cells), "the sweep planned each stage of mount alone")
    sens_file = open(os.path.join(sw, "sensitivity.csv")).read().splitlines(True)
    check(sens_file[0] == "# revisit sensitivity ranking, format 1\n", "sensitivity.csv opens with its format line")
    sens = list(csv.DictReader(l for l in sens_file if not l.startswith("#")))

    def mean(method, cond, value=None):
        v = [float(c["f1max"]) for c in cells if c["method"] == method and c["condition"] == cond
             and (value is None or float(c["axis_value"]) == value)]
        return np.mean(v) if v else np.nan

    for method in ("range-height", "scan-context"):
        axes = [r for r in sens if r["kind"] == "axis" and r["method"].startswith(method)]
        check(len(axes) == 2, "%s: two swept parameters ranked" % method)
        for r in axes:
            cond = next(c for c in scen["conditions"] if c["name"] == r["condition"])
            xs = np.array(cond["axis"]["values"], dtype=float)
            ys = np.array([mean(r["method"], r["condition"], x) for x in xs])
            slope = np.polyfit(xs, ys, 1)[0]
            check(abs(float(r["loss_per_unit"]) + slope) <= 1e-8,
                  "%s %s: loss per unit %s is minus the polyfit slope %r" % (method, r["parameter"], r["loss_per_unit"], slope))
            check(abs(float(r["loss"]) - (ys[0] - ys[-1])) <= 1e-8, "%s %s: loss across the range" % (method, r["parameter"]))
            check(float(r["loss_lo"]) <= float(r["loss"]) <= float(r["loss_hi"])
                  and float(r["loss_per_unit_lo"]) <= float(r["loss_per_unit"]) <= float(r["loss_per_unit_hi"]),
                  "%s %s: the intervals bracket the values" % (method, r["parameter"]))
            check(r["unit"] == {"sector.width": "deg", "noise.sigma": "m"}[r["parameter"]], "%s: unit named" % r["parameter"])
        order = sorted(axes, key=lambda r: -float(r["loss"]))
        check([int(r["rank"]) for r in order] == [1, 2], "%s: ranked by loss across the range" % method)
        stages = [r for r in sens if r["kind"] == "stage" and r["method"].startswith(method)]
        check(len(stages) == 3, "%s: three stages of mount alone" % method)
        label = stages[0]["method"]
        comp = mean(label, "clean") - mean(label, "mount")
        for r in stages:
            loss = mean(label, "clean") - mean(label, r["condition"])
            check(abs(float(r["loss"]) - loss) <= 1e-8 and abs(float(r["compound_loss"]) - comp) <= 1e-8
                  and r["compound"] == "mount", "%s %s: stage loss %r, compound %r" % (method, r["parameter"], loss, comp))
            if comp != 0:
                check(abs(float(r["share"]) - loss / comp) <= 1e-8, "%s %s: share of the compound loss" % (method, r["parameter"]))
        dom = max(stages, key=lambda r: float(r["loss"]))
        check(int(dom["rank"]) == 1 and sum(int(r["rank"]) == 1 for r in stages) == 1,
              "%s: the dominant stage is %s" % (method, dom["parameter"]))
    # the report: the ranking table and the chart's data hold the same numbers
    p = subprocess.run([BIN, "report", sw, "--quiet"], capture_output=True, text=True)
    check(p.returncode == 0, "the report is written: " + p.stderr[-300:])
    md = open(os.path.join(sw, "report", "report.md")).read()
    check("\n## Sensitivity ranking\n" in md, "the report has a sensitivity section (in the contents)")
    # A stage run alone shows its chain with every value, defaults included
    # (units as the settings table writes them): tilt:pitch=4 is tilt:roll=0deg,pitch=4deg.
    check("| `tilt:roll=0deg,pitch=4deg` |" in md, "a stage alone is shown with all its values")
    for r in sens:
        if r["kind"] == "axis":
            row = "| %s | %s | %s |" % (r["rank"], r["method"].replace("_", "\\_"), r["parameter"])
            cell = "%.3f [%.3f, %.3f] |" % (float(r["loss"]), float(r["loss_lo"]), float(r["loss_hi"]))
            check(any(l.startswith(row) and l.endswith(cell) for l in md.splitlines()),
                  "table row for %s %s" % (r["method"][:20], r["parameter"]))
    dat = os.path.join(sw, "report", "plots", "sensitivity-range-loss.dat")
    check(os.path.exists(dat), "the chart's data file is written")
    if os.path.exists(dat):
        ys = sorted(float(l.split()[1]) for l in open(dat) if l.strip() and not l.startswith("#"))
        want = sorted(float(r["loss"]) for r in sens if r["kind"] == "axis")
        check(len(ys) == len(want) and all(abs(a - b) <= 1e-6 for a, b in zip(ys, want)),
              "the chart plots every axis loss of sensitivity.csv")
    png = os.path.join(sw, "report", "plots", "sensitivity-range-loss.png")
    check(os.path.exists(png) or "gnuplot not found" in p.stderr, "the chart is drawn when gnuplot is present")
    return done()


if __name__ == "__main__":
    sys.exit(main())
