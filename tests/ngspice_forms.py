#!/usr/bin/env python3
"""Source forms the family harness does not read (tests/forms: AM, SFFM, PWL
with r=, EXP, a single PULSE, a damped SIN), each circuit against ngspice
(Debian package) run from zero over a set number of periods with the
circuit's own diodes and with near-ideal ones (tests/ngspice_families.py's
simulate(), is=1e-9 n=0.05). The reference peak is over the last period,
or over the whole run for the sources that happen once (EXP, the single
PULSE, the damped SIN: one period is the whole run). Per capacitor and
diode, at zero source tolerance:
  sound   tool >= real * (1 - 1e-3) - 1 mV
  tight   tool <= max(real, ideal) * 1.03 + 0.1 V, except where KNOWN_LOOSE
          gives the reason.
Fails, not skips, when CI is set and ngspice is missing."""
import os
import sys
import tempfile

HERE = os.path.dirname(os.path.abspath(__file__))
sys.path.insert(0, HERE)
import ngspice_families as nf  # noqa: E402
from ngspice_common import Tally, ngspice_missing  # noqa: E402

TAG = "ngspice-forms"
DATA = os.path.join(HERE, "forms")
# file -> (period or run, largest step, periods to try in turn)
CASES = {
    "f08_b2_am_detector.cir": (1e-3, 50e-9, [8, 16]),
    "f02_b2_sffm_doubler.cir": (1e-3, 50e-9, [16, 32]),
    "f07_b2_pwl_repeat_detector.cir": (100e-6, 0.2e-6, [64, 128]),
    "f06_b2_exp_surge_clamp.cir": (1e-3, 0.1e-6, [1]),
    "f06_b2_single_pulse_clamp.cir": (1e-3, 0.5e-6, [1]),
    "f07_b2_damped_sin_detector.cir": (1e-3, 0.1e-6, [1]),
}
KNOWN_LOOSE = {
    "f07_b2_damped_sin_detector.cir":
        "the analysis takes a damped SIN at its written amplitude (THETA ignored: its "
        "worst case, docs/check.md)",
}


def reference(f, period, tmax, ns):
    text = open(os.path.join(DATA, f)).read()
    rows = {}
    with tempfile.TemporaryDirectory() as tmp:
        parts = nf.parts_of(text, tmp)
        for ideal in (False, True):
            res = None
            for n in ns:
                res, _ = nf.simulate(text, {}, ideal, parts, period, tmax, n, tmp, "run")
            if res is None:
                return None
            for path, letter, _, _ in parts:
                r = res[path]
                last = max(abs(r["hi2"]), abs(r["lo2"])) if letter == "c" else r["hi2"]
                rows.setdefault(path, {})["ideal" if ideal else "real"] = last
    return rows


def main():
    gone = ngspice_missing(TAG)
    if gone is not None:
        return gone
    t = Tally(TAG)
    for f, (period, tmax, ns) in CASES.items():
        worst, err = nf.tool_worst(os.path.join(DATA, f))
        rows = reference(f, period, tmax, ns)
        if rows is None:
            t.ok(False, "%s: ngspice failed" % f)
            continue
        for p, r in sorted(rows.items()):
            w = (worst or {}).get(p)
            if w is None:
                t.ok(False, "%s %s: no number from the tool (%s)" % (f, p, err))
                continue
            t.ok(w >= r["real"] * (1 - 1e-3) - 1e-3,
                 "%s %s: sound, %.4g V >= ngspice %.4g V" % (f, p, w, r["real"]))
            tight = w <= max(r["real"], r["ideal"]) * 1.03 + 0.1
            if not tight and f in KNOWN_LOOSE:
                print("%s: known loose %s %s: %.4g V against %.4g V (%s)"
                      % (TAG, f, p, w, max(r["real"], r["ideal"]), KNOWN_LOOSE[f]))
                continue
            t.ok(tight, "%s %s: tight, %.4g V <= ngspice max(%.4g, %.4g) V + 3 %% + 0.1 V"
                 % (f, p, w, r["real"], r["ideal"]))
    return t.done()


if __name__ == "__main__":
    sys.exit(main())
