"""xcheck_scan_context.py: the Scan Context plugin against numpy.

A re-implementation in numpy, written from the description in Kim and Kim,
"Scan Context: Egocentric Spatial Descriptor for Place Recognition within
3D Point Cloud Map", IROS 2018, sec. III (20 rings, 60 sectors, 80 m; the
2 m lift from memory), on street-like clouds:
1. the image (largest height z + 2 per ring and sector, numpy.arctan2 for
   the azimuth, sectors from -pi) and the ring key (row means) are equal;
2. the distance, min over column shifts of 1 - mean column cosine over the
   columns non-empty in both (numpy.linalg.norm), is within 1e-12 and the
   best shift is the same, on every pair, turned copies among them.
"""
import os
import subprocess
import sys
import tempfile

import numpy as np

from checklib import check, done, tool_path

TOOL = tool_path("tool_scan_context")
R, S, MAX_R, LIFT = 20, 60, 80.0, 2.0


def run_tool(clouds):
    with tempfile.TemporaryDirectory() as d:
        paths = []
        for i, pts in enumerate(clouds):
            p = os.path.join(d, "%d.bin" % i)
            pts.astype(np.float32).tofile(p)
            paths.append(p)
        out = subprocess.run([TOOL] + paths, check=True, capture_output=True, text=True).stdout.split("\n")
    n = len(clouds)
    rows = [np.array([float(x) for x in out[i].split()]) for i in range(n)]
    pairs = {}
    for line in out[n:]:
        if line.strip():
            i, j, dist, k = line.split()
            pairs[(int(i), int(j))] = (float(dist), int(k))
    # %.9g gives back each float32 exactly once rounded to float32
    return ([r[:R * S].reshape(S, R).astype(np.float32) for r in rows],
            [r[R * S:].astype(np.float32) for r in rows], pairs)


def image_numpy(pts):
    """Image (sectors x rings) and key, from the paper's description."""
    x, y = pts[:, 0].astype(np.float64), pts[:, 1].astype(np.float64)
    r = np.sqrt(x * x + y * y)
    keep = r < MAX_R
    ring = np.minimum((r[keep] / MAX_R * R).astype(int), R - 1)
    sec = np.minimum(((np.arctan2(y[keep], x[keep]) + np.pi) / (2 * np.pi) * S).astype(int), S - 1)
    h = (pts[keep, 2].astype(np.float64) + LIFT).astype(np.float32)
    img = np.full((S, R), -np.inf, dtype=np.float32)
    np.maximum.at(img, (sec, ring), h)
    img[img == -np.inf] = 0
    return img, (img.astype(np.float64).sum(axis=0) / S).astype(np.float32)


def distance_numpy(a, b):
    """min over k of 1 - mean_j cos(a_j, b_(j+k)); first k on ties."""
    a, b = a.astype(np.float64), b.astype(np.float64)
    na, nb = np.linalg.norm(a, axis=1), np.linalg.norm(b, axis=1)
    best, best_k = 2.0, 0
    for k in range(S):
        bk, nbk = np.roll(b, -k, axis=0), np.roll(nb, -k)
        used = (na > 0) & (nbk > 0)
        d = 1 - np.mean((a[used] * bk[used]).sum(axis=1) / (na[used] * nbk[used])) if used.any() else 1.0
        if d < best:
            best, best_k = d, k
    return max(best, 0.0), best_k


def street(rng, n):
    """Ground, walls, poles and parked boxes around the sensor."""
    k = n // 4
    ground = np.c_[rng.uniform(-60, 60, k), rng.uniform(-15, 15, k), rng.normal(-1.8, 0.03, k)]
    walls = np.c_[rng.uniform(-60, 60, k), rng.choice([-12.0, 14.0], k) + rng.normal(0, 0.05, k),
                  rng.uniform(-1.8, 8, k)]
    poles = np.c_[rng.choice([-30.0, -8.0, 5.0, 22.0], k) + rng.normal(0, 0.1, k),
                  rng.choice([-9.0, 10.0], k) + rng.normal(0, 0.1, k), rng.uniform(-1.8, 4, k)]
    m = n - 3 * k
    boxes = np.c_[rng.uniform(-25, 25, m), rng.uniform(-6, 6, m), rng.uniform(-1.8, -0.3, m)]
    return np.vstack([ground, walls, poles, boxes])


def turn(xyz, rad):
    c, s = np.cos(rad), np.sin(rad)
    return np.c_[c * xyz[:, 0] - s * xyz[:, 1], s * xyz[:, 0] + c * xyz[:, 1], xyz[:, 2]]


rng = np.random.default_rng(2018)
bases = [street(rng, 6000) for _ in range(4)]
clouds = bases + [turn(bases[0], 0.61), turn(bases[1], -2.3), bases[2] + np.r_[1.5, -0.8, 0.0]]
clouds = [np.c_[c, np.zeros(len(c))].astype(np.float32) for c in clouds]
imgs, keys, pairs = run_tool(clouds)

for i, pts in enumerate(clouds):
    ref, ref_key = image_numpy(pts)
    check(np.array_equal(imgs[i], ref), f"cloud {i}: image equals the numpy binning")
    check(np.array_equal(keys[i], ref_key), f"cloud {i}: ring key equals the row means")

worst, shift_bad = 0.0, 0
for (i, j), (d, k) in sorted(pairs.items()):
    ref_d, ref_k = distance_numpy(imgs[i], imgs[j])
    worst = max(worst, abs(d - ref_d))
    if k != ref_k:  # accept only a tie within 1e-12 in the reference itself
        a64, b64 = imgs[i].astype(np.float64), np.roll(imgs[j].astype(np.float64), -k, axis=0)
        na, nb = np.linalg.norm(a64, axis=1), np.linalg.norm(b64, axis=1)
        used = (na > 0) & (nb > 0)
        alt = 1 - np.mean((a64[used] * b64[used]).sum(axis=1) / (na[used] * nb[used]))
        shift_bad += abs(alt - ref_d) > 1e-12
check(worst <= 1e-12, f"every pair: distance within 1e-12 of numpy (worst {worst:.2g})")
check(shift_bad == 0, "every pair: the best shift is numpy's (or tied with it)")
check(all(pairs[(i, i)][0] == 0 for i in range(len(clouds))), "each cloud is at distance exactly 0 from itself")
turned = round(0.61 / (2 * np.pi) * S)
check(pairs[(0, 4)][1] in (turned - 1, turned, turned + 1), "a turn of 0.61 rad: the shift is within one sector of it")

sys.exit(done())
