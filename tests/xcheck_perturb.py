#!/usr/bin/python3
"""xcheck_perturb.py: perturbation stages checked against numpy / scipy.

Drives build/tests/tool_perturb (one raw scan in, one out) on synthetic scans
and compares with references computed here: scipy.spatial.transform.Rotation
for rigid stages, scipy.stats for the random ones, numpy for the rest.
"""
import os
import subprocess
import sys
import tempfile

import numpy as np
from scipy import stats
from scipy.spatial.transform import Rotation

from checklib import check, done, tool_path

TOOL = tool_path("tool_perturb")
TMP = tempfile.mkdtemp()


def run(chain, pts, seed=1, scan=0):
    """Apply chain to pts (N x 4 float32); returns (out points, stats lines)."""
    src, dst = os.path.join(TMP, "in.bin"), os.path.join(TMP, "out.bin")
    pts.astype("<f4").tofile(src)
    p = subprocess.run([TOOL, chain, str(seed), str(scan), src, dst],
                       capture_output=True, text=True)
    if p.returncode != 0:
        raise RuntimeError("tool_perturb failed: " + p.stderr)
    out = np.fromfile(dst, dtype="<f4").reshape(-1, 4)
    return out, p.stdout.splitlines()


def spinning_scan(n_az=2000, channels=16, seed=3):
    """A scan with uniform azimuths: channels x n_az beams at random ranges."""
    rng = np.random.default_rng(seed)
    az = np.repeat(np.arange(n_az) * (2 * np.pi / n_az), channels)
    az = az + rng.uniform(0, 2 * np.pi / n_az, az.size)
    el = np.tile(np.linspace(np.radians(-15), np.radians(10), channels), n_az)
    r = rng.uniform(2, 60, az.size)
    x = r * np.cos(el) * np.cos(az)
    y = r * np.cos(el) * np.sin(az)
    z = r * np.sin(el)
    i = rng.uniform(0, 1, az.size)
    return np.stack([x, y, z, i], axis=1).astype(np.float32)


SCAN = spinning_scan()
P64 = SCAN[:, :3].astype(np.float64)


def rigid():
    # Reference: scipy.spatial.transform.Rotation (SciPy 1.10), from_euler/apply.
    out, _ = run("yaw:deg=37.5", SCAN)
    ref = Rotation.from_euler("z", 37.5, degrees=True).apply(P64)
    check(np.abs(out[:, :3] - ref).max() < 1e-4, "yaw=37.5 equals scipy Rotation about z")
    check(np.abs(np.linalg.norm(out[:, :3], axis=1) - np.linalg.norm(P64, axis=1)).max() < 1e-4,
          "yaw keeps every range to float precision")
    check(np.array_equal(out[:, 2], SCAN[:, 2]), "yaw keeps every height exactly")
    check(np.array_equal(out[:, 3], SCAN[:, 3]), "yaw keeps intensities")

    out, _ = run("yaw:deg=random", SCAN, seed=5, scan=2)
    ang = np.degrees(np.arctan2(out[0, 1], out[0, 0]) - np.arctan2(P64[0, 1], P64[0, 0]))
    ref = Rotation.from_euler("z", ang, degrees=True).apply(P64)
    check(np.abs(out[:, :3] - ref).max() < 1e-3, "yaw=random is one rotation about z")

    # extrinsic 'xyz' = Ry(pitch) Rx(roll): roll first, then pitch (scipy docs, from_euler)
    out, _ = run("tilt:roll=3,pitch=-5", SCAN)
    ref = Rotation.from_euler("xyz", [3, -5, 0], degrees=True).apply(P64)
    check(np.abs(out[:, :3] - ref).max() < 1e-4, "tilt equals scipy Rotation roll then pitch")
    check(np.abs(np.linalg.norm(out[:, :3], axis=1) - np.linalg.norm(P64, axis=1)).max() < 1e-4,
          "tilt keeps every range")

    t = np.array([1.5, -0.25, 0.1])
    out, _ = run("shift:x=1.5m,y=-0.25,z=0.1", SCAN)
    check(np.abs(out[:, :3] - (P64 - t)).max() < 1e-5, "shift moves the points by -t")

    # tilt then shift as one homogeneous matrix built with scipy
    m = np.eye(4)
    m[:3, :3] = Rotation.from_euler("xyz", [-2, 4, 0], degrees=True).as_matrix()
    m[:3, 3] = -t
    ref = (np.c_[P64, np.ones(len(P64))] @ m.T)[:, :3]
    out, _ = run("tilt:roll=-2,pitch=4+shift:x=1.5,y=-0.25,z=0.1", SCAN)
    check(np.abs(out[:, :3] - ref).max() < 1e-4, "tilt+shift compose to the rigid transform [R|-t]")


def noise():
    big = spinning_scan(n_az=4000, channels=8, seed=9)
    b64 = big[:, :3].astype(np.float64)
    r0 = np.linalg.norm(b64, axis=1)
    out, _ = run("noise:sigma=0.05,mode=ray", big, seed=11)
    res = np.linalg.norm(out[:, :3].astype(np.float64), axis=1) - r0
    # Kolmogorov-Smirnov test against scipy.stats.norm (SciPy 1.10, scipy.stats.kstest)
    p = stats.kstest(res, stats.norm(loc=0, scale=0.05).cdf).pvalue
    check(p > 0.01, "ray noise residuals are N(0, 0.05): KS does not reject at 1%% (p=%.3g)" % p)
    u_in = b64 / r0[:, None]
    u_out = out[:, :3] / np.linalg.norm(out[:, :3], axis=1)[:, None]
    check(np.abs(u_in - u_out).max() < 1e-5, "ray noise keeps every direction")
    again, _ = run("noise:sigma=0.05,mode=ray", big, seed=11)
    check(np.array_equal(out, again), "the same seed gives the same noise bytes")
    other, _ = run("noise:sigma=0.05,mode=ray", big, seed=12)
    check(not np.array_equal(out, other), "another seed gives other noise")
    out, _ = run("noise:sigma=0.02,mode=xyz", big, seed=4)
    d = (out[:, :3].astype(np.float64) - b64).ravel()
    p = stats.kstest(d, stats.norm(loc=0, scale=0.02).cdf).pvalue
    check(p > 0.01, "xyz noise per axis is N(0, 0.02): KS does not reject at 1%% (p=%.3g)" % p)
    out, _ = run("noise:sigma=0,outliers=0.2", big, seed=4)
    ratio = np.linalg.norm(out[:, :3].astype(np.float64), axis=1) / r0
    moved = ratio < 1 - 1e-5
    # binomial interval, scipy.stats.binom.interval
    lo, hi = stats.binom.interval(0.999, len(big), 0.2)
    check(lo <= moved.sum() <= hi, "outlier share lies in the 99.9%% binomial interval")
    # spurious ranges uniform on (0, r]: KS against scipy.stats.uniform
    p = stats.kstest(ratio[moved], stats.uniform(0, 1).cdf).pvalue
    check(p > 0.01, "outlier ranges are uniform along the ray (p=%.3g)" % p)


def dropout():
    big = spinning_scan(n_az=10000, channels=10, seed=5)
    for prob in (0.05, 0.3, 0.5):
        out, lines = run("dropout:p=%g" % prob, big, seed=21)
        # 99.9% binomial interval of the kept count, scipy.stats.binom.interval
        lo, hi = stats.binom.interval(0.999, len(big), 1 - prob)
        check(lo <= len(out) <= hi, "dropout p=%g keeps a binomial share (%d in [%d, %d])"
              % (prob, len(out), lo, hi))
        check(lines[1] == "dropout %d %d" % (len(big), len(out)), "stats count points in and out")
    # burst mode on a dense ring: one point every 0.01 degree
    n = 36000
    az = np.radians(np.arange(n) * 0.01 + 0.005)
    ring = np.stack([10 * np.cos(az), 10 * np.sin(az), np.zeros(n), np.zeros(n)], 1).astype(np.float32)
    runs, kept = [], 0
    for scan in range(20):
        out, _ = run("dropout:p=0.3,burst=2deg", ring, seed=3, scan=scan)
        kept += len(out)
        a = np.round((np.degrees(np.arctan2(out[:, 1], out[:, 0])) % 360 - 0.005) / 0.01).astype(int)
        present = np.zeros(n, bool)
        present[a] = True
        gone = ~present
        if gone.all() or not gone.any():
            continue
        start = np.argmax(present)        # rotate so the sequence starts with a kept point
        g = np.roll(gone, -start).astype(int)
        edges = np.diff(np.r_[0, g, 0])
        lens = (np.flatnonzero(edges == -1) - np.flatnonzero(edges == 1)) * 0.01
        runs.extend(lens)
    runs = np.array(runs)
    # mean of exponential block lengths: normal CI with the sample spread
    half = stats.norm.ppf(0.9995) * runs.std(ddof=1) / np.sqrt(len(runs))
    check(abs(runs.mean() - 2.0) < half + 0.01,
          "burst mean length %.3f deg is 2 within its 99.9%% CI (+-%.3f)" % (runs.mean(), half))
    share = 1 - kept / (20 * n)
    check(abs(share - 0.3) < 0.05, "burst mode removes about p of the points (%.3f)" % share)


def azimuth_deg(p):
    return np.degrees(np.arctan2(p[:, 1], p[:, 0])) % 360


def membership():
    # sector: common practice, no source -- a 180 deg sector removes about half
    # of a spinning sensor's points; width w removes w/360.
    for w in (30, 90, 180, 270):
        out, _ = run("sector:width=%d" % w, SCAN, seed=2, scan=7)
        share = 1 - len(out) / len(SCAN)
        check(abs(share - w / 360) < 0.01, "sector width %d removes %.4f, expected %.4f +- 0.01"
              % (w, share, w / 360))
    for w, c in ((60, 30), (200, 300)):
        out, _ = run("sector:width=%d,at=%d" % (w, c), SCAN)
        a = azimuth_deg(P64)
        d = (a - c + 180) % 360 - 180
        inside = (d >= -w / 2) & (d < w / 2)
        edge = np.minimum(abs(d + w / 2), abs(d - w / 2)) < 1e-4
        kept = {tuple(p) for p in out[:, :3]}
        flags = np.array([tuple(p) in kept for p in SCAN[:, :3]])
        check(np.all(flags[~edge] == ~inside[~edge]),
              "sector width %d at %d removes exactly the points inside" % (w, c))
    out, _ = run("sector:width=40,at=0,count=3", SCAN)
    a = azimuth_deg(P64)
    inside = np.zeros(len(a), bool)
    for c in (0, 120, 240):
        inside |= abs((a - c + 180) % 360 - 180) < 20
    check(len(out) == (~inside).sum(), "three fixed sectors are spread 120 degrees apart")

    # range membership is defined on float32 arithmetic: (x*x + y*y) + z*z
    # against float32(min)^2 and float32(max)^2 (IEEE 754 single, numpy float32)
    for lo, hi in ((5, 30), (0, 17.3), (2.5, 1000)):
        out, _ = run("range:min=%g,max=%gm" % (lo, hi), SCAN)
        x, y, z = SCAN[:, 0], SCAN[:, 1], SCAN[:, 2]
        r2 = (x * x + y * y) + z * z
        lo2, hi2 = np.float32(lo) * np.float32(lo), np.float32(hi) * np.float32(hi)
        keep = (r2 >= lo2) & (r2 <= hi2)
        check(r2.dtype == np.float32 and np.array_equal(out, SCAN[keep]),
              "range keeps exactly %g <= r <= %g, in order" % (lo, hi))
    r64 = np.sqrt((P64 ** 2).sum(1))
    x, y, z = SCAN[:, 0], SCAN[:, 1], SCAN[:, 2]
    r2 = (x * x + y * y) + z * z
    kf = (r2 >= np.float32(25)) & (r2 <= np.float32(900))
    k64 = (r64 >= 5) & (r64 <= 30)
    near = (abs(r64 - 5) < 1e-4) | (abs(r64 - 30) < 1e-4)
    check(not (kf != k64)[~near].any(), "float membership equals the exact range away from the bounds")

    out, _ = run("fov:down=-8,up=4.5", SCAN)
    el = np.degrees(np.arctan2(P64[:, 2], np.hypot(P64[:, 0], P64[:, 1])))
    keep = (el >= -8) & (el <= 4.5)
    check(np.array_equal(out, SCAN[keep]), "fov keeps exactly -8 <= elevation <= 4.5, in order")


def density():
    # numpy reference: mean of every occupied floor(p / leaf) voxel
    out, _ = run("density:leaf=0.5", SCAN)
    vox = np.floor(SCAN[:, :3] / np.float32(0.5)).astype(np.int64)
    keys, inv = np.unique(vox, axis=0, return_inverse=True)
    inv = inv.ravel()
    ref = np.zeros((len(keys), 4))
    np.add.at(ref, inv, SCAN.astype(np.float64))
    ref /= np.bincount(inv)[:, None]
    check(len(out) == len(keys), "density gives one point per occupied voxel (%d vs %d)"
          % (len(out), len(keys)))
    order = np.lexsort((ref[:, 2], ref[:, 1], ref[:, 0]))
    got = np.lexsort((out[:, 2], out[:, 1], out[:, 0]))
    check(len(out) == len(keys) and np.abs(out[got] - ref[order]).max() < 1e-4,
          "density points are the voxel means of x, y, z and intensity")


def skew():
    # Rebuild the raw sweep independently: point time from azimuth (start 180,
    # period 0.1 s), sensor pose on a circular arc, scipy Rotation for the yaw.
    v, w = 12.0, 30.0
    out, _ = run("skew:speed=%g,yawrate=%g" % (v, w), SCAN)
    a = azimuth_deg(P64)
    t = 0.1 * ((a - 180) % 360) / 360
    psi = np.radians(w) * t
    s = np.stack([v / np.radians(w) * np.sin(psi), v / np.radians(w) * (1 - np.cos(psi)),
                  np.zeros_like(psi)], 1)
    ref = Rotation.from_euler("z", -psi).apply(P64 - s)
    check(np.abs(out[:, :3] - ref).max() < 1e-3, "skew gives the raw sweep of a turning sensor")
    back = Rotation.from_euler("z", psi).apply(out[:, :3].astype(np.float64)) + s
    check(np.abs(back - P64).max() < 1e-3, "deskewing the skewed scan gives the scan back")


def clutter():
    # one box of edge 0.6 m centred 2 m ahead at sensor height (bearing 0, near=far)
    out, _ = run("clutter:count=1,size=0.6,near=2,far=2,at=0,height=0,res=0.5", SCAN)
    orig = {tuple(p) for p in SCAN[:, :3]}
    is_orig = np.array([tuple(p) in orig for p in out[:, :3]])
    kept, added = out[is_orig, :3].astype(np.float64), out[~is_orig, :3].astype(np.float64)
    lo, hi = np.array([1.7, -0.3, -0.3]), np.array([2.3, 0.3, 0.3])

    def hits(p):  # segment origin -> p crosses the box (slab test, numpy)
        with np.errstate(divide="ignore", invalid="ignore"):
            t1, t2 = lo / p, hi / p
        tmin = np.nanmax(np.minimum(t1, t2), axis=1)
        tmax = np.nanmin(np.maximum(t1, t2), axis=1)
        return (tmin <= tmax) & (tmin > 0) & (tmin < 1)

    check(not hits(kept).any(), "no kept point lies behind the box")
    kept_set = {tuple(q) for q in out[is_orig, :3]}
    removed = np.array([tuple(p) not in kept_set for p in SCAN[:, :3]])
    check(hits(P64[removed]).all() and removed.sum() > 0, "every removed point was behind the box")
    on_face = np.isclose(added[:, 0], 1.7, atol=1e-4) & (abs(added[:, 1]) <= 0.3 + 1e-4)
    check(len(added) > 0 and on_face.all(), "the box's own returns lie on its near face")


def order():
    a, _ = run("noise:sigma=2+range:max=30", SCAN, seed=8)
    b, _ = run("range:max=30+noise:sigma=2", SCAN, seed=8)
    check(not np.array_equal(a, b), "noise then range differs from range then noise")
    r = np.linalg.norm(a[:, :3], axis=1)
    check(r.max() <= 30 + 1e-4, "range after noise leaves nothing beyond max")
    r = np.linalg.norm(b[:, :3], axis=1)
    check(r.max() > 30, "noise after range pushes some points beyond max")


def main():
    for f in (rigid, noise, dropout, membership, density, skew, clutter, order):
        try:
            f()
        except Exception as ex:  # a crash in one group is one failure
            check(False, "%s raised %r" % (f.__name__, ex))
    return done()


if __name__ == "__main__":
    sys.exit(main())
