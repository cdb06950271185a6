#!/usr/bin/env bash
# e2e_sweep_command.sh: every sweep cell records the `revisit eval` command
# that reproduces it; run again by a shell into another folder, each gives
# the cell's metrics and curve to the last digit, and the report lists it.
. "$(dirname "$0")/lib_e2e.sh"
PY=/usr/bin/python3
cd "$T" || exit 1
"$REVISIT_BIN" synth --scenario port --scans 60 --out "my rec" --quiet >/dev/null 2>&1
expect "[ -f 'my rec/recording.json' ]" "a small synthetic recording"
cat > s.json <<'JSON'
{"format": "revisit-sweep-1", "name": "command e2e", "recordings": {"map": "my rec"},
 "protocol": {"radius_m": 4, "exclude_s": 20, "top_k": 10}, "bootstrap": {"resamples": 30, "seed": 3},
 "methods": [{"name": "range-height", "variants": [{"range_bins": 12}]}],
 "conditions": [{"name": "clean"},
   {"name": "mount", "chain": "sector:width=60,at=random+tilt:pitch=2", "on": "query", "seeds": [4]}]}
JSON
"$REVISIT_BIN" sweep s.json --out sw --quiet; rc=$?
expect "[ $rc -eq 0 ]" "the sweep runs"
# Each command: split as a POSIX shell would (Python shlex.split), --out moved
# to a fresh folder, run by bash; result.json metrics and curve compared.
$PY - "$REVISIT_BIN" <<'PYEOF' > check.out 2>&1
import glob, json, os, shlex, subprocess, sys
n = bad = 0
for p in sorted(glob.glob("sw/cells/*/result.json")):
    r = json.load(open(p))
    cmd = r.get("command")
    if not isinstance(cmd, str) or not cmd.startswith("revisit eval "):
        print("no command in", p); bad += 1; continue
    w = shlex.split(cmd)
    i = w.index("--out")
    if os.path.realpath(w[i + 1]) != os.path.realpath(os.path.dirname(p)):
        print("--out is not the cell folder:", w[i + 1]); bad += 1
    w[i + 1] = "again-%d" % n
    w[0] = sys.argv[1]
    subprocess.run(" ".join(shlex.quote(x) for x in w) + " --quiet", shell=True, executable="/bin/bash", check=True,
                   stdout=subprocess.DEVNULL)
    a = json.load(open("again-%d/result.json" % n))
    for k in ("metrics", "curve", "condition", "protocol"):
        if a.get(k) != r.get(k):
            print("%s differs for %s" % (k, p)); bad += 1
    n += 1
print("cells %d bad %d" % (n, bad))
PYEOF
res=$(tail -n 1 check.out)
expect "[ '$res' = 'cells 2 bad 0' ]" "each cell's command reproduces its metrics, curve, condition and protocol ($(tr '\n' ' ' < check.out))"
expect_in "$(cat sw/cells/*mount*/result.json)" "--map '" "a recording path with a space is quoted for the shell"
"$REVISIT_BIN" report sw --quiet --format md; rc=$?
expect "[ $rc -eq 0 ] && grep -q -- '--chain sector:width=60,at=random+tilt:pitch=2 --on query --seed 4' sw/report/report.md" "the report's reproducibility block lists the cell commands"
done_tests
