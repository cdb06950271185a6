#!/usr/bin/env bash
# e2e_option_units.sh: every command's option of a length, time, speed or
# angle takes the unit chains write for it (the shared scanner of
# harness/base/opt.h), or a bare number in that unit; another unit is
# refused with exit 2 and a message naming the option.
. "$(dirname "$0")/lib_e2e.sh"
R=$REVISIT_BIN
cd "$T" || exit 1
"$R" synth --scenario port --scans 40 --out rec --quiet > /dev/null 2>&1
expect "[ -f rec/recording.json ]" "a small synthetic recording"
cat > s.json <<'JSON'
{"format": "revisit-sweep-1", "recordings": {"map": "rec"}, "bootstrap": {"resamples": 0},
 "methods": [{"name": "range-height"}], "conditions": [{"name": "clean"}]}
JSON
ok() {  # description, command...: exit 0 or 1 (a finding), never a refusal
  local d=$1; shift
  out=$("$@" 2>&1); rc=$?
  expect "[ $rc -eq 0 ] || [ $rc -eq 1 ]" "$d (exit $rc: $(echo "$out" | tail -1))"
}
ok "inspect --max-speed 70m/s" "$R" inspect rec --max-speed 70m/s --quiet
ok "inspect --max-speed 70" "$R" inspect rec --max-speed 70 --quiet
ok "inspect --max-gap 20s" "$R" inspect rec --max-gap 20s --quiet
ok "sweep --time-limit 30s" "$R" sweep s.json --out sw --dry-run --time-limit 30s
ok "eval --same-within 45deg --reverse-from 135deg" \
  "$R" eval --map rec --method range-height --bootstrap 0 --same-within 45deg --reverse-from 135deg --out ev --quiet
ok "index --pose-gap 5s" "$R" index rec/scans --poses rec/poses.csv --pose-gap 5s --out rec/again.json
out=$("$R" inspect rec --max-speed 70km/h --quiet 2>&1); rc=$?
expect "[ $rc -eq 2 ]" "inspect --max-speed 70km/h is refused (exit $rc)"
expect_in "$out" "option '--max-speed' expects a speed in metres per second such as 70 or 70m/s, got '70km/h'" \
  "the refusal names the option and the unit"
out=$("$R" eval --map rec --method range-height --same-within 1rad --out ev2 2>&1); rc=$?
expect "[ $rc -eq 2 ]" "eval --same-within 1rad is refused (exit $rc)"
expect_in "$out" "expects an angle in degrees such as 45 or 45deg" "the angle refusal says degrees"

# A value that stands for "not given" inside (0 threads, -1 resamples, 0 s)
# is refused when given, never read silently as the default.
refused() {  # option, command...
  local o=$1; shift
  out=$("$@" 2>&1); rc=$?
  expect "[ $rc -eq 2 ]" "$* is refused (exit $rc)"
  expect_in "$out" "$o" "the refusal of $* names $o"
}
EV="$R eval --map rec --method range-height --out never --quiet"
refused --bootstrap $EV --bootstrap -1
refused --jobs $EV --jobs 0
refused --jobs $EV --jobs -3
refused --time-limit $EV --time-limit 0
refused --mem-limit $EV --mem-limit 0
refused --prefilter $EV --prefilter -1
refused --jobs "$R" sweep s.json --out sw2 --dry-run --jobs 0
refused --time-limit "$R" sweep s.json --out sw2 --dry-run --time-limit 0
refused --mem-limit "$R" sweep s.json --out sw2 --dry-run --mem-limit 0
refused --scans "$R" synth --scenario port --out syn --scans -1 --quiet
refused --duration "$R" synth --scenario port --out syn --duration -1 --quiet
refused --jobs "$R" inspect rec --jobs -1 --quiet
refused --jobs "$R" perturb --in rec --out pt --chain yaw --jobs 0 --quiet
expect "[ ! -e never ] && [ ! -e syn ] && [ ! -e pt ]" "nothing is written by a refused command"
done_tests
