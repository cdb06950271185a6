#!/usr/bin/env bash
# e2e_results_agree.sh: the commands that read a results folder agree on a
# tampered file.  One small sweep (two cells, a paired criterion, so that
# `check` reads each cell's poses.csv and queries.csv), then copies of it
# with one file of every cell broken; `metrics` (on a cell), `check` and
# `report` must each exit 2 with the same message naming file and line.
. "$(dirname "$0")/lib_e2e.sh"
cd "$T" || exit 1

if ! "$REVISIT_BIN" synth --scenario port --scans 40 --out rec --quiet > /dev/null 2>&1; then
  expect false "synth makes a recording for the sweep"; done_tests; exit
fi
cat > s.json <<'JSON'
{"format": "revisit-sweep-1", "name": "agree", "recordings": {"map": "rec"},
 "bootstrap": {"resamples": 0},
 "methods": [{"name": "range-height"}],
 "conditions": [{"name": "clean"},
   {"name": "mount", "chain": "sector:width=60,at=180", "on": "query"}],
 "criteria": [{"metric": "f1max", "condition": "mount", "target": "diff", "baseline": "clean",
               "comparator": ">=", "threshold": -1}]}
JSON
"$REVISIT_BIN" sweep s.json --out sw --quiet > /dev/null 2>&1
expect '[ $(ls sw/cells/*/result.json | wc -l) -eq 2 ]' "the sweep finishes both cells"
cell=$(ls sw/cells | head -1)

# all three commands on folder DIR: their exit codes and messages into DIR.*
three() {
  "$REVISIT_BIN" metrics --results "$1/cells/$cell/queries.csv" --bootstrap 0 --quiet > /dev/null 2> "$1.metrics"
  echo $? > "$1.metrics.rc"
  "$REVISIT_BIN" check s.json "$1" > /dev/null 2> "$1.check"
  echo $? > "$1.check.rc"
  "$REVISIT_BIN" report "$1" --out "$1-report" --quiet > /dev/null 2> "$1.report"
  echo $? > "$1.report.rc"
}
three sw
expect '[ "$(cat sw.metrics.rc)$(cat sw.check.rc)$(cat sw.report.rc)" = 000 ]' "the untouched folder: metrics, check and report exit 0"

# tamper NAME FILE SED FRAGMENT: FILE of every cell edited by SED
tamper() {
  rm -rf "$1"; cp -r sw "$1"; rm -rf "$1"/report
  for c in "$1"/cells/*/; do sed -i "$3" "$c$2"; done
  three "$1"
  for cmd in metrics check report; do
    expect '[ "$(cat '"$1.$cmd.rc"')" = 2 ]' "$1: $cmd exits 2"
    expect_in "$(cat "$1.$cmd")" "$2:$4" "$1: $cmd names the file and line"
  done
}
# poses.csv: line 1 the format line, line 2 the header, line 3 map scan 0
tamper noheader poses.csv '/^set,index/d' "2: expected the header 'set,index,t,x,y,z'"
tamper trailing poses.csv '3s/$/xyz/' "3: field 6"
tamper extrafield poses.csv '3s/$/,xyz/' "3: 7 fields, expected 6"
tamper index poses.csv '4s/^map,1,/map,999,/' "4: map index '999', expected 1"
tamper version poses.csv '1s/format 1/format 2/' "1: scan poses format 2, expected format 1"
# queries.csv: line 1 the format line, line 2 the header, line 3 query 0
tamper qversion queries.csv '1s/format 1/format 9/' "1: per-query results format 9, expected format 1"
tamper qfield queries.csv '3s/$/,7,x/' "3: field"
done_tests
