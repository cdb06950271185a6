"""xcheck_index_resample.py: `revisit index --pose-gap` gives each scan the
pose at its time from a pose file of another rate.

References: scipy.spatial.transform.Slerp (rotation) and numpy.interp
(position) between the pose samples; a scan outside the poses, or between
two poses further apart than the gap, must be dropped, never extrapolated.
Run with /usr/bin/python3 through tests/run.sh.
"""
import csv
import os
import subprocess
import sys
import tempfile

import numpy as np
from scipy.spatial.transform import Rotation, Slerp

from checklib import check, done

REVISIT = os.environ.get("REVISIT_BIN", "build/revisit")
rng = np.random.default_rng(3)

with tempfile.TemporaryDirectory() as d:
    # poses at 7 Hz over 4 s with a 0.6 s hole; scans at 10 Hz named by their time in nanoseconds
    T0 = 1.7e9
    pt = T0 + np.arange(29) / 7.0
    pt = pt[(pt < T0 + 1.5) | (pt > T0 + 2.1)]
    pos = np.column_stack([3 * (pt - T0), np.cos(pt - T0), 0.2 * (pt - T0)])
    rot = Rotation.from_euler("zxy", np.column_stack([0.7 * (pt - T0), 0.1 * (pt - T0), -0.05 * (pt - T0)]))
    with open(os.path.join(d, "poses.csv"), "w") as f:
        f.write("t,x,y,z,qx,qy,qz,qw\n")
        for t, p, q in zip(pt, pos, rot.as_quat()):
            f.write(",".join("%.17g" % v for v in [t, *p, *q]) + "\n")
    os.makedirs(os.path.join(d, "scans"))
    st = [T0 - 0.1 + 0.1 * k for k in range(45)]
    for t in st:
        rng.normal(size=(50, 4)).astype("<f4").tofile(os.path.join(d, "scans", "%d.bin" % round(t * 1e9)))
    man = os.path.join(d, "recording.json")
    r = subprocess.run([REVISIT, "index", os.path.join(d, "scans"), "--poses", os.path.join(d, "poses.csv"),
                        "--channels", "8", "--pose-gap", "0.2", "--out", man], capture_output=True, text=True)
    check(r.returncode == 0, "revisit index --pose-gap writes the manifest (%s)" % r.stderr.strip())
    ts = [round(t * 1e9) * 1e-9 for t in st]

    def keep(t):
        if t < pt[0] or t > pt[-1]:
            return False
        i = np.searchsorted(pt, t)
        return pt[i] == t or pt[i] - pt[i - 1] <= 0.2

    want = [t for t in ts if keep(t)]
    rows = list(csv.DictReader(open(os.path.join(d, "poses-at-scans.csv")))) if r.returncode == 0 else []
    got_t = [float(x["t"]) for x in rows]
    check(len(got_t) == len(want) and np.allclose(got_t, want, atol=1e-9),
          "one pose per kept scan at the scan's time (%d of %d scans)" % (len(got_t), len(ts)))
    check("%d scans dropped" % (len(ts) - len(want)) in r.stdout and "dropped:" in r.stderr,
          "the dropped scans are counted and named (%s / %s)" % (r.stdout.strip(), r.stderr.strip()[:200]))
    if rows and len(got_t) == len(want):
        # scipy.spatial.transform.Slerp and numpy.interp are the reference
        sl = Slerp(pt, rot)(np.array(want))
        wp = np.column_stack([np.interp(want, pt, pos[:, i]) for i in range(3)])
        gp = np.array([[float(x[k]) for k in "xyz"] for x in rows])
        gr = Rotation.from_quat([[float(x[k]) for k in ("qx", "qy", "qz", "qw")] for x in rows])
        perr = np.abs(gp - wp).max()
        rerr = (gr.inv() * sl).magnitude().max()
        check(perr < 1e-9 and rerr < 1e-9, "the poses match Slerp + interp (%.2e m, %.2e rad)" % (perr, rerr))
    r = subprocess.run([REVISIT, "inspect", man, "--quiet"], capture_output=True, text=True)
    check("scans        %d" % len(want) in r.stdout, "the recording loads with the kept scans (%s)" % r.stderr.strip())

sys.exit(done())
