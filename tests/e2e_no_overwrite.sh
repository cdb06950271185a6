#!/usr/bin/env bash
# e2e_no_overwrite.sh: eval, perturb and report refuse an --out folder that
# already holds files, before doing any work, and write into it with --replace.
. "$(dirname "$0")/lib_e2e.sh"
R=$REVISIT_BIN
"$R" synth --scenario port --scans 30 --out "$T/rec" --quiet >/dev/null 2>"$T/synth.err"
expect "[ -f '$T/rec/recording.json' ]" "synth writes a recording"

# eval: an empty folder is fine, a folder with a file is refused and left as it was
mkdir "$T/empty"
"$R" eval --map "$T/rec" --method range-height --out "$T/empty" --bootstrap 0 --quiet >/dev/null 2>&1; rc=$?
expect "[ $rc -eq 0 ] && [ -f '$T/empty/result.json' ]" "eval writes into an existing empty folder"
mkdir "$T/busy" && echo keep > "$T/busy/notes.txt"
out=$("$R" eval --map "$T/rec" --method range-height --out "$T/busy" --bootstrap 0 --quiet 2>&1); rc=$?
expect "[ $rc -eq 2 ]" "eval into a folder that holds a file exits 2"
expect_in "$out" "revisit: eval: --out $T/busy already holds 1 entry (first 'notes.txt')" "the message names the folder and what is in it"
expect_in "$out" "give --replace" "the message names the option that allows it"
expect "[ ! -e '$T/busy/result.json' ] && [ \"\$(cat '$T/busy/notes.txt')\" = keep ]" "the refused folder is untouched"
out=$("$R" eval --map "$T/rec" --method range-height --out "$T/empty" --bootstrap 0 --quiet 2>&1); rc=$?
expect "[ $rc -eq 2 ]" "a second eval into the same results folder is refused"
"$R" eval --map "$T/rec" --method range-height --out "$T/empty" --bootstrap 0 --quiet --replace >/dev/null 2>&1; rc=$?
expect "[ $rc -eq 0 ] && [ -f '$T/empty/result.json' ]" "eval --replace writes over an earlier results folder"
echo x > "$T/afile"
out=$("$R" eval --map "$T/rec" --method range-height --out "$T/afile" --bootstrap 0 --quiet --replace 2>&1); rc=$?
expect "[ $rc -eq 2 ]" "an --out that is a file is refused even with --replace"
expect_in "$out" "exists and is not a folder" "the file --out is named as not a folder"

# perturb
"$R" perturb --in "$T/rec" --out "$T/p1" --chain dropout:p=0.5 --quiet >/dev/null 2>&1; rc=$?
expect "[ $rc -eq 0 ] && [ -f '$T/p1/recording.json' ]" "perturb writes a new folder"
before=$(ls -l --time-style=+%s.%N "$T/p1/recording.json")
out=$("$R" perturb --in "$T/rec" --out "$T/p1" --chain dropout:p=0.2 --quiet 2>&1); rc=$?
expect "[ $rc -eq 2 ]" "perturb into a written recording exits 2"
expect_in "$out" "revisit: perturb: --out $T/p1 already holds" "perturb names the folder"
expect "[ \"\$(ls -l --time-style=+%s.%N '$T/p1/recording.json')\" = \"$before\" ]" "the refused recording is untouched"
expect_in "$(cat "$T/p1/recording.json")" "p=0.5" "the earlier chain is still recorded"
"$R" perturb --in "$T/rec" --out "$T/p1" --chain dropout:p=0.2 --quiet --replace >/dev/null 2>&1; rc=$?
expect "[ $rc -eq 0 ]" "perturb --replace writes over it"
expect_in "$(cat "$T/p1/recording.json")" "p=0.2" "the new chain is recorded"

# report: explicit --out and the default DIR/report
"$R" report "$T/empty" --format md --quiet >/dev/null 2>&1; rc=$?
expect "[ $rc -eq 0 ] && [ -f '$T/empty/report/report.md' ]" "report writes DIR/report"
out=$("$R" report "$T/empty" --format md --quiet 2>&1); rc=$?
expect "[ $rc -eq 2 ]" "a second report into the default folder is refused"
expect_in "$out" "revisit: report: --out $T/empty/report already holds" "report names the default folder"
"$R" report "$T/empty" --format md --quiet --replace >/dev/null 2>&1; rc=$?
expect "[ $rc -eq 0 ]" "report --replace writes over it"
out=$("$R" report "$T/empty" --out "$T/busy" --format md --quiet 2>&1); rc=$?
expect "[ $rc -eq 2 ] && [ ! -e '$T/busy/report.md' ]" "report refuses a busy --out and writes nothing there"
done_tests
