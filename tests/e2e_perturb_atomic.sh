#!/usr/bin/env bash
# e2e_perturb_atomic.sh: a perturbed recording appears whole or not at all.
# perturb writes into a hidden staged folder beside --out and renames it
# into place after one sync; a run killed half-way leaves no recording at
# --out (nor touches one that --replace was about to replace), and the next
# run clears the leftover and succeeds.
. "$(dirname "$0")/lib_e2e.sh"
R=$REVISIT_BIN
"$R" synth --scenario port --scans 120 --out "$T/rec" --quiet >/dev/null 2>&1
expect "[ -f '$T/rec/recording.json' ]" "synth writes the source recording"

# Kill with SIGKILL once some scans are in the staged folder.
kill_midway() {  # out-folder, extra options...
  local out=$1; shift
  "$R" perturb --in "$T/rec" --out "$out" --chain "yaw+dropout:p=0.2" --jobs 1 --quiet "$@" >/dev/null 2>&1 &
  local pid=$! k=0 n=0
  while [ $k -lt 400 ]; do
    n=$(ls "$(dirname "$out")"/.staged-"$(basename "$out")"-*/scans 2>/dev/null | wc -l)
    [ "$n" -ge 5 ] && break
    sleep 0.02; k=$((k + 1))
  done
  kill -9 $pid 2>/dev/null; wait $pid 2>/dev/null
  echo "$n"
}
n=$(kill_midway "$T/p1")
expect "[ '$n' -ge 5 ]" "the killed run had written scans ($n) into its staged folder"
expect "[ ! -e '$T/p1' ]" "a killed perturb leaves no folder at --out"
expect "ls -d '$T'/.staged-p1-* >/dev/null 2>&1" "the killed run's staged folder is hidden beside --out"
"$R" perturb --in "$T/rec" --out "$T/p1" --chain yaw --quiet >/dev/null 2>&1; rc=$?
expect "[ $rc -eq 0 ] && [ -f '$T/p1/recording.json' ]" "the next run succeeds"
expect "! ls -d '$T'/.staged-p1-* >/dev/null 2>&1" "the next run removed the dead run's staged folder"
expect "[ \$(ls '$T/p1/scans' | wc -l) -eq 120 ]" "the recording holds every scan"
"$R" inspect "$T/p1" >/dev/null 2>&1; rc=$?
expect "[ $rc -eq 0 ]" "the perturbed recording loads"

# --replace over an existing recording, killed: the old one stays whole.
before=$(cat "$T/p1/recording.json" "$T/p1/scans/"* | md5sum)
touch "$T/p1/notes.txt"
n=$(kill_midway "$T/p1" --replace --seed 9)
after=$(cat "$T/p1/recording.json" "$T/p1/scans/"* | md5sum)
expect "[ '$before' = '$after' ]" "a killed --replace run leaves the old recording untouched"
"$R" perturb --in "$T/rec" --out "$T/p1" --chain "yaw" --seed 9 --replace --quiet >/dev/null 2>&1; rc=$?
expect "[ $rc -eq 0 ]" "--replace over a recording succeeds"
expect_in "$(cat "$T/p1/recording.json")" '"seed":	9' "the new recording replaced the old manifest"
expect "[ -f '$T/p1/notes.txt' ]" "--replace keeps files of the folder that are not part of a recording"
expect "[ \$(ls '$T/p1/scans' | wc -l) -eq 120 ] && ! ls -a '$T/p1' | grep -q '^\.old-'" "the replaced scans folder is whole, nothing left over"
done_tests
