#!/usr/bin/env bash
# e2e_valgrind.sh: the core C tests and the parser corpus replays under
# valgrind memcheck: no invalid access, no use of uninitialised values, no
# leak ("definitely" or "indirectly lost").  One check per program; each
# program's own checks must pass under valgrind too.
. "$(dirname "$0")/lib_e2e.sh"
if [ -n "${REVISIT_SANITIZED:-}" ]; then
  # Under `make asan` every program carries the ASan runtime, which valgrind
  # cannot run; the memcheck pass belongs to the plain `make test` build.
  skip_test "valgrind memcheck (the programs of a sanitizer build cannot run under valgrind)"
  done_tests; exit $?
fi
if ! command -v valgrind >/dev/null; then
  expect "false" "valgrind is installed (make deps installs it)"; done_tests; exit 1
fi
VG="valgrind -q --error-exitcode=99 --suppressions=$REVISIT_ROOT/tests/valgrind.supp --leak-check=full --errors-for-leak-kinds=definite,indirect --show-leak-kinds=definite,indirect"
core="test_cloud test_pool test_pose_algebra test_scan_formats test_recording_manifest
      test_perturb_parse test_metrics_pr test_metrics_csv test_metrics_gt test_plan_load
      test_report_escape test_log_decoders"
for t in $core; do
  prog="$REVISIT_BUILD/tests/$t"
  if [ ! -x "$prog" ]; then expect "false" "$t exists"; continue; fi
  mkdir -p "$T/$t"
  out=$(cd "$T/$t" && $VG "$prog" 2>&1); rc=$?
  expect "[ $rc -eq 0 ]" "$t is clean under valgrind memcheck (exit $rc: $(echo "$out" | grep -m3 -E '==[0-9]+==|FAIL'))"
done
for d in "$REVISIT_ROOT"/tests/corpus/fuzz_*; do
  name=$(basename "$d")
  out=$($VG "$REVISIT_BUILD/replay/$name" "$d" 2>&1); rc=$?
  expect "[ $rc -eq 0 ]" "$name corpus replay is clean under valgrind (exit $rc: $(echo "$out" | grep -m3 '==[0-9]+=='))"
done
done_tests
