#!/usr/bin/env bash
# e2e_fuzz_corpus.sh: every parser's fuzz target replays its seed corpus and
# every crash ever found (tests/corpus/NAME/), without crashing, hanging or
# (in `make asan`) a sanitizer report.  One check per target.
. "$(dirname "$0")/lib_e2e.sh"
for src in "$REVISIT_ROOT"/tests/fuzz_*.c; do
  name=$(basename "$src" .c)
  d="$REVISIT_ROOT/tests/corpus/$name"
  expect "[ -n \"\$(ls '$d' 2>/dev/null)\" ]" "$name has a seed corpus in tests/corpus/$name"
  prog="$REVISIT_BUILD/replay/$name"
  if [ ! -x "$prog" ]; then expect "false" "$name replay program was built"; continue; fi
  out=$(timeout 120 "$prog" "$d" 2>&1); rc=$?
  n=$(ls "$d" | wc -l)
  expect "[ $rc -eq 0 ]" "$name handles all $n corpus inputs (exit $rc: ${out: -300})"
  expect_in "$out" "$n inputs" "$name replayed every corpus file"
done
done_tests
