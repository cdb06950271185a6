#!/usr/bin/env bash
# bench.sh BUILD: run every $BUILD/tests/bench_* program; each prints one JSON
# line per figure on stdout (progress and notes go to stderr).  Figures are
# ratios against a reference measured in the same run, since machines are shared.
# Every line names the OpenBLAS kernel it ran on ("blas"): the one `revisit
# --version` reports (the user's OPENBLAS_CORETYPE, or revisit's own choice),
# exported so that the bench programs and the Python peer run the same one.
set -u
B=${1:-build}
root=$(cd "$(dirname "$0")/.." && pwd)
export REVISIT_BIN="$root/$B/revisit" REVISIT_BUILD="$root/$B" REVISIT_ROOT="$root"
export REVISIT_PLUGIN_PATH="$root/$B/plugins"
kernel=$("$REVISIT_BIN" --version | sed -n 's/^BLAS: .*kernel \([A-Za-z0-9_]*\) .*/\1/p')
[ -n "$kernel" ] || { echo '{"bench":"blas","error":"revisit --version names no BLAS kernel"}'; exit 1; }
export OPENBLAS_CORETYPE=$kernel
name_kernel() { sed -u "s/}\$/,\"blas\":\"$kernel\"}/"; }
work=$(mktemp -d)
trap 'rm -rf "$work"' EXIT
status=0
for b in "$root/$B"/tests/bench_*; do
  [ -x "$b" ] || continue
  mkdir -p "$work/$(basename "$b")"
  ( cd "$work/$(basename "$b")" && "$b" ) | name_kernel
  [ "${PIPESTATUS[0]}" -eq 0 ] || { echo "{\"bench\":\"$(basename "$b")\",\"error\":\"failed\"}"; status=1; }
done
for s in "$root"/tests/bench_*.sh; do
  [ -f "$s" ] || continue
  bash "$s" | name_kernel
  [ "${PIPESTATUS[0]}" -eq 0 ] || { echo "{\"bench\":\"$(basename "$s")\",\"error\":\"failed\"}"; status=1; }
done
exit $status
