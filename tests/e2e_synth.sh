#!/usr/bin/env bash
# e2e_synth.sh: `revisit synth` end to end: byte-identical output for any
# --jobs, a recording `revisit inspect` reads, and every bad input refused
# with its message.
. "$(dirname "$0")/lib_e2e.sh"
R="$REVISIT_BIN"
# A lighter ray pattern keeps the test fast; the route and scene are the port's.
echo '{"profile": "spin32", "azimuth_step_deg": 2}' > "$T/coarse.json"
syn() { "$R" synth --quiet --sensor "$T/coarse.json" "$@"; }

expect 'syn --scenario port --scans 80 --out "$T/a" --jobs 1 > "$T/a.log" 2>&1' "synth with one job"
expect 'syn --scenario port --scans 80 --out "$T/b" --jobs 3 > /dev/null 2>&1' "synth with three jobs"
expect 'diff -r "$T/a" "$T/b" > /dev/null' "the same seed gives byte-identical folders for any --jobs"
expect 'syn --scenario port --scans 80 --out "$T/a" > /dev/null 2>&1 && diff -r "$T/a" "$T/b" > /dev/null' \
  "a rerun into the same folder gives the same files"
expect 'syn --scenario port --scans 80 --seed 8 --out "$T/c" > /dev/null 2>&1 && ! diff -q "$T/a/scans/000040.pcd" "$T/c/scans/000040.pcd" > /dev/null' \
  "another --seed gives another recording"
expect '[ "$(ls "$T/a/scans" | wc -l)" -eq 80 ] && [ -f "$T/a/recording.json" ] && [ -f "$T/a/route.json" ]' \
  "recording.json, route.json and one PCD file per scan"
expect 'head -c 300 "$T/a/scans/000000.pcd" | grep -q "^FIELDS x y z intensity ring time"' "scans carry ring and time fields"
expect_in "$(cat "$T/a.log")" "80 scans at" "the summary gives the scan count"
out=$("$R" inspect "$T/a" 2>&1)
expect_in "$out" "scans        80" "inspect reads the synthetic recording"
expect_in "$out" "32 channels" "inspect sees the 32-channel sensor"
rv=$(sed -n 's/.*"counts": {"same": \([0-9]*\), "reverse": \([0-9]*\), "crossing": \([0-9]*\).*/\1 \2 \3/p' "$T/a/route.json")
set -- $rv
expect_in "$out" "revisits     $(( $1 + $2 + $3 )) of 80" "inspect's revisit count equals route.json's"

# Bad input.
msg=$("$R" synth --scenario atlantis --out "$T/x" 2>&1); rc=$?
expect '[ $rc -eq 2 ]' "unknown scenario exits 2"
expect_in "$msg" "unknown scenario 'atlantis'" "unknown scenario message"
msg=$("$R" synth --scenario port --out "$T/x" --scans 0 2>&1)
expect_in "$msg" "option '--scans' expects a whole number 1 or more, got '0'" "zero scans refused"
msg=$("$R" synth --scenario port --out "$T/x" --scans 5 --duration 3 2>&1)
expect_in "$msg" "give --scans or --duration, not both" "scans and duration together refused"
msg=$("$R" synth --scenario port --out "$T/x" --scans 99999 2>&1)
expect_in "$msg" "--scans 99999 is more than the" "more scans than the drive holds refused"
msg=$("$R" synth --scenario port --out "$T/x" --duration 5000 2>&1)
expect_in "$msg" "--duration 5000 is longer than the" "a duration beyond the drive refused"
msg=$("$R" synth --scenario port 2>&1)
expect_in "$msg" "option '--out' is required" "missing --out refused"
msg=$(syn --scenario port --scans 50 --out "$T/a" 2>&1)
expect_in "$msg" "holds scans of a longer recording" "a folder with more scans is refused before any work"
msg=$("$R" synth --scenario port --out "$T/x" --sensor spin7 2>&1)
expect_in "$msg" "unknown sensor profile 'spin7'" "unknown sensor profile refused"
echo '{"profile": "spin32", "range_max_m": 0.1}' > "$T/short.json"
msg=$("$R" synth --scenario port --out "$T/x" --sensor "$T/short.json" 2>&1)
expect_in "$msg" "short.json: \$.range_max_m: 0.1 is not above range_min_m 0.8" "max range below min refused"
expect '[ ! -e "$T/x/recording.json" ]' "no recording is left after refused input"
expect_in "$("$R" synth --help)" "--scans N" "help lists the options"
done_tests
