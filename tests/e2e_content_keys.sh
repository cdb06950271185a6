#!/usr/bin/env bash
# e2e_content_keys.sh: the descriptor cache and finished sweep cells are tied
# to what a recording and a method hold, not to their paths.  A recording
# made again at the same path (another seed) or a plugin rebuilt under the
# same name and version must not be served from the cache, and a resumed
# sweep must run again the cells made from the old content; each run says
# so, and its results equal a fresh run's.
. "$(dirname "$0")/lib_e2e.sh"
R=$REVISIT_BIN
cd "$T" || exit 2
"$R" synth --scenario port --scans 40 --seed 1 --out rec --quiet > /dev/null 2>&1
"$R" synth --scenario port --scans 40 --seed 2 --out rec_b --quiet > /dev/null 2>&1
expect "[ -f rec/recording.json ] && [ -f rec_b/recording.json ]" "two recordings of the same district, two seeds"
ev() { "$R" eval --map rec --method scan-context --bootstrap 0 --quiet --out "$@" 2>&1; }

out=$(ev first --cache cache); rc=$?
expect "[ $rc -eq 0 ] && [ -f rec/recording.json.digest ]" "eval runs and keeps the scan hashes beside the manifest"
out=$(ev again --cache cache)
expect_in "$out" "descriptor sets from the cache: 1" "an unchanged recording is served from the cache"
rm -rf rec && mv rec_b rec
out=$(ev remade --cache cache); rc=$?
expect "[ $rc -eq 0 ]" "eval runs on the recording made again at the same path"
expect_in "$out" "descriptor set(s) made from another content of the recording or another build of the method: described again" \
  "the stale cache entry is named and not used"
expect_in "$out" "descriptor sets from the cache: 0" "nothing stale is read from the cache"
ev fresh > /dev/null
expect "cmp -s remade/queries.csv fresh/queries.csv" "the cached run on the new content equals a fresh run"
expect "! cmp -s first/queries.csv fresh/queries.csv" "and the two recordings do give other results"

# Scans rewritten in place at the same size, their mtimes set back: the
# size and mtime match the stored line, the ctime does not.
stamp() { for f in rec/scans/0000[0-1]?.pcd; do stat -c '%n %s %.9Y' "$f"; done; }
stamp > stamp.before
/usr/bin/python3 - <<'PYEOF'
import glob
for p in sorted(glob.glob("rec/scans/0000[0-1]?.pcd")):
    with open(p, "r+b") as f:
        body = f.read().index(b"DATA binary\n") + len(b"DATA binary\n")
        f.seek(0, 2); n = f.tell() - body
        f.seek(body); f.write(bytes(n))   # every point at the origin, same size
PYEOF
while read -r f size mt; do touch -d "@$mt" "$f"; done < stamp.before
stamp > stamp.after
expect "cmp -s stamp.before stamp.after" "the rewritten scans keep their sizes and mtimes to the nanosecond"
out=$(ev rewritten --cache cache); rc=$?
expect "[ $rc -eq 0 ]" "eval runs on the rewritten scans"
expect_in "$out" "described again" "scans rewritten with their size and mtime kept are hashed again, not served from the cache"
ev rewritten_fresh > /dev/null
expect "cmp -s rewritten/queries.csv rewritten_fresh/queries.csv" "the cached run on the rewritten scans equals a fresh run"
expect "! cmp -s fresh/queries.csv rewritten_fresh/queries.csv" "and the rewrite does change the results"

# A plugin rebuilt under the same name and version.
mkdir -p inc && cp "$REVISIT_ROOT/harness/revisit_plugin.h" inc/
cat > p.c <<'SRC'
#include "revisit_plugin.h"
static int mk(const double *v, void **i, uint32_t *d, uint32_t *k, char *m, size_t l)
{ (void)v; (void)m; (void)l; *i = 0; *d = 2; *k = 0; return RV_OK; }
static int run(void *i, const struct rv_scan *s, float *d, float *k, char *m, size_t l)
{ (void)i; (void)k; (void)m; (void)l; d[0] = (float)(s->n % BINS); d[1] = (float)(s->index % 7); return RV_OK; }
static void rm(void *i) { (void)i; }
static const struct rv_method m = {RV_ABI_VERSION, sizeof m, "rebuilt", "1.0", "rebuilt test plugin",
    0, 0, RV_DIST_L2, 0, mk, run, rm, 0, 0};
RV_EXPORT const struct rv_method *rv_method_entry(void) { return &m; }
SRC
cc -std=c11 -O1 -shared -fPIC -Iinc -DBINS=97 -o rebuilt.so p.c
pe() { "$R" eval --map rec --method ./rebuilt.so --bootstrap 0 --quiet --out "$@" 2>&1; }
pe p1 --cache pcache > /dev/null
cc -std=c11 -O1 -shared -fPIC -Iinc -DBINS=13 -o rebuilt.so p.c
out=$(pe p2 --cache pcache)
expect_in "$out" "described again" "a rebuilt plugin of the same name and version is not served from the cache"
pe p3 > /dev/null
expect "cmp -s p2/queries.csv p3/queries.csv" "the run after the rebuild equals a fresh run"

# A sweep resumed after its recording changed.
cat > s.json <<'JSON'
{"format": "revisit-sweep-1", "recordings": {"map": "rec"}, "bootstrap": {"resamples": 0},
 "methods": [{"name": "scan-context"}],
 "conditions": [{"name": "clean"}, {"name": "drop", "chain": "dropout:p=0.3"}]}
JSON
"$R" sweep s.json --out sw --quiet > /dev/null 2>&1
expect "[ $(ls sw/cells/*/result.json 2>/dev/null | wc -l) -eq 2 ]" "the sweep finishes its 2 cells"
out=$("$R" sweep s.json --out sw 2>&1)
expect_in "$out" "0 run now, 2 done before" "a rerun on the same content skips the finished cells"
"$R" synth --scenario port --scans 40 --seed 3 --out rec_c --quiet > /dev/null 2>&1
rm -rf rec && mv rec_c rec
out=$("$R" sweep s.json --out sw 2>&1); rc=$?
expect "[ $rc -eq 0 ]" "the resumed sweep on the new content finishes (exit $rc)"
expect_in "$out" "2 finished cells were made from another content of the recordings" "it says which cells run again"
"$R" sweep s.json --out sw_fresh --quiet > /dev/null 2>&1
same=1
for c in sw_fresh/cells/*/; do cmp -s "$c/queries.csv" "sw/cells/$(basename "$c")/queries.csv" || same=0; done
expect "[ $same -eq 1 ]" "every cell of the resumed sweep equals the fresh sweep's"

# A chain that changes no cloud (sector:width=0, dropout:p=0) is the
# unperturbed set: its eval is served from the clean run's cache entry and
# gives the clean run's queries; any other width describes again.
ev id_clean --cache idc > /dev/null
for pair in "sector:width=0|sector:width=0" "dropout:p=0+sector:width=0,at=random|dropout:p=0+sector:width=0"; do
  ch=${pair%|*} norm=${pair#*|}
  out=$(ev "id_$ch" --cache idc --chain "$ch"); rc=$?
  expect "[ $rc -eq 0 ]" "eval with --chain $ch runs"
  expect_in "$out" "descriptor sets from the cache: 1" "--chain $ch is served from the unperturbed run's cache"
  expect "cmp -s id_clean/queries.csv 'id_$ch/queries.csv'" "--chain $ch gives the unperturbed queries"
  expect_in "$(grep '"chain"' "id_$ch/result.json")" "\"$norm\"" "result.json still records the chain ($norm)"
done
out=$(ev id_narrow --cache idc --chain "sector:width=1")
expect_in "$out" "descriptor sets from the cache: 0" "a sector of 1 degree is described afresh"
done_tests
