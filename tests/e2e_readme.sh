#!/usr/bin/env bash
# e2e_readme.sh: README.md as a tested tour.  Every ```sh block of README.md
# runs, in order, in one shell in a fresh folder that holds only links to
# the build (build/), the scenario files (scenarios/) and the example
# external method (harness/external/), as a reader at the repository root
# would run them.  Each block must exit 0.  A plain ``` block right after a
# ```sh block quotes what that block prints (stdout and stderr): every one of its
# lines must appear, in order, among the lines printed; a line ending in
# "..." needs only its start to match (timings and paths that vary).
# `make GOAL` lines run as `make -n GOAL` against the real Makefile (the
# goal must exist; the build itself is what the other tests check).
. "$(dirname "$0")/lib_e2e.sh"
README=${REVISIT_README:-$REVISIT_ROOT/README.md}
W="$T/work"
mkdir -p "$W"
ln -s "$REVISIT_BUILD" "$W/build"
ln -s "$REVISIT_ROOT/scenarios" "$W/scenarios"
mkdir -p "$W/harness" && ln -s "$REVISIT_ROOT/harness/external" "$W/harness/external"
unset REVISIT_PLUGIN_PATH   # the README promises plugins are found beside the program

/usr/bin/python3 - "$README" "$T" <<'PYEOF'
import re, sys
readme, tmp = sys.argv[1], sys.argv[2]
text = open(readme).read().split("\n")
blocks, i = [], 0   # (kind, lines): kind "sh" or "out"
while i < len(text):
    m = re.match(r"^```(\S*)\s*$", text[i])
    if not m:
        i += 1
        continue
    kind, body, i = m.group(1), [], i + 1
    while i < len(text) and not text[i].startswith("```"):
        body.append(text[i])
        i += 1
    i += 1
    if kind == "sh":
        blocks.append(("sh", body))
    elif kind == "" and blocks and blocks[-1][0] == "sh":
        blocks.append(("out", body))
    else:
        blocks.append(("other", body))
n = 0
with open(tmp + "/tour.sh", "w") as f:
    f.write('make() { command make -n -C "$REVISIT_ROOT" "$@" > /dev/null; }\n')
    for kind, body in blocks:
        if kind == "sh":
            n += 1
            f.write("( set -e\n%s\n) > %s/out_%d 2>&1; echo $? > %s/rc_%d\n"
                    % ("\n".join(body), tmp, n, tmp, n))
        elif kind == "out":
            open("%s/want_%d" % (tmp, n), "w").write("\n".join(body) + "\n")
open(tmp + "/nblocks", "w").write(str(n))
PYEOF
n=$(cat "$T/nblocks")
expect "[ $n -ge 6 ]" "README.md has the tour's shell blocks ($n found)"
start=$SECONDS
( cd "$W" && PATH="$W/build:$PATH" bash "$T/tour.sh" )
echo "note: the README's $n shell blocks ran in $((SECONDS - start)) s"

# A quoted output block: its lines in order among the printed ones.
quoted_ok() {  # want got
  /usr/bin/python3 - "$1" "$2" <<'PYEOF'
import sys
want = [l.rstrip() for l in open(sys.argv[1]).read().split("\n") if l.strip()]
got = [l.rstrip() for l in open(sys.argv[2]).read().split("\n")]
at = 0
for w in want:
    prefix = w.endswith("...")
    key = w[:-3].rstrip() if prefix else w
    while at < len(got) and not (got[at].startswith(key) if prefix else got[at] == key):
        at += 1
    if at == len(got):
        print("missing: %r" % w)
        sys.exit(1)
    at += 1
PYEOF
}
for k in $(seq 1 "$n"); do
  rc=$(cat "$T/rc_$k" 2>/dev/null || echo none)
  expect "[ '$rc' = 0 ]" "README shell block $k exits 0 (exit $rc: $(tail -n 3 "$T/out_$k" 2>/dev/null | tr '\n' ' '))"
  if [ -f "$T/want_$k" ]; then
    why=$(quoted_ok "$T/want_$k" "$T/out_$k")
    expect "[ -z \"\$why\" ]" "README block $k prints the output quoted after it ($why)"
  fi
done
done_tests
