#!/usr/bin/env bash
# e2e_sweep_names.sh: the names a scenario gives its methods, end to end.
# A method variant with an "alias" is called by it in cell ids,
# summary.csv, summary.json, verdicts.json, `check` and the report, while
# result.json and the report's settings table keep the full label; and a
# scenario naming a metric or a method that does not exist is refused when
# it loads, before any cell runs.
. "$(dirname "$0")/lib_e2e.sh"
PY=/usr/bin/python3
cd "$T" || exit 1

if ! "$REVISIT_BIN" synth --scenario port --scans 60 --out rec --quiet >/dev/null 2>&1; then
  skip_test "synth unavailable: no recording for the sweep"
  done_tests; exit $?
fi

cat > s.json <<'JSON'
{"format": "revisit-sweep-1", "name": "names", "recordings": {"map": "rec"},
 "bootstrap": {"resamples": 20},
 "methods": [{"name": "range-height", "variants": [{"alias": "rh-coarse", "range_bins": 8}, {"range_bins": 16}]}],
 "conditions": [{"name": "clean"}, {"name": "drop", "chain": "dropout:p=0.5", "on": "query"}],
 "criteria": [{"metric": "f1max", "method": "rh-coarse", "condition": "drop", "comparator": ">=", "threshold": 0}]}
JSON
"$REVISIT_BIN" sweep s.json --out sw --quiet >out 2>err; rc=$?
expect "[ $rc -eq 0 ]" "a sweep with an alias runs ($(head -c 300 err))"
expect "[ -f sw/cells/rh-coarse__drop__s1/result.json ] && [ -f sw/cells/range-height_range_bins-16__drop__s1/result.json ]" \
  "cell ids use the alias, and the label where there is none"
expect '$PY - <<PYEOF
import csv, json, sys
rows = list(csv.DictReader(open("sw/summary.csv")))
if sorted(set(r["method"] for r in rows)) != ["range-height:range_bins=16", "rh-coarse"]: sys.exit("summary.csv methods")
m = json.load(open("sw/cells/rh-coarse__clean__s1/result.json"))["method"]
if m.get("alias") != "rh-coarse" or not m.get("label", "").startswith("range-height:range_bins=8,"): sys.exit("result.json method %r" % m)
if m["settings"].get("range_bins") != 8: sys.exit("the alias does not change the settings run")
ms = json.load(open("sw/summary.json"))["methods"]
if {"name": "rh-coarse", "label": "range-height:range_bins=8"} not in ms: sys.exit("summary.json methods %r" % ms)
PYEOF' "summary.csv names the alias; result.json and summary.json keep the full label beside it"
out=$("$REVISIT_BIN" check s.json sw 2>&1)
expect_in "$out" "rh-coarse" "check names the method by its alias"
expect '$PY -c "import json,sys; v=json.load(open(\"sw/verdicts.json\"))[\"criteria\"]; sys.exit(v[0][\"method\"] != \"rh-coarse\")"' \
  "verdicts.json names the alias"
if "$REVISIT_BIN" report sw --out rep --format md --quiet >/dev/null 2>rerr; then
  expect "grep -qF '| rh-coarse | \`range-height:range_bins=8,' rep/report.md" "the report's settings table gives the alias and its full label"
else
  expect "false" "report on the sweep ($(head -c 300 rerr))"
fi

# Refused when the file loads: nothing runs, the message points at the key.
sed 's/"metric": "f1max"/"metric": "f1maximum"/' s.json > bad_metric.json
"$REVISIT_BIN" sweep bad_metric.json --out bm --quiet >/dev/null 2>err; rc=$?
expect "[ $rc -eq 2 ] && [ ! -d bm/cells ]" "a criterion on an unknown metric stops the sweep before any cell (rc $rc)"
expect_in "$(cat err)" "bad_metric.json:5:" "the refusal gives file and line"
expect_in "$(cat err)" "criteria[0].metric: 'f1maximum' is not known" "the refusal names the key and the metric"
sed 's/"method": "rh-coarse"/"method": "rh-fine"/' s.json > bad_method.json
"$REVISIT_BIN" sweep bad_method.json --out bn --quiet >/dev/null 2>err; rc=$?
expect "[ $rc -eq 2 ] && [ ! -d bn/cells ]" "a criterion on an unknown method stops the sweep before any cell (rc $rc)"
expect_in "$(cat err)" "criteria[0].method: no method 'rh-fine' in methods, expected one of rh-coarse" "the refusal lists the method names"
sed 's/{"range_bins": 16}/{"alias": "rh-coarse", "range_bins": 16}/' s.json > twice.json
"$REVISIT_BIN" sweep twice.json --out bt --quiet >/dev/null 2>err; rc=$?
expect "[ $rc -eq 2 ] && [ ! -d bt/cells ]" "two variants with one alias stop the sweep (rc $rc)"
expect_in "$(cat err)" "twice.json:3:" "the refusal of a shared alias gives file and line"
done_tests
