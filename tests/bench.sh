#!/usr/bin/env bash
# bench.sh BUILD: run every $BUILD/tests/bench_* program; each prints one JSON
# line per figure on stdout (progress and notes go to stderr).  Figures are
# ratios against a reference measured in the same run, since machines are shared.
set -u
B=${1:-build}
root=$(cd "$(dirname "$0")/.." && pwd)
export REVISIT_BIN="$root/$B/revisit" REVISIT_BUILD="$root/$B" REVISIT_ROOT="$root"
export REVISIT_PLUGIN_PATH="$root/$B/plugins"
work=$(mktemp -d)
trap 'rm -rf "$work"' EXIT
status=0
for b in "$root/$B"/tests/bench_*; do
  [ -x "$b" ] || continue
  mkdir -p "$work/$(basename "$b")"
  ( cd "$work/$(basename "$b")" && "$b" ) || { echo "{\"bench\":\"$(basename "$b")\",\"error\":\"exit $?\"}"; status=1; }
done
for s in "$root"/tests/bench_*.sh; do
  [ -f "$s" ] || continue
  bash "$s" || { echo "{\"bench\":\"$(basename "$s")\",\"error\":\"exit $?\"}"; status=1; }
done
exit $status
