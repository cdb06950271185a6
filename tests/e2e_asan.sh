#!/usr/bin/env bash
# e2e_asan.sh: build the C tests, the plugins and the parser corpus replays
# with AddressSanitizer + UndefinedBehaviorSanitizer (folder build-asan-core)
# and run them; any sanitizer report fails the program.  One check per
# program.  The build compiles a copy of the sources taken when the test
# starts (modification times kept, and build-asan-core reached through a
# link at the same relative place, so the build stays incremental): editing
# the tree while the suite runs cannot break it half way.  Under `make
# asan` the whole suite already runs sanitized, so this script then only
# checks that it is running in that build.
. "$(dirname "$0")/lib_e2e.sh"
if [ -n "${REVISIT_SANITIZED:-}" ]; then
  expect "[ -x '$REVISIT_BIN' ]" "the sanitized build under test exists"; done_tests; exit $?
fi
AB=build-asan-core
SAN='-fsanitize=address,undefined -fno-sanitize-recover=undefined'
SRC=$T/src
mkdir -p "$SRC" "$REVISIT_ROOT/$AB" && ln -s "$REVISIT_ROOT/$AB" "$SRC/$AB" &&
  tar -C "$REVISIT_ROOT" --exclude='./build*' --exclude=./.git --exclude=./demo-out -cf - . | tar -C "$SRC" -xpf -
expect "[ -f '$SRC/Makefile' ] && [ -d '$SRC/harness' ] && [ -d '$SRC/$AB' ]" "a copy of the sources to build from"
cd "$SRC" || exit 2
progs=$(ls tests/test_*.c | sed 's|tests/\(.*\)\.c|'$AB'/tests/\1|')
replays=$(ls tests/fuzz_*.c | sed 's|tests/\(.*\)\.c|'$AB'/replay/\1|')
if ! make -s -j2 B=$AB CFLAGS='-O1 -g -fno-omit-frame-pointer' SAN="$SAN" \
       $AB/revisit plugins-$AB $progs $replays > "$T/build.log" 2>&1; then
  expect "false" "the sanitizer build compiles ($(grep -m3 error "$T/build.log"))"; done_tests; exit 1
fi
export ASAN_OPTIONS=detect_leaks=1:abort_on_error=0:exitcode=98
export UBSAN_OPTIONS=print_stacktrace=1:halt_on_error=1:exitcode=97
export REVISIT_BIN="$REVISIT_ROOT/$AB/revisit" REVISIT_BUILD="$REVISIT_ROOT/$AB"
export REVISIT_PLUGIN_PATH="$REVISIT_ROOT/$AB/plugins"
for p in $progs; do
  mkdir -p "$T/$(basename "$p")"
  out=$(cd "$T/$(basename "$p")" && timeout 300 "$REVISIT_ROOT/$p" 2>&1); rc=$?
  expect "[ $rc -eq 0 ]" "$(basename "$p") passes under ASan+UBSan (exit $rc: $(echo "$out" | grep -m3 -E 'ERROR|runtime error|FAIL'))"
done
for r in $replays; do
  name=$(basename "$r")
  out=$("$REVISIT_ROOT/$r" "$SRC/tests/corpus/$name" 2>&1); rc=$?
  expect "[ $rc -eq 0 ]" "$name corpus replay is clean under ASan+UBSan (exit $rc: $(echo "$out" | grep -m3 -E 'ERROR|runtime error'))"
done
done_tests
