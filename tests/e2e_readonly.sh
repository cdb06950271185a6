#!/usr/bin/env bash
# e2e_readonly.sh: `revisit check` on a sweep folder the process really
# cannot write.  Root may write anywhere, so under root the check runs as
# the unprivileged user nobody (setpriv); the folder is made read-only to
# everyone.  The verdicts printed and the exit code are those of a check
# on a writable copy, stderr says verdicts.json was not written, and the
# folder is left byte for byte as it was.
. "$(dirname "$0")/lib_e2e.sh"
cd "$T" || exit 1
chmod 755 "$T"

"$REVISIT_BIN" synth --scenario port --scans 40 --out rec --quiet >/dev/null 2>&1
expect "[ -f rec/recording.json ]" "a small synthetic recording"
cat > s.json <<'JSON'
{"format": "revisit-sweep-1", "name": "read-only", "recordings": {"map": "rec"},
 "protocol": {"radius_m": 4, "exclude_s": 20, "top_k": 10}, "bootstrap": {"resamples": 20, "seed": 3},
 "methods": [{"name": "range-height", "variants": [{"range_bins": 12}]}],
 "conditions": [{"name": "clean"}, {"name": "drop", "chain": "dropout:p=0.5", "seeds": [2]}],
 "criteria": [{"metric": "f1max", "condition": "drop", "target": "diff", "baseline": "clean",
               "comparator": ">=", "threshold": -1},
              {"metric": "f1max", "condition": "clean", "comparator": ">", "threshold": 2}]}
JSON
"$REVISIT_BIN" sweep s.json --out sw --quiet; rc=$?
expect "[ $rc -eq 0 ]" "the sweep runs"
cp -a sw sw-copy
"$REVISIT_BIN" check s.json sw-copy > want.out 2> want.err; want_rc=$?
expect "[ $want_rc -eq 1 ] && [ -f sw-copy/verdicts.json ]" "a writable copy: one criterion fails (exit 1), verdicts.json written"

listing() { (cd "$1" && find . -printf '%p %s %m\n' | sort && find . -type f -exec sha256sum {} + | sort); }
chmod -R a-w sw
chmod -R a+rX sw rec s.json
listing sw > before.txt
# As nobody under root; as ourselves otherwise (the folder is read-only to us then).
if [ "$(id -u)" -eq 0 ]; then
  as_user() { setpriv --reuid=65534 --regid=65534 --clear-groups -- "$@"; }
else
  as_user() { "$@"; }
fi
if as_user test -r sw/scenario.json && ! as_user test -w sw; then
  chmod 777 "$T"   # the JUnit file goes beside, where nobody may write
  as_user "$REVISIT_BIN" check s.json sw --junit "$T/verdicts.xml" > got.out 2> got.err; rc=$?
  chmod 755 "$T"
  expect "[ $rc -eq $want_rc ]" "a read-only folder: the exit code of the writable copy (got $rc: $(head -c 300 got.err))"
  expect "cmp -s want.out got.out" "a read-only folder: the same verdict lines ($(diff want.out got.out | head -5 | tr '\n' ' '))"
  expect_in "$(cat got.err)" "sw is not writable (Permission denied): verdicts.json not written; the verdicts above stand" \
    "stderr says why verdicts.json is missing"
  expect "[ ! -e sw/verdicts.json ]" "no verdicts.json appears"
  listing sw > after.txt
  expect "cmp -s before.txt after.txt" "the folder is left as it was ($(diff before.txt after.txt | head -3 | tr '\n' ' '))"
  expect "grep -q 'failures=\"1\"' verdicts.xml" "the JUnit file is written where it may be (one failure)"
else
  skip_test "no unprivileged user to run as (setpriv to uid 65534 failed, or the folder is writable to it)"
fi
chmod -R u+w sw
done_tests
