#!/usr/bin/env bash
# e2e_sweep.sh: `revisit sweep` end to end on a small synthetic recording:
# a sweep killed with SIGKILL and resumed, or stopped with SIGINT and
# resumed, gives the same files as one uninterrupted run (timings aside);
# shards 0/3, 1/3, 2/3 into one folder, and two shards run by GNU Parallel
# into their own folders and merged, give the same files too.
. "$(dirname "$0")/lib_e2e.sh"
PY=/usr/bin/python3
cd "$T" || exit 1

# A small recording: the port district when synth works, else a tiny one.
if ! "$REVISIT_BIN" synth --scenario port --scans 80 --out rec --quiet >/dev/null 2>&1; then
  echo "note: synth unavailable, using a generated ring recording"
  rm -rf rec; mkdir -p rec/scans
  $PY - <<'PYEOF'
import numpy as np
rng = np.random.default_rng(3)
w = rng.uniform(-60, 60, (6000, 3)); w[:, 2] = rng.uniform(0, 6, 6000)
with open("rec/poses.csv", "w") as f:
    f.write("t,x,y,z,qx,qy,qz,qw\n")
    for i in range(80):
        a = 2 * np.pi * (i % 40) / 40; x, y = 30 * np.cos(a), 30 * np.sin(a); yaw = a + np.pi / 2
        f.write("%d,%f,%f,0,0,0,%f,%f\n" % (i * 2, x, y, np.sin(yaw / 2), np.cos(yaw / 2)))
        d = w - [x, y, 0]; p = d[np.hypot(d[:, 0], d[:, 1]) < 35]; c, s = np.cos(-yaw), np.sin(-yaw)
        np.c_[c * p[:, 0] - s * p[:, 1], s * p[:, 0] + c * p[:, 1], p[:, 2] - 1.8, np.ones(len(p))].astype("<f4").tofile("rec/scans/%06d.bin" % i)
PYEOF
  printf '%s\n' '{"format": "revisit-recording-1", "sensor": {"channels": 16},' \
    '"scans": {"dir": "scans", "pattern": "*.bin"}, "scan_layout": "raw", "poses": {"file": "poses.csv"}}' > rec/recording.json
fi

cat > s.json <<'JSON'
{"format": "revisit-sweep-1", "name": "e2e", "recordings": {"map": "rec"},
 "bootstrap": {"resamples": 50},
 "methods": [{"name": "range-height", "variants": [{"range_bins": 12}, {"range_bins": 16}]}],
 "seeds": 2,
 "conditions": [{"name": "clean"},
   {"name": "sector", "chain": "sector:at=random", "on": "query",
    "axis": {"stage": "sector", "key": "width", "values": [0, 180]}},
   {"name": "mount", "chain": "sector:width=60,at=180+tilt:pitch=2", "on": "query", "seeds": [1]}],
 "criteria": [{"metric": "f1max", "condition": "mount", "target": "diff", "baseline": "clean",
               "comparator": ">=", "threshold": -1}]}
JSON
CELLS=12
sw() { "$REVISIT_BIN" sweep s.json --quiet "$@"; }
ndone() { ls "$1"/cells/*/result.json 2>/dev/null | wc -l; }

# Same files in two sweep folders, result.json compared without "timing".
same() {
  $PY - "$1" "$2" <<'PYEOF'
import json, os, sys
a, b = sys.argv[1], sys.argv[2]
ca, cb = sorted(os.listdir(a + "/cells")), sorted(os.listdir(b + "/cells"))
if ca != cb: sys.exit("cell lists differ: %s vs %s" % (len(ca), len(cb)))
for c in ca:
    fa, fb = sorted(os.listdir("%s/cells/%s" % (a, c))), sorted(os.listdir("%s/cells/%s" % (b, c)))
    if fa != fb: sys.exit("files differ in " + c)
    for f in fa:
        x = open("%s/cells/%s/%s" % (a, c, f), "rb").read(); y = open("%s/cells/%s/%s" % (b, c, f), "rb").read()
        if f == "result.json":
            x, y = json.loads(x), json.loads(y)
            for r in (x, y): r.pop("timing", None); r.pop("command", None)
        if x != y: sys.exit("%s/%s differs" % (c, f))
for f in ("summary.csv", "summary_seeds.csv"):
    if open(a + "/" + f).read() != open(b + "/" + f).read(): sys.exit(f + " differs")
PYEOF
}

sw --out full --jobs 2; rc=$?
expect "[ $rc -eq 0 ]" "an uninterrupted sweep exits 0"
expect "[ $(ndone full) -eq $CELLS ]" "every cell of the grid is done"
expect "[ -f full/summary.csv ] && [ -f full/summary_seeds.csv ] && [ -f full/summary.json ]" "summary tables written"
expect_in "$(cat full/cells/range-height_range_bins-12__sector_width-180__s2/result.json)" '"scenario_hash":' "cells carry the scenario hash"
expect_in "$(grep -c . full/summary.csv)" "$((CELLS + 1))" "summary.csv has a row per cell"
# Every number of summary.csv reads back (Python's csv and float) as the
# double of the cell's result.json (json module): no digit is lost.
expect '$PY - <<PYEOF
import csv, json, sys
rows = list(csv.DictReader(open("full/summary.csv")))
cols = {"f1max": ("f1max", "value"), "f1max_lo": ("f1max", "lo"), "ap": ("ap", "value"), "r100p_hi": ("r100p", "hi")}
res = lambda cell: json.load(open("full/cells/%s/result.json" % cell))["metrics"]
bad = [(r["cell"], c) for r in rows for c, (m, f) in cols.items() if float(r[c]) != res(r["cell"])[m][f]]
sys.exit(1 if bad or not rows else 0)
PYEOF' "summary.csv values are the exact doubles of result.json"
out=$(sw --out full); rc=$?
expect "[ $rc -eq 0 ] && [ $(ndone full) -eq $CELLS ]" "a rerun of a finished sweep exits 0"
out=$("$REVISIT_BIN" sweep s.json --out full --dry-run)
expect_in "$out" "12 of 12 cells in shard 0/1, 12 done, 0 to run" "--dry-run counts done cells"
out=$("$REVISIT_BIN" sweep s.json --dry-run)
expect_in "$out" "estimated work:" "--dry-run estimates the work"
expect_in "$out" "range-height_range_bins-16__mount__s1" "--dry-run lists the cells"

# SIGKILL part way, then resume.
"$REVISIT_BIN" sweep s.json --quiet --out killed --jobs 1 & pid=$!
for _ in $(seq 1 400); do [ "$(ndone killed)" -ge 3 ] && break; sleep 0.05; done
kill -9 $pid 2>/dev/null; wait $pid 2>/dev/null
n=$(ndone killed)
expect "[ $n -ge 3 ] && [ $n -lt $CELLS ]" "the killed sweep stopped part way ($n cells)"
bad=0
for d in killed/cells/*/; do case "$(basename "$d")" in .part-*) ;; *) [ -f "$d/result.json" ] || bad=1 ;; esac; done
expect "[ $bad -eq 0 ]" "after kill -9 every cell folder in place is complete"
sw --out killed --jobs 2; rc=$?
expect "[ $rc -eq 0 ] && [ $(ndone killed) -eq $CELLS ]" "the resumed sweep finishes"
expect "[ -z \"\$(ls -A killed/cells | grep '^\.part-')\" ]" "no part folders are left"
expect "same full killed" "killed and resumed equals one uninterrupted run"

# SIGINT: cells in flight finish, exit 130, then resume.
"$REVISIT_BIN" sweep s.json --quiet --out stopped --jobs 1 & pid=$!
for _ in $(seq 1 400); do [ "$(ndone stopped)" -ge 2 ] && break; sleep 0.05; done
kill -INT $pid; wait $pid; rc=$?
n=$(ndone stopped)
expect "[ $rc -eq 130 ]" "SIGINT exits 130 (got $rc)"
expect "[ $n -lt $CELLS ]" "SIGINT stopped the sweep before the end ($n cells)"
expect "[ -z \"\$(ls -A stopped/cells | grep '^\.part-')\" ]" "SIGINT lets the cells in flight finish"
sw --out stopped; rc=$?
expect "[ $rc -eq 0 ] && same full stopped" "stopped and resumed equals one uninterrupted run"

# Shards into one folder.
for i in 0 1 2; do sw --out sharded --shard $i/3; done
expect "same full sharded" "shards 0/3, 1/3, 2/3 equal one unsharded run"

# GNU Parallel, two local shards into their own folders, then merge.
if command -v parallel >/dev/null; then
  parallel --will-cite -S : --jobs 2 "$REVISIT_BIN" sweep s.json --quiet --out par/{} --shard {}/2 ::: 0 1
  expect "[ $(ndone par/0) -eq 6 ] && [ $(ndone par/1) -eq 6 ]" "GNU Parallel ran both shards"
  "$REVISIT_BIN" merge --out merged par/0 par/1 --quiet; rc=$?
  expect "[ $rc -eq 0 ] && same full merged" "two shards by GNU Parallel, merged, equal one run"
else
  expect "false" "GNU Parallel is installed (Debian package parallel)"
fi

# Refusals.
sed 's/"e2e"/"other"/' s.json > t.json
"$REVISIT_BIN" sweep t.json --out full --quiet 2>err; rc=$?
expect "[ $rc -eq 2 ]" "a sweep into another scenario's folder exits 2"
expect_in "$(cat err)" "full/scenario.json: made by another scenario file" "and says why"
"$REVISIT_BIN" sweep t.json --out other --shard 0/4 --quiet >/dev/null 2>&1
"$REVISIT_BIN" merge --out m2 full other 2>err; rc=$?
expect "[ $rc -eq 2 ]" "merging folders of two scenarios exits 2"
expect_in "$(cat err)" "other: made by another scenario file" "and names the odd folder"
"$REVISIT_BIN" sweep s.json --out x --shard 3/3 2>err; rc=$?
expect "[ $rc -eq 2 ]" "a bad shard exits 2"
expect_in "$(cat err)" "shard '3/3' is not valid, expected I/N" "and names the form"
"$REVISIT_BIN" sweep s.json 2>err; rc=$?
expect "[ $rc -eq 2 ]" "a sweep without --out exits 2"
expect_in "$(cat err)" "option '--out' is required" "and names the option"
"$REVISIT_BIN" sweep 2>err; rc=$?
expect "[ $rc -eq 2 ]" "a sweep without a scenario exits 2"
expect_in "$(cat err)" "expected one scenario file, got 0 arguments" "and says what it expected"
"$REVISIT_BIN" sweep s.json --out x --jobs 999 2>err; rc=$?
expect "[ $rc -eq 2 ]" "--jobs out of range exits 2"
expect_in "$(cat err)" "--jobs and --cell-jobs expect 1 to 256" "and gives the range"
"$REVISIT_BIN" merge par/0 2>err; rc=$?
expect "[ $rc -eq 2 ]" "merge without --out exits 2"
expect_in "$(cat err)" "revisit: merge: option '--out' is required" "and names the option"
"$REVISIT_BIN" merge --out m3 2>err; rc=$?
expect "[ $rc -eq 2 ]" "merge without folders exits 2"
expect_in "$(cat err)" "expected one or more shard folders" "and says so"
"$REVISIT_BIN" merge --out m3 nowhere 2>err; rc=$?
expect "[ $rc -eq 2 ]" "merge of a folder that is no sweep exits 2"
expect_in "$(cat err)" "nowhere is not a sweep folder" "and names the folder"
sed 's/"map": "rec"/"map": "norec"/' s.json > n.json
"$REVISIT_BIN" sweep n.json --out n 2>err; rc=$?
expect "[ $rc -eq 2 ] && [ ! -d n ]" "a missing recording is refused before any cell runs"
expect_in "$(cat err)" "n.json: recordings.map: " "and names the key"
sed 's/sector:at=random/sectr:at=random/' s.json > u.json
"$REVISIT_BIN" sweep u.json --out u 2>err; rc=$?
expect "[ $rc -eq 2 ] && [ ! -d u ]" "a bad chain is refused before any cell runs"
expect_in "$(cat err)" "conditions[1].chain: chain:1: unknown stage 'sectr'" "and names the condition"
expect_in "$(cat err)" "  sectr:at=random
" "and shows the chain as written, not one with the axis stage added"

# A method that does not load stops the sweep before any cell runs.
sed 's/"range-height", "variants": \[{"range_bins": 12}, {"range_bins": 16}\]/"no-such-method"/' s.json > m.json
"$REVISIT_BIN" sweep m.json --out missing --quiet 2>err; rc=$?
expect "[ $rc -eq 2 ] && [ ! -e missing/cells ]" "a missing method runs no cell and exits 2 (exit $rc)"
expect_in "$(cat err)" "m.json: no cell was run: method 'no-such-method' not found" "the missing method is named"
# A method that loads but fails on a scan makes failed cells; the sweep goes on and exits 2.
mkdir -p inc && cp "$REVISIT_ROOT/harness/revisit_plugin.h" inc/
cat > failing.c <<'SRC'
#include <stdio.h>
#include "revisit_plugin.h"
static int mk(const double *v, void **i, uint32_t *d, uint32_t *k, char *m, size_t l)
{ (void)v; (void)m; (void)l; *i = 0; *d = 2; *k = 0; return RV_OK; }
static int run(void *i, const struct rv_scan *s, float *d, float *k, char *m, size_t l)
{ (void)i; (void)k; if (s->index == 3) { snprintf(m, l, "scan 3 refused"); return RV_ERR_INPUT; }
  d[0] = (float)s->n; d[1] = 1; return RV_OK; }
static void rm(void *i) { (void)i; }
static const struct rv_method m = {RV_ABI_VERSION, sizeof m, "failing", "1.0", "fails on scan 3",
    0, 0, RV_DIST_L2, 0, mk, run, rm, 0, 0};
RV_EXPORT const struct rv_method *rv_method_entry(void) { return &m; }
SRC
cc -std=c11 -O1 -shared -fPIC -Iinc -o failing.so failing.c
sed 's|"range-height", "variants": \[{"range_bins": 12}, {"range_bins": 16}\]|"./failing.so"|' s.json > f.json
"$REVISIT_BIN" sweep f.json --out failing --quiet 2>err; rc=$?
expect "[ $rc -eq 2 ] && [ $(ndone failing) -eq 6 ]" "every cell of a failing method is marked failed"
expect_in "$(cat err)" "6 cells failed" "the sweep counts the failed cells"
expect_in "$(cat failing/cells/failing.so__clean__s1/result.json)" '"status":	"failed"' "a failed cell says so"
"$REVISIT_BIN" check f.json failing 2>err; rc=$?
expect "[ $rc -eq 2 ]" "check on failed cells exits 2"
"$REVISIT_BIN" check s.json full --junit j.xml >out.txt; rc=$?
expect "[ $rc -eq 0 ]" "check on the finished sweep passes a loose criterion"
expect_in "$(cat out.txt)" "PASS" "and prints the verdict"
expect "[ -f full/verdicts.json ] && [ -f j.xml ]" "verdicts.json and the JUnit file are written"
done_tests
