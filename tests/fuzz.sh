#!/usr/bin/env bash
# fuzz.sh FUZZBUILD SECONDS: link each tests/fuzz_*.c target with libFuzzer
# (objects already built by `make fuzz`) and run it for SECONDS on a copy of
# its seed corpus tests/corpus/NAME/.  Crashing inputs are copied into
# tests/corpus/NAME/ as crash-*: commit them, so the replay test keeps them.
set -u
FB=$1; SECS=$2
root=$(cd "$(dirname "$0")/.." && pwd)
cd "$root"
# the libraries in the Makefile's link order (libcli, then LAYERS)
LIBS="$FB/libcli.a $FB/libreports.a $FB/librun.a $FB/libsynth.a $FB/libresults.a $FB/libplan.a $FB/libperturb.a $FB/libmetrics.a $FB/libio.a $FB/libbase.a"
LDLIBS="$(pkg-config --libs libcjson 2>/dev/null || echo -lcjson) -lopenblas -llapacke -llzf -lbz2 -llz4 -lzstd -ldl -lpthread -lm"
mkdir -p "$FB/fuzz"
found=0
for src in tests/fuzz_*.c; do
  name=$(basename "$src" .c)
  clang -fsanitize=fuzzer,address,undefined -o "$FB/fuzz/$name" "$FB/obj/tests/$name.o" -Wl,--start-group $LIBS -Wl,--end-group $LDLIBS || exit 2
  work=$(mktemp -d)
  cp -r "tests/corpus/$name/." "$work/" 2>/dev/null || true
  rm -rf "$FB/artifacts/$name"   # only what this run finds counts
  mkdir -p "$FB/artifacts/$name"
  echo "fuzz: $name for ${SECS}s" >&2
  "$FB/fuzz/$name" -max_total_time="$SECS" -timeout=10 -rss_limit_mb=2048 \
      -artifact_prefix="$FB/artifacts/$name/" "$work" > "$FB/artifacts/$name.log" 2>&1
  rc=$?
  tail -n 1 "$FB/artifacts/$name.log" >&2
  for c in "$FB/artifacts/$name"/crash-* "$FB/artifacts/$name"/leak-* "$FB/artifacts/$name"/timeout-*; do
    [ -f "$c" ] || continue
    found=$((found + 1))
    mkdir -p "tests/corpus/$name"
    cp "$c" "tests/corpus/$name/"
    echo "fuzz: $name: $(basename "$c") saved in tests/corpus/$name/" >&2
  done
  rm -rf "$work"
  [ $rc -eq 0 ] || echo "fuzz: $name exited $rc (see $FB/artifacts/$name.log)" >&2
done
echo "fuzz: $found crashing inputs found" >&2
[ $found -eq 0 ]
