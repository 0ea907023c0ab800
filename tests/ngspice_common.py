"""What the tests that compare with ngspice share: whether ngspice may be
missing (a visible skip, but a failure when CI is set) and a tally of
checks that prints one line per check and the totals."""
import os
import shutil


def ngspice_missing(tag):
    """None when ngspice is there; else the exit status to return: 1 under
    CI (the comparison is required there), 0 elsewhere, with a message."""
    if shutil.which("ngspice"):
        return None
    msg = "%s: ngspice is not installed" % tag
    if os.environ.get("CI"):
        print(msg + " (required when CI is set)")
        return 1
    print(msg + ": SKIPPED")
    return 0


class Tally:
    """ok(cond, what) prints and counts one check; done() the totals and the
    exit status."""

    def __init__(self, tag):
        self.tag, self.passed, self.failed = tag, 0, 0

    def ok(self, cond, what):
        print("%s: %s %s" % (self.tag, "ok  " if cond else "FAIL", what))
        if cond:
            self.passed += 1
        else:
            self.failed += 1

    def done(self, extra=""):
        print("%s: %d passed, %d failed%s" % (self.tag, self.passed, self.failed, extra))
        return 1 if self.failed else 0
