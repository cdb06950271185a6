#!/usr/bin/env bash
# e2e_report_browser.sh: a real browser opens report.html from a file and
# decodes every inlined image (non-zero natural width); at 1400 px width the
# first page of a sweep's report holds the title, caution, description,
# verdicts and summary chart with no horizontal overflow.  Screenshots are kept.
. "$(dirname "$0")/lib_e2e.sh"
PY=/usr/bin/python3
# The Debian launcher script adds seconds of start-up checks; the program it runs does the same job.
BROWSER=/usr/lib/chromium/chromium
[ -x "$BROWSER" ] || BROWSER=$(command -v chromium || true)
expect "[ -n '$BROWSER' ]" "headless Chromium is installed (Debian package chromium, see harness/deps.sh)"
[ -n "$BROWSER" ] || { done_tests; exit 1; }
# The screenshot outlives the run, in a scratch folder of its own.
KEEP=$(mktemp -d "${TMPDIR:-/tmp}/revisit-report-browser.XXXXXX")

$PY "$REVISIT_ROOT/reports/fixture.py" "$T/sweep" --single --method '<b>bold</b> & co'
"$REVISIT_BIN" report "$T/sweep" --quiet; rc=$?
expect "[ $rc -eq 0 ]" "the report is written"
R="$T/sweep/report"
n_img=$(grep -o '<img ' "$R/report.html" | wc -l)
expect "[ $n_img -gt 0 ]" "report.html holds images ($n_img)"

# A copy with a probe that writes every image's natural width into the DOM once
# the page has loaded; the report itself carries no script.
sed 's|</body>|<script>window.addEventListener("load",function(){var o=document.createElement("pre");o.id="probe";o.textContent=Array.prototype.map.call(document.images,function(i){return i.naturalWidth+"x"+i.naturalHeight;}).join(" ");document.body.appendChild(o);});</script></body>|' \
  "$R/report.html" > "$R/probe.html"
flags=(--headless --no-sandbox --disable-gpu --disable-quic --no-first-run --disable-background-networking
       --disable-component-update --disable-sync --virtual-time-budget=10000)
timeout 120 "$BROWSER" "${flags[@]}" --user-data-dir="$T/profile" --window-size=1200,2400 \
  --screenshot="$KEEP/report.png" --dump-dom "file://$R/probe.html" > "$T/dom.html" 2>"$T/browser.log"
rc=$?
expect "[ $rc -eq 0 ]" "the browser loads the report (exit $rc)"
probe=$(sed -n 's|.*<pre id="probe">\([^<]*\)</pre>.*|\1|p' "$T/dom.html")
read -r -a sizes <<< "$probe"
expect "[ ${#sizes[@]} -eq $n_img ]" "the probe saw all $n_img images (saw ${#sizes[@]})"
bad=0
for s in "${sizes[@]}"; do case "$s" in 0x*|*x0) bad=$((bad + 1)) ;; esac; done
expect "[ $bad -eq 0 ] && [ ${#sizes[@]} -gt 0 ]" "every image decoded with a non-zero natural size ($bad failed)"
expect_in "$(cat "$T/dom.html")" "&lt;b&gt;bold&lt;/b&gt; &amp; co" "a method name with markup stays text in the browser's DOM"
expect "! grep -q '<b>bold</b>' '$T/dom.html'" "no user markup became an element"

ok=$($PY -c 'import sys,struct; b=open(sys.argv[1],"rb").read(24); print(int(b[:8]==b"\x89PNG\r\n\x1a\n" and struct.unpack(">II",b[16:24])==(1200,2400)))' "$KEEP/report.png" 2>/dev/null)
expect "[ '$ok' = 1 ]" "the screenshot is a 1200x2400 PNG"
echo "screenshot: $KEEP/report.png"

# --- the first page of a sweep's report at 1400 px ------------------------------
LONG='ring-key:rings=20,sectors=60,height_bins=8,max_range=80,min_range=0.5,normalise=columnwise,lookahead=12,fallback=none'
$PY "$REVISIT_ROOT/reports/fixture.py" "$T/sw" --seeds 2 --verdicts --method "$LONG" --method plain-hist
# As many verdicts as the demo's (18 rows, texts as long as its): numbers
# stay on one line, so the summary chart still fits the first page.
$PY - "$T/sw/verdicts.json" <<'EOF'
import json, sys
v = json.load(open(sys.argv[1])); v["criteria"] = [dict(c) for c in v["criteria"] * 6]
for k, c in enumerate(v["criteria"]):
    c["criterion"] = "criterion %d: the score on this condition stays at or above its threshold" % k
json.dump(v, open(sys.argv[1], "w"))
EOF
"$REVISIT_BIN" report "$T/sw" --quiet; rc=$?
expect "[ $rc -eq 0 ]" "the sweep report is written"
PAGE=1800   # the first page: one 1400 x 1800 screen
# The probe writes, once loaded: the document's scroll width, then for each
# part (title, caution, description, verdict table, summary image) its bottom
# edge in px (-1 when missing), then the summary image's natural width.
sed 's|</body>|<script>window.addEventListener("load",function(){function b(e){return e?Math.ceil(e.getBoundingClientRect().bottom+window.scrollY):-1;}var d=document,s=d.getElementById("summary-per-condition"),v=d.getElementById("acceptance-verdicts"),f=s\&\&s.nextElementSibling,im=f\&\&f.querySelector("img"),t=v\&\&v.nextElementSibling\&\&v.nextElementSibling.nextElementSibling,ds=Array.prototype.filter.call(d.querySelectorAll("p"),function(p){return p.textContent.indexOf("Scenario.")===0;})[0];var o=d.createElement("pre");o.id="probe";o.textContent=[d.documentElement.scrollWidth,b(d.querySelector("h1")),b(d.querySelector(".caution")),b(ds),b(t\&\&t.tagName==="TABLE"?t:null),b(im),im?im.naturalWidth:0].join(" ");d.body.appendChild(o);});</script></body>|' \
  "$T/sw/report/report.html" > "$T/sw/report/probe.html"
timeout 120 "$BROWSER" "${flags[@]}" --user-data-dir="$T/profile2" --window-size=1400,$PAGE \
  --screenshot="$KEEP/first-page.png" --dump-dom "file://$T/sw/report/probe.html" > "$T/dom2.html" 2>"$T/browser2.log"
rc=$?
expect "[ $rc -eq 0 ]" "the browser loads the sweep report (exit $rc)"
read -r sw b_title b_caution b_desc b_verdicts b_summary nat <<< "$(sed -n 's|.*<pre id="probe">\([^<]*\)</pre>.*|\1|p' "$T/dom2.html")"
expect "[ -n '$sw' ] && [ '$sw' -le 1400 ]" "no horizontal overflow at 1400 px (scroll width ${sw:-none})"
for part in title caution desc verdicts summary; do
  v=$(eval echo "\${b_$part:--1}")
  expect "[ '$v' -gt 0 ] && [ '$v' -le $PAGE ]" "the $part ends within the first $PAGE px (bottom at $v)"
done
expect "[ '${nat:-0}' -gt 0 ]" "the summary chart decoded (natural width ${nat:-0})"
echo "first page: $KEEP/first-page.png"
done_tests
