"""xcheck_peer.py: `revisit eval --method scan-context` against the plain
numpy + scipy evaluation of tests/bench_peer.py on the same recording.

The peer computes Scan Context images and ring keys with numpy
(numpy.arctan2, numpy.lexsort), prefilters with scipy.spatial.cKDTree,
searches every column shift with numpy.einsum and scores F1max under the
same protocol (3 m, 30 s, strict).  Both must agree on F1max within 0.01:
the two compute the same quantities in a different order (float32 keys,
double distances), so a near-tie at the prefilter's 50th candidate or at a
sector boundary may differ; on the bench recordings they agree exactly.
"""
import json
import os
import subprocess
import sys
import tempfile

from checklib import check, done

sys.path.insert(0, os.path.dirname(os.path.abspath(__file__)))
import bench_peer  # noqa: E402  (the peer itself, run in this process)

BIN = os.environ.get("REVISIT_BIN", "build/revisit")


def main():
    with tempfile.TemporaryDirectory() as tmp:
        rec = os.path.join(tmp, "rec")
        p = subprocess.run([BIN, "synth", "--scenario", "port", "--scans", "150", "--out", rec, "--quiet"],
                           capture_output=True, text=True)
        check(p.returncode == 0, "synth writes the recording: " + p.stderr[-300:])
        out = os.path.join(tmp, "ev")
        p = subprocess.run([BIN, "eval", "--map", rec, "--method", "scan-context", "--bootstrap", "0",
                            "--out", out, "--quiet"], capture_output=True, text=True)
        check(p.returncode == 0, "revisit eval runs: " + p.stderr[-300:])
        res = json.load(open(os.path.join(out, "result.json")))
        ours = res["metrics"]["f1max"]["value"]
        paths, xyz, t = bench_peer.load(rec)
        descs = [bench_peer.describe(bench_peer.read_scan(q)) for q in paths]
        imgs = [d[0] for d in descs]
        import numpy as np
        imgs = np.stack(imgs)
        keys = np.stack([d[1] for d in descs]).astype(np.float32).astype(np.float64)
        best, dist = bench_peer.retrieve(imgs, keys, t, 50)
        f1, _, _, revisits = bench_peer.score(xyz, t, best, dist, 0)
        check(revisits == res["counts"]["revisits"],
              "the peer counts the same revisits (%d, revisit %d)" % (revisits, res["counts"]["revisits"]))
        check(revisits > 10, "the recording holds revisits to score (%d)" % revisits)
        check(abs(f1 - ours) <= 0.01, "F1max of the peer %.6f and of revisit eval %.6f agree within 0.01" % (f1, ours))
    return done()


if __name__ == "__main__":
    sys.exit(main())
