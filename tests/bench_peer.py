#!/usr/bin/python3
"""bench_peer.py: a plain numpy + scipy Scan Context evaluation, the kind a
user would write instead of running revisit; the reference of the
whole-process ratio in tests/bench_peer.sh.

    /usr/bin/python3 tests/bench_peer.py REC [--bootstrap 1000] [--prefilter 50]

REC is a folder holding scans/ (PCD binary or ascii, or .bin float32 x y z i)
and poses.csv (header t,x,y,z,...).  The evaluation is the one `revisit eval
--method scan-context` runs with its defaults, written the straightforward
vectorised way:
  descriptor  20 rings x 60 sectors out to 80 m, cell = highest z + 2 m of
              its points, empty cells 0; ring key = mean of each ring
              (Kim & Kim, IROS 2018, as the revisit plugin states it)
  candidates  loop mode: scans at least 30 s older than the query
  prefilter   the 50 candidates nearest in ring key (scipy.spatial.cKDTree,
              rebuilt whenever the candidate prefix grows)
  distance    min over column shifts of 1 - mean cosine of the columns
              non-empty in both, all shifts at once with numpy.einsum
  scoring     top-1 distance per query; a query is a revisit when a
              candidate lies within 3 m; TP = accepted with top-1 within
              3 m, FP = accepted beyond it, FN = revisit not a TP (strict);
              F1max over every distinct top-1 distance; a 95% percentile
              bootstrap of F1max over queries (numpy.percentile)
Prints one JSON line: f1max, its interval, queries, revisits, seconds.
"""
import json
import os
import sys
import time

import numpy as np
from scipy.spatial import cKDTree

RINGS, SECTORS, MAX_RANGE, LIFT = 20, 60, 80.0, 2.0
RADIUS, EXCLUDE_S = 3.0, 30.0

PCD_TYPES = {('F', 4): 'f4', ('F', 8): 'f8', ('U', 1): 'u1', ('U', 2): 'u2', ('U', 4): 'u4',
             ('I', 1): 'i1', ('I', 2): 'i2', ('I', 4): 'i4'}


def read_pcd(path):
    with open(path, 'rb') as f:
        head = {}
        while True:
            line = f.readline().decode('ascii').strip()
            if not line or line.startswith('#'):
                continue
            key, *val = line.split()
            head[key] = val
            if key == 'DATA':
                break
        n = int(head['POINTS'][0])
        if head['DATA'][0] == 'ascii':
            a = np.loadtxt(f, ndmin=2)
            names = head['FIELDS']
            return np.stack([a[:, names.index(c)] for c in 'xyz'], axis=1)
        dt = np.dtype([(name, PCD_TYPES[(t, int(s))])
                       for name, t, s in zip(head['FIELDS'], head['TYPE'], head['SIZE'])])
        a = np.frombuffer(f.read(n * dt.itemsize), dtype=dt, count=n)
        return np.stack([a['x'], a['y'], a['z']], axis=1)


def read_scan(path):
    if path.endswith('.bin'):
        return np.fromfile(path, dtype=np.float32).reshape(-1, 4)[:, :3]
    return read_pcd(path)


def describe(xyz):
    """Scan Context image (sectors x rings, float32) and ring key."""
    x, y, z = xyz[:, 0].astype(np.float64), xyz[:, 1].astype(np.float64), xyz[:, 2]
    r = np.hypot(x, y)
    keep = r < MAX_RANGE
    ring = np.minimum((r[keep] / MAX_RANGE * RINGS).astype(np.int64), RINGS - 1)
    sec = np.minimum(((np.arctan2(y[keep], x[keep]) + np.pi) / (2 * np.pi) * SECTORS).astype(np.int64),
                     SECTORS - 1)
    h = (z[keep].astype(np.float64) + LIFT).astype(np.float32)
    cell = sec * RINGS + ring
    img = np.zeros(SECTORS * RINGS, np.float32)
    if cell.size:  # highest point of each cell: sort by (cell, height), keep the last of each cell
        o = np.lexsort((h, cell))
        c, hs = cell[o], h[o]
        last = np.r_[c[1:] != c[:-1], True]
        img[c[last]] = hs[last]
    img = img.reshape(SECTORS, RINGS)
    return img, img.mean(axis=0, dtype=np.float64)


def sc_distance(q, cands):
    """Best-shift distance of image q (S x R) to each of cands (m x S x R)."""
    q = q.astype(np.float64)
    c = cands.astype(np.float64)
    qn = np.linalg.norm(q, axis=1)
    cn = np.linalg.norm(c, axis=2)
    qu = q / np.where(qn > 0, qn, 1)[:, None]
    cu = c / np.where(cn > 0, cn, 1)[:, :, None]
    g = np.einsum('jr,mkr->mjk', qu, cu)                       # cosine of q col j, cand col k
    j = np.arange(SECTORS)
    shift = (j[None, :] + j[:, None]) % SECTORS                 # [k, j] -> column j + k
    sims = g[:, j[None, :], shift]                              # m x shifts x columns
    both = (qn > 0)[None, None, :] & (cn > 0)[:, shift]
    used = both.sum(axis=2)
    d = np.where(used > 0, 1 - (sims * both).sum(axis=2) / np.maximum(used, 1), 1.0)
    return np.maximum(d.min(axis=1), 0)


def load(rec):
    d = os.path.join(rec, 'scans')
    names = sorted(f for f in os.listdir(d) if f.endswith(('.pcd', '.bin')))
    p = np.genfromtxt(os.path.join(rec, 'poses.csv'), delimiter=',', names=True)
    if len(p) != len(names):
        sys.exit('%s: %d scans and %d poses' % (rec, len(names), len(p)))
    return [os.path.join(d, f) for f in names], np.stack([p['x'], p['y'], p['z']], axis=1), p['t']


def retrieve(imgs, keys, t, top_c):
    """Top-1 (index, distance) per query; -1 where there is no candidate."""
    n = len(t)
    best = np.full(n, -1)
    dist = np.full(n, np.inf)
    prefix = np.minimum(np.searchsorted(t, t - EXCLUDE_S, side='right'), np.arange(n))
    tree, built = None, 0
    for i in range(n):
        p = prefix[i]
        if p == 0:
            continue
        if p != built:
            tree, built = cKDTree(keys[:p]), p
        _, idx = tree.query(keys[i], k=min(top_c, p))
        idx = np.atleast_1d(idx)
        d = sc_distance(imgs[i], imgs[idx])
        o = np.lexsort((idx, d))[0]
        best[i], dist[i] = idx[o], d[o]
    return best, dist


def f1max(d1, tp, fp, revisit, w=None):
    """F1max over the distinct finite top-1 distances (sorted order given)."""
    w = np.ones((1, len(d1))) if w is None else w
    ctp = np.cumsum(w * tp, axis=1)
    cfp = np.cumsum(w * fp, axis=1)
    rev = (w * revisit).sum(axis=1, keepdims=True)
    fin = np.isfinite(d1)
    ends = np.nonzero(fin & np.r_[d1[1:] != d1[:-1], True])[0]
    ctp, cfp = ctp[:, ends], cfp[:, ends]
    prec = np.where(ctp + cfp > 0, ctp / np.maximum(ctp + cfp, 1e-300), 1.0)
    rec = np.where(rev > 0, ctp / np.maximum(rev, 1e-300), 0.0)
    f1 = np.where(prec + rec > 0, 2 * prec * rec / np.maximum(prec + rec, 1e-300), 0.0)
    return f1.max(axis=1) if f1.shape[1] else np.zeros(len(w))


def score(xyz, t, best, dist, resamples, seed=1):
    n = len(t)
    tree = cKDTree(xyz)
    prefix = np.minimum(np.searchsorted(t, t - EXCLUDE_S, side='right'), np.arange(n))
    revisit = np.array([any(j < prefix[i] for j in tree.query_ball_point(xyz[i], RADIUS))
                        for i in range(n)])
    has = best >= 0
    near = np.zeros(n, bool)
    near[has] = np.linalg.norm(xyz[has] - xyz[best[has]], axis=1) <= RADIUS
    o = np.lexsort((np.arange(n), dist))
    d1, tp, fp, rv = dist[o], (has & near)[o], (has & ~near)[o], revisit[o]
    point = float(f1max(d1, tp, fp, rv)[0])
    lo = hi = None
    if resamples > 0:
        rng = np.random.default_rng(seed)
        w = rng.multinomial(n, np.full(n, 1.0 / n), size=resamples)[:, o]
        vals = f1max(d1, tp, fp, rv, w)
        lo, hi = (float(v) for v in np.percentile(vals, [2.5, 97.5]))
    return point, lo, hi, int(revisit.sum())


def main(argv):
    rec, resamples, top_c = argv[1], 1000, 50
    args = argv[2:]
    while args:
        opt, val, args = args[0], args[1], args[2:]
        if opt == '--bootstrap':
            resamples = int(val)
        elif opt == '--prefilter':
            top_c = int(val)
        else:
            sys.exit('bench_peer.py: unknown option ' + opt)
    t0 = time.perf_counter()
    paths, xyz, t = load(rec)
    descs = [describe(read_scan(p)) for p in paths]
    imgs = np.stack([d[0] for d in descs])
    keys = np.stack([d[1] for d in descs]).astype(np.float32).astype(np.float64)
    best, dist = retrieve(imgs, keys, t, top_c)
    f1, lo, hi, revisits = score(xyz, t, best, dist, resamples)
    print(json.dumps({'f1max': f1, 'lo': lo, 'hi': hi, 'queries': len(t), 'revisits': revisits,
                      'seconds': round(time.perf_counter() - t0, 3)}))
    return 0


if __name__ == '__main__':
    sys.exit(main(sys.argv))
