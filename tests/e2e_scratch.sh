#!/usr/bin/env bash
# e2e_scratch.sh: a C test that writes files of its own (test_report_data)
# keeps them in a temporary folder it removes: the folder it is started
# from is left as it was, with a file of the same name as one it writes
# untouched.
. "$(dirname "$0")/lib_e2e.sh"
cd "$T" || exit 1
echo "mine" > p.csv
out=$("$REVISIT_BUILD/tests/test_report_data" 2>&1); rc=$?
expect "[ $rc -eq 0 ]" "test_report_data passes ($(echo "$out" | tail -1))"
expect "[ \"\$(ls -A)\" = p.csv ] && [ \"\$(cat p.csv)\" = mine ]" "the folder it ran from holds only what was there ($(ls -A | head -5 | tr '\n' ' '))"
done_tests
