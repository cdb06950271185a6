#!/usr/bin/env bash
# bench_perturb_cmd.sh: `revisit perturb --chain yaw` of a 300-scan port
# recording against `cp -r` of the same folder (the reference: the same
# bytes read and written, no computation, no sync), alternating, three runs
# each.  One JSON line: min and median wall seconds of both, ratio_to_cp =
# cp min / perturb min (target >= 0.5), and the CPU seconds (user + system)
# of the fastest run of each, which other processes on a shared machine
# disturb less.  perturb syncs once per recording; cp does not sync at all.
set -u
: "${REVISIT_BIN:?run through tests/bench.sh}"
w=$(mktemp -d)
trap 'rm -rf "$w"' EXIT
"$REVISIT_BIN" synth --scenario port --scans 300 --out "$w/rec" --quiet >/dev/null 2>&1 ||
  { echo '{"bench":"perturb_cmd","error":"synth failed"}'; exit 1; }
# timed COMMAND...: appends "wall user system" to $w/times
timed() { /usr/bin/time -a -o "$w/times" -f "%e %U %S" "$@"; }
: >"$w/times"
for k in 1 2 3; do
  rm -rf "$w/c" "$w/p"
  # each command starts with nothing dirty (sync, not timed): perturb's one
  # sync of the file system would otherwise write cp's copy to disk as well
  sync; timed cp -r "$w/rec" "$w/c" || exit 1
  sync; timed "$REVISIT_BIN" perturb --in "$w/rec" --out "$w/p" --chain yaw --quiet >/dev/null || exit 1
done
/usr/bin/python3 - "$w/times" "$(du -sm "$w/rec" | cut -f1)" <<'PYEOF'
import json, statistics, sys
rows = [[float(v) for v in l.split()] for l in open(sys.argv[1]) if l.strip()]
c, p = rows[0::2], rows[1::2]          # cp, perturb, alternating
cw, pw = [r[0] for r in c], [r[0] for r in p]
cf, pf = min(c), min(p)                # the fastest run of each (by wall time)
print(json.dumps({"bench": "perturb_cmd", "chain": "yaw", "scans": 300, "mib": int(sys.argv[2]),
                  "cp_min_s": round(min(cw), 3), "cp_median_s": round(statistics.median(cw), 3),
                  "perturb_min_s": round(min(pw), 3), "perturb_median_s": round(statistics.median(pw), 3),
                  "ratio_to_cp": round(min(cw) / min(pw), 2), "target": 0.5,
                  "cp_cpu_s": round(cf[1] + cf[2], 3), "perturb_cpu_s": round(pf[1] + pf[2], 3)}))
PYEOF
