#!/usr/bin/env bash
# e2e_sweep_faults.sh: a sweep under failure: a full disk (ENOSPC injected in
# the atomic writer), its results folder deleted while it runs, and a
# crashing plugin under --isolate.  Each ends in a clear error, leaves no
# truncated file where a good one was expected, and a rerun finishes with
# the same results as a run that never failed.
. "$(dirname "$0")/lib_e2e.sh"
PY=/usr/bin/python3
R=$REVISIT_BIN
cd "$T" || exit 2
"$R" synth --scenario port --scans 60 --out rec --quiet > /dev/null 2>&1
expect "[ -f rec/recording.json ]" "a small recording is made"
cat > s.json <<'JSON'
{"format": "revisit-sweep-1", "name": "faults", "recordings": {"map": "rec"},
 "bootstrap": {"resamples": 20},
 "methods": [{"name": "range-height"}, {"name": "scan-context", "variants": [{"sectors": 30}]}],
 "seeds": 2,
 "conditions": [{"name": "clean"},
   {"name": "drop", "chain": "dropout:p=0.4", "on": "query"}]}
JSON
# Every result.json present parses, and no temporary file is left.
intact() {
  [ -z "$(find "$1" -name '*.tmp.*' 2>/dev/null)" ] || return 1
  for f in "$1"/cells/*/result.json; do
    [ -f "$f" ] || continue
    $PY -c 'import json,sys; json.load(open(sys.argv[1]))' "$f" || return 1
  done
}
same_queries() {  # every cell's queries.csv equal between two sweeps
  for c in "$1"/cells/*/; do
    n=$(basename "$c")
    cmp -s "$c/queries.csv" "$2/cells/$n/queries.csv" || return 1
  done
  [ "$(ls "$1/cells" | wc -l)" -eq "$(ls "$2/cells" | wc -l)" ]
}
timeout 300 "$R" sweep s.json --out clean --quiet > /dev/null 2>&1
expect "[ $(ls clean/cells/*/result.json | wc -l) -eq 6 ]" "the reference sweep finishes its 6 cells"

# A full disk: every file over 4 kB fails to commit, as with ENOSPC.
out=$(REVISIT_FAULT_WRITE_BYTES=4000 "$R" sweep s.json --out full --quiet 2>&1); rc=$?
expect "[ $rc -ne 0 ]" "a sweep on a full disk does not exit 0 (exit $rc)"
expect_in "$out" "No space left on device" "the full-disk error says so"
expect "intact full" "after the full disk no truncated or temporary file is left"
"$R" sweep s.json --out full --quiet --retry-failed > /dev/null 2>&1; rc=$?
expect "[ $rc -eq 0 ]" "the sweep resumes after the disk has room again (exit $rc)"
expect "same_queries clean full" "the resumed sweep gives the results of one that never failed"

# The results folder deleted under a running sweep (deleted once the first
# of its 20 cells is done).
sed 's|"seeds": 2|"seeds": 20|' s.json > long.json
"$R" sweep long.json --out gone --quiet --jobs 1 > gone.log 2>&1 &
pid=$!
for _ in $(seq 1 600); do [ -n "$(ls gone/cells 2>/dev/null | grep -v '^\.')" ] && break; sleep 0.05; done
rm -rf gone
wait $pid; rc=$?
expect "[ $rc -ne 0 ] && [ $rc -lt 128 ]" "a sweep whose folder is deleted stops with an error, not a crash (exit $rc)"
# Depending on the moment, a write into the vanished folder fails, or the
# final check finds finished cells gone; either way the message names it.
expect "grep -qE 'gone/cells.*(No such file|was the folder deleted)' gone.log" "the error names the vanished folder ($(head -c 300 gone.log))"

# A crashing plugin under --isolate: its cells fail, the others finish.
mkdir -p inc && cp "$REVISIT_ROOT/harness/revisit_plugin.h" inc/
cat > crash.c <<'SRC'
#include "revisit_plugin.h"
static int mk(const double *v, void **i, uint32_t *d, uint32_t *k, char *m, size_t l)
{ (void)v; (void)m; (void)l; *i = 0; *d = 2; *k = 0; return RV_OK; }
static int run(void *i, const struct rv_scan *s, float *d, float *k, char *m, size_t l)
{ (void)i; (void)k; (void)m; (void)l; if (s->index == 5) { volatile int *p = 0; *p = 1; }
  d[0] = (float)s->n; d[1] = 1; return RV_OK; }
static void rm(void *i) { (void)i; }
static const struct rv_method m = {RV_ABI_VERSION, sizeof m, "crasher", "1.0", "crashes on scan 5",
    0, 0, RV_DIST_L2, 0, mk, run, rm, 0, 0};
RV_EXPORT const struct rv_method *rv_method_entry(void) { return &m; }
SRC
cc -std=c11 -O1 -shared -fPIC -Iinc -o crash.so crash.c
sed 's|{"name": "range-height"}|{"name": "range-height"}, {"name": "./crash.so"}|' s.json > c.json
out=$(timeout 300 "$R" sweep c.json --out iso --isolate --jobs 2 --quiet 2>&1); rc=$?
expect "[ $rc -eq 2 ]" "a sweep with a crashing method exits 2 (got $rc)"
nfail=$(grep -l '"status":[[:space:]]*"failed"' iso/cells/*/result.json 2>/dev/null | wc -l)
nok=$(grep -l '"status":[[:space:]]*"ok"' iso/cells/*/result.json 2>/dev/null | wc -l)
expect "[ $nfail -eq 3 ] && [ $nok -eq 6 ]" "the crashing method's 3 cells are marked failed, the other 6 finish ($nfail failed, $nok ok)"
expect "grep -q 'on scan 5: the child died of signal 11' iso/cells/*/result.json" "the failed cell names the method's scan and signal"
done_tests
