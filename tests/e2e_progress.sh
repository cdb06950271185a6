#!/usr/bin/env bash
# e2e_progress.sh: progress where no terminal is (plain lines on stderr for
# describe, retrieval, bootstrap and sweep cells, none with --quiet), and the
# dry run's time estimate from finished cells' timings (recomputed here from
# result.json and the cell files' times) or from a short measurement.
. "$(dirname "$0")/lib_e2e.sh"
R=$REVISIT_BIN
PY=/usr/bin/python3
cd "$T" || exit 1
"$R" synth --scenario port --scans 40 --out rec --quiet >/dev/null 2>&1
expect "[ -f rec/recording.json ]" "synth writes a recording"

# stderr is a file here, never a terminal; a short interval makes lines due at once
REVISIT_PROGRESS_SECONDS=0.000001 "$R" eval --map rec --method range-height --out o1 --bootstrap 50 >/dev/null 2>err1; rc=$?
expect "[ $rc -eq 0 ]" "eval runs with stderr to a file"
out=$(cat err1)
expect_in "$out" "describe map: " "describing prints plain lines"
expect_in "$out" "retrieval: 40/40 done in " "retrieval has progress with a closing line"
expect_in "$out" "bootstrap: 50/50 done in " "the bootstrap has progress with a closing line"
expect "! grep -q \$'\\r' err1" "no terminal control characters in a log"
expect "grep -Eq '^bootstrap: [0-9]+/50 \\([0-9]+%\\), [0-9.]+/s, [0-9]{2}:[0-9]{2} left\$' err1" "a line holds count, share, rate and time left"
REVISIT_PROGRESS_SECONDS=0.000001 "$R" eval --map rec --method range-height --out o2 --bootstrap 50 --quiet >/dev/null 2>err2
expect "[ ! -s err2 ]" "--quiet prints no progress"
"$R" eval --map rec --method range-height --out o3 --bootstrap 50 >/dev/null 2>err3
expect "[ ! -s err3 ]" "a command shorter than the interval prints nothing"

cat > s.json <<'JSON'
{"format": "revisit-sweep-1", "name": "progress", "recordings": {"map": "rec"},
 "bootstrap": {"resamples": 20},
 "methods": [{"name": "range-height"}],
 "conditions": [{"name": "clean"}, {"name": "drop", "chain": "dropout:p=0.5", "on": "query"},
                {"name": "drop2", "chain": "dropout:p=0.7", "on": "query"},
                {"name": "drop3", "chain": "dropout:p=0.9", "on": "query"}]}
JSON
out=$("$R" sweep s.json --dry-run)
expect_in "$out" "speed of range-height:" "a dry run without results measures the method"
expect_in "$out" "(measured on 3 scans;" "the measurement names its size"
expect_in "$out" "estimated time: " "a dry run estimates the time"
REVISIT_PROGRESS_SECONDS=0.000001 "$R" sweep s.json --out sw --jobs 1 >/dev/null 2>errs; rc=$?
expect "[ $rc -eq 0 ]" "the sweep runs"
expect "grep -q '^sweep: 4/4 done in .*, 160 scans described\$' errs" "sweep lines count cells and scans described"
# two finished cells of four: the dry run leaves them out and uses their timings
rm -rf sw/cells/range-height__drop2__s1 sw/cells/range-height__drop3__s1
out=$("$R" sweep s.json --out sw --dry-run)
expect_in "$out" "(2 finished cells left out)" "finished cells are counted"
expect "! echo \"\$out\" | grep -q '^range-height__clean__s1'" "a finished cell is not listed"
expect "echo \"\$out\" | grep -q '^range-height__drop2__s1'" "a cell to run is listed"
expect_in "$out" "estimated work: 80 scan descriptions (80 perturbed, 0 unperturbed shared per method)" \
  "the shared map of a finished cell is not counted again"
# The same figures from the files: describe seconds per scan over the finished
# cells, the rest of each cell's time (cell.json to result.json), two cells of
# 40 perturbed scans each.  Plain arithmetic on our own records; no outside source.
want=$($PY - <<'PYEOF'
import json, os
ds = n = rest = 0.0
for c in ("range-height__clean__s1", "range-height__drop__s1"):
    d = "sw/cells/" + c
    t = json.load(open(d + "/result.json"))["timing"]
    wall = os.stat(d + "/result.json").st_mtime_ns - os.stat(d + "/cell.json").st_mtime_ns
    r = wall * 1e-9 - t["describe_s"]
    ds += t["describe_s"]; n += t["described"]
    rest += max(r, t["retrieval_s"] + t["metrics_s"])
s, o = ds / n, rest / 2
print("speed of range-height: %.1f ms per scan, %.2f s per cell besides describing (from 2 finished cells)" % (1e3 * s, o))
print("(%.0f s of work)" % (80 * s + 2 * o))
PYEOF
)
expect_in "$out" "$(echo "$want" | head -1)" "the speed is the finished cells' describe time per scan"
expect_in "$out" "$(echo "$want" | tail -1)" "the work adds describing and the rest per cell"
done_tests
