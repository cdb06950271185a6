#!/usr/bin/env bash
# bench_peer.sh: whole-process time of `revisit index` + `revisit eval
# --method scan-context` (defaults: 1,000 bootstrap resamples, all cores)
# against tests/bench_peer.py, the plain numpy + scipy evaluation a user
# would write, on the same port recordings of 300 and 2,000 scans (made by
# `revisit synth`, kept in a scratch folder for the run; the port drive
# holds 1,594 scans at 10 Hz, so the 2,000 come from a scenario file with
# the port district and one more route leg, 240 s of driving).  Runs alternate,
# three of each; one JSON line per size: min and median of both, the ratio
# of the mins (peer / revisit; the goal is >= 30) and both F1max values.
# BENCH_PEER_SIZES overrides the sizes (e.g. "300").
set -u
: "${REVISIT_BIN:?run through tests/bench.sh}"
w=$(mktemp -d)
trap 'rm -rf "$w"' EXIT
/usr/bin/python3 - "$REVISIT_ROOT/scenarios/port.json" "$w/port_long.json" <<'PYEOF'
import json, sys
d = json.load(open(sys.argv[1]))
d["name"] = "port-long"
d["route"]["legs"].append({"path": [[1, 3], [2, 3], [2, 2], [4, 2], [4, 0], [5, 0], [5, 3], [3, 3]], "lane_m": 0.6})
json.dump(d, open(sys.argv[2], "w"))
PYEOF
for n in ${BENCH_PEER_SIZES:-300 2000}; do
  scenario=port
  [ "$n" -gt 1594 ] && scenario="$w/port_long.json"
  "$REVISIT_BIN" synth --scenario "$scenario" --scans "$n" --out "$w/rec$n" --quiet >/dev/null 2>&1 ||
    { echo "{\"bench\":\"peer\",\"scans\":$n,\"error\":\"synth failed\"}"; continue; }
  /usr/bin/python3 - "$REVISIT_BIN" "$REVISIT_ROOT/tests/bench_peer.py" "$w/rec$n" "$w/out$n" "$n" <<'PYEOF'
import json, os, shutil, statistics, subprocess, sys, time
rv, peer, rec, out, n = sys.argv[1], sys.argv[2], sys.argv[3], sys.argv[4], int(sys.argv[5])
def timed(cmds):
    t0 = time.perf_counter()
    for c in cmds:
        p = subprocess.run(c, capture_output=True, text=True)
        if p.returncode:
            sys.exit(json.dumps({"bench": "peer", "scans": n, "error": " ".join(c[:2]) + ": " + p.stderr[-200:]}))
    return time.perf_counter() - t0, p.stdout
ours, theirs, f1_peer = [], [], None
for k in range(3):
    shutil.rmtree(out, ignore_errors=True)
    t, _ = timed([[rv, "index", os.path.join(rec, "scans"), "--poses", os.path.join(rec, "poses.csv"),
                   "--channels", "32", "--out", os.path.join(rec, "recording.json")],
                  [rv, "eval", "--map", rec, "--method", "scan-context", "--out", out, "--quiet"]])
    ours.append(t)
    t, text = timed([["/usr/bin/python3", peer, rec]])
    theirs.append(t)
    f1_peer = json.loads(text)["f1max"]
f1 = json.load(open(os.path.join(out, "result.json")))["metrics"]["f1max"]["value"]
print(json.dumps({"bench": "peer", "method": "scan-context", "scans": n, "runs": 3,
                  "revisit_min_s": round(min(ours), 3), "revisit_median_s": round(statistics.median(ours), 3),
                  "peer_min_s": round(min(theirs), 3), "peer_median_s": round(statistics.median(theirs), 3),
                  "ratio": round(min(theirs) / min(ours), 1), "goal": 30,
                  "f1max": round(f1, 6), "f1max_peer": round(f1_peer, 6)}))
PYEOF
done
