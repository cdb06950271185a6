#!/usr/bin/python3
"""xcheck_junit.py: `revisit check` on hand-built sweep folders; the JUnit XML
it writes must parse with Python's own XML parser (xml.etree.ElementTree,
Python standard library documentation, "xml.etree.ElementTree - The
ElementTree XML API") and agree with verdicts.json (json module) and the
exit code (0 all pass, 1 a criterion fails, 2 error or incomplete sweep)."""
import json
import os
import shutil
import subprocess
import sys
import tempfile
import xml.etree.ElementTree as ET

from checklib import check, done

BIN = os.environ["REVISIT_BIN"]


def scenario(criteria):
    return json.dumps({
        "format": "revisit-sweep-1", "name": "hand-built",
        "recordings": {"map": "rec"},
        "methods": [{"name": "alpha"}, {"name": "beta"}], "seeds": 2,
        "conditions": [{"name": "clean"}, {"name": "mount", "chain": "sector:width=60"}],
        "criteria": criteria}, indent=1) + "\n"


def make_folder(root, text, values, skip=()):
    """values: {(method, condition, seed): f1max}; cells in `skip` are left out."""
    os.makedirs(os.path.join(root, "cells"))
    with open(os.path.join(root, "scenario.json"), "w") as f:
        f.write(text)
    for (m, c, s), v in values.items():
        cid = "%s__%s__s%d" % (m, c, s)
        if cid in skip:
            continue
        d = os.path.join(root, "cells", cid)
        os.makedirs(d)
        with open(os.path.join(d, "result.json"), "w") as f:
            json.dump({"format": "revisit-result-1", "status": "ok",
                       "metrics": {"f1max": {"value": v, "lo": v - 0.05, "hi": v + 0.05},
                                   "r100p": {"value": v / 2, "lo": v / 2 - 0.1, "hi": v / 2 + 0.1}}}, f)


def run(*args):
    p = subprocess.run([BIN, "check"] + list(args), capture_output=True, text=True)
    return p.returncode, p.stdout, p.stderr


VALUES = {("alpha", "clean", 1): 0.9, ("beta", "clean", 1): 0.8,
          ("alpha", "mount", 1): 0.7, ("alpha", "mount", 2): 0.5,
          ("beta", "mount", 1): 0.3, ("beta", "mount", 2): 0.4}
CRIT = [
    {"text": "F1max on the mount <&> \"bracket\" at least 0.5", "metric": "f1max",
     "condition": "mount", "comparator": ">=", "threshold": 0.5},
    {"text": "R@100P lower bound on the clean map above 0.2", "metric": "r100p", "method": "alpha",
     "condition": "clean", "target": "lo", "comparator": ">", "threshold": 0.2},
]

tmp = tempfile.mkdtemp()
try:
    scen = os.path.join(tmp, "s.json")
    text = scenario(CRIT)
    with open(scen, "w") as f:
        f.write(text)
    out = os.path.join(tmp, "out")
    make_folder(out, text, VALUES)
    junit = os.path.join(tmp, "v.xml")
    rc, so, se = run(scen, out, "--junit", junit)
    # alpha mount mean 0.6 passes, beta mount mean 0.35 fails; alpha clean r100p lo 0.35 passes.
    check(rc == 1, "one failing criterion gives exit 1 (got %d: %s)" % (rc, se.strip()))
    check("FAIL" in so and "PASS" in so, "the table shows PASS and FAIL")
    root = ET.parse(junit).getroot()
    check(root.tag == "testsuites", "the root element is testsuites")
    suites = root.findall("testsuite")
    check(len(suites) == 1, "one test suite")
    s = suites[0]
    check(s.get("tests") == "3" and s.get("failures") == "1", "3 tests, 1 failure in the suite attributes")
    cases = s.findall("testcase")
    check(len(cases) == 3, "three test cases: two methods for the first criterion, one for the second")
    fails = [c for c in cases if c.find("failure") is not None]
    check(len(fails) == 1 and "[beta]" in fails[0].get("name"), "the failing case is beta on the mount")
    check(cases[0].get("name").startswith("F1max on the mount <&> \"bracket\""),
          "special characters survive escaping")
    check(fails and "0.35" in fails[0].find("failure").get("message"), "the failure message carries the value")
    with open(os.path.join(out, "verdicts.json")) as f:
        doc = json.load(f)
    check(doc.get("format") == "revisit-verdicts-1", "verdicts.json names its format")
    ver = doc.get("criteria", [])
    keys = {"criterion", "metric", "method", "condition", "value", "lo", "hi", "threshold",
            "comparator", "target", "pass"}
    check(len(ver) == 3 and all(keys <= set(v) for v in ver), "verdicts.json has every agreed key")
    check([v["pass"] for v in ver] == [c.find("failure") is None for c in cases],
          "verdicts.json and the JUnit file agree")
    check(abs(ver[0]["value"] - 0.6) < 1e-12 and abs(ver[0]["lo"] - 0.45) < 1e-12 and abs(ver[0]["hi"] - 0.75) < 1e-12,
          "mean over seeds and the widest interval")

    # All pass: only the passing criteria.
    text2 = scenario([CRIT[1]])
    with open(scen, "w") as f:
        f.write(text2)
    out2 = os.path.join(tmp, "out2")
    make_folder(out2, text2, VALUES)
    rc, so, se = run(scen, out2, "--junit", junit)
    check(rc == 0, "every criterion passing gives exit 0 (got %d: %s)" % (rc, se.strip()))
    s = ET.parse(junit).getroot().find("testsuite")
    check(s.get("failures") == "0" and len(s.findall("testcase")) == 1, "JUnit file with no failure")

    # Incomplete sweep: exit 2, message names the cell.
    out3 = os.path.join(tmp, "out3")
    make_folder(out3, text2, VALUES, skip=("alpha__clean__s1",))
    rc, so, se = run(scen, out3)
    check(rc == 2 and "incomplete sweep: cell alpha__clean__s1" in se, "an incomplete sweep gives exit 2")

    # Another scenario's folder: exit 2.
    rc, so, se = run(scen, out)
    check(rc == 2 and "made by another scenario file" in se, "a folder of another scenario gives exit 2")
    # A folder that is no sweep at all.
    rc, so, se = run(scen, tmp)
    check(rc == 2 and "is not a sweep folder" in se, "a folder without scenario.json gives exit 2")
    # Usage error.
    rc, so, se = run(scen)
    check(rc == 2 and "expected SCENARIO and DIR" in se, "one argument is a usage error")
    # No criteria.
    text4 = scenario([])
    with open(scen, "w") as f:
        f.write(text4)
    out4 = os.path.join(tmp, "out4")
    make_folder(out4, text4, VALUES)
    rc, so, se = run(scen, out4)
    check(rc == 2 and "criteria: none given" in se, "a scenario without criteria gives exit 2")
finally:
    shutil.rmtree(tmp)

sys.exit(done())
