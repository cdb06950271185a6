#!/usr/bin/env bash
# e2e_report.sh: `revisit report` on hand-made results folders (reports/fixture.py
# writes them in the schema of DEVELOPERS.md "Results folder"): every section,
# valid images, literal labels for hostile method names, the report without
# gnuplot, and the messages for bad input.
. "$(dirname "$0")/lib_e2e.sh"
PY=/usr/bin/python3
FIX="$REVISIT_ROOT/reports/fixture.py"
EVIL_GP="q'\"\`touch PWNED1\`\$(touch PWNED2) system(\"touch PWNED3\") @x {a_b^c}"
EVIL_HTML='<script>alert(1)</script>'

# images.py DIR: every PNG has the signature and an IHDR of non-zero size
# (PNG specification, W3C 2003, sections 5.2 and 11.2.2); every SVG parses as
# XML (Python xml.etree.ElementTree).  Prints the number checked.
cat > "$T/images.py" <<'EOF'
import glob, struct, sys, xml.etree.ElementTree as ET
d = sys.argv[1]
png = sorted(glob.glob(d + "/*.png")); svg = sorted(glob.glob(d + "/*.svg"))
for p in png:
    b = open(p, "rb").read(24)
    assert b[:8] == b"\x89PNG\r\n\x1a\n", p + ": bad signature"
    assert b[12:16] == b"IHDR", p + ": no IHDR first"
    w, h = struct.unpack(">II", b[16:24])
    assert w > 0 and h > 0, p + ": zero size"
for s in svg:
    ET.parse(s)
print(len(png), len(svg))
EOF
# svgtext.py FILE TEXT: 1 when some SVG text element reads exactly TEXT.
cat > "$T/svgtext.py" <<'EOF'
import sys, xml.etree.ElementTree as ET
want = sys.argv[2]
texts = ["".join(e.itertext()) for e in ET.parse(sys.argv[1]).iter() if e.tag.endswith("text")]
print(1 if want in texts else 0)
EOF

# --- a sweep with two ordinary methods ---------------------------------------
$PY "$FIX" "$T/sweep" --seeds 2 --verdicts
"$REVISIT_BIN" report "$T/sweep" --quiet 2>"$T/err"; rc=$?
expect "[ $rc -eq 0 ]" "report on a sweep exits 0"
R="$T/sweep/report"
expect "[ -s $R/report.md ] && [ -s $R/report.html ] && [ -s $R/scalars.csv ]" "report.md, report.html and scalars.csv written under DIR/report"
md=$(cat "$R/report.md")
for h in "## At a glance" "## Acceptance verdicts" "## Findings" "## Summary per condition" "## Scalars" "### F1max" "### R@100P" \
         "### EP" "### AP" "### recall@1" "## Plots" "### Degradation curves" "### PR curves" \
         "### Top views of the trajectory" "### Distance matrices" "### Top-1 distance distributions" \
         "## Reproducibility"; do
  expect_in "$md" "$h" "report.md has the section '$h'"
done
expect_in "$md" "never a substitute for it" "report.md carries the safety caution"
expect_in "$md" "ISO 26262" "the caution names the road-vehicle standards"
expect_in "$md" "Scenario hash: f00dfeed" "reproducibility names the scenario hash"
expect_in "$md" "Perturbation seeds: 1, 2" "reproducibility lists the seeds"
expect_in "$md" "Bootstrap: 200 resamples, seed 5" "reproducibility gives the bootstrap seed of scenario.json"
expect_in "$md" "revisit report $T/sweep --quiet" "reproducibility holds the exact report command"
expect_in "$md" "The condition that hurts each method most" "the first finding is the condition that hurts each method most"
expect_in "$md" "ring-key: sector (width=180), 0." "it names the condition and axis value for each method"
expect_in "$md" "The best method per condition family" "the second finding is the best method per family"
expect_in "$md" "sector width: ring-key" "it names the family and its best method"
expect_in "$md" "| sector (width=90) |" "each swept value of one condition name has its own table row"
expect_in "$md" "| sector at 180 |" "a verdict names the axis value it judged"
expect_in "$md" "sd " "tables show the spread over two seeds"
expect_in "$md" "2 of 3 criteria passed." "the verdicts of verdicts.json are counted"
expect_in "$md" "| ring-key | dropout-0.5 | none | precision 0.99 | 0.2005 [0.2005, 0.2005] | precision | 0.950 [0.900, 1.000] | **✓ PASS** |" "an operating point's row names the method by its short name and marks its verdict as the verdict table does"
expect_in "$md" "[Summary per condition](#summary-per-condition) · [Operating points](#operating-points) · [At a glance]" "the operating points are a section of their own in the contents"
expect_in "$md" "| **✗ FAIL** |" "a failed criterion is marked in the verdict table, word and mark"
expect_in "$md" "| **✓ PASS** |" "a passed criterion is marked, word and mark"
expect_in "$md" "**Scenario.** A made-up harbour loop" "the scenario description stands on the first page"
expect_in "$md" "**Contents:** [Acceptance verdicts](#acceptance-verdicts) · [Summary per condition](#summary-per-condition)" "a table of contents links the sections"
expect_in "$md" "|---|---|---|---:|---:|---:|---|" "the verdict table right-aligns its number columns"
expect_in "$md" "| condition | ring-key | plain-hist |
|---|---:|---:|" "the scalar tables right-aligns the numbers"
order=$(grep -n -e '^## Acceptance verdicts' -e '^## Summary per condition' -e '^## At a glance' "$R/report.md" | cut -d: -f2 | tr '\n' '/')
expect "[ '$order' = '## Acceptance verdicts/## Summary per condition/## At a glance/' ]" "verdicts and the summary chart come first (got '$order')"
ids=$(grep -o 'href="#[a-z0-9-]*"' "$R/report.html" | sed 's/href="#\(.*\)"/\1/' | sort -u)
miss=0; for i in $ids; do grep -q "id=\"$i\"" "$R/report.html" || miss=$((miss + 1)); done
expect "[ -n '$ids' ] && [ $miss -eq 0 ]" "every contents link of report.html has its heading ($miss missing)"
expect "grep -q '<td class=\"fail\"><strong>✗ FAIL</strong></td>' '$R/report.html' && grep -q '\.fail{background:#a34a0c}' '$R/report.html'" "a failed verdict has its colour and mark in HTML"
expect_in "$md" "is nearest its threshold: measured" "a finding names the criterion nearest its threshold"
expect_in "$md" "![" "report.md embeds plot images"
expect_in "$md" '| sector (width=90) | both | `sector:width=90deg,at=random,count=1,draw=scan` |' "the settings show each chain with every value, defaults and units included"
expect_in "$md" "| none | - | none (unperturbed) |" "the unperturbed condition says so"
# Method cost: numpy.mean over the method's cells of 1000 * describe_s / described (result.json "timing").
cost=$($PY - "$T/sweep" <<'EOF'
import glob, json, sys, numpy as np
rs = [json.load(open(p)) for p in sorted(glob.glob(sys.argv[1] + "/cells/*/result.json"))]
rs = [r for r in rs if r["method"]["label"].startswith("ring-key")]
ms = np.mean([1000 * r["timing"]["describe_s"] / r["timing"]["described"] for r in rs])
print("| ring-key | \x60%s\x60 | %.2f | %d |" % (rs[0]["method"]["label"], ms, rs[0]["method"]["descriptor_bytes"]))
EOF
)
expect_in "$md" "$cost" "the method table gives ms per scan (numpy.mean of the cells' timing) and descriptor bytes ($cost)"
n=$(ls "$R"/plots/*.gp | wc -l)
expect "[ $n -eq 14 ]" "14 plot scripts: the summary, 2 degradation, 5 PR, 2 x (top view, distances, matrix) (got $n)"
gp=$(ls "$R"/plots/degradation-*-f1max.gp | head -n 1)
expect_in "$(cat "$gp")" 'set xlabel "sector width (deg)"' "the degradation x axis names the swept key with its unit"
# The x range gnuplot drew (GPVAL_X_MIN, GPVAL_X_MAX: gnuplot 5 documentation,
# "Gnuplot-defined variables") must be the swept values' range, no padding.
if command -v gnuplot >/dev/null 2>&1; then
  drawn=$(cd "$R/plots" && { cat "$(basename "$gp")"; echo 'print GPVAL_X_MIN, GPVAL_X_MAX'; } | gnuplot 2>&1 | tail -n 1)
  swept=$(awk '!/^#/ && NF { if (lo == "" || $1 < lo) lo = $1; if (hi == "" || $1 > hi) hi = $1 } END { print lo + 0, hi + 0 }' "${gp%.gp}.dat")
  expect "[ \"\$(echo $drawn | awk '{print \$1 + 0, \$2 + 0}')\" = '$swept' ]" "the drawn x range is the swept range ($drawn vs $swept)"
else
  skip_test "gnuplot not installed: the drawn x range is not checked"
fi
out=$($PY "$T/images.py" "$R/plots")
expect "[ '$out' = '14 14' ]" "14 valid PNG and 14 SVG files that parse as XML (got '$out')"
html=$(cat "$R/report.html")
imgs=$(grep -o '<img ' "$R/report.html" | wc -l)
expect "[ $imgs -eq 14 ]" "report.html inlines all 14 images (got $imgs)"
expect "! grep -q 'src=\"plots/' '$R/report.html'" "report.html refers to no outside image file"
expect_in "$html" "never a substitute for it" "report.html carries the safety caution"
# Tag balance by Python's html.parser (standard library, html.parser.HTMLParser).
bal=$($PY - "$R/report.html" <<'EOF'
import sys
from html.parser import HTMLParser
class P(HTMLParser):
    def __init__(self):
        super().__init__(); self.stack = []; self.bad = 0
    def handle_starttag(self, t, a):
        if t not in ("meta", "img", "br"): self.stack.append(t)
    def handle_endtag(self, t):
        if self.stack and self.stack[-1] == t: self.stack.pop()
        else: self.bad += 1
p = P(); p.feed(open(sys.argv[1]).read()); print(p.bad + len(p.stack))
EOF
)
expect "[ '$bal' = 0 ]" "every element of report.html is closed in order (html.parser)"
expect_in "$(head -n 1 "$R/scalars.csv")" "method,condition,chain,axis,axis_value,seeds" "scalars.csv has its header"
expect "[ -s $R/plots/pr-3-sector-width-90.gp ] && [ -s $R/plots/trajectory-1-plain-hist.gp ] && [ -s $R/plots/degradation-0-sector-width-f1max.gp ]" "plot files are named after the condition, method or axis they show"
(cd "$R/plots" && gnuplot pr-0-none.gp) >/dev/null 2>&1
expect "[ \$? -eq 0 ] && [ -s $R/plots/pr-0-none.png ]" "a written script redraws its plot when run by hand"

# --- every cell's command, however many cells --------------------------------------
$PY "$FIX" "$T/many" --seeds 4
"$REVISIT_BIN" report "$T/many" --format md --quiet
ncmd=$(grep -c '^revisit eval ' "$T/many/report/report.md")
expect "[ $ncmd -eq 40 ]" "the reproducibility block lists the command of each of the 40 cells (got $ncmd)"

# --- hostile method names ----------------------------------------------------
$PY "$FIX" "$T/evil" --method "$EVIL_GP" --method "$EVIL_HTML" --conditions 1
(cd "$T" && "$REVISIT_BIN" report evil --out "$T/evil-out" --quiet); rc=$?
expect "[ $rc -eq 0 ]" "report with quotes, backticks and system() in a method name exits 0"
odd=$(ls "$T/evil-out/plots" | grep -cv '^[a-z0-9.-]*$')
expect "[ $odd -eq 0 ]" "hostile method names leave only letters, digits, '-' and '.' in plot file names ($odd others)"
left=$(find "$T" -name 'PWNED*' | wc -l)
expect "[ $left -eq 0 ]" "no command in a method name ran (found $left PWNED files)"
expect "! grep -q '\`' $T/evil-out/plots/*.gp" "no backtick reaches a gnuplot script"
expect "! grep -q 'system(\"' $T/evil-out/plots/*.gp && grep -q 'system(\\\\042touch' $T/evil-out/plots/pr-0-none.gp" "the quotes of system(\"...\") reach the script only as octal escapes inside a string"
hit=$($PY "$T/svgtext.py" "$T/evil-out/plots/pr-0-none.svg" "$EVIL_GP")
expect "[ '$hit' = 1 ]" "the hostile name is drawn literally in the PR curve legend"
hit=$($PY "$T/svgtext.py" "$T/evil-out/plots/pr-0-none.svg" "$EVIL_HTML")
expect "[ '$hit' = 1 ]" "<script> in a name is drawn literally in the legend"
eh=$(cat "$T/evil-out/report.html")
expect_in "$eh" "&lt;script&gt;alert(1)&lt;/script&gt;" "<script> in a method name shows as text in HTML"
expect "! grep -q '<script' '$T/evil-out/report.html'" "report.html holds no script element"
# Fenced code (the exact commands) is shown verbatim by every Markdown renderer; outside it, no raw tag.
expect "! sed '/^\`\`\`*text\$/,/^\`\`\`*\$/d' '$T/evil-out/report.md' | grep -q '<script'" "report.md holds no raw <script> outside its code block"

# --- a single eval folder, md only, own title ---------------------------------
$PY "$FIX" "$T/one" --single
"$REVISIT_BIN" report "$T/one" --format md --title 'Mount B review' --quiet; rc=$?
expect "[ $rc -eq 0 ]" "report on one eval folder exits 0"
expect "[ -s $T/one/report/report.md ] && [ ! -e $T/one/report/report.html ]" "--format md writes Markdown only"
expect_in "$(head -n 1 "$T/one/report/report.md")" "# Mount B review" "--title sets the title"
expect_in "$(cat "$T/one/report/report.md")" "One evaluation." "a single folder is described as one evaluation"

# --- reloc: map and query paths in two colours ------------------------------------
$PY "$FIX" "$T/reloc" --single
$PY - "$T/reloc" <<'EOF'
import json, sys
d = sys.argv[1]
r = json.load(open(d + "/result.json")); r["protocol"]["mode"] = "reloc"; json.dump(r, open(d + "/result.json", "w"))
rows = open(d + "/poses.csv").read().splitlines()
q = []
for l in rows:
    if l.startswith("map,"):
        f = l.split(","); f[0] = "query"; f[3] = "%g" % (float(f[3]) + 1); q.append(",".join(f))
open(d + "/poses.csv", "w").write("\n".join(rows + q) + "\n")
EOF
"$REVISIT_BIN" report "$T/reloc" --quiet --format md
gp=$(cat "$T/reloc/report/plots/trajectory-0-ring-key.gp")
mc=$(grep -o "map.dat' using 1:2 with lines lc rgb '#[0-9a-f]*'" <<< "$gp" | grep -o "#[0-9a-f]*")
qc=$(grep -o "query.dat' using 1:2 with lines lc rgb '#[0-9a-f]*'" <<< "$gp" | grep -o "#[0-9a-f]*")
pal=$(grep -o "set style line [0-9]* lc rgb '#[0-9a-f]*'" <<< "$gp" | grep -o "#[0-9a-f]*" | tr '\n' ' ')
expect "[ -n '$mc' ] && [ -n '$qc' ] && [ '$mc' != '$qc' ] && [[ ' $pal' == *\" $mc \"* ]] && [[ ' $pal' == *\" $qc \"* ]]" "reloc: the map path ($mc) and the query path ($qc) have two palette colours ($pal)"

# --- a cell that failed ---------------------------------------------------------
cp -r "$T/one" "$T/failed"; rm -rf "$T/failed/report"
$PY - "$T/failed/result.json" <<'EOF'
import json, sys
r = json.load(open(sys.argv[1]))
r.update(status="failed", error="plugin 'ring-key' crashed on scan 7")
r.pop("metrics"); r.pop("curve")
json.dump(r, open(sys.argv[1], "w"))
EOF
"$REVISIT_BIN" report "$T/failed" --quiet; rc=$?
expect "[ $rc -eq 0 ]" "a folder whose cell failed still gets a report"
fm=$(cat "$T/failed/report/report.md")
expect_in "$fm" "## Failed cells" "the failed cell is listed"
expect_in "$fm" "plugin 'ring-key' crashed on scan 7" "with its message"
expect_in "$fm" "| none | failed |" "its table cells read failed"
expect_in "$fm" "## Plots not made" "plots that cannot be made are explained"
expect_in "$fm" "no finished cell" "the reason is given"

# --- without gnuplot ----------------------------------------------------------
env PATH="$T/nobin" "$REVISIT_BIN" report "$T/sweep" --out "$T/nogp" --quiet; rc=$?
expect "[ $rc -eq 0 ]" "report without gnuplot on PATH exits 0"
ng=$(cat "$T/nogp/report.md")
expect_in "$ng" "## Skipped plots" "without gnuplot the report has a skipped-plots section"
expect_in "$ng" '`trajectory-0-ring-key.gp` (trajectory top view)' "the skipped list names each plot and its kind"
expect_in "$ng" "gnuplot-nox" "the report says how to get the plots"
expect "[ \$(ls $T/nogp/plots/*.png 2>/dev/null | wc -l) -eq 0 ] && [ \$(ls $T/nogp/plots/*.gp | wc -l) -eq 14 ]" "no images, but every script and data file is written"
expect_in "$ng" "### F1max" "the tables are all there without gnuplot"
expect "! grep -q '<img' $T/nogp/report.html" "the HTML has no broken image without gnuplot"

# --- a gnuplot that fails, or writes no real image --------------------------------
mkdir -p "$T/gpfail" "$T/gpjunk"
printf '#!/bin/sh\necho "line 3: broken" >&2\nexit 1\n' > "$T/gpfail/gnuplot"
printf '#!/bin/sh\nn=${1%%.gp}\necho junk > "$n.png"\necho "<svg/>" > "$n.svg"\n' > "$T/gpjunk/gnuplot"
chmod +x "$T/gpfail/gnuplot" "$T/gpjunk/gnuplot"
env PATH="$T/gpfail" "$REVISIT_BIN" report "$T/one" --out "$T/o1" --quiet 2>"$T/err"; rc=$?
expect "[ $rc -eq 2 ]" "a gnuplot that fails on a script exits 2"
expect_in "$(cat "$T/err")" "gnuplot failed (status 1), expected a drawn plot; see" "the failed plot and its log are named"
expect_in "$(cat "$T/o1"/plots/*.log)" "line 3: broken" "gnuplot's own message is kept in the plot's log"
env PATH="$T/gpjunk" "$REVISIT_BIN" report "$T/one" --out "$T/o2" --quiet 2>"$T/err"; rc=$?
expect "[ $rc -eq 2 ]" "a gnuplot that writes no PNG exits 2"
expect_in "$(cat "$T/err")" "not a valid PNG after gnuplot, expected a drawn image" "the invalid image is named"

# --- gnuplot runs as many at a time as there are cores (up to 8) ------------------
# The fake gnuplot counts the runs alive beside it, takes half a second and
# writes the smallest file that passes as a PNG (signature, IHDR, 1 x 1).
mkdir -p "$T/gppar" "$T/gprun"
cat > "$T/gppar/gnuplot" <<GP
#!/bin/sh
touch "$T/gprun/\$\$"
ls "$T/gprun" | wc -l >> "$T/gprun.seen"
sleep 0.5
n=\${1%.gp}
printf '\\211PNG\\r\\n\\032\\n\\0\\0\\0\\rIHDR\\0\\0\\0\\1\\0\\0\\0\\1' > "\$n.png"
echo "<svg/>" > "\$n.svg"
rm "$T/gprun/\$\$"
GP
chmod +x "$T/gppar/gnuplot"
env PATH="$T/gppar:/usr/bin:/bin" "$REVISIT_BIN" report "$T/sweep" --out "$T/par" --quiet 2>"$T/err"; rc=$?
cores=$(nproc); [ "$cores" -gt 8 ] && cores=8
most=$(sort -n "$T/gprun.seen" | tail -1)
expect "[ $rc -eq 0 ]" "a report drawn by gnuplots running side by side exits 0"
expect "[ '$most' = '$cores' ]" "as many gnuplots ran at once as there are cores ($cores; seen $most)"
expect "[ \$(ls $T/par/plots/*.png | wc -l) -eq 14 ] && ! grep -q 'Skipped plots' $T/par/report.md" "every plot was waited for and counts as drawn"
expect "[ -z \"\$(ls $T/gprun)\" ]" "no gnuplot is left running when the report ends"

# --- bad input ------------------------------------------------------------------
"$REVISIT_BIN" report "$T/none" 2>"$T/err"; rc=$?
expect "[ $rc -eq 2 ]" "a missing folder exits 2"
expect_in "$(cat "$T/err")" "no such folder, expected a results folder" "a missing folder is named"
mkdir -p "$T/empty"
"$REVISIT_BIN" report "$T/empty" 2>"$T/err"; rc=$?
expect "[ $rc -eq 2 ]" "a folder without results exits 2"
expect_in "$(cat "$T/err")" "not a results folder, expected result.json or cells/" "a non-results folder is refused"
"$REVISIT_BIN" report "$T/sweep" --format pdf 2>"$T/err"; rc=$?
expect "[ $rc -eq 2 ]" "an unknown format exits 2"
expect_in "$(cat "$T/err")" "option '--format' got 'pdf', expected md, html or md,html" "the bad format is named"
"$REVISIT_BIN" report 2>"$T/err"; rc=$?
expect "[ $rc -eq 2 ]" "no folder exits 2"
expect_in "$(cat "$T/err")" "expected one results folder, got 0 arguments" "a missing argument is explained"
mkdir -p "$T/bad"; printf '{\n  "format": "revisit-result-1",\n  "method": {,}\n}\n' > "$T/bad/result.json"
"$REVISIT_BIN" report "$T/bad" 2>"$T/err"; rc=$?
expect "[ $rc -eq 2 ]" "broken JSON exits 2"
expect_in "$(cat "$T/err")" "result.json:3:" "broken JSON is placed by line and column"
printf '{"format": "revisit-result-9", "method": {"name": "x"}}' > "$T/bad/result.json"
"$REVISIT_BIN" report "$T/bad" 2>"$T/err"
expect_in "$(cat "$T/err")" "format is 'revisit-result-9', expected 'revisit-result-1'" "a foreign format is refused"
cp -r "$T/one" "$T/badq"; rm -rf "$T/badq/report"; printf '7,x,0.5\n' >> "$T/badq/queries.csv"
"$REVISIT_BIN" report "$T/badq" --quiet 2>"$T/err"; rc=$?
expect "[ $rc -eq 2 ]" "a bad queries.csv row exits 2"
expect_in "$(cat "$T/err")" "queries.csv:" "a bad queries.csv row is placed by line"
REVISIT_FAULT_WRITE_BYTES=100 "$REVISIT_BIN" report "$T/one" --out "$T/full" --quiet 2>"$T/err"; rc=$?
expect "[ $rc -eq 2 ]" "a full disk exits 2"
expect_in "$(cat "$T/err")" "write failed" "a full disk is reported"
done_tests
