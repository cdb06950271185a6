#!/usr/bin/env bash
# e2e_log_atomic.sh: a recording made from a log appears whole or not at
# all.  `revisit log --out DIR` writes through the recording writer, which
# stages the folder hidden beside DIR and renames it into place when
# complete; a run killed half-way leaves nothing at DIR, and the next run
# clears the leftover and succeeds.
. "$(dirname "$0")/lib_e2e.sh"
R=$REVISIT_BIN
"$R" synth --scenario port --scans 150 --out "$T/rec" --log "$T/drive.bag" --quiet >/dev/null 2>&1
expect "[ -s '$T/drive.bag' ]" "synth writes a bag of 150 scans"

"$R" log "$T/drive.bag" --scans /points --poses /odom --out "$T/r1" --quiet >/dev/null 2>&1 &
pid=$! k=0 n=0
while [ $k -lt 500 ]; do
  n=$(ls "$T"/.staged-r1-*/scans 2>/dev/null | wc -l)
  [ "$n" -ge 5 ] && break
  sleep 0.02; k=$((k + 1))
done
kill -9 $pid 2>/dev/null; wait $pid 2>/dev/null
expect "[ '$n' -ge 5 ]" "the killed run had written scans ($n) into its staged folder"
expect "[ ! -e '$T/r1' ]" "a killed revisit log leaves no folder at --out"
expect "! ls -d '$T'/r1.* >/dev/null 2>&1" "nor a second partial folder of its own beside it"
expect "ls -d '$T'/.staged-r1-* >/dev/null 2>&1" "the killed run's staged folder is hidden beside --out"
"$R" log "$T/drive.bag" --scans /points --poses /odom --out "$T/r1" --quiet >/dev/null 2>&1; rc=$?
expect "[ $rc -eq 0 ] && [ -f '$T/r1/recording.json' ] && [ -f '$T/r1/dropped.csv' ]" "the next run succeeds"
expect "! ls -d '$T'/.staged-r1-* >/dev/null 2>&1" "the next run removed the dead run's staged folder"
expect "[ \$(ls '$T/r1/scans' | wc -l) -eq 150 ]" "the recording holds every scan"
"$R" inspect "$T/r1" >/dev/null 2>&1; rc=$?
expect "[ $rc -eq 0 ]" "the recording from the log loads"
# a log that fails half-way (a truncated bag) leaves nothing either
head -c $(( $(stat -c %s "$T/drive.bag") / 2 )) "$T/drive.bag" > "$T/cut.bag"
"$R" log "$T/cut.bag" --scans /points --poses /odom --out "$T/r2" --quiet >/dev/null 2>&1; rc=$?
expect "[ $rc -eq 2 ] && [ ! -e '$T/r2' ] && ! ls -d '$T'/.staged-r2-* '$T'/r2.* >/dev/null 2>&1" \
  "a truncated bag exits 2 and leaves nothing behind"
done_tests
