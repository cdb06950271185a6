#!/usr/bin/env bash
# bench_sweep.sh: end-to-end sweep throughput on the demo scenario (its first
# shard of six, on a 150-scan port recording), as one JSON line per figure:
#   sweep_throughput  cells per minute and scans described per second, and
#                     the ratio of the sweep's wall time per cell to one
#                     `revisit eval` of a cell of the same kind timed alone
#                     in this run (the reference; > 1 means sweep overhead)
#   sweep_time_share  the share of the cells' time spent in describe,
#                     retrieval and metrics (from each result.json "timing")
set -u
: "${REVISIT_BIN:?run through tests/bench.sh}"
PY=/usr/bin/python3
w=$(mktemp -d)
trap 'rm -rf "$w"' EXIT
cd "$w" || exit 1
"$REVISIT_BIN" synth --scenario port --scans 150 --out rec --quiet >/dev/null 2>&1 ||
  { echo '{"bench":"sweep_throughput","error":"synth failed"}'; exit 1; }
sed 's|"\.\./demo-out/rec"|"rec"|' "$REVISIT_ROOT/scenarios/demo.json" > demo.json
now() { date +%s.%N; }

# Reference: one cell alone, the same work as the sweep's first cell.
t0=$(now)
"$REVISIT_BIN" eval --map rec --method scan-context --out ref --quiet --jobs 1 >/dev/null || exit 1
t1=$(now)
"$REVISIT_BIN" sweep demo.json --out sw --shard 0/6 --quiet
rc=$?
t2=$(now)
[ $rc -eq 0 ] || [ $rc -eq 2 ] || { echo '{"bench":"sweep_throughput","error":"sweep exit '$rc'"}'; exit 1; }
$PY - "$t0" "$t1" "$t2" "$(nproc)" <<'PYEOF'
import glob, json, sys
t0, t1, t2, cores = float(sys.argv[1]), float(sys.argv[2]), float(sys.argv[3]), int(sys.argv[4])
cells = [json.load(open(f)) for f in glob.glob("sw/cells/*/result.json")]
ok = [c for c in cells if c.get("status") == "ok"]
wall = t2 - t1
desc = sum(c["timing"]["describe_s"] for c in ok)
retr = sum(c["timing"]["retrieval_s"] for c in ok)
metr = sum(c["timing"]["metrics_s"] for c in ok)
scans = sum(c["timing"].get("described", 0) for c in ok)
tot = desc + retr + metr
print(json.dumps({"bench": "sweep_throughput", "cells": len(cells), "failed": len(cells) - len(ok),
                  "cores": cores, "wall_s": round(wall, 2),
                  "cells_per_min": round(60 * len(cells) / wall, 2),
                  "scans_described_per_s": round(scans / wall, 1),
                  "ratio_to_single_eval": round((wall / max(len(cells), 1)) / (t1 - t0), 3)}))
print(json.dumps({"bench": "sweep_time_share", "describe": round(desc / tot, 3) if tot else None,
                  "retrieval": round(retr / tot, 3) if tot else None,
                  "metrics": round(metr / tot, 3) if tot else None}))
PYEOF
