#!/usr/bin/env bash
# e2e_report_browser.sh: a real browser opens report.html from a file and
# decodes every inlined image (non-zero natural width); a screenshot is kept.
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
done_tests
