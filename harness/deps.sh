#!/usr/bin/env bash
# deps.sh: check the Debian packages revisit builds and tests with; as root,
# install the missing ones (apt-get update first); otherwise print the command.
set -u
need=(libopenblas-dev liblapacke-dev libcjson-dev pkg-config
      python3-numpy python3-scipy python3-sklearn gnuplot-nox parallel valgrind
      chromium python3-open3d)
missing=()
for p in "${need[@]}"; do
  st=$(dpkg-query -W -f='${Status}' "$p" 2>/dev/null)
  case "$st" in *"install ok installed"*) ;; *) missing+=("$p") ;; esac
done
[ ${#missing[@]} -eq 0 ] && exit 0
if [ "$(id -u)" -ne 0 ]; then
  echo "revisit: missing Debian packages: ${missing[*]}" >&2
  echo "run: sudo apt-get update && sudo apt-get install -y ${missing[*]}" >&2
  exit 1
fi
echo "revisit: installing ${missing[*]}" >&2
export DEBIAN_FRONTEND=noninteractive
apt-get update -qq >&2 || { echo "revisit: apt-get update failed" >&2; exit 1; }
apt-get install -y -qq "${missing[@]}" >&2 || {
  echo "revisit: apt-get install failed; run: apt-get install -y ${missing[*]}" >&2; exit 1; }
