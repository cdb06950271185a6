#!/usr/bin/env bash
# e2e_eval.sh: `revisit methods` and `revisit eval` from the command line on a
# small synthetic port recording: a first evaluation, the Python example with
# a chain, and the messages for bad options.
. "$(dirname "$0")/lib_e2e.sh"
R=$REVISIT_BIN
"$R" synth --scenario port --scans 40 --out "$T/rec" --quiet >/dev/null 2>"$T/synth.err"
expect "[ -f '$T/rec/recording.json' ]" "synth writes a recording for the eval run"

out=$("$R" methods 2>&1); rc=$?
expect "[ $rc -eq 0 ]" "revisit methods exits 0"
expect_in "$out" "scan-context" "methods lists scan-context"
expect_in "$out" "rings=20 sectors=60 max_range=80" "methods shows scan-context's defaults"
expect_in "$out" "range-height" "methods lists range-height"
out=$("$R" methods scan-context 2>&1)
expect_in "$out" "custom (the method's own), key prefilter" "methods NAME shows the distance"
expect_in "$out" "sectors        default 60" "methods NAME shows each setting's default"
out=$("$R" methods a b 2>&1); rc=$?
expect "[ $rc -eq 2 ]" "methods with two names exits 2"
expect_in "$out" "expected at most one NAME, got 2" "methods names the extra argument"
out=$("$R" methods no-such 2>&1); rc=$?
expect "[ $rc -eq 2 ]" "an unknown method exits 2"
expect_in "$out" "method 'no-such' not found" "the unknown method is named"

out=$("$R" eval --map "$T/rec" --method range-height --out "$T/o1" --bootstrap 100 --quiet 2>&1); rc=$?
expect "[ $rc -eq 0 ]" "a first evaluation exits 0"
expect_in "$out" "F1max" "eval prints the short table"
expect "[ -f '$T/o1/result.json' ] && [ -f '$T/o1/queries.csv' ] && [ -f '$T/o1/poses.csv' ] && [ -f '$T/o1/matrix.csv' ]" \
  "eval writes the four files of a results folder"
expect_in "$(cat "$T/o1/result.json")" "\"command\":	\"revisit eval --map" "result.json records the command"

py="$REVISIT_ROOT/harness/external/range_height.py"
out=$("$R" eval --map "$T/rec" --method "$py:range_bins=8" --chain "dropout:p=0.3" --out "$T/o2" --bootstrap 0 --quiet 2>&1); rc=$?
expect "[ $rc -eq 0 ]" "the Python example runs with a chain from the command line"
expect_in "$(cat "$T/o2/result.json")" "\"label\":	\"range-height-py:range_bins=8\"" "the external method's label carries its settings"

out=$("$R" eval --method range-height --out "$T/o3" 2>&1); rc=$?
expect "[ $rc -eq 2 ]" "eval without --map exits 2"
expect_in "$out" "--map, --method and --out are required" "the missing options are named"
out=$("$R" eval --map "$T/rec" --method range-height --out "$T/o3" --bootstrap -5 2>&1)
expect_in "$out" "--bootstrap expects 0 to 100000 resamples, got -5" "a bad resample count is named"
out=$("$R" eval --map "$T/rec" --method range-height --out "$T/o3" --prefilter 0 2>&1)
expect_in "$out" "option '--prefilter' expects a whole number 1 or more, got '0'" "a bad prefilter is named"
out=$("$R" eval --map "$T/rec" --method range-height --out "$T/o3" --exclude-scans -1 2>&1); rc=$?
expect "[ $rc -eq 2 ]" "a negative --exclude-scans is refused"
expect_in "$out" "--exclude-scans expects a whole number 0 or more, got -1" "the bad count is named"
out=$("$R" eval --map "$T/rec" --method range-height --out "$T/o3" stray 2>&1)
expect_in "$out" "unexpected argument 'stray'" "a stray argument is named"
out=$("$R" eval --map "$T/rec" --method range-height:bins=3 --out "$T/o3" 2>&1)
expect_in "$out" "has no setting 'bins', expected one of: range_bins, height_bins" "a bad setting lists the keys"
out=$("$R" eval --map "$T/rec" --method range-height --chain yaw --on sideways --out "$T/o3" 2>&1); rc=$?
expect "[ $rc -eq 2 ]" "a bad --on exits 2"
expect_in "$out" "sideways" "the bad --on value is named"
expect "[ ! -e '$T/o3/result.json' ]" "a refused run writes no result.json"

# A results folder holds one run: an eval that fails part-way through its
# files (here the disk fills at matrix.csv, after queries.csv and poses.csv)
# leaves the earlier results as they were, never a mix of two runs.
"$R" eval --map "$T/rec" --method scan-context --bootstrap 0 --quiet --out "$T/one" > /dev/null 2>&1
cp -r "$T/one" "$T/one_copy"
out=$(REVISIT_FAULT_WRITE_BYTES=12000 "$R" eval --map "$T/rec" --method range-height --bootstrap 0 --quiet \
      --out "$T/one" --replace 2>&1); rc=$?
expect "[ $rc -eq 2 ]" "an eval whose writes fail exits 2"
expect_in "$out" "$T/one/matrix.csv: write failed" "the message names the file under the folder given"
expect "diff -r '$T/one' '$T/one_copy' > /dev/null" "the earlier results folder is left whole, file for file"
expect "[ -z \"\$(ls -d '$T'/one.* 2>/dev/null)\" ]" "no temporary folder is left beside it"
"$R" eval --map "$T/rec" --method range-height --bootstrap 0 --quiet --out "$T/one" --replace > /dev/null 2>&1
expect "grep -q '\"range-height\"' '$T/one/result.json' && ! cmp -s '$T/one/queries.csv' '$T/one_copy/queries.csv'" \
  "a --replace run that succeeds replaces the folder whole"
done_tests
