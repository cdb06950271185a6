#!/usr/bin/python3
"""xcheck_report_palette.py: the line styles a report's gnuplot scripts use
stay apart in grey and under simulated colour vision deficiencies.

- sRGB to linear light and to CIE XYZ (D65): IEC 61966-2-1 (sRGB, 1999);
  XYZ to CIELAB and the CIE76 colour difference: CIE 15 (Colorimetry).
- Dichromat simulation: the severity-1.0 matrices of Machado, Oliveira and
  Fernandes, "A physiologically-based model for simulation of color vision
  deficiency", IEEE TVCG 2009, applied to linear RGB.  The matrix values
  below are quoted from memory of that paper.
- Verdict colours of report.html: white text on the pass and fail
  backgrounds has a contrast ratio of at least 4.5 (W3C, WCAG 2.0, 2008,
  success criterion 1.4.3 and the "contrast ratio" definition), and the two
  backgrounds are palette colours.
- Thresholds (CIELAB L* rising by at least 5 per step; CIE76 distance of at
  least 15 between any two styles in every simulation) are our own design
  targets, not published limits.
"""
import itertools
import os
import re
import shutil
import subprocess
import sys
import tempfile

import numpy as np

from checklib import check, done

ROOT = os.environ["REVISIT_ROOT"]
BIN = os.environ["REVISIT_BIN"]

MACHADO_2009 = {  # from memory, severity 1.0
    "protanopia": [[0.152286, 1.052583, -0.204868], [0.114503, 0.786281, 0.099216], [-0.003882, -0.048116, 1.051998]],
    "deuteranopia": [[0.367322, 0.860646, -0.227968], [0.280085, 0.672501, 0.047413], [-0.011820, 0.042940, 0.968881]],
    "tritanopia": [[1.255528, -0.076749, -0.178779], [-0.078411, 0.930809, 0.147602], [0.004733, 0.691367, 0.303900]],
}
SRGB_TO_XYZ = np.array([[0.4124, 0.3576, 0.1805], [0.2126, 0.7152, 0.0722], [0.0193, 0.1192, 0.9505]])
D65 = np.array([0.95047, 1.0, 1.08883])


def linear(hexcol):
    c = np.array([int(hexcol[i:i + 2], 16) for i in (1, 3, 5)]) / 255.0
    return np.where(c <= 0.04045, c / 12.92, ((c + 0.055) / 1.055) ** 2.4)


def lab(rgb_lin):
    xyz = SRGB_TO_XYZ @ np.clip(rgb_lin, 0, 1) / D65
    d = 6 / 29
    f = np.where(xyz > d ** 3, np.cbrt(xyz), xyz / (3 * d * d) + 4 / 29)
    return np.array([116 * f[1] - 16, 500 * (f[0] - f[1]), 200 * (f[1] - f[2])])


def main():
    tmp = tempfile.mkdtemp()
    subprocess.run([sys.executable, os.path.join(ROOT, "reports/fixture.py"), tmp + "/one", "--single"], check=True)
    subprocess.run(["env", "PATH=" + tmp + "/none", BIN, "report", tmp + "/one", "--quiet", "--format", "md"],
                   check=True)
    gp = open(tmp + "/one/report/plots/pr-0-none.gp").read()
    styles = re.findall(r"set style line (\d+) lc rgb '(#[0-9a-f]{6})' lw \S+ dt (\S+) pt (\d+)", gp)
    check(len(styles) == 6, "six line styles in a plot script (found %d)" % len(styles))
    cols = [s[1] for s in styles]
    check(len(set(s[2] for s in styles)) == 6, "every style has its own dash pattern")
    check(len(set(s[3] for s in styles)) == 6, "every style has its own point shape")
    L = [lab(linear(c))[0] for c in cols]
    check(all(b - a >= 5 for a, b in zip(L, L[1:])), "CIELAB lightness rises by at least 5 per style: %s"
          % [round(v, 1) for v in L])
    for name, m in [("normal vision", np.eye(3))] + list(MACHADO_2009.items()):
        labs = [lab(np.array(m) @ linear(c)) for c in cols]
        dmin = min(np.linalg.norm(a - b) for a, b in itertools.combinations(labs, 2))
        check(dmin >= 15, "%s: every two styles differ by CIE76 >= 15 (min %.1f)" % (name, dmin))
    verdict_colours(tmp, cols)
    shutil.rmtree(tmp, ignore_errors=True)
    return done()


def contrast(a, b):
    """WCAG 2.0 contrast ratio of two sRGB colours (relative luminance from linear RGB)."""
    la, lb = (float(np.array([0.2126, 0.7152, 0.0722]) @ linear(c)) for c in (a, b))
    return (max(la, lb) + 0.05) / (min(la, lb) + 0.05)


def verdict_colours(tmp, palette):
    subprocess.run(["env", "PATH=" + tmp + "/none", BIN, "report", tmp + "/one", "--quiet", "--format", "html",
                    "--out", tmp + "/html"], check=True)
    html = open(tmp + "/html/report.html").read()
    bg = dict(re.findall(r"\.(pass|fail)\{background:(#[0-9a-f]{6})\}", html))
    text = re.search(r"\.pass,\.fail\{[^}]*color:(#[0-9a-f]{3,6})", html)
    check(set(bg) == {"pass", "fail"} and text is not None, "report.html styles passed and failed verdicts")
    if set(bg) != {"pass", "fail"} or text is None:
        return
    fg = text.group(1) if len(text.group(1)) == 7 else "#" + "".join(ch * 2 for ch in text.group(1)[1:])
    for k in ("pass", "fail"):
        check(bg[k] in palette, "the %s background %s is a palette colour" % (k, bg[k]))
        r = contrast(fg, bg[k])
        check(r >= 4.5, "verdict text on the %s background: WCAG contrast %.2f >= 4.5" % (k, r))
    for name, m in [("normal vision", np.eye(3))] + list(MACHADO_2009.items()):
        d = np.linalg.norm(lab(np.array(m) @ linear(bg["pass"])) - lab(np.array(m) @ linear(bg["fail"])))
        check(d >= 15, "%s: pass and fail backgrounds differ by CIE76 >= 15 (%.1f)" % (name, d))


if __name__ == "__main__":
    sys.exit(main())
