# lib_e2e.sh: sourced by tests/e2e_*.sh.  expect CMD DESC / expect_in TEXT FRAG DESC,
# then done_tests prints "N passed, N failed".  $T is a fresh scratch folder.
set -u
: "${REVISIT_BIN:?run through tests/run.sh}"
T=$(mktemp -d)
trap 'rm -rf "$T"' EXIT
E2E_PASS=0; E2E_FAIL=0; E2E_SKIP=0
expect() {
  if eval "$1"; then E2E_PASS=$((E2E_PASS + 1)); else E2E_FAIL=$((E2E_FAIL + 1)); echo "FAIL: $2"; fi
}
expect_in() {
  case "$1" in *"$2"*) E2E_PASS=$((E2E_PASS + 1)) ;;
    *) E2E_FAIL=$((E2E_FAIL + 1)); echo "FAIL: $3 (lacks '$2' in: ${1:0:300})" ;; esac
}
# A check that cannot run here: counted and shown as skipped, never as passed.
skip_test() { E2E_SKIP=$((E2E_SKIP + 1)); echo "SKIP: $1"; }
done_tests() {
  if [ "$E2E_SKIP" -gt 0 ]; then echo "$E2E_PASS passed, $E2E_FAIL failed, $E2E_SKIP skipped"
  else echo "$E2E_PASS passed, $E2E_FAIL failed"; fi
  [ "$E2E_FAIL" -eq 0 ]
}
