#!/usr/bin/env bash
# e2e_hardening.sh: failure modes as a tested part of the product: resource
# bounds on input, a file-size limit while writing, a read-only output
# folder, a scan that disappears between index and eval.  Each must end in a
# clear message (file and what was wrong), exit 2, and leave no truncated
# file where a good one was expected.
. "$(dirname "$0")/lib_e2e.sh"
R=$REVISIT_BIN
cd "$T" || exit 2
no_temps() { [ -z "$(find "$1" -name '*.tmp.*' 2>/dev/null)" ]; }

# A raw scan claiming 2^36 points (a sparse file of 1 TiB): refused from its
# size, before any allocation.
mkdir big && truncate -s $((16 * (1 << 36))) big/000000.bin
printf 't,x,y,z,qx,qy,qz,qw\n0,0,0,0,0,0,0,1\n' > big/poses.csv
out=$(timeout 60 "$R" index big --poses big/poses.csv 2>&1); rc=$?
expect "[ $rc -eq 2 ]" "a 2^36-point raw scan is refused with exit 2"
expect_in "$out" "000000.bin: 68719476736 points is more than the limit" "the refusal names the file, the count and the limit"
rm -f big/000000.bin

# A PCD header declaring a huge width over a tiny body.
mkdir pcd
printf 'VERSION 0.7\nFIELDS x y z\nSIZE 4 4 4\nTYPE F F F\nCOUNT 1 1 1\nWIDTH 4000000000\nHEIGHT 1\nVIEWPOINT 0 0 0 1 0 0 0\nPOINTS 4000000000\nDATA binary\n0123456789ab' > pcd/000000.pcd
cp big/poses.csv pcd/poses.csv
out=$(timeout 60 "$R" index pcd --poses pcd/poses.csv 2>&1); rc=$?
expect "[ $rc -eq 2 ]" "a PCD declaring 4e9 points over 12 bytes is refused"
expect_in "$out" "000000.pcd" "the PCD refusal names the file"

# A manifest listing a million scan files that do not exist.
/usr/bin/python3 - <<'PY'
import json
files = ["%07d.bin" % k for k in range(1000000)]
json.dump({"format": "revisit-recording-1", "sensor": {"channels": 32},
           "scans": {"files": files}, "scan_layout": "raw",
           "poses": {"file": "poses.csv"}}, open("million.json", "w"))
PY
cp big/poses.csv poses.csv
out=$(timeout 60 "$R" inspect million.json 2>&1); rc=$?
expect "[ $rc -eq 2 ]" "a manifest of a million missing scans is refused with exit 2, not a hang"
expect_in "$out" "million.json" "that refusal names the manifest"

# A file-size limit (ulimit -f) while writing a recording: a clear error and
# no manifest, so nothing half-written passes for a recording.
out=$( (ulimit -f 200; "$R" synth --scenario port --scans 30 --out lim --quiet) 2>&1); rc=$?
expect "[ $rc -eq 2 ]" "synth under a file-size limit exits 2"
expect_in "$out" "File too large" "the error says the file is too large"
expect "[ ! -e lim/recording.json ]" "no manifest is left for an incomplete recording"
expect "no_temps lim" "no temporary files are left behind"

# A small good recording for the rest.
"$R" synth --scenario port --scans 80 --out rec --quiet > /dev/null 2>&1
expect "[ -f rec/recording.json ]" "a small synthetic recording is made"

# A read-only output folder.
mkdir ro
ro_ok=0
if mount --bind ro ro 2>/dev/null && mount -o remount,bind,ro ro 2>/dev/null; then ro_ok=1
elif chattr +i ro 2>/dev/null; then ro_ok=2
elif [ "$(id -u)" -ne 0 ]; then chmod 555 ro; ro_ok=3; fi
if [ $ro_ok -ne 0 ]; then
  out=$("$R" eval --map rec --method range-height --out ro/cell --quiet 2>&1); rc=$?
  expect "[ $rc -eq 2 ]" "eval into a read-only folder exits 2"
  expect_in "$out" "ro/cell" "the read-only error names the folder"
  case $ro_ok in 1) umount ro ;; 2) chattr -i ro ;; 3) chmod 755 ro ;; esac
else
  skip_test "eval into a read-only folder (no way to make a read-only folder here)"
fi

# A scan that disappears between index and eval.
mkdir idx && cp rec/scans/* idx/ && cp rec/poses.csv idx/ 2>/dev/null
"$R" index idx --poses idx/poses.csv > /dev/null 2>&1
expect "[ -f idx/recording.json ]" "index writes a manifest for the copied scans"
victim=$(ls idx/*.pcd | sed -n 10p)
rm -f "$victim"
out=$("$R" eval --map idx --method range-height --out gone --quiet 2>&1); rc=$?
expect "[ $rc -eq 2 ]" "eval with a scan deleted after index exits 2"
expect_in "$out" "79 scans but 80 poses" "the error says scans and poses no longer pair up"
expect "[ ! -e gone/result.json ]" "no result is written for the broken recording"
done_tests
