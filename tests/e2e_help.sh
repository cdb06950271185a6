#!/usr/bin/env bash
# e2e_help.sh: every command in the table answers --help with a usage line
# and exit 0; unknown commands and options exit 2 with a message.
. "$(dirname "$0")/lib_e2e.sh"
out=$("$REVISIT_BIN" --help); rc=$?
expect "[ $rc -eq 0 ]" "revisit --help exits 0"
expect_in "$out" "usage: revisit" "revisit --help prints usage"
expect_in "$out" "never a" "revisit --help carries the safety caution"
v=$("$REVISIT_BIN" --version)
expect_in "$v" "revisit " "--version prints the version"
for c in $("$REVISIT_BIN" --commands); do
  out=$("$REVISIT_BIN" "$c" --help 2>&1); rc=$?
  expect "[ $rc -eq 0 ]" "revisit $c --help exits 0"
  expect_in "$out" "usage: revisit $c" "revisit $c --help starts with its usage"
  expect_in "$out" "exit status:" "revisit $c --help ends with its exit statuses"
  "$REVISIT_BIN" "$c" --no-such-option >/dev/null 2>"$T/err"; rc=$?
  expect "[ $rc -eq 2 ]" "revisit $c rejects an unknown option with exit 2"
  expect_in "$(cat "$T/err")" "unknown option '--no-such-option'" "revisit $c names the unknown option"
done
# 1 means "a check or criterion failed", so only the commands that check say it.
for c in inspect check; do
  expect_in "$("$REVISIT_BIN" $c --help)" "1 a " "revisit $c --help says what exit 1 means"
done
for c in eval sweep index metrics report; do
  expect "! \"\$REVISIT_BIN\" $c --help | sed -n '/^exit status:/,\$p' | grep -q ' 1 '" "revisit $c --help lists no exit 1"
done
"$REVISIT_BIN" frobnicate 2>"$T/err"; rc=$?
expect "[ $rc -eq 2 ]" "an unknown command exits 2"
expect_in "$(cat "$T/err")" "unknown command 'frobnicate'" "an unknown command is named"
done_tests
