#!/usr/bin/env bash
# e2e_eval_threads.sh: results do not depend on the thread count.  Dense
# retrieval runs its sgemm blocks on the pool's threads and matrix.csv's
# distances are computed on the pool; --jobs 1 and --jobs 2 must give
# byte-identical queries.csv and matrix.csv and the same result.json
# metrics, and result.json times the matrix (timing.matrix_s).
. "$(dirname "$0")/lib_e2e.sh"
R=$REVISIT_BIN
"$R" synth --scenario port --scans 60 --out "$T/rec" --quiet >/dev/null 2>&1
for m in scan-context range-height m2dp; do
  for j in 1 2; do
    "$R" eval --map "$T/rec" --method $m --jobs $j --bootstrap 100 --out "$T/$m-$j" --quiet >/dev/null 2>&1
  done
  expect "[ -f '$T/$m-1/result.json' ] && [ -f '$T/$m-2/result.json' ]" "$m evaluates with 1 and 2 threads"
  expect "cmp -s '$T/$m-1/queries.csv' '$T/$m-2/queries.csv'" "$m queries.csv is the same on 1 and 2 threads"
  expect "cmp -s '$T/$m-1/matrix.csv' '$T/$m-2/matrix.csv'" "$m matrix.csv is the same on 1 and 2 threads"
  out=$("$PYTHON" -c "
import json, sys
a, b = (json.load(open(sys.argv[k] + '/result.json')) for k in (1, 2))
print('same' if a['metrics'] == b['metrics'] else 'differ')
print('matrix timed' if a['timing'].get('matrix_s', -1) >= 0 else 'no matrix_s')" "$T/$m-1" "$T/$m-2")
  expect_in "$out" "same" "$m result.json metrics are the same on 1 and 2 threads"
  expect_in "$out" "matrix timed" "$m result.json times the matrix (timing.matrix_s)"
done
done_tests
