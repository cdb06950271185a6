#!/usr/bin/python3
"""fixture.py: write a small results folder in the schema of DEVELOPERS.md
"Results folder", for the report tests (tests/e2e_report*.sh,
tests/xcheck_report*.py).  Numbers are invented test input, not results.

    /usr/bin/python3 reports/fixture.py OUT [--single] [--method LABEL]... [--seeds N]

A loop route of a rectangle driven twice, then part of it in reverse and a
crossing leg, one scan every 2 m at 10 m/s.  Per query the top candidates
get descriptor distances that favour the true place with a probability that
falls with the sector width of the condition, so curves have a shape.
"""
import argparse
import json
import math
import os
import random
import zlib


def route():
    pts = []
    def leg(x0, y0, x1, y1):
        n = int(round(math.hypot(x1 - x0, y1 - y0) / 2.0))
        for k in range(n):
            pts.append((x0 + (x1 - x0) * k / n, y0 + (y1 - y0) * k / n))
    for _ in range(2):
        leg(0, 0, 120, 0); leg(120, 0, 120, 60); leg(120, 60, 0, 60); leg(0, 60, 0, 0)
    leg(0, 0, 0, 60)          # the left side again, driven the other way
    leg(0, 60, 60, 60)
    leg(60, 60, 60, -40)      # crossing the bottom street at right angles
    return [(i * 0.2, x, y, 0.0) for i, (x, y) in enumerate(pts)]


def dist(a, b):
    return math.sqrt((a[1] - b[1]) ** 2 + (a[2] - b[2]) ** 2 + (a[3] - b[3]) ** 2)


def truth(poses, r_pos=3.0, excl=30.0):
    """Per query: the number of eligible candidates (a prefix, the route is
    time-ordered) and the true ones among them."""
    out = []
    for q in poses:
        n = sum(1 for m in poses if m[0] <= q[0] - excl)
        out.append((n, [j for j in range(n) if dist(q, poses[j]) <= r_pos]))
    return out


def queries(truths, rng, p_good, top_k=5):
    rows = []
    for i, (n, true) in enumerate(truths):
        if not n:
            rows.append((i, []))
            continue
        scored = {}
        for j in rng.sample(range(n), min(top_k, n)):
            scored[j] = rng.uniform(0.45, 0.95)
        if true and rng.random() < p_good:
            scored[rng.choice(true)] = rng.uniform(0.05, 0.5)
        elif rng.random() < 0.3:
            scored[rng.randrange(n)] = rng.uniform(0.2, 0.5)
        top = sorted(scored.items(), key=lambda kv: (kv[1], kv[0]))[:top_k]
        rows.append((i, [(j, round(d, 6)) for j, d in top]))
    return rows


def curve(poses, truths, rows, r_pos=3.0):
    """Strict counting PR over every distinct top-1 distance, and F1max/R@100P."""
    n_rev = sum(1 for n, t in truths if t)
    top = sorted((c[0][1], dist(poses[i], poses[c[0][0]]) <= r_pos) for i, c in rows if c)
    th, pr, rc = [], [], []
    f1, r100 = (0.0, float('nan')), (0.0, float('nan'))
    tp = fp = 0
    for k, (t, ok) in enumerate(top):
        tp += ok
        fp += not ok
        if k + 1 < len(top) and top[k + 1][0] == t:
            continue
        p = tp / (tp + fp)
        r = tp / n_rev if n_rev else 0.0
        th.append(t); pr.append(p); rc.append(r)
        f = 2 * p * r / (p + r) if p + r else 0.0
        if f > f1[0]:
            f1 = (f, t)
        if fp == 0 and r > r100[0]:
            r100 = (r, t)
    return th, pr, rc, f1, r100, n_rev


def metric(v, thr=None):
    m = {"value": round(v, 6), "lo": round(max(0.0, v - 0.05), 6), "hi": round(min(1.0, v + 0.04), 6)}
    if thr is not None and not math.isnan(thr):
        m["threshold"] = thr
    return m


def write_cell(out, method, cond, chain, axis, seed, p_good, poses, truths):
    os.makedirs(out, exist_ok=True)
    rng = random.Random(zlib.crc32(repr((method, cond, seed)).encode()))
    rows = queries(truths, rng, p_good)
    th, pr, rc, f1, r100, n_rev = curve(poses, truths, rows)
    with open(os.path.join(out, "queries.csv"), "w") as f:
        f.write("# revisit per-query results, format 1\nquery,cand,dist,cand,dist,...\n")
        for i, c in rows:
            f.write(",".join([str(i)] + ["%d,%g" % (j, d) for j, d in c]) + "\n")
    with open(os.path.join(out, "poses.csv"), "w") as f:
        f.write("# revisit scan poses, format 1\nset,index,t,x,y,z\n")
        for i, p in enumerate(poses):
            f.write("map,%d,%g,%g,%g,%g\n" % (i, p[0], p[1], p[2], p[3]))
    idx = list(range(0, len(poses), 4))
    with open(os.path.join(out, "matrix.csv"), "w") as f:
        f.write("# revisit distance matrix, format 1\n#rows," + ",".join(map(str, idx)) + "\n#cols," + ",".join(map(str, idx)) + "\n")
        for i in idx:
            f.write(",".join("%.4f" % (rng.uniform(0.05, 0.3) if dist(poses[i], poses[j]) <= 3 else
                                       rng.uniform(0.4, 1.0)) for j in idx) + "\n")
    res = {
        "format": "revisit-result-1", "software": "revisit 0.1.0",
        "command": "revisit eval --method %s --out %s" % (method, out),
        "scenario_hash": "f00dfeed",
        "method": {"name": method.split(":")[0], "label": method, "settings": {},
                   "descriptor_bytes": 4 * (len(method) + 16)},
        "condition": {"name": cond, "chain": chain, "on": "both", "seed": seed},
        "protocol": {"mode": "loop", "r_pos_m": 3, "r_neg_m": 3, "exclusion_s": 30,
                     "exclusion_scans": None, "planar": False, "counting": "strict", "top_k": 5},
        "recordings": {"map": "/data/port/recording.json", "query": None},
        "counts": {"queries": len(rows), "revisits": n_rev},
        "metrics": {"f1max": metric(f1[0], f1[1]), "r100p": metric(r100[0], r100[1]),
                    "ep": metric((1.0 + r100[0]) / 2), "ap": metric(sum(pr) / len(pr) if pr else 0),
                    "recall_at_1": metric(rc[-1] if rc else 0)},
        "curve": {"threshold": th, "precision": pr, "recall": rc},
        "timing": {"describe_s": round(0.0005 * len(poses) * (1 + 0.1 * seed) * (2 if ":" in method else 1), 6),
                   "retrieval_s": 0.01, "metrics_s": 0.01, "described": len(poses), "cache_hits": 0},
        "status": "ok",
    }
    if axis:
        res["condition"]["axis"] = {"stage": axis[0], "key": axis[1], "value": axis[2]}
    with open(os.path.join(out, "result.json"), "w") as f:
        json.dump(res, f, indent=1)


# Cells of one swept axis share the condition name, as `revisit sweep` writes them.
CONDITIONS = [("none", "", None, 0.9), ("sector", "sector:width=30", ("sector", "width", 30), 0.8),
              ("sector", "sector:width=90", ("sector", "width", 90), 0.6),
              ("sector", "sector:width=180", ("sector", "width", 180), 0.35),
              ("dropout-0.5", "dropout:p=0.5", None, 0.7)]


def main():
    ap = argparse.ArgumentParser()
    ap.add_argument("out")
    ap.add_argument("--single", action="store_true")
    ap.add_argument("--method", action="append", help="method label (repeat; default two)")
    ap.add_argument("--seeds", type=int, default=1)
    ap.add_argument("--verdicts", action="store_true", help="also write verdicts.json")
    ap.add_argument("--conditions", type=int, default=len(CONDITIONS), help="use the first N conditions")
    a = ap.parse_args()
    poses = route()
    truths = truth(poses)
    methods = a.method or ["ring-key:rings=20,sectors=60", "plain-hist"]
    if a.single:
        write_cell(a.out, methods[0], "none", "", None, 1, 0.85, poses, truths)
        return
    os.makedirs(os.path.join(a.out, "cells"), exist_ok=True)
    with open(os.path.join(a.out, "scenario.json"), "w") as f:
        json.dump({"format": "revisit-sweep-1", "name": "fixture harbour loop",
                   "description": "A made-up harbour loop for the report tests: two methods under a swept "
                                  "sector and a dropout.",
                   "bootstrap": {"resamples": 200, "seed": 5}}, f)
    for mi, m in enumerate(methods):
        for ci, (cn, ch, ax, p) in enumerate(CONDITIONS[:a.conditions]):
            for s in range(1, a.seeds + 1):
                write_cell(os.path.join(a.out, "cells", "m%d-c%d-s%d" % (mi, ci, s)), m, cn, ch, ax, s,
                           p - 0.1 * mi, poses, truths)
    if a.verdicts:
        write_verdicts(a.out, methods[0])


def write_verdicts(out, method):
    """verdicts.json in the layout `revisit check` writes (harness/results/summary.h)."""
    vs = []
    for width, thr in ((90, 0.6), (180, 0.6)):
        r = json.load(open(os.path.join(out, "cells", "m0-c%d-s1" % (2 if width == 90 else 3),
                                        "result.json")))["metrics"]["f1max"]
        vs.append({"criterion": "mean f1max of %s on sector %d >= %g" % (method, width, thr), "metric": "f1max",
                   "method": method, "condition": "sector", "axis_value": width, "target": "mean",
                   "comparator": ">=",
                   "threshold": thr, "value": r["value"], "lo": r["lo"], "hi": r["hi"],
                   "measured": r["value"], "seeds": 1, "pass": r["value"] >= thr})
    # An operating point: the largest threshold with precision >= 0.99 on the
    # unperturbed cell, carried to the dropout condition (when it is there).
    none = json.load(open(os.path.join(out, "cells", "m0-c0-s1", "result.json")))["curve"]
    ok = [t for t, p in zip(none["threshold"], none["precision"]) if p >= 0.99]
    drop = os.path.join(out, "cells", "m0-c4-s1", "result.json")
    if ok and os.path.exists(drop):
        vs.append({"criterion": "precision of %s at the threshold tuned on none >= 0.9" % method,
                   "metric": "precision", "method": method, "condition": "dropout-0.5",
                   "operating_point": {"tuned_on": "none", "rule": "precision", "target": 0.99,
                                       "threshold": max(ok), "threshold_lo": max(ok), "threshold_hi": max(ok)},
                   "target": "mean", "comparator": ">=", "threshold": 0.9, "value": 0.95, "lo": 0.9, "hi": 1.0,
                   "measured": 0.95, "seeds": 1, "pass": True})
    with open(os.path.join(out, "verdicts.json"), "w") as f:
        json.dump({"format": "revisit-verdicts-1", "criteria": vs}, f, indent=1)


if __name__ == "__main__":
    main()
