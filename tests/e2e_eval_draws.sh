#!/usr/bin/env bash
# e2e_eval_draws.sh: in reloc mode with the chain on both sides, map scan i
# and query scan i get their own per-scan draws, while a per-recording draw
# (draw=recording) is shared.  With one recording as both map and query,
# shared draws would make every query identical to its map twin (top-1
# distance exactly 0).
. "$(dirname "$0")/lib_e2e.sh"
R=$REVISIT_BIN
cd "$T" || exit 2
"$R" synth --scenario port --scans 40 --out rec --quiet > /dev/null 2>&1
expect "[ -f rec/recording.json ]" "a small recording is made"
zeros() { awk -F, '!/^#/ && $1 != "query" && NF >= 3 { n++; if ($3 == 0) z++ } END { printf "%d/%d", z, n }' "$1"; }
"$R" eval --map rec --query rec --method range-height --chain dropout:p=0.5 --on both \
  --bootstrap 0 --out scan --quiet > /dev/null 2>&1
expect "[ -f scan/queries.csv ]" "reloc eval with a per-scan chain on both sides runs"
z=$(zeros scan/queries.csv)
expect "[ '${z%%/*}' -eq 0 ]" "per-scan draws differ between map and query: no top-1 distance is 0 (zeros $z)"
"$R" eval --map rec --query rec --method range-height --chain dropout:p=0.5,draw=recording --on both \
  --bootstrap 0 --out rec_draw --quiet > /dev/null 2>&1
z=$(zeros rec_draw/queries.csv)
expect "[ '${z%%/*}' -gt 0 ]" "a per-recording draw is shared by map and query (zeros $z)"
done_tests
