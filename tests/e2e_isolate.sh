#!/usr/bin/env bash
# e2e_isolate.sh: untrusted plugins under `revisit eval --isolate`.  Five
# plugins, built here from the public header alone, misbehave on scan 7:
# a segfault, an abort, an endless loop, an unbounded allocation, a call of
# exit(0).  Each must end in exit 2 with a message naming the method (and
# the scan when isolated), with no result written; a well-behaved plugin
# gives the same results isolated or not.  In process, an abort and an
# exit(0) must name the method too, and a sweep must not exit 0.
. "$(dirname "$0")/lib_e2e.sh"
R=$REVISIT_BIN
cd "$T" || exit 2
mkdir -p inc && cp "$REVISIT_ROOT/harness/revisit_plugin.h" inc/
cat > bad.c <<'SRC'
#include <stdio.h>
#include <stdlib.h>
#include <string.h>
#include <signal.h>
#include <unistd.h>
#include <sys/syscall.h>
#include "revisit_plugin.h"
static int mk(const double *v, void **inst, uint32_t *dim, uint32_t *kd, char *m, size_t l)
{ (void)v; (void)m; (void)l; *inst = NULL; *dim = 4; *kd = 0; return RV_OK; }
static int run(void *inst, const struct rv_scan *s, float *d, float *k, char *m, size_t l)
{
    (void)inst; (void)k; (void)m; (void)l;
    if (s->index == 7) {
#if defined(SEGV)
        volatile int *p = NULL; *p = 1;
#elif defined(ABRT)
        abort();
#elif defined(LOOP)
        for (volatile int x = 0; ; x++) {}
#elif defined(ALLOC)
        for (;;) { char *q = malloc(1 << 26); if (!q) return RV_ERR_NOMEM; memset(q, 1, 1 << 26); }
#elif defined(EXIT0)
        exit(0);
#elif defined(UEXIT0)
        _exit(0);
#elif defined(SYSEXIT0)
        syscall(SYS_exit_group, 0);
#elif defined(FORK)
        pid_t c = fork();
        if (c == 0) {  /* let go of the test's pipes, so only the group kill can end it early */
            for (int fd = 0; fd < 3; fd++) close(fd);
            execlp("sleep", "sleep", "300", (char *)NULL);
            _exit(1);
        }
        FILE *f = fopen("fork_so.pid", "w");
        if (f) { fprintf(f, "%d\n", (int)c); fclose(f); }
#endif
    }
    for (int b = 0; b < 4; b++) d[b] = (float)(s->n % (97 + b)) + (float)b;
    return RV_OK;
}
static void rm(void *inst) { (void)inst; }
static const struct rv_method m = {RV_ABI_VERSION, sizeof m, NAME, "1.0", "misbehaving test plugin",
    NULL, 0, RV_DIST_L2, 0, mk, run, rm, NULL, NULL};
RV_EXPORT const struct rv_method *rv_method_entry(void) { return &m; }
SRC
for v in GOOD SEGV ABRT LOOP ALLOC EXIT0 UEXIT0 SYSEXIT0 FORK; do
  n=$(echo "$v" | tr A-Z a-z)
  cc -std=c11 -O1 -D_DEFAULT_SOURCE -shared -fPIC -Iinc -D$v -DNAME="\"$n\"" -o "$n.so" bad.c
  expect "[ -f $n.so ]" "the $n plugin builds from the public header"
done
"$R" synth --scenario port --scans 40 --out rec --quiet > /dev/null 2>&1
expect "[ -f rec/recording.json ]" "a small recording is made"

run() { "$R" eval --map rec --method "./$1.so" --out "out_$1" --bootstrap 0 --quiet --isolate "${@:2}" 2>&1; }
out=$(run segv); rc=$?
expect "[ $rc -eq 2 ]" "a segfaulting plugin fails the eval with exit 2 (got $rc)"
expect_in "$out" "method 'segv' on scan 7: the child died of signal 11" "the segfault names method, scan and signal"
expect "[ ! -e out_segv/result.json ]" "no result is written after a crash"
out=$(run abrt); rc=$?
expect "[ $rc -eq 2 ]" "an aborting plugin fails with exit 2"
expect_in "$out" "method 'abrt' on scan 7: the child died of signal 6" "the abort names method, scan and signal"
out=$(run loop --time-limit 1); rc=$?
expect "[ $rc -eq 2 ]" "an endless loop is stopped with exit 2"
expect_in "$out" "method 'loop' on scan 7: no progress within 1 s (time-out)" "the hang names method, scan and time-out"
if [ -n "${REVISIT_SANITIZED:-}" ]; then
  skip_test "an unbounded allocation is stopped (ASan reserves the address space a limit needs)"
else
  out=$(run alloc --mem-limit 256); rc=$?
  expect "[ $rc -eq 2 ]" "an unbounded allocation is stopped with exit 2"
  expect_in "$out" "method 'alloc' on scan 7" "the allocation failure names method and scan"
fi
"$R" eval --map rec --method ./good.so --out plain --bootstrap 0 --quiet > /dev/null 2>&1
out=$(run good); rc=$?
expect "[ $rc -eq 0 ]" "a good plugin runs isolated (exit $rc: $out)"
cmp -s plain/queries.csv out_good/queries.csv
expect "[ $? -eq 0 ]" "isolated and in-process runs give identical per-query results"
out=$(run exit0); rc=$?
expect "[ $rc -eq 2 ] && [ ! -e out_exit0/result.json ]" "an isolated plugin calling exit(0) fails with exit 2 (got $rc)"
expect_in "$out" "method 'exit0' on scan 7: the child exited with status" "the exit names method and scan"

# In process: no child to watch, so the process itself must refuse to end as a success.
inproc() { "$R" eval --map rec --method "./$1.so" --out "in_$1" --bootstrap 0 --quiet 2>&1; }
out=$(inproc exit0); rc=$?
expect "[ $rc -eq 2 ]" "an in-process plugin calling exit(0) ends eval with exit 2, not 0 (got $rc)"
expect_in "$out" "revisit: method 'exit0' (./exit0.so) ended the process (exit) while it was running" \
  "the exit names the method"
expect "[ ! -e in_exit0/result.json ]" "no result is written"
out=$(inproc abrt); rc=$?
expect "[ $rc -ne 0 ]" "an in-process abort does not exit 0 (got $rc)"
expect_in "$out" "revisit: method 'abrt' (./abrt.so) crashed with a fatal signal (SIGABRT)" "the abort names the method"
cat > x.json <<'JSON'
{"format": "revisit-sweep-1", "recordings": {"map": "rec"}, "bootstrap": {"resamples": 0},
 "methods": [{"name": "./exit0.so"}], "conditions": [{"name": "clean"}]}
JSON
out=$("$R" sweep x.json --out sw_exit0 --quiet 2>&1); rc=$?
expect "[ $rc -eq 2 ]" "a sweep whose in-process plugin calls exit(0) exits 2 (got $rc)"
expect_in "$out" "method 'exit0' (./exit0.so) ended the process (exit)" "the sweep's exit names the method"
expect "[ -z \"\$(ls sw_exit0/cells 2>/dev/null | grep -v '^\\.part-')\" ]" "no cell counts as done"
# Past every handler: _exit(0) and the exit_group system call.  The process
# the caller started only waits for a worker and exits 0 only when the
# worker said it finished.
for v in uexit0 sysexit0; do
  out=$(inproc $v); rc=$?
  expect "[ $rc -eq 2 ] && [ ! -e in_$v/result.json ]" "an in-process plugin ending the process by $v ends eval with exit 2, not 0 (got $rc)"
  expect_in "$out" "revisit: eval ended with status 0 before it had finished: method code loaded into the process ended it" \
    "the $v exit is named as such"
  sed "s|exit0.so|$v.so|" x.json > x_$v.json
  out=$("$R" sweep x_$v.json --out sw_$v --quiet 2>&1); rc=$?
  expect "[ $rc -eq 2 ]" "a sweep whose in-process plugin ends the process by $v exits 2, not 0 (got $rc)"
  expect_in "$out" "revisit: sweep ended with status 0 before it had finished" "the sweep's $v exit is named"
  expect "[ -z \"\$(ls sw_$v/cells 2>/dev/null | grep -v '^\\.part-')\" ]" "no cell counts as done after $v"
done
out=$("$R" methods ./uexit0.so 2>&1); rc=$?
expect "[ $rc -eq 0 ]" "methods still lists a plugin that would end the process when describing (exit $rc)"
# Signals and kill -9 reach the worker: an in-process endless loop stopped
# by SIGTERM or SIGKILL leaves no process behind.
for sig in TERM KILL; do
  "$R" eval --map rec --method ./loop.so --out "in_loop_$sig" --bootstrap 0 --quiet > /dev/null 2>&1 & pid=$!
  for _ in $(seq 1 100); do pgrep -f "in_loop_$sig" | grep -vq "^$pid\$" && break; sleep 0.05; done
  kill -$sig $pid; wait $pid; rc=$?
  gone=0; for _ in $(seq 1 100); do pgrep -f "in_loop_$sig" > /dev/null || { gone=1; break; }; sleep 0.05; done
  expect "[ $rc -ne 0 ] && [ $gone -eq 1 ]" "SIG$sig to eval ends its worker too (exit $rc, worker gone: $gone)"
done
# External programs run under --time-limit and --mem-limit too, in eval and
# in sweep, and what they start ends with them.  The program answers every
# scan; on scan 3 it first sleeps 3 s (SLOW), or touches 1 GiB (HOG), or
# leaves a child process behind (FORK).
cat > ext.py <<'PY'
#!/usr/bin/python3
import os, struct, subprocess, sys, time
mode = sys.argv[1].split("=")[1] if len(sys.argv) > 1 else "none"
inp, out = sys.stdin.buffer, sys.stdout.buffer
sys.stderr = open(os.devnull, "w")
name = b"ext-" + mode.encode()
out.write(b"RVH1" + struct.pack("<III", 4, 0, len(name)) + name); out.flush()
while True:
    h = inp.read(20)
    if len(h) < 20:
        break
    idx, stamp, n = struct.unpack("<IdI", h[4:20])
    inp.read(16 * n)
    if idx == 3 and mode == "slow":
        time.sleep(3)
    if idx == 3 and mode == "hog":
        b = bytearray(1 << 30)
        for i in range(0, len(b), 4096):
            b[i] = 1
    if idx == 3 and mode == "fork":
        p = subprocess.Popen(["sleep", "300"], stdin=subprocess.DEVNULL, stdout=subprocess.DEVNULL,
                             stderr=subprocess.DEVNULL)
        open("fork.pid", "w").write(str(p.pid))
    out.write(b"RVD1" + struct.pack("<II4f", idx, 4, n % 97, n % 89, 1, 2)); out.flush()
PY
chmod +x ext.py
ext() { "$R" eval --map rec --method "./ext.py:mode=$1" --out "ext_$1" --bootstrap 0 --quiet "${@:2}" 2>&1; }
out=$(ext slow --time-limit 1); rc=$?
expect "[ $rc -eq 2 ] && [ ! -e ext_slow/result.json ]" "an external program slower than --time-limit fails the eval (got $rc)"
expect_in "$out" "external method 'ext-slow' (./ext.py): no answer for scan 3 within 1 s (time-out)" \
  "the time-out named is the one given"
out=$(ext hog --mem-limit 300); rc=$?
expect "[ $rc -eq 2 ]" "an external program over --mem-limit fails the eval (got $rc)"
expect_in "$out" "external method 'ext-hog' (./ext.py): closed its output for scan 3" "the failure names program and scan"
out=$(ext hog); rc=$?
expect "[ $rc -eq 0 ]" "the same program within the default limit finishes (exit $rc: $out)"
cat > xs.json <<'JSON'
{"format": "revisit-sweep-1", "recordings": {"map": "rec"}, "bootstrap": {"resamples": 0},
 "methods": [{"name": "./ext.py", "variants": [{"mode": "slow"}, {"mode": "hog"}, {"mode": "none"}]}],
 "conditions": [{"name": "clean"}]}
JSON
out=$("$R" sweep xs.json --out sw_lim --quiet --jobs 1 --time-limit 1 --mem-limit 300 2>&1); rc=$?
expect "[ $rc -eq 2 ]" "a sweep with --time-limit and --mem-limit fails the cells over them (got $rc)"
nfail=$(grep -l '"status":[[:space:]]*"failed"' sw_lim/cells/*/result.json 2>/dev/null | wc -l)
nok=$(grep -l '"status":[[:space:]]*"ok"' sw_lim/cells/*/result.json 2>/dev/null | wc -l)
expect "[ $nfail -eq 2 ] && [ $nok -eq 1 ]" "the slow and the hungry cells fail, the plain one finishes ($nfail failed, $nok ok)"
expect "grep -q 'within 1 s (time-out)' sw_lim/cells/*/result.json" "the sweep's time-out is the one given"
rm -f fork.pid
out=$(ext fork); rc=$?
expect "[ $rc -eq 0 ] && [ -s fork.pid ]" "a program that leaves a child behind finishes (exit $rc)"
alive() { [ -r "/proc/$1/stat" ] && ! awk '{ exit !($3 == "Z") }' "/proc/$1/stat" 2>/dev/null; }
pid=$(cat fork.pid 2>/dev/null || echo 0)
for i in $(seq 50); do alive "$pid" || break; sleep 0.1; done
expect "! alive $pid" "the child of an external program does not outlive the run"
[ "$pid" -gt 0 ] && kill -9 "$pid" 2>/dev/null
rm -f fork_so.pid
out=$(run fork); rc=$?
expect "[ $rc -eq 0 ] && [ -s fork_so.pid ]" "an isolated plugin that starts a process finishes (exit $rc: $out)"
pid=$(cat fork_so.pid 2>/dev/null || echo 0)
for i in $(seq 50); do alive "$pid" || break; sleep 0.1; done
expect "! alive $pid" "a process started by an isolated plugin does not outlive the describe step"
[ "$pid" -gt 0 ] && kill -9 "$pid" 2>/dev/null
done_tests
