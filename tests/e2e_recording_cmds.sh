#!/usr/bin/env bash
# e2e_recording_cmds.sh: `revisit index` on a folder of raw scans with a pose
# file in each layout, its refusals, and `revisit inspect` (text and --json).
. "$(dirname "$0")/lib_e2e.sh"
PY=${PYTHON:-/usr/bin/python3}

# A route of two laps round a circle of radius 20 m, one scan a second:
# lap two passes lap one's positions exactly 30 s later, so with a 3 m radius
# and 30 s excluded, scans 30..59 are revisits and 0..29 are not (they have
# no candidate; neighbouring scans are a 12-degree chord, 4.18 m, apart).  The scans
# are random raw float32 records; scan 7 is small, scan 9 all NaN.
$PY - "$T" <<'EOF'
import os, sys
import numpy as np
from scipy.spatial.transform import Rotation
d = sys.argv[1]
rng = np.random.default_rng(5)
n = 60
t = 1000.0 + np.arange(n)
ang = np.linspace(0, 4 * np.pi, n, endpoint=False)
p = np.column_stack([20 * np.cos(ang), 20 * np.sin(ang), np.zeros(n)])
rot = Rotation.from_euler("z", ang + np.pi / 2)
q = rot.as_quat()
os.makedirs(d + "/run/scans")
for k in range(n):
    pts = rng.normal(scale=10, size=(20 if k == 7 else 500, 4)).astype("<f4")
    if k == 9:
        pts[:] = np.nan
    pts.tofile(d + "/run/scans/%06d.bin" % k)
with open(d + "/run/poses.csv", "w") as f:
    f.write("t,qx,qy,qz,qw,x,y,z\n")
    for k in range(n):
        f.write("%.17g,%.17g,%.17g,%.17g,%.17g,%.17g,%.17g,%.17g\n" % (t[k], *q[k], *p[k]))
np.savetxt(d + "/run/poses.txt", np.column_stack([t, p, q]), fmt="%.17g")
M = np.concatenate([rot.as_matrix(), p[:, :, None]], axis=2).reshape(n, 12)
np.savetxt(d + "/run/poses_kx.txt", M, fmt="%.17g")
np.savetxt(d + "/run/times.txt", t, fmt="%.17g")
np.savetxt(d + "/run/short.txt", np.column_stack([t, p, q])[:58], fmt="%.17g")
EOF

R="$T/run"
out=$("$REVISIT_BIN" index "$R/scans" --poses "$R/poses.csv" --channels 16 --out "$R/recording.json" 2>&1); rc=$?
expect "[ $rc -eq 0 ]" "index writes a manifest for raw scans with CSV poses"
expect_in "$out" "60 scans (raw, scans/*.bin), 60 poses (csv, times in s, detected), 16 channels, 59.000 s" \
  "index says what it found"
expect "grep -q '\"layout\":.*\"csv\"' '$R/recording.json'" "the detected pose layout is recorded"
out=$("$REVISIT_BIN" index "$R/scans" --poses "$R/poses.csv" --channels 16 --out "$R/q.json" --quiet 2>&1)
expect "[ $? -eq 0 ] && [ -z '$out' ] && [ -s '$R/q.json' ]" "index --quiet writes the manifest and prints nothing"
"$REVISIT_BIN" index "$R/scans" --poses "$R/poses.txt" --channels 16 --out "$R/text.json" >/dev/null 2>&1
expect "[ $? -eq 0 ] && grep -q '\"text\"' '$R/text.json'" "index accepts whitespace pose lines"
"$REVISIT_BIN" index "$R/scans" --poses "$R/poses_kx.txt" --times "$R/times.txt" --channels 16 --out "$R/mat.json" >/dev/null 2>&1
expect "[ $? -eq 0 ] && grep -q '\"matrix\"' '$R/mat.json' && grep -q 'times.txt' '$R/mat.json'" \
  "index accepts 3x4 rows with a times file"

err=$("$REVISIT_BIN" index "$R/scans" --poses "$R/short.txt" --channels 16 --out "$R/bad.json" 2>&1); rc=$?
expect "[ $rc -eq 2 ]" "scans and poses that do not pair up exit 2"
expect_in "$err" "60 scans but 58 poses, expected one pose per scan" "the mismatch gives both counts"
expect "[ ! -e '$R/bad.json' ] && ! ls '$R' | grep -q index-check" "a refused index leaves no manifest behind"
case "$err" in *index-check*) expect false "the refusal names the manifest asked for, not a trial copy ($err)" ;;
  *) expect_in "$err" "$R/bad.json" "the refusal names the manifest asked for, not a trial copy" ;; esac
printf '\xef\xbb\xbf' > "$T/bom.json" && cat "$R/recording.json" >> "$T/bom.json"
err=$("$REVISIT_BIN" inspect "$T/bom.json" --allow-outside 2>&1); rc=$?
expect "[ $rc -eq 2 ]" "a manifest with a byte-order mark is refused"
expect_in "$err" "bom.json:1:1: starts with a UTF-8 byte-order mark (bytes EF BB BF)" "the mark is named as such"
err=$("$REVISIT_BIN" index "$R/scans" --poses "$R/poses.csv" --out "$R/nochan.json" 2>&1); rc=$?
expect "[ $rc -eq 2 ]" "raw scans without --channels are refused"
expect_in "$err" "expected --channels N" "the message asks for --channels"
mkdir -p "$T/elsewhere"
err=$("$REVISIT_BIN" index "$R/scans" --poses "$R/poses.csv" --channels 16 --out "$T/elsewhere/r.json" 2>&1); rc=$?
expect "[ $rc -eq 2 ]" "a manifest outside the scans' folder is refused"
expect_in "$err" "outside the manifest's folder" "the message says the scans lie outside"
"$REVISIT_BIN" index "$R/scans" --poses "$R/poses.csv" --channels 16 --out "$T/elsewhere/r.json" --allow-outside >/dev/null 2>&1
expect "[ $? -eq 0 ]" "with --allow-outside the manifest is written"
"$REVISIT_BIN" inspect "$T/elsewhere/r.json" --quiet >/dev/null 2>&1; rc=$?
expect "[ $rc -eq 2 ]" "that manifest does not load without --allow-outside"
printf 't,x,y,z,qx,qy,qz,qw\n0,0,0,0,0,0,0,1\n1,0,0,0,0,0,0\n' > "$T/p7.csv"
err=$("$REVISIT_BIN" index "$R/scans" --poses "$T/p7.csv" --channels 16 --allow-outside 2>&1)
expect_in "$err" "p7.csv:3: found 7 columns, expected 8" "a short pose line is named by file and line"

# The same poses with times in nanoseconds (one scan a second: steps of 1e9).
$PY - "$R" <<'EOF'
import sys
d = sys.argv[1]
rows = open(d + "/poses.csv").read().splitlines()
with open(d + "/poses_ns.csv", "w") as f:
    f.write(rows[0] + "\n")
    for r in rows[1:]:
        c = r.split(",")
        f.write(",".join(["%d" % round(float(c[0]) * 1e9)] + c[1:]) + "\n")
EOF
out=$("$REVISIT_BIN" index "$R/scans" --poses "$R/poses_ns.csv" --channels 16 --out "$R/ns.json" 2>&1); rc=$?
expect "[ $rc -eq 0 ]" "index accepts pose times in nanoseconds"
expect_in "$out" "60 poses (csv, times in ns, detected), 16 channels, 59.000 s" "index detects the unit and says so"
expect "grep -q '\"time_unit\":[[:space:]]*\"ns\"' '$R/ns.json'" "the detected unit is stored in the manifest"
out=$("$REVISIT_BIN" inspect "$R/ns.json" --quiet --radius 4.5)
expect_in "$out" "duration     59.000 s" "inspect reads the nanosecond times as seconds"
expect_in "$out" "pose times in ns (named in the manifest)" "inspect names the unit"
# at 4.5 m the predecessor 1 s back is a neighbour: only the 30 s exclusion,
# applied in seconds, keeps the count to what the times in seconds give
want=$("$REVISIT_BIN" inspect "$R" --quiet --radius 4.5 | grep '^revisits')
expect "[ -n '$want' ]" "the seconds recording gives a revisit count at 4.5 m"
expect_in "$out" "$want" "nanosecond times give the revisits of the same times in seconds"
$PY -c 'import json, sys; d = json.load(open(sys.argv[1])); del d["poses"]["time_unit"]; json.dump(d, open(sys.argv[2], "w"))' \
  "$R/ns.json" "$R/ns_auto.json"
out=$("$REVISIT_BIN" inspect "$R/ns_auto.json" --quiet --radius 4.5)
expect_in "$out" "$want" "a manifest without time_unit detects nanoseconds too"
expect_in "$out" "pose times in ns (detected)" "and says the unit was detected"
err=$("$REVISIT_BIN" index "$R/scans" --poses "$R/poses_ns.csv" --channels 16 --time-unit s --out "$R/ns_s.json" 2>&1); rc=$?
expect "[ $rc -eq 2 ] && [ ! -e '$R/ns_s.json' ]" "a named unit that gives an implausible rate is refused"
expect_in "$err" "poses_ns.csv: pose times have a median step of 1e+09 and reach 1.059e+12: in s that is 1e-09 Hz" \
  "the message gives the step and the rate it implies"

out=$("$REVISIT_BIN" inspect "$R" --quiet); rc=$?
expect "[ $rc -eq 0 ]" "inspect exits 0 when every scan reads"
expect_in "$out" "scans        60 (raw layout)" "inspect counts the scans"
expect_in "$out" "min 0 / median 500 / max 500" "inspect gives points per scan"
expect_in "$out" "revisits     30 of 60 scans" "the second lap is 30 revisits at 3 m, 30 s excluded"
expect_in "$out" "500 points dropped in 1 scan" "non-finite points are reported"
expect '! printf "%s" "$out" | grep -q "in 1 scans"' "one scan takes the singular"
expect_in "$out" "scan 7 (" "the small scan is listed"
expect_in "$out" "under a tenth of the median" "with its reason"
expect_in "$out" "scan 9 (" "the all-NaN scan is listed"
expect_in "$out" "all points non-finite" "with its reason"
json=$("$REVISIT_BIN" inspect "$R/recording.json" --json --quiet)
chk=$(echo "$json" | $PY -c '
import json, math, sys
d = json.load(sys.stdin)
# path length: 59 chords of a 20 m circle split in 30 steps (common practice, no source)
chord = 2 * 20 * math.sin(math.pi / 30)
ok = d["scans"] == 60 and d["revisits"]["count"] == 30 and abs(d["path_length_m"] - 59 * chord) < 1e-6
ok = ok and [s["scan"] for s in d["suspicious"]] == [7, 9] and d["duration_s"] == 59
print("ok" if ok else "bad %r" % d)')
expect_in "$chk" "ok" "inspect --json agrees on counts, path length and suspicious scans"
out=$("$REVISIT_BIN" inspect "$R" --quiet --radius 1.5)
expect_in "$out" "revisits     30 of 60" "exact revisits stay revisits at 1.5 m"
out=$("$REVISIT_BIN" inspect "$R" --quiet --exclude-s 0.5)
expect_in "$out" "revisits     30 of 60" "with 0.5 s excluded the 4.18 m neighbours are still beyond 3 m"
out=$("$REVISIT_BIN" inspect "$R" --quiet --exclude-s 0.5 --radius 4.5)
expect_in "$out" "revisits     59 of 60" "at 4.5 m every scan but the first has its predecessor as a revisit"
# Pose checks: scan 21 put 214 m away 0.375 s after scan 20, and 30 s added
# to every time from scan 40 on (intervals are 1 s: the default gap limit is
# ten times the median, 10 s).
expect_in "$out" "pose jumps   0" "the circle has no pose jump"
$PY - "$R/poses.csv" "$T/jump.csv" <<'EOF2'
import csv, sys
rows = list(csv.DictReader(open(sys.argv[1])))
rows[21]["t"] = repr(float(rows[20]["t"]) + 0.375)
rows[21]["x"] = repr(float(rows[21]["x"]) + 214.0)
for r in rows[40:]:
    r["t"] = repr(float(r["t"]) + 30.0)
w = csv.DictWriter(open(sys.argv[2], "w"), fieldnames=list(rows[0].keys()))
w.writeheader()
w.writerows(rows)
EOF2
mkdir -p "$T/jump"
"$REVISIT_BIN" index "$R/scans" --poses "$T/jump.csv" --channels 16 --out "$T/jump/r.json" --allow-outside --quiet
out=$("$REVISIT_BIN" inspect "$T/jump/r.json" --allow-outside --quiet); rc=$?
expect "[ $rc -eq 1 ]" "inspect exits 1 when a pose jumps"
expect_in "$out" "pose jumps   2 (faster than 70 m/s" "the jump out and back are both counted"
expect_in "$out" "scans 20 -> 21: " "the jump names its scans"
expect_in "$out" "in 0.375 s" "and its interval"
expect_in "$out" "time gaps    1 (intervals longer than 10 s)" "the 31 s gap is flagged"
expect_in "$out" "scans 39 -> 40: 31.000 s without a scan" "and named"
out=$("$REVISIT_BIN" inspect "$T/jump/r.json" --allow-outside --quiet --max-speed 1000 --max-gap 40); rc=$?
expect "[ $rc -eq 0 ]" "with the limits raised past them the same poses pass"
expect_in "$out" "pose jumps   0" "no jump at 1000 m/s"
json=$("$REVISIT_BIN" inspect "$T/jump/r.json" --allow-outside --json --quiet)
chk=$(echo "$json" | $PY -c '
import json, sys
d = json.load(sys.stdin)
j = [(s["from"], s["to"]) for s in d["pose_jumps"]["steps"]]
g = [(s["from"], s["to"], s["dt_s"]) for s in d["time_gaps"]["steps"]]
print("ok" if j == [(20, 21), (21, 22)] and g == [(39, 40, 31.0)] else "bad %r %r" % (j, g))')
expect_in "$chk" "ok" "inspect --json lists the jumps and the gap"
head -c 100 "$R/scans/000003.bin" > "$T/cut" && cp "$T/cut" "$R/scans/000003.bin"
out=$("$REVISIT_BIN" inspect "$R" --quiet); rc=$?
expect "[ $rc -eq 1 ]" "inspect exits 1 when a scan is unreadable"
expect_in "$out" "scan 3: unreadable: scan 3: " "the unreadable scan is named"
expect_in "$out" "not a multiple of 16" "with the reason"
echo '{"format": "revisit-recording-2"}' > "$T/v2.json"
err=$("$REVISIT_BIN" inspect "$T/v2.json" 2>&1); rc=$?
expect "[ $rc -eq 2 ]" "a manifest of another format version exits 2"
expect_in "$err" "v2.json: \$.format: 'revisit-recording-2' is not a format this version reads" "and says why"

# PCD scans with a ring field (written here from the PCD v0.7 description:
# header lines, then DATA binary records x y z intensity as F 4, ring as U 2):
# index takes the channel count from the highest ring in the first scan.
$PY - "$T" <<'EOF2'
import os, sys
import numpy as np
d = sys.argv[1] + "/pcdrun"
os.makedirs(d)
rec = np.dtype([("x", "<f4"), ("y", "<f4"), ("z", "<f4"), ("intensity", "<f4"), ("ring", "<u2")])
for k in range(3):
    a = np.zeros(64, rec)
    a["x"] = np.arange(64)
    a["ring"] = np.arange(64) % 32
    head = ("VERSION 0.7\nFIELDS x y z intensity ring\nSIZE 4 4 4 4 2\nTYPE F F F F U\nCOUNT 1 1 1 1 1\n"
            "WIDTH 64\nHEIGHT 1\nVIEWPOINT 0 0 0 1 0 0 0\nPOINTS 64\nDATA binary\n")
    with open(d + "/%03d.pcd" % k, "wb") as f:
        f.write(head.encode() + a.tobytes())
with open(d + "/poses.txt", "w") as f:
    for k in range(3):
        f.write("%d %d 0 0 0 0 0 1\n" % (k, k))
EOF2
out=$("$REVISIT_BIN" index "$T/pcdrun" --poses "$T/pcdrun/poses.txt" 2>&1); rc=$?
expect "[ $rc -eq 0 ]" "index of PCD scans with a ring field needs no --channels"
expect_in "$out" "3 scans (pcd, ./*.pcd), 3 poses (text, times in s, detected), 32 channels" \
  "the channel count comes from the ring field"

# Usage and input refusals of the two commands, each with its message.
refuse() {  # expected-fragment description command...
  local frag=$1 desc=$2; shift 2
  local err rc
  err=$("$@" 2>&1 >/dev/null); rc=$?
  expect "[ $rc -eq 2 ]" "$desc exits 2"
  expect_in "$err" "$frag" "$desc: message"
}
refuse "$T/nothing: not a folder, expected the folder of scans" "index of a missing folder" \
  "$REVISIT_BIN" index "$T/nothing" --poses "$R/poses.csv"
expect "[ ! -e '$T/nothing' ]" "index of a missing folder creates nothing"
mkdir -p "$T/void"
refuse "no scan files found, expected files ending in .bin" "index of a folder without scans" \
  "$REVISIT_BIN" index "$T/void" --poses "$R/poses.csv" --allow-outside
refuse "--channels 70000, expected 1 to 65535" "too many channels" \
  "$REVISIT_BIN" index "$R/scans" --poses "$R/poses.csv" --channels 70000
refuse "expected one folder of scans, got 2 arguments" "index of two folders" \
  "$REVISIT_BIN" index "$R/scans" "$T/void" --poses "$R/poses.csv"
refuse "option '--poses' is required" "index without --poses" "$REVISIT_BIN" index "$R/scans"
refuse "--scan-layout: unknown scan layout 'las'" "an unknown scan layout" \
  "$REVISIT_BIN" index "$R/scans" --poses "$R/poses.csv" --out "$R/x.json" --scan-layout las
refuse "--pose-layout: unknown pose layout 'zz'" "an unknown pose layout" \
  "$REVISIT_BIN" index "$R/scans" --poses "$R/poses.csv" --out "$R/x.json" --pose-layout zz
refuse "expected one recording, got 2 arguments" "inspect of two recordings" "$REVISIT_BIN" inspect "$R" "$R"
refuse "revisit radius must be a positive number" "a negative radius" "$REVISIT_BIN" inspect "$R" --radius -1
# The pose and times files inside the scan folder are not counted as scans:
# two .csv text scans beside poses.txt and times.txt pick *.csv (counting the
# two .txt files would tie and pick *.txt, the first extension of the table).
mkdir -p "$T/inside/s"
$PY - "$T/inside/s" <<'EOF2'
import sys
import numpy as np
d = sys.argv[1]
for k in range(2):
    np.savetxt("%s/%06d.csv" % (d, k), np.random.default_rng(k).normal(size=(50, 4)), fmt="%.6f")
open(d + "/poses.txt", "w").write("".join("1 0 0 %d 0 1 0 0 0 0 1 0\n" % k for k in range(2)))
open(d + "/times.txt", "w").write("0\n1\n")
EOF2
"$REVISIT_BIN" index "$T/inside/s" --poses "$T/inside/s/poses.txt" --times "$T/inside/s/times.txt" \
  --channels 16 --out "$T/inside/rec.json" --quiet
expect "[ $? -eq 0 ] && grep -q '\"pattern\":.*\"\*\.csv\"' '$T/inside/rec.json'" \
  "index leaves the pose and times files in the scan folder out of the pattern count"
done_tests
