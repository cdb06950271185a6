#!/usr/bin/env bash
# e2e_time_unit.sh: sparse recordings keep their seconds.  A pose file whose
# only plausible rate comes from reading seconds as milliseconds is refused
# when the speed that reading implies is impossible, and a unit the user (or
# our own writer) names is taken as written.
. "$(dirname "$0")/lib_e2e.sh"
R=$REVISIT_BIN
cd "$T" || exit 2
mkdir -p s
for i in 0 1 2 3; do printf '1 0 0\n0 1 0\n0 0 1\n' > "s/$i.txt"; done
# one pose every 40 s, 100 m apart (2.5 m/s): read as ms it would be 2,500 m/s
printf 't,x,y,z,qx,qy,qz,qw\n0,0,0,0,0,0,0,1\n40,100,0,0,0,0,0,1\n80,200,0,0,0,0,0,1\n120,300,0,0,0,0,0,1\n' > s/p.csv
out=$("$R" index s --poses s/p.csv --channels 16 --out s/recording.json 2>&1); rc=$?
expect "[ $rc -eq 2 ] && [ ! -f s/recording.json ]" "a 0.025 Hz pose file is not silently read as milliseconds (got rc $rc: ${out:0:300})"
expect_in "$out" "a median speed below 100 m/s" "the refusal names the speed limit a unit must keep"
expect_in "$out" "--time-unit" "the refusal says how to name the unit"
out=$("$R" index s --poses s/p.csv --channels 16 --time-unit s --out s/recording.json 2>&1); rc=$?
expect "[ $rc -eq 0 ]" "the unit named with --time-unit s is taken as written (${out:0:300})"
out=$("$R" inspect s 2>&1)
expect_in "$out" "120.000 s" "inspect shows the 120 s the poses span"

# A sparse synthetic recording: our writer names seconds in the manifest.
"$R" synth --scenario port --scans 4 --out rec --quiet >/dev/null 2>&1
expect "grep -q '\"time_unit\":[[:space:]]*\"s\"' rec/recording.json" "the recording writer names the time unit"
out=$("$R" inspect rec 2>&1)
expect_in "$out" "pose times in s (named in the manifest)" "a 4-scan synthetic recording is read in seconds"
done_tests
