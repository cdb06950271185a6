#!/usr/bin/env bash
# e2e_hostile.sh: inputs that once gave a silent success.  A dry run of a
# sweep whose recording does not read prints its plan and then fails as the
# run would (it used to exit 0 with "scan counts unknown").
. "$(dirname "$0")/lib_e2e.sh"
R=$REVISIT_BIN
cd "$T" || exit 1
cat > s.json <<'JSON'
{"format": "revisit-sweep-1", "recordings": {"map": "nope"}, "methods": [{"name": "range-height"}],
 "conditions": [{"name": "c"}]}
JSON
out=$("$R" sweep s.json --out sw --dry-run 2>&1); rc=$?
expect "[ $rc -eq 2 ]" "a dry run on a recording that does not read exits 2 (got $rc)"
expect_in "$out" "range-height__c__s1" "the dry run still prints its cells"
expect_in "$out" "recordings.map: nope: cannot open" "and names the recording it could not read"
expect "[ ! -e sw ]" "a dry run writes nothing"
done_tests
