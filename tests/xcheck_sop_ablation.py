"""xcheck_sop_ablation.py: both methods through `revisit methods` and
`revisit eval` on a synthetic port recording, and the one ablation claim
that is robust on a short drive: the full sop method is not worse than F_a
alone (context=none) by more than the bootstrap interval of the latter
(percentile bootstrap over queries, Efron & Tibshirani, "An Introduction to
the Bootstrap", 1993, ch. 13, chapter from memory).  The measured
numbers are printed.
"""
import json
import os
import subprocess
import sys
import tempfile

from checklib import check, done

BIN = os.environ.get("REVISIT_BIN", "build/revisit")


def run(*args):
    return subprocess.run([BIN, *args], capture_output=True, text=True)


listing = run("methods")
check(listing.returncode == 0, "revisit methods runs")
for frag in ("m2dp", "azimuths=4", "elevations=16", "sop", "alpha=0.5", "context=both"):
    check(frag in listing.stdout, f"revisit methods lists {frag}")

with tempfile.TemporaryDirectory() as tmp:
    rec = os.path.join(tmp, "rec")
    r = run("synth", "--scenario", "port", "--scans", "300", "--out", rec, "--quiet")
    check(r.returncode == 0, "synth writes the port recording: " + r.stderr[-300:])
    res = {}
    for label, spec in (("full", "sop"), ("fa_only", "sop:context=none"),
                        ("m2dp", "m2dp:max_points=4000")):
        out = os.path.join(tmp, label)
        r = run("eval", "--map", rec, "--method", spec, "--out", out, "--quiet", "--bootstrap", "300")
        check(r.returncode == 0, f"eval {spec} runs: " + r.stderr[-300:])
        if r.returncode == 0:
            with open(os.path.join(out, "result.json")) as f:
                res[label] = json.load(f)["metrics"]
    for label, m in res.items():
        f1 = m["f1max"]
        print(f"{label}: F1max {f1['value']:.3f} [{f1['lo']:.3f}, {f1['hi']:.3f}], "
              f"R@100P {m['r100p']['value']:.3f}, recall@1 {m['recall_at_1']['value']:.3f}")
        check(0 <= f1["lo"] <= f1["value"] <= f1["hi"] <= 1, f"{label}: F1max inside its interval")
    if "full" in res and "fa_only" in res:
        check(res["full"]["f1max"]["value"] >= res["fa_only"]["f1max"]["lo"],
              "full sop is not worse than F_a only by more than its interval")
sys.exit(done())
