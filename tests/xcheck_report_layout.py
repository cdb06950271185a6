#!/usr/bin/python3
"""xcheck_report_layout.py: no legend touches a label, in the PNG the report
shows.  Each plot script of a report is drawn again by gnuplot with the key
text, the x label, the x tic labels, the y label and the title each in a pure
colour of its own (magenta, green, cyan, blue, yellow: colours changed, the
layout untouched), and the image is read with Pillow (PIL.Image.open,
Image.getdata).  An anti-aliased glyph of pure colour C on white keeps C's
saturated channels at 255 exactly, so each pixel tells which element it
belongs to; the key is drawn with a box in its colour, so its samples count
too.  The check: the key's box keeps GAP pixels clear of the box of every
label, and lies inside the image.

    /usr/bin/python3 tests/xcheck_report_layout.py [PLOTS_DIR...]

Without arguments it writes reports from reports/fixture.py (a sweep with long
method names, one with six methods, a single evaluation) and checks their
plots; with arguments it checks the plot folders given (e.g. a demo report's).
"""
import glob
import os
import re
import shutil
import subprocess
import sys
import tempfile

from PIL import Image

from checklib import check, done, skip

ROOT = os.environ.get("REVISIT_ROOT", os.path.join(os.path.dirname(__file__), ".."))
BIN = os.environ.get("REVISIT_BIN", os.path.join(ROOT, "build", "revisit"))
GAP = 3  # pixels kept clear around every label (common practice, no source)

# element -> (gnuplot command that recolours it, pixel test)
ELEMENTS = {
    "key": ("set key textcolor rgb '#ff00ff' box lc rgb '#ff00ff' lw 1", lambda r, g, b: r == 255 and b == 255 and g < 235),
    "xlabel": ("set xlabel textcolor rgb '#00ff00'", lambda r, g, b: g == 255 and r < 235 and abs(r - b) <= 2),
    "xtics": ("set xtics textcolor rgb '#00ffff'", lambda r, g, b: g == 255 and b == 255 and r < 235),
    "ylabel": ("set ylabel textcolor rgb '#0000ff'", lambda r, g, b: b == 255 and r < 235 and abs(r - g) <= 2),
    "title": ("set title textcolor rgb '#ffff00'", lambda r, g, b: r == 255 and g == 255 and b < 235),
}


def recoloured(script):
    """The script with the recolouring commands before each plot command
    (and inside a multiplot loop before each panel's plot), PNG only."""
    lines = script.splitlines()
    out, stop = [], False
    for ln in lines:
        s = ln.strip()
        if s.startswith("set terminal svg"):
            stop = True  # the PNG is what the report shows; skip the SVG pass
        if stop and not s.startswith("unset output"):
            continue
        if s.startswith("plot "):
            indent = ln[: len(ln) - len(ln.lstrip())]
            out += [indent + c for c, _ in ELEMENTS.values()]
        out.append(ln)
    text = "\n".join(out) + "\n"
    # A multiplot loop draws the SVG in its second pass: one pass is enough.
    return text.replace("do for [pass=1:2]", "do for [pass=1:1]")


def classify(png):
    im = Image.open(png).convert("RGB")
    w, h = im.size
    px = list(im.getdata())
    found = {k: [] for k in ELEMENTS}
    for i, (r, g, b) in enumerate(px):
        if r == g == b:
            continue
        for k, (_, test) in ELEMENTS.items():
            if test(r, g, b):
                found[k].append((i % w, i // w))
                break
    return w, h, found


def bbox(pts):
    xs = [p[0] for p in pts]
    ys = [p[1] for p in pts]
    return min(xs), min(ys), max(xs), max(ys)


def check_plot(gp_path, work):
    name = os.path.basename(gp_path)[:-3]
    d = os.path.join(work, name)
    os.makedirs(d, exist_ok=True)
    src = os.path.dirname(gp_path)
    for f in glob.glob(os.path.join(src, name + "*.dat")):
        shutil.copy(f, d)
    script = open(gp_path).read()
    open(os.path.join(d, name + ".gp"), "w").write(recoloured(script))
    r = subprocess.run(["gnuplot", name + ".gp"], cwd=d, capture_output=True, text=True)
    check(r.returncode == 0, "%s: the recoloured script draws (%s)" % (name, r.stderr.strip()[:200]))
    png = os.path.join(d, name + ".png")
    if r.returncode != 0 or not os.path.exists(png):
        return
    w, h, found = classify(png)
    key = found["key"]
    has_key = "notitle" not in script or re.search(r"\btitle ['\"]", script)
    if not key:
        check(not has_key, "%s: the key's text was found in the image" % name)
        return
    kx0, ky0, kx1, ky1 = bbox(key)
    check(kx0 > 0 and ky0 > 0 and kx1 < w - 1 and ky1 < h - 1,
          "%s: the key lies inside the %dx%d image (key box %d,%d-%d,%d)" % (name, w, h, kx0, ky0, kx1, ky1))
    for el in ("xlabel", "xtics", "ylabel", "title"):
        if not found[el]:
            continue
        x0, y0, x1, y1 = bbox(found[el])
        apart = kx0 > x1 + GAP or kx1 < x0 - GAP or ky0 > y1 + GAP or ky1 < y0 - GAP
        check(apart, "%s: the key's box (%d,%d-%d,%d) keeps %d px clear of the %s (%d,%d-%d,%d)"
              % (name, kx0, ky0, kx1, ky1, GAP, el, x0, y0, x1, y1))
    if "set xlabel" in script and "unset xlabel" not in script:
        check(bool(found["xlabel"]), "%s: the x label was found in the image" % name)


def fixture_dirs(tmp):
    fix = os.path.join(ROOT, "reports", "fixture.py")
    long_name = "ring-key:rings=20,sectors=60,height_bins=8,max_range=80,min_range=0.5,normalise=columnwise," \
                "lookahead=12,fallback=none,extra=a-rather-long-setting-value-to-fill-the-key"
    runs = {
        "long": ["--seeds", "2", "--verdicts", "--method", long_name, "--method", "plain-hist"],
        "six": ["--conditions", "3"] + sum((["--method", "method-%d" % k] for k in range(6)), []),
        "one": ["--single"],
    }
    dirs = []
    for tag, args in runs.items():
        out = os.path.join(tmp, tag)
        subprocess.run([sys.executable, fix, out] + args, check=True)
        subprocess.run([BIN, "report", out, "--quiet", "--format", "md"], check=True)
        dirs.append(os.path.join(out, "report", "plots"))
    return dirs


def main():
    if not shutil.which("gnuplot"):
        skip("gnuplot not installed: the plot layout is not checked")
        return done()
    tmp = tempfile.mkdtemp()
    dirs = sys.argv[1:] or fixture_dirs(tmp)
    kinds = set()
    for d in dirs:
        for gp in sorted(glob.glob(os.path.join(d, "*.gp"))):
            kinds.add(os.path.basename(gp).split("-")[0])
            check_plot(gp, os.path.join(tmp, "work"))
    if not sys.argv[1:]:
        want = {"summary", "degradation", "pr", "trajectory", "distance", "top1"}
        check(want <= kinds, "every plot kind was checked (%s)" % ", ".join(sorted(kinds)))
    shutil.rmtree(tmp, ignore_errors=True)
    return done()


if __name__ == "__main__":
    sys.exit(main())
