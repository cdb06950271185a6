#!/usr/bin/env bash
# run.sh BUILD: run every test and sum the results.
#   $BUILD/tests/test_*       C tests (tests/test_*.c)
#   tests/xcheck_*.py         cross-checks against outside references (/usr/bin/python3)
#   tests/e2e_*.sh            end-to-end runs of the command
# Each prints "N passed, N failed" as its last line; a runner that crashes or
# prints no such line counts as one failure.  The last line of this script is
# the total: "N passed, N failed".
# The two longest runners (the sanitizer build and run, and valgrind) run
# beside the others in a second stream, so both cores are used; their lines
# are printed when they finish, and their counts are added to the total.
set -u
B=${1:-build}
root=$(cd "$(dirname "$0")/.." && pwd)
export REVISIT_BIN="$root/$B/revisit" REVISIT_BUILD="$root/$B" REVISIT_ROOT="$root"
export REVISIT_PLUGIN_PATH="$root/$B/plugins"
export PYTHON=/usr/bin/python3
tmp=$(mktemp -d)
trap 'rm -rf "$tmp"' EXIT
pass=0; fail=0; skip=0
run_one() {  # name, command...
  local name=$1; shift
  local log="$tmp/log.$BASHPID"
  local start=$SECONDS
  "$@" > "$log" 2>&1
  local rc=$?
  local line
  line=$(grep -E '^[0-9]+ passed, [0-9]+ failed' "$log" | tail -n 1)
  if [ -z "$line" ]; then
    echo "CRASH $name (exit $rc, no result line)"; tail -n 20 "$log"; fail=$((fail + 1)); return
  fi
  local p f
  p=$(echo "$line" | sed -E 's/^([0-9]+) passed.*/\1/')
  f=$(echo "$line" | sed -E 's/^[0-9]+ passed, ([0-9]+) failed.*/\1/')
  case "$line" in *skipped*) skip=$((skip + $(echo "$line" | sed -E 's/.*, ([0-9]+) skipped.*/\1/'))) ;; esac
  if [ "$rc" -ne 0 ] && [ "$f" -eq 0 ]; then f=1; echo "FAIL $name exited $rc"; fi
  pass=$((pass + p)); fail=$((fail + f))
  if [ "$f" -ne 0 ]; then echo "---- $name:"; grep -E 'FAIL|ERROR|Error|error' "$log" | head -n 30; fi
  printf '%-28s %s (%ds)\n' "$name" "$line" $((SECONDS - start))
}
cd "$root"
side="e2e_asan.sh e2e_valgrind.sh"
(
  for n in $side; do
    [ -f "tests/$n" ] && run_one "$n" bash "tests/$n"
  done
  echo "$pass $fail $skip" > "$tmp/side.counts"
) > "$tmp/side.out" 2>&1 &
side_pid=$!
for t in "$B"/tests/test_*; do
  [ -x "$t" ] || continue
  ( cd "$tmp" && mkdir -p "w_$(basename "$t")" )
  run_one "$(basename "$t")" env -C "$tmp/w_$(basename "$t")" "$root/$t"
done
for t in tests/xcheck_*.py; do
  [ -f "$t" ] || continue
  run_one "$(basename "$t")" /usr/bin/python3 "$t"
done
for t in tests/e2e_*.sh; do
  [ -f "$t" ] || continue
  case " $side " in *" $(basename "$t") "*) continue ;; esac
  run_one "$(basename "$t")" bash "$t"
done
wait "$side_pid"
cat "$tmp/side.out"
if [ -f "$tmp/side.counts" ]; then
  read -r sp sf ss < "$tmp/side.counts"
  pass=$((pass + sp)); fail=$((fail + sf)); skip=$((skip + ss))
else
  echo "CRASH the second stream ($side) left no counts"; fail=$((fail + 1))
fi
if [ "$skip" -gt 0 ]; then echo "$pass passed, $fail failed, $skip skipped"; else echo "$pass passed, $fail failed"; fi
[ "$fail" -eq 0 ]
