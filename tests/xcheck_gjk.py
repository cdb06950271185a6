"""xcheck_gjk.py: GJK hull distances against a constrained minimisation.

The distance between the convex hulls of point sets A and B is
    min |A^T l - B^T m|  over l >= 0, sum l = 1, m >= 0, sum m = 1
(the definition of a convex hull as the set of convex combinations).  It is
solved with scipy.optimize.minimize(method="SLSQP") (Debian python3-scipy),
and the C GJK (Gilbert, Johnson & Keerthi, IEEE J. Robotics and Automation,
1988) must agree to 1e-6.  Overlapping hulls must give 0.
"""
import subprocess
import sys

import numpy as np
from scipy.optimize import minimize

from checklib import check, done, tool_path

TOOL = tool_path("tool_gjk")


def hull_distance_slsqp(a, b):
    na, nb = len(a), len(b)

    def f(x):
        d = a.T @ x[:na] - b.T @ x[na:]
        return d @ d

    def grad(x):
        d = a.T @ x[:na] - b.T @ x[na:]
        return np.concatenate([2 * a @ d, -2 * b @ d])

    cons = [{"type": "eq", "fun": lambda x: x[:na].sum() - 1, "jac": lambda x: np.r_[np.ones(na), np.zeros(nb)]},
            {"type": "eq", "fun": lambda x: x[na:].sum() - 1, "jac": lambda x: np.r_[np.zeros(na), np.ones(nb)]}]
    best = np.inf
    near_a = np.argmin(((a - b.mean(0)) ** 2).sum(1))  # second start: A's point nearest B
    for x0 in (np.r_[np.full(na, 1 / na), np.full(nb, 1 / nb)],
               np.r_[np.eye(na)[near_a], np.full(nb, 1 / nb)]):
        r = minimize(f, x0, jac=grad, method="SLSQP", bounds=[(0, 1)] * (na + nb),
                     constraints=cons, options={"ftol": 1e-16, "maxiter": 2000})
        x = np.clip(r.x, 0, None)
        x[:na] /= x[:na].sum()
        x[na:] /= x[na:].sum()
        best = min(best, np.sqrt(f(x)))
    return best


rng = np.random.default_rng(1988)
cases = []
for k in range(40):
    na, nb = rng.integers(4, 31, size=2)
    a = rng.normal(size=(na, 3)) * rng.uniform(0.3, 3, size=3)
    b = rng.normal(size=(nb, 3)) * rng.uniform(0.3, 3, size=3)
    if k % 4 == 3:
        off = rng.normal(size=3) * 0.3          # overlapping pairs
    else:
        off = rng.normal(size=3)
        off *= rng.uniform(4, 12) / np.linalg.norm(off)
    cases.append((a, b + off, k % 4 == 3))

text = "".join(f"{len(a)} {len(b)}\n" + " ".join(f"{v:.17g}" for v in a.ravel()) + "\n"
               + " ".join(f"{v:.17g}" for v in b.ravel()) + "\n" for a, b, _ in cases)
out = subprocess.run([TOOL], input=text, check=True, capture_output=True, text=True).stdout.split()
got = [float(x) for x in out]
check(len(got) == len(cases), "one distance per case")
for (a, b, overlap), d in zip(cases, got):
    ref = hull_distance_slsqp(a, b)
    if overlap:
        check(d == 0.0 and ref < 1e-6, f"overlapping hulls give 0 (gjk {d}, slsqp {ref})")
    else:
        check(abs(d - ref) < 1e-6, f"separated hulls: gjk {d} vs slsqp {ref}")
sys.exit(done())
