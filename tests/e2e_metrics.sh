#!/usr/bin/env bash
# e2e_metrics.sh: `revisit metrics` end to end on a case worked by hand.
#
# Loop, 30 s exclusion, r = 3 m.  Scans t = 0 10 20 40 50 60 s at x = 0 100
# 200 1 101 500 m (y = z = 0).  Query 3's candidates are scans 0, 1 (a
# revisit: scan 0 is 1 m away); query 4's are 0-2 (revisit: scan 1); query 5
# has no candidate within 3 m.  Results: q3 -> 0 (right, D 0.2); q4 -> 2
# (wrong, 0.3) then 1 (right, 0.4); q5 -> 1 (wrong, 0.5).
#   tau 0.2: TP 1 FP 0, P 1;   0.3: TP 1 FP 1, P 1/2;   0.5: TP 1 FP 2, P 1/3
#   strict recall 1/2 throughout; lenient recall 1/2, 1, 1.
#   strict:  F1max 2/3 at 0.2, R@100P 1/2, AP 1/2, recall@1 1/2, recall@5 1
#   lenient: F1max 2/3, AP 1/2 + (1/2)(1/2) = 3/4
# F1 = 2PR/(P+R) (van Rijsbergen, Information Retrieval, 1979); AP as the
# step sum over the curve (as sklearn.metrics.average_precision_score).
. "$(dirname "$0")/lib_e2e.sh"
cd "$T"
cat > poses.csv <<'EOF'
t,x,y,z,qx,qy,qz,qw
0,0,0,0,0,0,0,1
10,100,0,0,0,0,0,1
20,200,0,0,0,0,0,1
40,1,0,0,0,0,0,1
50,101,0,0,0,0,0,1
60,500,0,0,0,0,0,1
EOF
cat > q.csv <<'EOF'
# revisit per-query results, format 1
query,cand,dist,cand,dist
3,0,0.2
4,2,0.3,1,0.4
5,1,0.5
EOF
out=$("$REVISIT_BIN" metrics --results q.csv --poses poses.csv --bootstrap 200 --json m.json --quiet 2>&1)
expect '[ $? -eq 0 ]' "metrics scores a results CSV"
expect_in "$out" "queries 6, revisits 2" "counts printed"
expect_in "$out" "f1max               0.6667" "strict F1max 2/3"
expect_in "$out" "ap                  0.5000" "strict AP 1/2"
expect_in "$out" "recall_at_5         1.0000" "recall@5 sees the rank-2 match"
py=$($PYTHON - <<'EOF'
import json
m = json.load(open("m.json"))
ok = lambda c, d: print(("ok " if c else "FAIL ") + d)
ok(m["format"] == "revisit-result-1", "format key")
ok(m["counts"] == {"queries": 6, "revisits": 2, "rows": 3, "without_row": 3}, "counts object")
ok(abs(m["metrics"]["f1max"]["value"] - 2/3) < 1e-12 and m["metrics"]["f1max"]["threshold"] == 0.2, "f1max and threshold")
ok(m["metrics"]["r100p"]["value"] == 0.5 and m["metrics"]["r100p"]["threshold"] == 0.2, "r100p and threshold")
ok(m["metrics"]["ap"]["lo"] <= 0.5 <= m["metrics"]["ap"]["hi"], "AP interval brackets the value")
ok(m["curve"]["threshold"] == [0.2, 0.3, 0.5] and m["curve"]["recall"] == [0.5, 0.5, 0.5], "exact strict curve")
ok(m["protocol"]["mode"] == "loop" and m["protocol"]["exclusion_s"] == 30, "protocol recorded")
ok(m["bootstrap"]["resamples"] == 200, "bootstrap recorded")
EOF
)
expect '[ -n "$py" ] && ! echo "$py" | grep -q FAIL' "result JSON as documented ($(echo "$py" | grep FAIL | head -1))"
out=$("$REVISIT_BIN" metrics --results q.csv --poses poses.csv --counting lenient --bootstrap 0 2>&1)
expect_in "$out" "ap                  0.7500" "lenient AP 3/4"
# --against: a second method on the same queries.  q3 -> 1 (wrong, 0.2) then
# 0; q4 -> 1 (right, 0.3); q5 -> 1 (wrong).  Curve: 0.2 TP 0 FP 1; 0.3 TP 1
# FP 1 (P 1/2, R 1/2); 0.5 TP 1 FP 2.  F1max 1/2, AP 1/4, R@100P 0.
printf '3,1,0.2,0,0.3\n4,1,0.3\n5,1,0.5\n' > q2.csv
out=$("$REVISIT_BIN" metrics --results q.csv --poses poses.csv --against q2.csv --bootstrap 100 --json m2.json --quiet 2>&1)
expect_in "$out" "ap                  0.2500   +0.2500" "paired difference of AP"
expect_in "$out" "r100p               0.0000   +0.5000" "paired difference of R@100P"
expect '$PYTHON -c "import json,sys; a=json.load(open(\"m2.json\"))[\"against\"][\"metrics\"][\"f1max\"]; sys.exit(not (a[\"value\"]==0.5 and 0<=a[\"share_better\"]<=1 and a[\"diff_lo\"]<=a[\"diff_hi\"]))"' "against object in the JSON"
printf '3,3,0.2\n' > q3.csv
out=$("$REVISIT_BIN" metrics --results q.csv --poses poses.csv --against q3.csv --bootstrap 0 2>&1)
expect_in "$out" "q3.csv:1: query 3 lists itself" "--against rows are checked like --results"
# the same results scored from a results folder (poses.csv beside them)
mkdir -p R
cp q.csv R/queries.csv
printf 'set,index,t,x,y,z\nmap,0,0,0,0,0\nmap,1,10,100,0,0\nmap,2,20,200,0,0\nmap,3,40,1,0,0\nmap,4,50,101,0,0\nmap,5,60,500,0,0\n' > R/poses.csv
out=$("$REVISIT_BIN" metrics --results R/queries.csv --bootstrap 0 2>&1)
expect_in "$out" "f1max               0.6667" "a results folder carries its own poses"
# only query 4 scored: top-1 wrong at 0.3 -> strict F1 0, recall@5 1
echo 4 > only.txt
out=$("$REVISIT_BIN" metrics --results q.csv --poses poses.csv --only only.txt --bootstrap 0 2>&1)
expect_in "$out" "queries 1, revisits 1" "--only restricts the scored queries"
expect_in "$out" "recall_at_5         1.0000" "--only keeps that query's ranks"
# Scans with no row.  By default every scan of the pose file is a query: one
# row (q4 -> 1, right, 0.4) leaves the revisit q3 unanswered, so strict
# recall is 1/2 at P 1 and F1max 2*1*(1/2)/(1 + 1/2) = 2/3 (van Rijsbergen,
# Information Retrieval, 1979); scoring only the listed row gives P = R = 1.
out=$("$REVISIT_BIN" metrics --results q.csv --poses poses.csv --bootstrap 0 2>&1 >/dev/null)
expect_in "$out" "3 of 6 scored scans have no row in q.csv; they count as queries that returned no candidate" \
  "scans without a row are counted on stderr"
printf '4,1,0.4\n' > one.csv
out=$("$REVISIT_BIN" metrics --results one.csv --poses poses.csv --bootstrap 0 --json one.json 2>&1)
expect_in "$out" "5 of 6 scored scans have no row" "a one-row file says five scans have no row"
expect_in "$out" "f1max               0.6667" "by default the unanswered revisit counts against the method"
expect '$PYTHON -c "import json,sys; c=json.load(open(\"one.json\"))[\"counts\"]; sys.exit(not (c[\"rows\"]==1 and c[\"without_row\"]==5 and c[\"queries\"]==6))"' \
  "counts.rows and counts.without_row in the JSON"
out=$("$REVISIT_BIN" metrics --results one.csv --poses poses.csv --bootstrap 0 --listed --json one2.json 2>&1)
expect_in "$out" "queries 1, revisits 1" "--listed scores only the listed row"
expect_in "$out" "f1max               1.0000" "--listed: the one right answer gives F1max 1"
expect '! printf "%s" "$out" | grep -q "no row"' "--listed: nothing is reported as missing"
expect '$PYTHON -c "import json,sys; c=json.load(open(\"one2.json\"))[\"counts\"]; sys.exit(not (c[\"without_row\"]==0 and c[\"queries\"]==1))"' \
  "--listed: the JSON counts agree"
out=$("$REVISIT_BIN" metrics --results one.csv --poses poses.csv --only only.txt --listed 2>&1); rc=$?
expect "[ $rc -eq 2 ]" "--only with --listed exits 2"
expect_in "$out" "give --only or --listed, not both" "--only with --listed is refused by name"
out=$("$REVISIT_BIN" metrics --results one.csv --poses poses.csv --only only.txt --bootstrap 0 2>&1)
expect '! printf "%s" "$out" | grep -q "no row"' "a scan outside --only is not counted as missing"
# Thresholds round-trip: a distance of 0.1 + 0.2 (0.30000000000000004, the
# repr of Python's float, Python 3 documentation "Floating Point Arithmetic")
# is the F1max threshold and must not come back as 0.3, which would reject it.
printf '3,0,0.30000000000000004\n4,2,0.5\n' > rt.csv
out=$("$REVISIT_BIN" metrics --results rt.csv --poses poses.csv --bootstrap 0 --json rt.json --quiet 2>&1)
expect_in "$out" "0.6667  0.30000000000000004" "the printed F1max threshold keeps every digit"
expect '$PYTHON -c "import json,sys; m=json.load(open(\"rt.json\")); sys.exit(not (m[\"metrics\"][\"f1max\"][\"threshold\"] == 0.1 + 0.2 and m[\"curve\"][\"threshold\"][0] == 0.1 + 0.2))"' \
  "the JSON threshold and curve read back as the same double"
# reloc: map = scans 0-2, queries = scans 3-5 of the same route
head -4 poses.csv > map.csv
{ head -1 poses.csv; tail -3 poses.csv; } > qry.csv
printf '0,0,0.2\n1,2,0.3,1,0.4\n2,1,0.5\n' > r.csv
out=$("$REVISIT_BIN" metrics --results r.csv --poses map.csv --query-poses qry.csv --bootstrap 0 2>&1)
expect_in "$out" "queries 3, revisits 2" "reloc mode from two pose files"
expect_in "$out" "f1max               0.6667" "reloc scores the same case alike"
# a recording as the pose source (six one-point scans indexed with revisit index)
mkdir -p rec
for i in 0 1 2 3 4 5; do printf '\x00\x00\x80\x3f\x00\x00\x00\x00\x00\x00\x00\x00\x00\x00\x00\x00' > rec/00000$i.bin; done
cp poses.csv rec/poses.csv
"$REVISIT_BIN" index rec --poses rec/poses.csv --channels 1 --quiet > /dev/null 2>&1
out=$("$REVISIT_BIN" metrics --results q.csv --rec rec --bootstrap 0 2>&1)
expect_in "$out" "f1max               0.6667" "a recording's poses give the same scores"
# Agreement with `revisit eval`: scoring an eval results folder again (its
# poses.csv and the protocol in its result.json) gives the same numbers,
# intervals included, and options given override the folder's protocol.
if "$REVISIT_BIN" synth --scenario port --scans 40 --out syn --quiet > /dev/null 2>&1 &&
   "$REVISIT_BIN" eval --map syn --method range-height --out cell --bootstrap 100 --radius 8 \
     --counting lenient --quiet > /dev/null 2>&1; then
  "$REVISIT_BIN" metrics --results cell/queries.csv --bootstrap 100 --json again.json --quiet > /dev/null 2>&1
  expect '$PYTHON -c "import json,sys; a=json.load(open(\"cell/result.json\")); b=json.load(open(\"again.json\")); sys.exit(not (all(a[\"metrics\"][k]==b[\"metrics\"][k] for k in b[\"metrics\"]) and a[\"curve\"]==b[\"curve\"] and b[\"protocol\"][\"r_pos_m\"]==8 and b[\"protocol\"][\"counting\"]==\"lenient\"))"' \
    "metrics on an eval folder reproduces its result.json exactly"
  o1=$("$REVISIT_BIN" metrics --results cell/queries.csv --bootstrap 0 --quiet 2>&1 | head -1)
  o2=$("$REVISIT_BIN" metrics --results cell/queries.csv --bootstrap 0 --radius 1 --quiet 2>&1 | head -1)
  expect '[ "$o1" != "$o2" ]' "an option given overrides the folder's protocol"
else
  expect false "synth and eval make a results folder for the agreement check"
fi
# bad input, each message naming file and line
bad() {  # content, fragment, description
  printf "$1" > bad.csv
  local o
  o=$("$REVISIT_BIN" metrics --results bad.csv --poses poses.csv --bootstrap 0 2>&1)
  expect '[ $? -eq 2 ]' "$3 exits 2"
  expect_in "$o" "$2" "$3"
}
bad '3,0,0.2\n4,x,0.3\n' "bad.csv:2: field 2: candidate 'x' is not a whole number" "malformed CSV line N"
bad '3,0,0.2\n4,9,0.3\n' "bad.csv:2: query 4: candidate 9 is out of range" "candidate index out of range"
bad '3,3,0.2\n' "bad.csv:1: query 3 lists itself" "a query that lists itself"
bad '3,5,0.2\n' "bad.csv:1: query 3 lists scan 5, a later scan" "a future scan in loop mode"
bad '3,0,0.2,1,0.1\n' "bad.csv:1: query 3: distance 0.1 after 0.2" "distances out of order"
out=$("$REVISIT_BIN" metrics --poses poses.csv 2>&1)
expect_in "$out" "option '--results' is required" "--results is required"
mkdir -p lone && cp q.csv lone/
out=$("$REVISIT_BIN" metrics --results lone/q.csv --bootstrap 0 2>&1)
expect_in "$out" "no poses: give --poses FILE or --rec REC" "poses are required"
out=$("$REVISIT_BIN" metrics --results q.csv --bootstrap 0 2>&1)
expect_in "$out" "poses.csv:1: expected the header 'set,index,t,x,y,z'" "a poses.csv beside the results must be a results folder's"
out=$("$REVISIT_BIN" metrics --results r.csv --poses map.csv --mode reloc 2>&1)
expect_in "$out" "reloc mode needs --query-poses or --query-rec" "reloc needs query poses"
done_tests
