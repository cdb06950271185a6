"""xcheck_sop.py: sop's segment features and power transform against numpy.

1. F_a of random segments: the eigenvalue features evaluated with numpy
   (numpy.linalg.eigvalsh of the covariance) from the formulas of
   Weinmann, Jutzi, Hinz & Mallet, "Semantic point cloud interpretation based
   on optimal neighborhoods, relevant features and efficient classifiers",
   ISPRS J. Photogramm. Remote Sens. 2015, sec. 3 (normalised eigenvalues;
   formulas from memory); horizontal spreads sqrt(12 l) from the eigenvalues
   of the 2x2 covariance (numpy.linalg.eigvalsh; a uniform strip of width w
   has variance w^2 / 12, common practice, no source), height statistics and the
   vertical occupancy histogram (numpy.histogram) as documented in
   harness/plugins/sop/features.c.
2. Power-Euclidean transform U diag(s^alpha) V^T (Dryden, Koloydenko & Zhou,
   "Non-Euclidean statistics for covariance matrices", Ann. Appl. Stat. 2009,
   sec. 3.2) against numpy.linalg.svd; alpha = 1 gives the matrix back.
"""
import os
import subprocess
import sys
import tempfile

import numpy as np

from checklib import check, done, tool_path

TOOL = tool_path("tool_sop")
EXTENT_SCALE, HEIGHT_SCALE = 10.0, 5.0   # the plugin's default settings


def features_numpy(x, plane, bins):
    c = x.mean(axis=0)
    d = x - c
    lam = np.sort(np.linalg.eigvalsh(d.T @ d / len(x)))[::-1]
    lam = np.clip(lam, 0, None)
    e = lam / lam.sum()
    ent = -sum(v * np.log(v) for v in e if v > 0)
    eig = [(e[0] - e[1]) / e[0], (e[1] - e[2]) / e[0], e[2] / e[0], np.cbrt(e.prod()),
           (e[0] - e[2]) / e[0], ent / np.log(3), e[2] / e.sum()]
    h = d[:, :2]
    w = np.linalg.eigvalsh(h.T @ h / len(x))[::-1]    # horizontal eigenvalues, descending
    ext = np.sqrt(12 * np.clip(w, 0, None))         # width of a uniform strip with that variance
    z = x[:, 2]
    g = plane[0] * c[0] + plane[1] * c[1] + plane[2]
    hist, _ = np.histogram(z, bins=bins, range=(z.min(), z.max()))
    return np.array(eig + [ext[0] / EXTENT_SCALE, ext[1] / EXTENT_SCALE, np.ptp(z) / EXTENT_SCALE,
                           (c[2] - g) / HEIGHT_SCALE, z.std() / HEIGHT_SCALE, (z.max() - g) / HEIGHT_SCALE]
                    + list(hist / len(x)))


def tool_features(x, plane, bins):
    with tempfile.TemporaryDirectory() as d:
        path = os.path.join(d, "seg.bin")
        np.c_[x, np.zeros(len(x))].astype(np.float32).tofile(path)
        out = subprocess.run([TOOL, "features", path] + [repr(v) for v in plane] + [str(bins)],
                             check=True, capture_output=True, text=True).stdout
    return np.array([float(v) for v in out.split()])


rng = np.random.default_rng(2015)
for k in range(12):
    n = int(rng.integers(20, 3000))
    scale = rng.uniform(0.05, 4, size=3)
    q, _ = np.linalg.qr(rng.normal(size=(3, 3)))
    x = (rng.normal(size=(n, 3)) * scale) @ q.T + rng.uniform(-20, 20, size=3)
    x = x.astype(np.float32).astype(np.float64)   # the values the plugin sees
    plane = (rng.uniform(-0.05, 0.05), rng.uniform(-0.05, 0.05), rng.uniform(-2, -1))
    bins = int(rng.integers(1, 9))
    got, ref = tool_features(x, plane, bins), features_numpy(x, plane, bins)
    check(got.shape == ref.shape, f"segment {k}: {13 + bins} features")
    if got.shape == ref.shape:
        worst = np.abs(got - ref).max()
        check(worst < 1e-9, f"segment {k}: features match numpy (worst {worst:.2e})")


def tool_power(m, alpha):
    text = f"{len(m)}\n" + "\n".join(" ".join(repr(v) for v in row) for row in m) + "\n"
    out = subprocess.run([TOOL, "power", repr(alpha)], input=text, check=True,
                         capture_output=True, text=True).stdout
    return np.array([[float(v) for v in line.split()] for line in out.strip().split("\n")])


for k, (dim, alpha) in enumerate([(17, 0.5), (5, 0.25), (21, 1.5), (9, 1.0)]):
    m = rng.normal(size=(dim, dim))
    if k == 0:
        m = np.abs(m)                       # like a pooled matrix of non-negative features
    u, s, vt = np.linalg.svd(m)             # numpy.linalg.svd
    ref = u @ np.diag(s ** alpha) @ vt
    got = tool_power(m, alpha)
    check(np.abs(got - ref).max() < 1e-10, f"power transform alpha={alpha} matches numpy svd")
    if alpha == 1.0:
        check(np.abs(got - m).max() < 1e-12, "alpha = 1 leaves the matrix unchanged")
sys.exit(done())
