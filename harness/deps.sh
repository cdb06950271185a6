#!/usr/bin/env bash
# deps.sh [build|demo|test]: check the Debian packages revisit needs for that
# goal; as root, install the missing ones (apt-get update first); otherwise
# print the exact command and stop.
#   build  compiler-side libraries: what plain `make` needs
#   demo   build + gnuplot (the report's plots)
#   test   demo + what the tests use: cross-check libraries, valgrind, strace,
#          GNU Parallel (shard test), Chromium (report browser test), the
#          ROS 1 bag writer and message packages; then, when npm is there,
#          the npm writers of tests/node (pinned in its package-lock.json)
set -u
goal=${1:-build}
need=(libopenblas-dev liblapacke-dev libcjson-dev liblzf-dev libbz2-dev liblz4-dev libzstd-dev pkg-config)
case "$goal" in
  build) ;;
  demo) need+=(gnuplot-nox) ;;
  test) need+=(gnuplot-nox python3-numpy python3-scipy python3-sklearn python3-open3d python3-pil
               parallel valgrind strace chromium pcl-tools python3-rosbag python3-sensor-msgs python3-nav-msgs
               python3-geometry-msgs python3-tf2-msgs) ;;
  *) echo "revisit: deps.sh: unknown goal '$goal' (expected build, demo or test)" >&2; exit 2 ;;
esac
# The test-only npm packages, installed from the lock file into tests/node
# (node_modules is not committed); without npm the MCAP checks count as skipped.
node_deps() {
  [ "$goal" = test ] || return 0
  command -v npm >/dev/null || { echo "revisit: npm not found: the MCAP cross-checks will be skipped" >&2; return 0; }
  local d
  d="$(cd "$(dirname "$0")/.." && pwd)/tests/node"
  [ -d "$d/node_modules/@mcap/core" ] && [ "$d/node_modules/.package-lock.json" -nt "$d/package-lock.json" ] && return 0
  echo "revisit: installing the npm test writers into tests/node" >&2
  npm ci --prefix "$d" --no-audit --no-fund --loglevel=error >&2 || {
    echo "revisit: npm ci in tests/node failed" >&2; return 1; }
}
missing=()
for p in "${need[@]}"; do
  st=$(dpkg-query -W -f='${Status}' "$p" 2>/dev/null)
  case "$st" in *"install ok installed"*) ;; *) missing+=("$p") ;; esac
done
if [ ${#missing[@]} -eq 0 ]; then node_deps; exit $?; fi
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
node_deps
