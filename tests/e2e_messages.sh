#!/usr/bin/env bash
# e2e_messages.sh: messages as a person reads them: one "revisit:" prefix,
# scenario-file errors with line:column and JSON path, chains and axis
# values quoted as written, counts with the right noun, and length and time
# options that take units as chains do.
. "$(dirname "$0")/lib_e2e.sh"
R=$REVISIT_BIN
cd "$T" || exit 1
"$R" synth --scenario port --scans 30 --out rec --quiet >/dev/null 2>&1

err=$("$R" perturb --in rec --out px --chain sectr 2>&1 >/dev/null)
expect_in "$err" "revisit: perturb: --chain: chain:1: unknown stage 'sectr'" "a chain error has one prefix and the command"
expect '! printf "%s" "$err" | grep -q "revisit: revisit"' "no doubled prefix"
err=$("$R" eval --map rec --method range-height --out o --top-k x 2>&1)
expect_in "$err" "revisit: eval: option '--top-k' expects a whole number, got 'x'" "an option error has one prefix"

# Scenario files: line:column of the bad value, then its JSON path.
cat > s.json <<'JSON'
{"format": "revisit-sweep-1", "name": "msg", "recordings": {"map": "rec"},
 "methods": [{"name": "range-height"}],
 "conditions": [{"name": "clean"},
                {"name": "s", "chain": "sector:at=random", "axis": {"stage": "sector", "key": "width", "values": [30, "wide"]}}],
 "seeds": 2}
JSON
err=$("$R" sweep s.json --dry-run 2>&1); rc=$?
expect "[ $rc -eq 2 ]" "a bad scenario file exits 2"
expect_in "$err" "revisit: s.json:4:" "the message starts with file and line"
# column of "wide" on line 4, counted by Python (str.index, 1-based)
col=$(/usr/bin/python3 -c "print(open('s.json').read().split('\n')[3].index('\"wide\"') + 1)")
expect_in "$err" "s.json:4:$col: conditions[1].axis.values[1]: expected a number" "line:column and the JSON path of a bad value"
sed -i 's/"wide"/400/; s/"seeds"/"seedz"/' s.json
err=$("$R" sweep s.json --dry-run 2>&1)
expect_in "$err" "s.json:5:2: seedz: unknown key" "an unknown key is placed at its quote"
sed -i 's/"seedz"/"seeds"/' s.json
err=$("$R" sweep s.json --dry-run 2>&1)
col=$(/usr/bin/python3 -c "print(open('s.json').read().split('\n')[3].index('400') + 1)")
expect_in "$err" "s.json:4:$col: conditions[1].axis.values[1]: sector.width = 400 is out of range" \
  "an axis value out of range is placed and quoted as written"
expect '! printf "%s" "$err" | grep -q "sector:width=400,at=random"' "the chain made with the value is not shown"
sed -i 's/sector:at=random/sectr:at=random/; s/, 400\]/]/' s.json
err=$("$R" sweep s.json --dry-run 2>&1)
col=$(/usr/bin/python3 -c "print(open('s.json').read().split('\n')[3].index('\"chain\"') + 1)")
expect_in "$err" "s.json:4:$col: conditions[1].chain: chain:1: unknown stage 'sectr'" \
  "a chain error is placed at the condition's chain"
expect_in "$err" "  sectr:at=random" "and quotes the chain as written"

# Counts with their noun.
cat > one.json <<'JSON'
{"format": "revisit-sweep-1", "name": "one", "recordings": {"map": "rec"},
 "methods": [{"name": "range-height"}], "conditions": [{"name": "clean"}], "bootstrap": {"resamples": 0}}
JSON
out=$("$R" sweep one.json --dry-run 2>&1)
expect_in "$out" "1 of 1 cell in shard 0/1" "one cell is 'cell'"
expect_in "$out" "(1 method x 1 condition)" "one method, one condition"
err=$("$R" sweep one.json --out sw --jobs 1 2>&1 >/dev/null)
expect_in "$err" "revisit sweep: 1 cell in this shard" "the sweep's totals say '1 cell'"
out=$("$R" inspect rec 2>&1)
expect_in "$out" "suspicious   0 scans" "zero takes the plural"

# Lengths and times with units, as chains write them.
"$R" eval --map rec --method range-height --out bare --radius 5 --exclude-s 20 --bootstrap 0 --quiet >/dev/null 2>&1
"$R" eval --map rec --method range-height --out units --radius 5m --exclude-s 20s --bootstrap 0 --quiet >/dev/null 2>&1
expect '/usr/bin/python3 -c "import json,sys; a=json.load(open(\"bare/result.json\")); b=json.load(open(\"units/result.json\")); sys.exit(not (a[\"protocol\"] == b[\"protocol\"] and b[\"protocol\"][\"r_pos_m\"] == 5 and b[\"protocol\"][\"exclusion_s\"] == 20 and a[\"metrics\"] == b[\"metrics\"]))"' \
  "--radius 5m --exclude-s 20s equal --radius 5 --exclude-s 20"
out=$("$R" inspect rec --radius 3m --exclude-s 30s 2>&1); rc=$?
expect "[ $rc -eq 0 ]" "inspect takes --radius 3m --exclude-s 30s"
err=$("$R" inspect rec --radius 3s 2>&1)
expect_in "$err" "revisit: inspect: option '--radius' expects a length in metres such as 3 or 3m, got '3s'" \
  "a time unit on a length is refused by name"
done_tests
