#!/usr/bin/env bash
# e2e_plugin_search.sh: methods are found beside the program with no
# environment variable set (build tree and an installed copy), `revisit
# methods` names the folders it searched, a misspelt method gets the nearest
# names, and a sweep whose method does not load runs no cell.
. "$(dirname "$0")/lib_e2e.sh"
R=$REVISIT_BIN
unset REVISIT_PLUGIN_PATH
cd "$T" || exit 1

out=$("$R" methods 2>&1); rc=$?
expect "[ $rc -eq 0 ]" "methods exits 0 from a folder outside the tree (exit $rc)"
for m in scan-context range-height m2dp sop; do
  expect "printf '%s\n' \"\$out\" | grep -q '^$m '" "methods lists $m from the plugins folder beside the program"
done
expect_in "$out" "$REVISIT_BUILD/plugins (4 methods)" "methods names the folder beside the program and what it held"

# An installed layout: PREFIX/bin/revisit and PREFIX/lib/revisit/plugins/.
mkdir -p inst/bin inst/lib/revisit/plugins lone
cp "$R" inst/bin/revisit && cp "$REVISIT_BUILD"/plugins/*.so inst/lib/revisit/plugins/
out=$(inst/bin/revisit methods 2>&1); rc=$?
expect "[ $rc -eq 0 ]" "an installed copy finds its methods (exit $rc)"
expect_in "$out" "$T/inst/lib/revisit/plugins (4 methods)" "the installed copy searched PREFIX/lib/revisit/plugins"
expect_in "$out" "scan-context" "the installed copy lists scan-context"

cp "$R" lone/revisit
out=$(lone/revisit methods 2>"$T/lone.err"); rc=$?
err=$(cat "$T/lone.err")
expect "[ $rc -eq 2 ]" "methods exits 2 when no method is found (exit $rc)"
expect_in "$err" "no method (NAME.so) found" "the empty search is reported on stderr"
expect_in "$err" "$T/lone/plugins (no such folder)" "the folders searched are listed"

"$R" synth --scenario port --scans 30 --out rec --quiet >/dev/null 2>&1
out=$("$R" eval --map rec --method scan-contxt --out o1 --quiet 2>&1); rc=$?
expect "[ $rc -eq 2 ]" "a misspelt method exits 2"
expect_in "$out" "method 'scan-contxt' not found" "the misspelt name is quoted"
expect_in "$out" "did you mean 'scan-context'?" "the nearest known name is suggested"

cat > s.json <<'JSON'
{"format": "revisit-sweep-1", "name": "one-bad-method", "recordings": {"map": "rec"},
 "methods": [{"name": "range-height"}, {"name": "rnage-height"}],
 "conditions": [{"name": "clean"}, {"name": "turned", "chain": "yaw"}], "seeds": 2}
JSON
out=$("$R" sweep s.json --dry-run 2>&1); rc=$?
expect "[ $rc -eq 2 ]" "a dry run refuses a method that does not load (exit $rc)"
expect_in "$out" "s.json: no cell was run: method 'rnage-height' not found" "the dry run names the method"
expect_in "$out" "did you mean 'range-height'?" "the dry run suggests the near name"
out=$("$R" sweep s.json --out sw --quiet 2>&1); rc=$?
expect "[ $rc -eq 2 ]" "a sweep refuses a method that does not load (exit $rc)"
expect "[ ! -e sw/cells ]" "no cell ran (no cells folder)"
out=$("$R" sweep s.json --out sw --quiet --isolate 2>&1); rc=$?
expect "[ $rc -eq 2 ] && [ ! -e sw/cells ]" "under --isolate too, no cell ran (exit $rc)"
sed -i 's/{"name": "rnage-height"}/{"name": "scan-context", "variants": [{"sectors": 30}]}/' s.json
out=$("$R" sweep s.json --dry-run 2>&1); rc=$?
expect "[ $rc -eq 0 ]" "once every method loads the dry run succeeds (exit $rc)"

# A plugin file an earlier build left behind (its folder since removed or
# renamed) is deleted by the next build, and only that one.
mkdir -p b/plugins
cp "$REVISIT_BUILD"/plugins/*.so b/plugins/
touch b/plugins/README.md.so b/plugins/gone.so
out=$("$R" methods --plugin-path "$T/b/plugins" 2>&1)
expect_in "$out" "README.md        (cannot load" "a stale plugin file is listed as a broken method"
plan=$(make -n -C "$REVISIT_ROOT" B="$T/b" build 2>&1)
expect_in "$plan" "rm -f $T/b/plugins/README.md.so $T/b/plugins/gone.so" "make build deletes the plugin files it no longer builds"
make -s -C "$REVISIT_ROOT" B="$T/b" prune-plugins-"$T/b" > /dev/null 2>&1
expect "[ ! -e b/plugins/README.md.so ] && [ ! -e b/plugins/gone.so ] && [ -f b/plugins/scan-context.so ] && [ -f b/plugins/sop.so ]" \
  "the stale files are gone, the built ones stay"
done_tests
