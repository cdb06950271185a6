"""xcheck_retrieval.py: retrieval top-K against a brute-force reference.

The reference is a plain double-precision all-pairs computation in numpy
(Debian python3-numpy: numpy.linalg.norm, numpy.lexsort), ranking by
distance with ties broken by the lower index, as design.md states.  Our
C retrieval (blocked float32 sgemm + streaming top-K + exact re-rank, run
through build/tests/tool_retrieval) must return the same indices in the same
order and distances within 1e-5, in loop and reloc mode, with exact ties
planted (duplicated rows; for cosine also rows scaled by 2 and zero rows),
and on sets larger than the blocks the dense path works in.
"""
import os
import subprocess
import sys
import tempfile

import numpy as np

from checklib import check, done, tool_path

TOOL = tool_path("tool_retrieval")


def dist(kind, q, m):
    """All-pairs distances in float64 (numpy reference)."""
    q = q.astype(np.float64)
    m = m.astype(np.float64)
    if kind == "l2" and len(q) * len(m) * q.shape[1] > 2e7:   # in row blocks, same values
        return np.concatenate([dist(kind, q[a:a + 100], m) for a in range(0, len(q), 100)])
    if kind == "l2":
        return np.linalg.norm(q[:, None, :] - m[None, :, :], axis=2)
    if kind in ("l1", "l1key"):
        return np.abs(q[:, None, :] - m[None, :, :]).sum(axis=2)
    nq = np.linalg.norm(q, axis=1)
    nm = np.linalg.norm(m, axis=1)
    c = (q @ m.T) / np.where(nq[:, None] * nm[None, :] > 0, nq[:, None] * nm[None, :], 1)
    d = 1.0 - c
    d[(nq[:, None] * nm[None, :]) == 0] = 1.0
    return np.maximum(d, 0)


def reference(kind, q, m, k, cand, topc=None):
    d = dist(kind, q, m)
    if kind == "l1key":  # prefilter: top-C by L2 over the first 4 entries
        dk = dist("l2", q[:, :4], m[:, :4])
    out = []
    for i in range(len(q)):
        js = np.nonzero(cand[i])[0]
        if kind == "l1key":
            o = np.lexsort((js, dk[i, js]))
            js = js[o[:topc]]
        o = np.lexsort((js, d[i, js]))[:k]
        out.append([(int(js[t]), float(d[i, js[t]])) for t in o])
    return out


def run(args):
    r = subprocess.run([TOOL] + [str(a) for a in args], capture_output=True, text=True, check=True)
    rows = []
    for line in r.stdout.splitlines():
        v = line.split()
        rows.append([(int(v[t]), float(v[t + 1])) for t in range(1, len(v), 2)])
    return rows


def compare(got, want, desc):
    same_idx = len(got) == len(want) and all(
        [j for j, _ in g] == [j for j, _ in w] for g, w in zip(got, want))
    check(same_idx, desc + ": same candidates in the same order")
    worst = max((abs(a[1] - b[1]) for g, w in zip(got, want) for a, b in zip(g, w)), default=0)
    check(same_idx and worst <= 1e-5, desc + ": distances within 1e-5 (worst %.2g)" % worst)


def data(rng, n, dim, kind):
    v = rng.standard_normal((n, dim)).astype(np.float32)
    v[5] = v[2]            # exact ties
    v[9] = v[2]
    v[40] = v[30]
    if kind == "cosine":
        v[11] = 2 * v[3]   # same direction: equal cosine distance
        v[12] = 0          # zero vector: distance 1 from everything
    return v


def main():
    rng = np.random.default_rng(7)
    with tempfile.TemporaryDirectory() as tmp:
        for kind in ("l2", "cosine", "l1", "l1key"):
            dim, k = 24, 10
            m = data(rng, 700, dim, kind)
            q = data(rng, 300, dim, kind)
            q[7] = m[2]      # a query equal to a map row (distance 0)
            mp, qp, tp = (os.path.join(tmp, n) for n in ("m.f32", "q.f32", "t.f64"))
            m.tofile(mp)
            q.tofile(qp)
            # reloc: every map scan is a candidate
            cand = np.ones((len(q), len(m)), bool)
            compare(run(["reloc", kind, k, dim, mp, qp, 40]),
                    reference(kind, q, m, k, cand, 40), "reloc %s" % kind)
            # loop, time exclusion: j < i and t_j <= t_i - 30 (times 0.5 s apart, some equal)
            t = np.cumsum(rng.choice([0.0, 0.5, 1.0], size=len(m)))
            t.astype(np.float64).tofile(tp)
            i = np.arange(len(m))
            cand = (i[None, :] < i[:, None]) & (t[None, :] <= t[:, None] - 30.0)
            compare(run(["loop", kind, k, dim, mp, tp, 30, 40]),
                    reference(kind, m, m, k, cand, 40), "loop %s, time exclusion" % kind)
            # loop, index window of 50 scans
            cand = (i[None, :] <= i[:, None] - 50)
            compare(run(["loopn", kind, k, dim, mp, 50, 40]),
                    reference(kind, m, m, k, cand, 40), "loop %s, index window" % kind)
        big(rng, tmp)
    return done()


def big(rng, tmp):
    """Sizes past one block of queries (256) and of map rows (1,024), so the
    pool's tasks, the sampled first bar and the trims of the collectors all
    run; exact ties planted across block boundaries; K from 1 to 200."""
    dim = 12
    m = rng.standard_normal((2600, dim)).astype(np.float32)
    for a, b in ((5, 1029), (5, 2053), (700, 1500), (1023, 1024)):
        m[b] = m[a]
    q = rng.standard_normal((600, dim)).astype(np.float32)
    q[300] = m[1029]
    mp, qp, tp = (os.path.join(tmp, n) for n in ("bm.f32", "bq.f32", "bt.f64"))
    m.tofile(mp)
    q.tofile(qp)
    t = np.cumsum(rng.choice([0.5, 1.0], size=len(m)))
    t.tofile(tp)
    i = np.arange(len(m))
    loop = (i[None, :] < i[:, None]) & (t[None, :] <= t[:, None] - 30.0)
    for k in (1, 25, 200):
        compare(run(["reloc", "l2", k, dim, mp, qp]),
                reference("l2", q, m, k, np.ones((len(q), len(m)), bool)), "big reloc l2, K %d" % k)
    compare(run(["loop", "l2", 25, dim, mp, tp, 30]), reference("l2", m, m, 25, loop),
            "big loop l2, time exclusion")
    compare(run(["reloc", "cosine", 25, dim, mp, qp]),
            reference("cosine", q, m, 25, np.ones((len(q), len(m)), bool)), "big reloc cosine")


if __name__ == "__main__":
    sys.exit(main())
