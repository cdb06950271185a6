#!/usr/bin/env bash
# bench_perturb_cmd.sh: `revisit perturb --chain yaw` of a 300-scan port
# recording against `cp -r` of the same folder (the reference: the same
# bytes read and written, no computation, no sync), alternating, three runs
# each.  One JSON line: min and median of both and ratio_to_cp = cp min /
# perturb min (target >= 0.5).  perturb syncs once per recording.
set -u
: "${REVISIT_BIN:?run through tests/bench.sh}"
w=$(mktemp -d)
trap 'rm -rf "$w"' EXIT
"$REVISIT_BIN" synth --scenario port --scans 300 --out "$w/rec" --quiet >/dev/null 2>&1 ||
  { echo '{"bench":"perturb_cmd","error":"synth failed"}'; exit 1; }
now() { date +%s.%N; }
cp_t=() pt_t=()
for k in 1 2 3; do
  rm -rf "$w/c" "$w/p"
  t0=$(now); cp -r "$w/rec" "$w/c"; t1=$(now)
  "$REVISIT_BIN" perturb --in "$w/rec" --out "$w/p" --chain yaw --quiet >/dev/null || exit 1
  t2=$(now)
  cp_t+=("$(echo "$t1 - $t0" | bc -l)") pt_t+=("$(echo "$t2 - $t1" | bc -l)")
done
/usr/bin/python3 - "${cp_t[*]}" "${pt_t[*]}" "$(du -sm "$w/rec" | cut -f1)" <<'PYEOF'
import json, statistics, sys
c = [float(x) for x in sys.argv[1].split()]
p = [float(x) for x in sys.argv[2].split()]
print(json.dumps({"bench": "perturb_cmd", "chain": "yaw", "scans": 300, "mib": int(sys.argv[3]),
                  "cp_min_s": round(min(c), 3), "cp_median_s": round(statistics.median(c), 3),
                  "perturb_min_s": round(min(p), 3), "perturb_median_s": round(statistics.median(p), 3),
                  "ratio_to_cp": round(min(c) / min(p), 2), "target": 0.5}))
PYEOF
