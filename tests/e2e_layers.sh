#!/usr/bin/env bash
# e2e_layers.sh: the include graph between folders has no wrong-way arrow
# (tests/layers.py), and the check catches one put there on purpose.
. "$(dirname "$0")/lib_e2e.sh"
root=$REVISIT_ROOT
out=$("$PYTHON" "$root/tests/layers.py" "$root" 2>&1); rc=$?
expect "[ $rc -eq 0 ]" "no wrong-way include in the tree (got: ${out:0:400})"

# A tampered copy: the base layer reaching up into the results module.
mkdir -p "$T/tree"
cp -r "$root/harness" "$root/perturb" "$root/metrics" "$root/reports" "$root/scenarios" "$T/tree/"
printf '#include "harness/results/summary.h"\n' >> "$T/tree/harness/base/pool.c"
out=$("$PYTHON" "$root/tests/layers.py" "$T/tree" 2>&1); rc=$?
expect "[ $rc -eq 1 ]" "a base file including a results header is refused"
expect_in "$out" "harness/base/pool.c: includes harness/results/summary.h" "the message names the file and the include"

# A plugin including a host header.
printf '#include "harness/base/err.h"\n' >> "$T/tree/harness/plugins/m2dp/m2dp.c"
out=$("$PYTHON" "$root/tests/layers.py" "$T/tree" 2>&1)
expect_in "$out" "a plugin includes only harness/revisit_plugin.h" "a plugin reaching into the host is refused"

# A new folder must be given a floor.
mkdir -p "$T/tree/harness/extra"; printf '#include "harness/base/err.h"\n' > "$T/tree/harness/extra/x.c"
out=$("$PYTHON" "$root/tests/layers.py" "$T/tree" 2>&1)
expect_in "$out" "folder harness/extra has no floor" "a folder with no floor is refused"
done_tests
