#!/usr/bin/env bash
# bench_scale.sh: how `revisit eval` grows with the number of scans.  For
# 1,000, 10,000 and 30,000 small scans (500 points each, written as .bin by
# numpy along a looping drive, so revisits exist) it runs range-height (dense
# L2: O(N^2 dim) sgemm work) and scan-context (ring-key prefilter by dense
# L2, then 50 custom distances per query) with --bootstrap 100, one JSON line
# each: wall time, peak memory of the child (getrusage), the wall time per
# scan, the stage times of result.json and the rest (loading, writing), and
# from the second size on the growth exponent of retrieval and of the rest
# against the previous size (t ~ N^x: 2 is all pairs, 1 linear).  A last
# line per method fits t = a N + b N^2 to the two largest sizes and gives
# the N where the quadratic part, extrapolated, equals the linear part:
# beyond it, a prefilter or an approximate index would pay.
# BENCH_SCALE_SIZES overrides the sizes (e.g. "1000 10000").
set -u
: "${REVISIT_BIN:?run through tests/bench.sh}"
w=$(mktemp -d)
trap 'rm -rf "$w"' EXIT
: > "$w/lines.jsonl"
for n in ${BENCH_SCALE_SIZES:-1000 10000 30000}; do
  /usr/bin/python3 - "$w/rec$n" "$n" <<'PYEOF' || { echo "{\"bench\":\"scale\",\"scans\":$1,\"error\":\"recording\"}"; continue; }
import os, sys
import numpy as np
d, n = sys.argv[1], int(sys.argv[2])
os.makedirs(os.path.join(d, "scans"))
rng = np.random.default_rng(n)
# a 2 km loop driven n / 500 times at 10 Hz: every lap revisits the last
a = np.linspace(0, 2 * np.pi * max(1, n // 500), n, endpoint=False)
xy = np.stack([318 * np.cos(a), 318 * np.sin(a)], axis=1) + rng.normal(0, 0.5, (n, 2))
posts = rng.uniform(-400, 400, (4000, 2)).astype(np.float32)      # the fixed world: poles
heights = rng.uniform(1, 12, 4000).astype(np.float32)
with open(os.path.join(d, "poses.csv"), "w") as f:
    f.write("t,x,y,z,qx,qy,qz,qw\n")
    for k in range(n):
        rel = posts - xy[k].astype(np.float32)
        near = np.nonzero(np.hypot(rel[:, 0], rel[:, 1]) < 60)[0][:100]
        pts = np.repeat(rel[near], 5, axis=0)
        z = (np.tile(np.linspace(0, 1, 5, dtype=np.float32), len(near)) * np.repeat(heights[near], 5))
        cloud = np.zeros((max(len(pts), 1), 4), np.float32)
        cloud[:len(pts), :2], cloud[:len(pts), 2], cloud[:len(pts), 3] = pts, z, 1
        cloud.tofile(os.path.join(d, "scans", "%06d.bin" % k))
        f.write("%.1f,%.4f,%.4f,0,0,0,0,1\n" % (0.1 * k, xy[k, 0], xy[k, 1]))
PYEOF
  "$REVISIT_BIN" index "$w/rec$n/scans" --poses "$w/rec$n/poses.csv" --channels 16 \
    --out "$w/rec$n/recording.json" >/dev/null 2>&1 || { echo "{\"bench\":\"scale\",\"scans\":$n,\"error\":\"index\"}"; continue; }
  for m in range-height scan-context; do
    /usr/bin/python3 - "$REVISIT_BIN" "$w/rec$n" "$w/out-$m-$n" "$m" "$n" "$w/lines.jsonl" <<'PYEOF'
import json, math, resource, subprocess, sys, time
rv, rec, out, m, n, lines = sys.argv[1:7]
t0 = time.perf_counter()
p = subprocess.run([rv, "eval", "--map", rec, "--method", m, "--bootstrap", "100", "--out", out, "--quiet"],
                   capture_output=True, text=True)
t = time.perf_counter() - t0
peak = resource.getrusage(resource.RUSAGE_CHILDREN).ru_maxrss / 1024.0
if p.returncode:
    print(json.dumps({"bench": "scale", "method": m, "scans": int(n), "error": p.stderr[-200:]}))
    sys.exit(0)
r = json.load(open(out + "/result.json"))["timing"]
rest = t - r["retrieval_s"]
line = {"bench": "scale", "method": m, "scans": int(n), "wall_s": round(t, 2),
        "peak_mib": round(peak, 1), "ms_per_scan": round(1000 * t / int(n), 3),
        "describe_s": round(r["describe_s"], 2), "retrieval_s": round(r["retrieval_s"], 2),
        "metrics_s": round(r["metrics_s"], 2), "matrix_s": round(r["matrix_s"], 2),
        "rest_s": round(rest - r["describe_s"] - r["metrics_s"] - r["matrix_s"], 2)}
prev = [json.loads(x) for x in open(lines) if json.loads(x)["method"] == m]
if prev and prev[-1]["scans"] < int(n):
    p = prev[-1]
    grow = lambda a, b: round(math.log(b / a) / math.log(int(n) / p["scans"]), 2) if a > 0 and b > 0 else None
    line["retrieval_exponent"] = grow(p["retrieval_raw"], r["retrieval_s"])
    line["rest_exponent"] = grow(p["rest_raw"], rest)
print(json.dumps(line))
line.update(retrieval_raw=r["retrieval_s"], rest_raw=rest)
with open(lines, "a") as f:
    f.write(json.dumps(line) + "\n")
PYEOF
  done
done
/usr/bin/python3 - "$w/lines.jsonl" <<'PYEOF'
import json, sys
# t(N) = a N + b N^2 through the two largest sizes of each method: the
# linear part (describing, loading, metrics) and the all-pairs part; they
# are equal at N = a / b
rows = [json.loads(x) for x in open(sys.argv[1])]
for m in sorted({r["method"] for r in rows}):
    own = sorted((r for r in rows if r["method"] == m), key=lambda r: r["scans"])
    if len(own) < 2:
        continue
    (n1, t1), (n2, t2) = ((r["scans"], r["wall_s"]) for r in own[-2:])
    b = (t2 / n2 - t1 / n1) / (n2 - n1)
    a = t1 / n1 - b * n1
    out = {"bench": "scale_crossover", "method": m, "fit_scans": [n1, n2],
           "linear_ms_per_scan": round(1000 * a, 4), "pair_ns": round(1e9 * b, 3)}
    if a > 0 and b > 0:
        out["crossover_scans"] = int(round(a / b, -2))
    else:
        out["crossover_scans"] = None
        out["note"] = "no quadratic growth measured between these sizes"
    print(json.dumps(out))
PYEOF
