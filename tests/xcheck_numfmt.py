#!/usr/bin/python3
"""xcheck_numfmt.py: every number revisit writes to JSON or CSV reads back as
the same double, and is no longer than it has to be.

Reference: Python's float repr, the shortest decimal string that reads back
as the same double (Python 3 documentation, "Floating Point Arithmetic:
Issues and Limitations"; float.__repr__ since Python 3.1), and float() /
json.loads as the readers.  numfmt may spell a number differently ("1e+300"
for repr's "1e+300", "1500" for "1500.0") but must give as many significant
digits as repr, never more, and float() of it must be the same double.
"""
import json
import math
import struct
import subprocess
import sys

import numpy as np

from checklib import check, done, tool_path

TOOL = tool_path("tool_numfmt")


def sig_digits(text):
    """Significant digits of a decimal text: no sign, point, exponent, leading or trailing zeros."""
    mant = text.lower().split("e")[0].lstrip("+-").replace(".", "")
    return len(mant.strip("0")) or 1


def hexbits(v):
    return "%016x" % struct.unpack("<Q", struct.pack("<d", v))[0]


rng = np.random.default_rng(20261202)
values = [0.1 + 0.2, 0.1, 0.25, 1500.0, 1e300, 5e-324, sys.float_info.max, sys.float_info.min,
          -0.0, 0.0, 1 / 3, 2 / 3, 123456789012345678.0, 1e15, 1e15 + 0.5, 0.30000000000000004 * 3,
          math.pi, -math.e, 2.0 ** 53 + 2, 9007199254740993.0]
values += list(rng.uniform(0, 1, 3000))                     # thresholds, recalls, precisions
values += list(rng.normal(0, 1, 2000) * 10.0 ** rng.integers(-30, 30, 2000))
bits = rng.integers(0, 2 ** 63, 5000, dtype=np.uint64) | (rng.integers(0, 2, 5000, dtype=np.uint64) << np.uint64(63))
values += [v for v in bits.view(np.float64) if math.isfinite(v)]

stdin = "".join(hexbits(v) + "\n" for v in values)
out = subprocess.run([TOOL], input=stdin, capture_output=True, text=True, check=True).stdout.split("\n")
texts = out[:len(values)]
check(len(texts) == len(values), "one line per number")
same = [float(t) == v and math.copysign(1, float(t)) == math.copysign(1, v) or (v == 0 and float(t) == 0)
        for t, v in zip(texts, values)]
check(all(same), "float() of every text is the same double (%d of %d)" % (sum(same), len(values)))
short = [sig_digits(t) == sig_digits(repr(v)) for t, v in zip(texts, values)]
bad = [(t, repr(v)) for t, v, ok in zip(texts, values, short) if not ok][:3]
check(all(short), "as many significant digits as Python's shortest repr (%d of %d; first misses %s)"
      % (sum(short), len(values), bad))
check(texts[0] == "0.30000000000000004", "0.1 + 0.2 keeps its last digits (got %s)" % texts[0])
check(texts[1] == "0.1" and texts[2] == "0.25" and texts[3] == "1500", "short values stay short (%s)" % texts[1:4])
check(texts[6] == "1.7976931348623157e+308", "the largest double needs 17 digits (got %s)" % texts[6])
check(texts[8] == "0", "negative zero is written as 0 (got %s)" % texts[8])

jtext = subprocess.run([TOOL, "json"], input=stdin, capture_output=True, text=True, check=True).stdout
back = json.loads(jtext)   # json module, Python standard library
check(len(back) == len(values) and all(float(b) == v for b, v in zip(back, values)),
      "json.loads of numfmt_json_print gives back every double")
check(back[0] == 0.30000000000000004, "the JSON printer keeps 0.30000000000000004")
plain = subprocess.run([TOOL, "json"], input=hexbits(0.1 + 0.2) + "\n" + hexbits(7.0) + "\n",
                       capture_output=True, text=True, check=True).stdout
check(plain.split() == ["[0.30000000000000004,", "7]"], "JSON layout as cJSON prints it (%r)" % plain)
sys.exit(done())
