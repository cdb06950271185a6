#!/usr/bin/env bash
# e2e_blas.sh: the OpenBLAS kernel choice (harness/base/blas.h).  A value of
# OPENBLAS_CORETYPE the user set is never overridden; a pre-AVX2 fallback on
# an AVX2 + FMA CPU is replaced by the Haswell kernel with one re-exec; and
# an evaluation gives the same results on either kernel.
. "$(dirname "$0")/lib_e2e.sh"
R=$REVISIT_BIN

v=$(OPENBLAS_CORETYPE=Prescott "$R" --version)
expect_in "$v" "kernel Prescott (set by OPENBLAS_CORETYPE)" "a kernel the user set is kept and named"
# The loop guard: with the marker set, no re-exec happens and the library's
# own pick is what runs.
lib=$(REVISIT_BLAS_FALLBACK=x "$R" --version | sed -n 's/.*kernel \([A-Za-z0-9_]*\) (the library.s choice).*/\1/p')
expect "[ -n '$lib' ]" "with the re-exec marker set, the library's own kernel runs"
v=$("$R" --version)
expect_in "$v" "BLAS: OpenBLAS" "--version names the BLAS library"
wide=0  # the CPU has AVX2 and FMA (flags of /proc/cpuinfo; common practice, no source)
grep -m1 '^flags' /proc/cpuinfo | grep -qw avx2 && grep -m1 '^flags' /proc/cpuinfo | grep -qw fma && wide=1
case "$lib" in
  Prescott|Core2|Penryn|Nehalem|Sandybridge|Atom|Unknown|Barcelona|Bulldozer|Piledriver|Steamroller) old=1 ;;
  *) old=0 ;;
esac
if [ "$wide" = 1 ] && [ "$old" = 1 ]; then
  expect_in "$v" "kernel Haswell (chosen by revisit; the library picked $lib)" \
    "a pre-AVX2 fallback on an AVX2 + FMA CPU is replaced by Haswell"
  # empty: not a user's choice (this library then detects on its own)
  user=0; OPENBLAS_CORETYPE= "$R" --version | grep -q 'set by OPENBLAS_CORETYPE' && user=1
  expect "[ $user = 0 ]" "an empty OPENBLAS_CORETYPE counts as not set"
else
  skip_test "the library picks $lib here and the CPU is wide=$wide: no kernel to replace"
  expect_in "$v" "kernel $lib (the library's choice)" "a good library pick is kept"
fi

# Threads (blas_one_thread, harness/base/blas.h): one OpenBLAS thread and
# no idle workers unless the user set a count.  Before, the workers the
# library starts at load spun in sched_yield through the first ~0.1 s of
# every command (1,000+ calls for an index of 40 scans); strace -c counts
# them (strace(1)).
expect_in "$("$R" --version)" ", 1 thread" "--version: one OpenBLAS thread when the user set none"
expect_in "$(OPENBLAS_NUM_THREADS=2 "$R" --version)" ", 2 threads" "--version: a thread count the user set is kept"
"$R" synth --scenario port --scans 40 --out "$T/rec" --quiet >/dev/null 2>&1
# LeakSanitizer cannot run under ptrace, so a sanitizer build traces with
# leak checks off.
yields() {
  env ASAN_OPTIONS=detect_leaks=0 "$@" strace -f -qq -c -e trace=sched_yield -o "$T/strace.txt" "$R" index \
    "$T/rec/scans" --poses "$T/rec/poses.csv" --channels 32 --out "$T/idx.json" >/dev/null 2>&1 || { echo fail; return; }
  awk '$NF == "sched_yield" { n = $4 } END { print n + 0 }' "$T/strace.txt"
}
n=$(yields)
if [ -n "${REVISIT_SANITIZED:-}" ]; then
  # The ASan runtime's start, before main, is long enough for the workers
  # the library starts at load to spin (some 70 calls); the plain build
  # checks that none are left once main has stopped them.
  skip_test "no sched_yield during index (a sanitizer build's slow start lets the workers spin before main: $n calls)"
else
  expect "[ '$n' = 0 ]" "no OpenBLAS worker spins in sched_yield during index (got $n calls)"
fi
n=$(yields OPENBLAS_NUM_THREADS=2)
expect "[ '$n' != fail ] && [ '$n' -gt 0 ]" "with OPENBLAS_NUM_THREADS=2 set by the user the workers stay (their $n sched_yield calls seen)"

# Results on either kernel.  Dense scores only rank candidates and final
# distances are recomputed in double, so queries.csv is byte-identical; sop
# calls LAPACK in describe, so its distances may move in the last bits
# (stated tolerance 1e-8, candidates identical).
for m in scan-context range-height m2dp sop; do
  OPENBLAS_CORETYPE=Prescott "$R" eval --map "$T/rec" --method $m --out "$T/old_$m" --bootstrap 200 --quiet >/dev/null 2>&1
  "$R" eval --map "$T/rec" --method $m --out "$T/new_$m" --bootstrap 200 --quiet >/dev/null 2>&1
  expect "[ -f '$T/old_$m/result.json' ] && [ -f '$T/new_$m/result.json' ]" "$m evaluates on both kernels"
  tol=0; [ $m = sop ] && tol=1e-8
  out=$("$PYTHON" - "$T/old_$m" "$T/new_$m" "$tol" <<'EOF'
import csv, json, sys
a, b, tol = sys.argv[1], sys.argv[2], float(sys.argv[3])
def rows(d):
    return [r for r in csv.reader(open(d + '/queries.csv')) if r and not r[0].startswith(('#', 'query'))]
ra, rb = rows(a), rows(b)
same = len(ra) == len(rb) and all(x[:1] + x[1::2] == y[:1] + y[1::2] for x, y in zip(ra, rb))   # query, candidates
dist = max([abs(float(u) - float(v)) for x, y in zip(ra, rb) for u, v in zip(x[2::2], y[2::2])] + [0])
ma, mb = json.load(open(a + '/result.json'))['metrics'], json.load(open(b + '/result.json'))['metrics']
sc = max(abs(ma[k][f] - mb[k][f]) for k in ma if isinstance(ma[k], dict)
         for f in ma[k] if ma[k][f] is not None and mb[k][f] is not None)
print('same' if same and dist <= tol and sc <= tol else 'differ: candidates %s, distances %g, scalars %g' % (same, dist, sc))
EOF
)
  expect_in "$out" "same" "$m gives the same candidates, distances and metrics on Prescott and the chosen kernel (tolerance $tol)"
  [ $m = sop ] || expect "cmp -s '$T/old_$m/queries.csv' '$T/new_$m/queries.csv'" "$m queries.csv is byte-identical on both kernels"
done
done_tests
