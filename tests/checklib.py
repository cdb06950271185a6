"""checklib.py: the check harness shared by every tests/xcheck_*.py.

A script runs as `/usr/bin/python3 tests/xcheck_X.py`, so tests/ is
sys.path[0] and `from checklib import check, done` finds this file.

    check(cond, desc)   counts one check; prints "FAIL desc" when cond is false
    skip(desc)          counts one check that cannot run here (prints "SKIP desc");
                        never counted as passed
    done()              prints the last line "N passed, N failed" (", N skipped"
                        when any was skipped) and returns the exit status: 1
                        when any check failed, else 0 (end a script with
                        `sys.exit(done())`)
    counts()            (passed, failed) so far, for a script that needs them
    tool_path(name)     $REVISIT_BUILD/tests/NAME, the test tools' place
                        ("build" when REVISIT_BUILD is not set)

The tally lives in this module for the life of one script: each script is
its own process, so it starts at zero.
"""
import os


class _Tally:
    def __init__(self):
        self.passed = 0
        self.failed = 0
        self.skipped = 0


_TALLY = _Tally()


def check(cond, desc):
    if cond:
        _TALLY.passed += 1
    else:
        _TALLY.failed += 1
        print("FAIL", desc)


def skip(desc):
    _TALLY.skipped += 1
    print("SKIP", desc)


def counts():
    return _TALLY.passed, _TALLY.failed


def done():
    line = "%d passed, %d failed" % (_TALLY.passed, _TALLY.failed)
    if _TALLY.skipped:
        line += ", %d skipped" % _TALLY.skipped
    print(line)
    return 1 if _TALLY.failed else 0


def tool_path(name):
    return os.path.join(os.environ.get("REVISIT_BUILD", "build"), "tests", name)
