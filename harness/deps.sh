#!/usr/bin/env bash
# deps.sh [build|demo|test]: check the Debian packages revisit needs for that
# goal; as root, install the missing ones (apt-get update first); otherwise
# print the exact command and stop.
#   build  compiler-side libraries: what plain `make` needs
#   demo   build + gnuplot (the report's plots)
#   test   demo + what the tests use: cross-check libraries, valgrind,
#          GNU Parallel (shard test), Chromium (report browser test)
set -u
goal=${1:-build}
need=(libopenblas-dev liblapacke-dev libcjson-dev liblzf-dev libbz2-dev liblz4-dev libzstd-dev pkg-config)
case "$goal" in
  build) ;;
  demo) need+=(gnuplot-nox) ;;
  test) need+=(gnuplot-nox python3-numpy python3-scipy python3-sklearn python3-open3d
               parallel valgrind chromium) ;;
  *) echo "revisit: deps.sh: unknown goal '$goal' (expected build, demo or test)" >&2; exit 2 ;;
esac
missing=()
for p in "${need[@]}"; do
  st=$(dpkg-query -W -f='${Status}' "$p" 2>/dev/null)
  case "$st" in *"install ok installed"*) ;; *) missing+=("$p") ;; esac
done
[ ${#missing[@]} -eq 0 ] && exit 0
if [ "$(id -u)" -ne 0 ]; then
  echo "revisit: missing Debian packages for 'make $goal': ${missing[*]}" >&2
  echo "run: sudo apt-get update && sudo apt-get install -y ${missing[*]}" >&2
  exit 1
fi
echo "revisit: installing ${missing[*]}" >&2
export DEBIAN_FRONTEND=noninteractive
apt-get update -qq >&2 || { echo "revisit: apt-get update failed" >&2; exit 1; }
apt-get install -y -qq "${missing[@]}" >&2 || {
  echo "revisit: apt-get install failed; run: apt-get install -y ${missing[*]}" >&2; exit 1; }
