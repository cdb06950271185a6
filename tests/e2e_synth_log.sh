#!/usr/bin/env bash
# e2e_synth_log.sh: `revisit synth --log` writes the recording as a ROS 1 bag
# and as an MCAP file; `revisit log` reads each back into a recording with
# the same points (the scan files byte for byte) and the same poses.
. "$(dirname "$0")/lib_e2e.sh"
PY=${PYTHON:-/usr/bin/python3}
for kind in bag mcap; do
  "$REVISIT_BIN" synth --scenario port --duration 0.4 --out "$T/syn-$kind" --log "$T/syn.$kind" --quiet >/dev/null; rc=$?
  expect "[ $rc -eq 0 ] && [ -s '$T/syn.$kind' ]" "synth --log writes a .$kind file"
  out=$("$REVISIT_BIN" log "$T/syn.$kind")
  expect_in "$out" "/points" "the .$kind lists the scans topic"
  "$REVISIT_BIN" log "$T/syn.$kind" --scans /points --poses /odom --out "$T/back-$kind" --quiet; rc=$?
  expect "[ $rc -eq 0 ]" "revisit log reads the .$kind back into a recording"
  same=1
  for f in "$T/syn-$kind"/scans/*.pcd; do
    cmp -s "$f" "$T/back-$kind/scans/$(basename "$f")" || same=0
  done
  n=$(ls "$T/back-$kind/scans" | wc -l)
  expect "[ $same -eq 1 ] && [ $n -eq 5 ]" ".$kind round trip: the 5 scan files are byte-identical (points, intensity, ring, time)"
  chk=$($PY - "$T/syn-$kind/poses.csv" "$T/back-$kind/poses.csv" <<'EOF2'
import csv, sys
a = list(csv.DictReader(open(sys.argv[1])))
b = list(csv.DictReader(open(sys.argv[2])))
ok = len(a) == len(b) == 5
for x, y in zip(a, b):
    # stamps go through whole nanoseconds; positions and rotations are float64 as written
    ok = ok and abs(float(x["t"]) - float(y["t"])) < 1e-9
    ok = ok and all(float(x[k]) == float(y[k]) for k in ("x", "y", "z", "qx", "qy", "qz", "qw"))
print("ok" if ok else "bad")
EOF2
)
  expect_in "$chk" "ok" ".$kind round trip: the same poses"
done
# a recording from a log is used like any other: inspect, eval, report
"$REVISIT_BIN" inspect "$T/back-mcap" --quiet >/dev/null; rc=$?
expect "[ $rc -eq 0 ]" "inspect passes the recording made from the MCAP log"
"$REVISIT_BIN" eval --map "$T/back-mcap" --method scan-context --out "$T/ev" --quiet >/dev/null 2>&1; rc=$?
expect "[ $rc -eq 0 ] && [ -s '$T/ev/result.json' ]" "eval runs on the recording made from the log"
"$REVISIT_BIN" report "$T/ev" --quiet >/dev/null 2>&1; rc=$?
expect "[ $rc -eq 0 ]" "report renders that evaluation"
# the scans written LZF-compressed: the same points as the synthetic PCD files
"$REVISIT_BIN" log "$T/syn.mcap" --scans /points --poses /odom --scan-layout pcd-compressed --out "$T/back-z" --quiet
rc=$?
same=1
for f in "$T/syn-mcap"/scans/*.pcd; do
  g="$T/back-z/scans/$(basename "$f")"
  grep -aq "^DATA binary_compressed" "$g" || same=0
  [ "$("$REVISIT_BUILD/tests/tool_scan" dump "$f")" = "$("$REVISIT_BUILD/tests/tool_scan" dump "$g")" ] || same=0
done
expect "[ $rc -eq 0 ] && [ $same -eq 1 ]" "--scan-layout pcd-compressed writes binary_compressed scans with the same points"
err=$("$REVISIT_BIN" synth --scenario port --scans 2 --out "$T/x" --log "$T/x.zip" --quiet 2>&1); rc=$?
expect "[ $rc -eq 2 ] && [ ! -e '$T/x' ]" "an unknown log extension is refused before anything is written"
expect_in "$err" "expected a file ending in .bag or .mcap" "and the message says which"
done_tests
