#!/usr/bin/env python3
"""range_height.py: the range-height histogram as an external method.

A complete example of the revisit external program protocol (DEVELOPERS.md,
"External program protocol"), standard library only.  It gives the same
numbers as the C plugin harness/plugins/range-height, bit for bit.

    revisit eval --map REC --method harness/external/range_height.py:range_bins=8 --out OUT

Settings arrive as arguments key=value (range_bins, height_bins, max_range,
z_min, z_max).  Messages for people go to stderr; stdout carries frames only.
"""
import math
import struct
import sys

DEFAULTS = {"range_bins": 16, "height_bins": 8, "max_range": 60.0, "z_min": -3.0, "z_max": 5.0}


def settings(argv):
    s = dict(DEFAULTS)
    for arg in argv:
        key, _, value = arg.partition("=")
        if key not in s:
            raise ValueError("unknown setting '%s'" % key)
        s[key] = int(value) if key.endswith("_bins") else float(value)
    return s


def read_exact(f, n):
    data = b""
    while len(data) < n:
        chunk = f.read(n - len(data))
        if not chunk:
            return None
        data += chunk
    return data


def describe(s, points):
    """points: a flat tuple x0 y0 z0 i0 x1 ...; returns the bin shares."""
    rb, hb = s["range_bins"], s["height_bins"]
    rmax, z0, z1 = s["max_range"], s["z_min"], s["z_max"]
    count = [0] * (rb * hb)
    kept = 0
    for k in range(0, len(points), 4):
        x, y, z = points[k], points[k + 1], points[k + 2]
        r = math.sqrt(x * x + y * y)
        if not (r < rmax) or not (z >= z0 and z < z1):
            continue
        br = min(int(r / rmax * rb), rb - 1)
        bz = min(int((z - z0) / (z1 - z0) * hb), hb - 1)
        count[br * hb + bz] += 1
        kept += 1
    return [c / kept if kept else 0.0 for c in count]


def main():
    inp, out = sys.stdin.buffer, sys.stdout.buffer
    try:
        s = settings(sys.argv[1:])
    except ValueError as err:
        print("range_height.py: %s" % err, file=sys.stderr)
        return 2
    name = b"range-height-py"
    dim = s["range_bins"] * s["height_bins"]
    out.write(b"RVH1" + struct.pack("<III", dim, 0, len(name)) + name)  # 0: L2
    out.flush()
    while True:
        head = read_exact(inp, 20)
        if head is None:
            return 0  # the host closed the stream: done
        magic, index, _stamp, n = struct.unpack("<4sIdI", head)
        if magic != b"RVS1":
            print("range_height.py: expected a scan frame", file=sys.stderr)
            return 2
        body = read_exact(inp, 16 * n)
        if body is None:
            return 2
        desc = describe(s, struct.unpack("<%df" % (4 * n), body))
        out.write(b"RVD1" + struct.pack("<II", index, dim) + struct.pack("<%df" % dim, *desc))
        out.flush()


if __name__ == "__main__":
    sys.exit(main())
