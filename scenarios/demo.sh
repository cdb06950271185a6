#!/usr/bin/env bash
# demo.sh BUILD: the demo sweep on the synthetic port district (what `make
# demo` runs): make the recording once, run scenarios/demo.json, judge its
# criteria, write the report, and say where it is and how long it took.
set -u
B=${1:-build}
root=$(cd "$(dirname "$0")/.." && pwd)
cd "$root" || exit 2
bin="$root/$B/revisit"
out="$root/demo-out"
scans=${REVISIT_DEMO_SCANS:-300}
export REVISIT_PLUGIN_PATH="$root/$B/plugins${REVISIT_PLUGIN_PATH:+:$REVISIT_PLUGIN_PATH}"
[ -x "$bin" ] || { echo "demo: $bin not built (run make B=$B)" >&2; exit 2; }
start=$SECONDS

# 1. The recording, cached: recording.json is written last, so its presence
#    means the folder is complete.
if [ -f "$out/rec/recording.json" ]; then
  echo "demo: reusing the port recording in $out/rec"
else
  echo "demo: making the port recording ($scans scans)"
  rm -rf "$out/rec"
  "$bin" synth --scenario port --scans "$scans" --out "$out/rec" || exit 2
fi

# 2. The sweep; a rerun skips the cells already done.  A sweep folder of an
#    older demo.json would be refused, so it is cleared first.
if [ -f "$out/sweep/scenario.json" ] && ! cmp -s "$out/sweep/scenario.json" scenarios/demo.json; then
  echo "demo: scenarios/demo.json changed since the last run; starting the sweep afresh"
  rm -rf "$out/sweep" "$out/report"
fi
methods=$("$bin" methods 2>/dev/null)   # once: each call loads every plugin
for m in scan-context range-height m2dp sop; do
  grep -q "^$m\b" <<<"$methods" || echo "demo: method '$m' not found; its cells will fail" >&2
done
"$bin" sweep scenarios/demo.json --out "$out/sweep"
rc=$?
[ $rc -eq 130 ] && exit 130
[ $rc -ne 0 ] && echo "demo: the sweep reported failed cells (see $out/sweep/summary.csv)" >&2

# 3. The acceptance verdicts (exit 1 = a criterion failed, which is a result).
"$bin" check scenarios/demo.json "$out/sweep" --junit "$out/sweep/verdicts.xml"
crc=$?
[ $crc -eq 2 ] && echo "demo: the check could not judge every criterion" >&2

# 4. The report, when the report command is there.
if "$bin" --commands | grep -qx report; then
  "$bin" report "$out/sweep" --out "$out/report" --replace || echo "demo: the report failed" >&2
  echo "demo: report in $out/report/report.html (and report.md)"
fi
echo "demo: sweep in $out/sweep, verdicts in $out/sweep/verdicts.json and verdicts.xml"
echo "demo: done in $((SECONDS - start)) s"
[ $crc -eq 2 ] && exit 2
exit 0
