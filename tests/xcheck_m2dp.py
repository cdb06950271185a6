"""xcheck_m2dp.py: the M2DP plugin against numpy.

1. Its SVD step against numpy.linalg.svd on the very count matrix it built.
2. A re-implementation in numpy, written from the description in
   He, Wang & Zhang, "M2DP: a novel 3D point cloud descriptor and its
   application in loop closure detection", IROS 2016, sec. III (constants from
   memory), with the sign rules documented in harness/plugins/m2dp/m2dp.c,
   gives the same count matrix and the same signature.
"""
import os
import subprocess
import sys
import tempfile

import numpy as np

from checklib import check, done, tool_path

TOOL = tool_path("tool_m2dp")


def run_tool(pts, p, q, l, t):
    with tempfile.TemporaryDirectory() as d:
        path = os.path.join(d, "scan.bin")
        pts.astype(np.float32).tofile(path)
        out = subprocess.run([TOOL, path, str(p), str(q), str(l), str(t)],
                             check=True, capture_output=True, text=True).stdout.split("\n")
    rows, cols = map(int, out[0].split())
    a = np.array([[float(x) for x in out[1 + i].split()] for i in range(rows)])
    sig = np.array([float(x) for x in out[1 + rows].split()])
    return a, sig


def m2dp_numpy(xyz, p, q, l, t):
    """M2DP from the paper's description (sec. III), in plain numpy."""
    d = xyz - xyz.mean(axis=0)
    w, vec = np.linalg.eigh(d.T @ d)           # ascending eigenvalues
    axes = []
    for k in (2, 1):                           # first, then second principal axis
        a = vec[:, k]
        if np.sum((d @ a) ** 3) < 0:           # third-moment sign rule
            a = -a
        axes.append(a)
    axes.append(np.cross(axes[0], axes[1]))
    q_pts = d @ np.stack(axes, axis=1)         # coordinates in the principal frame
    r0 = np.sqrt((q_pts ** 2).sum(axis=1).max()) / l ** 2
    mat = np.zeros((p * q, l * t))
    for i in range(p):
        for j in range(q):
            th, ph = i * np.pi / p, j * np.pi / (2 * q)
            m = np.array([np.cos(ph) * np.cos(th), np.cos(ph) * np.sin(th), np.sin(ph)])
            for ax in (np.array([1.0, 0, 0]), np.array([0, 1.0, 0])):
                e1 = ax - (ax @ m) * m
                if np.linalg.norm(e1) >= 1e-9:
                    break
            e1 /= np.linalg.norm(e1)
            e2 = np.cross(m, e1)
            u, v = q_pts @ e1, q_pts @ e2
            ring = np.minimum(np.floor(np.sqrt(np.hypot(u, v) / r0)), l - 1).astype(int)
            ang = np.mod(np.arctan2(v, u), 2 * np.pi)
            sec = np.minimum(np.floor(ang / (2 * np.pi / t)), t - 1).astype(int)
            np.add.at(mat[i * q + j], ring * t + sec, 1)
    u_, s_, vt_ = np.linalg.svd(mat)
    u1, v1 = u_[:, 0], vt_[0]
    if v1.sum() < 0:
        u1, v1 = -u1, -v1
    return mat, np.concatenate([u1, v1])


def scan_like(rng, n):
    """Ground, two walls and some poles: a small street-like cloud."""
    k = n // 4
    ground = np.c_[rng.uniform(-30, 30, k), rng.uniform(-8, 8, k), rng.normal(-1.7, 0.02, k)]
    wall1 = np.c_[rng.uniform(-30, 10, k), np.full(k, 8.0) + rng.normal(0, 0.03, k), rng.uniform(-1.7, 6, k)]
    wall2 = np.c_[np.full(k, 12.0), rng.uniform(-8, 3, k), rng.uniform(-1.7, 9, k)]
    m = n - 3 * k
    poles = np.c_[rng.choice([-20.0, -5.0, 4.0], m) + rng.normal(0, 0.1, m),
                  rng.normal(-6, 0.1, m), rng.uniform(-1.7, 3, m)]
    return np.vstack([ground, wall1, wall2, poles])


rng = np.random.default_rng(2016)
clouds = [
    ("exponential blob", rng.exponential([10.0, 4.0, 1.0], size=(3000, 3)), (4, 16, 8, 16)),
    ("street-like scan", scan_like(rng, 8000), (4, 16, 8, 16)),
    ("small grid", rng.gamma(2.0, [3.0, 2.0, 1.0], size=(1500, 3)), (3, 5, 4, 6)),
]
for name, xyz, (p, q, l, t) in clouds:
    pts = np.c_[xyz, np.zeros(len(xyz))].astype(np.float32)
    a, sig = run_tool(pts, p, q, l, t)
    rows = p * q
    # 1. SVD step: numpy.linalg.svd on the same matrix (numpy.linalg.svd)
    u_, s_, vt_ = np.linalg.svd(a)
    u1, v1 = u_[:, 0], vt_[0]
    if v1.sum() < 0:
        u1, v1 = -u1, -v1
    check(np.abs(sig[:rows] - u1).max() < 1e-9, f"{name}: u1 matches numpy.linalg.svd")
    check(np.abs(sig[rows:] - v1).max() < 1e-9, f"{name}: v1 matches numpy.linalg.svd")
    check(abs(sig[:rows] @ a @ sig[rows:] - s_[0]) < 1e-6 * s_[0],
          f"{name}: u1' A v1 is the largest singular value")
    # 2. numpy re-implementation from the paper's description
    mat, ref = m2dp_numpy(pts[:, :3].astype(np.float64), p, q, l, t)
    check(np.array_equal(mat, a), f"{name}: count matrix equals the numpy one")
    check(a.sum() == len(xyz) * rows, f"{name}: every point lands in one bin per plane")
    check(np.abs(sig - ref).max() < 1e-9, f"{name}: signature equals the numpy one")

sys.exit(done())
