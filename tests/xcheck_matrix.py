#!/usr/bin/python3
"""xcheck_matrix.py: the distance matrix of `revisit eval` and of a sweep,
against scipy.spatial.distance.cdist (SciPy reference) on the very
descriptors eval described, read back from its descriptor cache (the layout
of harness/run/desc_cache.h) with numpy.frombuffer:

- a loop recording of 420 scans (over matrix.csv's 400): matrix.bin holds
  every query against every map scan on and below the diagonal (NaN above:
  no later scan is a candidate), each equal to cdist rounded to float32;
  matrix.csv holds an evenly spaced 400 x 400 sample of it;
- --matrix-scans 0 keeps the sample only (no matrix.bin); a custom distance
  (Scan Context) keeps a 60 x 60 sample unless --matrix-scans asks, and its
  whole matrix then agrees with the top candidates of queries.csv;
- a sweep: the unperturbed cell gets every scan, a perturbed one the sample;
- the report draws the whole matrix: its image data (NAME.bin) equals
  matrix.bin, one pixel per distance.
"""
import glob
import json
import os
import shutil
import struct
import subprocess
import sys
import tempfile

import numpy as np
from scipy.spatial.distance import cdist

from checklib import check, done

BIN = os.environ["REVISIT_BIN"]
N = 420


def read_bin(path):
    """matrix.bin: the format line, '#binary,R,C', R + C u32 indices, R*C f32."""
    raw = open(path, "rb").read()
    first = raw.index(b"\n") + 1
    second = raw.index(b"\n", first) + 1
    head = raw[first:second].decode().strip().split(",")
    r, c = int(head[1]), int(head[2])
    at = second
    ri = np.frombuffer(raw, "<u4", r, at)
    ci = np.frombuffer(raw, "<u4", c, at + 4 * r)
    d = np.frombuffer(raw, "<f4", r * c, at + 4 * (r + c)).reshape(r, c)
    check(len(raw) == at + 4 * (r + c + r * c), "%s: its size is the header's" % os.path.basename(path))
    return ri, ci, d


def read_csv(path):
    rows = [ln.strip() for ln in open(path) if ln.strip() and not ln.startswith("# ")]
    ri = [int(v) for v in rows[0].split(",")[1:]]
    ci = [int(v) for v in rows[1].split(",")[1:]]
    d = np.array([[float(v) for v in ln.split(",")] for ln in rows[2:]])
    return np.array(ri), np.array(ci), d


def read_cache(cache):
    """The one descriptor set in the cache folder (desc_cache.h layout)."""
    files = glob.glob(os.path.join(cache, "desc-*.bin"))
    check(len(files) == 1, "one descriptor set in the cache (%d)" % len(files))
    raw = open(files[0], "rb").read()
    dim, key_dim = struct.unpack_from("<II", raw, 8)
    count = struct.unpack_from("<Q", raw, 16)[0]
    lens = struct.unpack_from("<4I", raw, 40)
    at = 64 + sum(lens)
    return np.frombuffer(raw, "<f4", count * dim, at).reshape(count, dim).astype(np.float64)


def reference(desc, kind):
    # scipy.spatial.distance.cdist, 'euclidean' or 'cosine' (1 - cos), as result.json names the distance
    return cdist(desc, desc, "euclidean" if kind == "l2" else "cosine")


def main():
    tmp = tempfile.mkdtemp()
    rec = os.path.join(tmp, "rec")
    subprocess.run([BIN, "synth", "--scenario", "port", "--sensor", "spin16", "--scans", str(N), "--out", rec,
                    "--quiet"], check=True, stdout=subprocess.DEVNULL)
    out, cache = os.path.join(tmp, "full"), os.path.join(tmp, "cache")
    subprocess.run([BIN, "eval", "--map", rec, "--method", "range-height", "--bootstrap", "0", "--cache", cache,
                    "--out", out, "--quiet"], check=True, stdout=subprocess.DEVNULL)
    res = json.load(open(os.path.join(out, "result.json")))
    ref = reference(read_cache(cache), res["method"]["distance"])
    ri, ci, d = read_bin(os.path.join(out, "matrix.bin"))
    check(list(ri) == list(range(N)) and list(ci) == list(range(N)), "matrix.bin: every one of the %d scans" % N)
    low = np.tril(np.ones((N, N), bool))
    check(np.isnan(d[~low]).all(), "matrix.bin: NaN above the diagonal (loop mode: no later candidate)")
    err = np.abs(d[low] - ref[low].astype(np.float32)) / np.maximum(1e-6, np.abs(ref[low]))
    check(err.max() < 1e-5, "matrix.bin: every distance on and below the diagonal equals scipy cdist as float32 "
          "(largest relative error %.2g)" % err.max())
    sr, sc, sd = read_csv(os.path.join(out, "matrix.csv"))
    want = [k * (N - 1) // 399 for k in range(400)]
    check(list(sr) == want and list(sc) == want, "matrix.csv: 400 evenly spaced rows and columns of the %d" % N)
    sub = ref[np.ix_(sr, sc)]
    ok = np.isnan(sd) == (sc[None, :] > sr[:, None])
    check(ok.all(), "matrix.csv: NaN exactly where the map scan is later than the query")
    fin = ~np.isnan(sd)
    check(np.allclose(sd[fin], sub[fin], rtol=1e-9, atol=1e-12), "matrix.csv: the sample equals scipy cdist")

    # --matrix-scans 0: the sample only.
    out0 = os.path.join(tmp, "sample")
    subprocess.run([BIN, "eval", "--map", rec, "--method", "range-height", "--bootstrap", "0", "--cache", cache,
                    "--matrix-scans", "0", "--out", out0, "--quiet"], check=True, stdout=subprocess.DEVNULL)
    check(not os.path.exists(os.path.join(out0, "matrix.bin")), "--matrix-scans 0 writes no matrix.bin")
    check(np.array_equal(read_csv(os.path.join(out0, "matrix.csv"))[0], sr), "--matrix-scans 0 keeps the 400 sample")
    cmd = json.load(open(os.path.join(out0, "result.json")))["command"]
    check("--matrix-scans 0" in cmd, "the recorded command says --matrix-scans 0")

    # A custom distance (Scan Context, slow per pair): a 60 x 60 sample unless asked for.
    osc = os.path.join(tmp, "sc")
    subprocess.run([BIN, "eval", "--map", rec, "--method", "scan-context", "--bootstrap", "0", "--out", osc,
                    "--quiet"], check=True, stdout=subprocess.DEVNULL)
    r, c, _ = read_csv(os.path.join(osc, "matrix.csv"))
    check(not os.path.exists(os.path.join(osc, "matrix.bin")) and len(r) == 60 and len(c) == 60,
          "a custom distance keeps a 60 x 60 sample by default (%d x %d)" % (len(r), len(c)))
    subprocess.run([BIN, "eval", "--map", rec, "--method", "scan-context", "--bootstrap", "0", "--out", osc,
                    "--quiet", "--replace", "--matrix-scans", str(N)], check=True, stdout=subprocess.DEVNULL)
    ri2, ci2, d2 = read_bin(os.path.join(osc, "matrix.bin"))
    q = {int(ln.split(",")[0]): (int(ln.split(",")[1]), float(ln.split(",")[2]))
         for ln in open(os.path.join(osc, "queries.csv")) if ln[:1].isdigit() and ln.count(",") >= 2 and ln.split(",")[1]}
    same = [abs(d2[i, j] - np.float32(dist)) <= 1e-6 * max(1, dist) for i, (j, dist) in q.items()]
    check(len(ri2) == N and same and all(same), "--matrix-scans %d: Scan Context's whole matrix, each query's top "
          "candidate at the distance queries.csv gives it (%d queries)" % (N, len(same)))

    # The report draws every distance: its image data equals matrix.bin.
    subprocess.run([BIN, "report", out, "--quiet", "--format", "md"], check=True)
    img = glob.glob(os.path.join(out, "report", "plots", "distance-matrix-*.bin"))
    if img:
        shown = np.fromfile(img[0], "<f4").reshape(N, N)
        same = (np.isnan(shown) == np.isnan(d)).all() and np.array_equal(shown[low], d[low])
        check(same, "the report's matrix image holds every distance of matrix.bin, one pixel each")
        md = open(os.path.join(out, "report", "report.md")).read()
        check("(%d x %d scans)" % (N, N) in md, "the caption says every scan is shown")
    else:
        check(shutil.which("gnuplot") is None, "the report wrote the matrix image's data")

    sweep(tmp, rec)
    shutil.rmtree(tmp, ignore_errors=True)
    return done()


def sweep(tmp, rec):
    """The unperturbed cell of a sweep gets the whole matrix, a perturbed one the sample."""
    sc = os.path.join(tmp, "scenario.json")
    json.dump({"format": "revisit-sweep-1", "name": "matrix-rule", "recordings": {"map": rec},
               "protocol": {"mode": "loop", "radius_m": 3, "exclude_s": 30},
               "bootstrap": {"resamples": 0, "seed": 1}, "methods": [{"name": "range-height"}],
               "conditions": [{"name": "clean"}, {"name": "drop", "chain": "dropout:p=0.3", "on": "query"}]},
              open(sc, "w"))
    out = os.path.join(tmp, "sweep")
    subprocess.run([BIN, "sweep", sc, "--out", out, "--quiet"], check=True, stdout=subprocess.DEVNULL)
    cells = sorted(glob.glob(os.path.join(out, "cells", "*")))
    clean = [c for c in cells if "clean" in os.path.basename(c)]
    drop = [c for c in cells if "drop" in os.path.basename(c)]
    check(len(clean) == 1 and len(drop) == 1, "the sweep ran both cells (%s)" % ", ".join(map(os.path.basename, cells)))
    if clean and drop:
        check(os.path.exists(os.path.join(clean[0], "matrix.bin")), "sweep: the unperturbed cell holds every scan")
        check(not os.path.exists(os.path.join(drop[0], "matrix.bin")), "sweep: the perturbed cell holds the sample only")
        cmd = json.load(open(os.path.join(drop[0], "result.json")))["command"]
        check("--matrix-scans 0" in cmd, "sweep: the perturbed cell's command says --matrix-scans 0")
        cmd = json.load(open(os.path.join(clean[0], "result.json")))["command"]
        check("--matrix-scans 4000" in cmd, "sweep: the unperturbed cell's command says --matrix-scans 4000")


if __name__ == "__main__":
    sys.exit(main())
