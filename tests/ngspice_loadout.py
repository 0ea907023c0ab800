#!/usr/bin/env python3
"""The loaded outputs of `check` (docs/check.md, "Loaded outputs") against
ngspice (Debian's package, scripts/deps.sh), the reference, on the same
netlists at the same corners:
  - tests/data/loadout/cw3_loaded.cir: a three-stage Cockcroft-Walton ladder,
    400 V peak at 20 kHz, 10 nF stages, 2 Mohm on the top;
  - tests/data/loadout/xfmr_doubler_loaded.cir: a transformer-fed full-wave
    doubler, 120 V mains, two 470 uF reservoirs, 2.2 kohm across them.
Both are this project's own invented scenarios; their diode models carry a
series resistance, a junction capacitance and a transit time, which both
solvers model.

For each deck and each corner (the source's amplitude at -10 % and at
+10 %, its *@source tolerance) headroom reports the output's time average
and its lowest and highest value over one period of its periodic steady
state (`loaded_outputs` in the JSON report). ngspice runs the same deck
with the amplitude scaled, from its own starting point, with a largest
step of 1/1000 of the period, for PERIODS periods (doubled until the last
period's mean differs from the one ten periods earlier by less than 1e-4
of it); the last period is measured the same way (the trapezoidal rule for
the mean). Checked: the mean and the ripple (highest minus lowest) within
2 % of ngspice's at each corner, and that the report names the ladder's
regulation formulas beside the simulation.
Fails, not skips, when CI is set and ngspice is missing."""
import json
import os
import re
import subprocess
import sys
import tempfile

from ngspice_common import Tally, ngspice_missing

HERE = os.path.dirname(os.path.abspath(__file__))
ROOT = os.path.dirname(HERE)
BIN = os.environ.get("HEADROOM", os.path.join(ROOT, "build", "headroom"))
DATA = os.path.join(HERE, "data", "loadout")
TOL = 0.02
# deck, its period, the periods ngspice runs first
DECKS = [("cw3_loaded.cir", 1 / 20e3, 400), ("xfmr_doubler_loaded.cir", 1 / 60, 100)]
CORNERS = [("low", 0.9), ("high", 1.1)]


def scaled_deck(path, scale):
    """The deck with every SIN amplitude scaled, its .end removed."""
    def amp(m):
        f = m.group(2).split()
        f[1] = "%.12g" % (float(f[1]) * scale)
        return m.group(1) + " ".join(f) + ")"
    text = re.sub(r"(?i)(sin\()([^)]*)\)", amp, open(path).read())
    return re.sub(r"(?im)^\.end\b.*$", "", text)


def measure(rows, t1, period):
    """Mean (trapezoidal), lowest and highest of the period ending at t1."""
    seg = [r for r in rows if t1 - period - 1e-12 <= r[0] <= t1 + 1e-12]
    area = sum((seg[i][1] + seg[i - 1][1]) / 2 * (seg[i][0] - seg[i - 1][0]) for i in range(1, len(seg)))
    span = seg[-1][0] - seg[0][0]
    return area / span, min(r[1] for r in seg), max(r[1] for r in seg)


def ngspice(tmp, deck, scale, period, periods, pos, neg):
    """ngspice's steady state of the output at one corner: (mean, min, max)."""
    name = "%s_%g" % (os.path.splitext(deck)[0], scale)
    cir, out = os.path.join(tmp, name + ".cir"), os.path.join(tmp, name + ".txt")
    probe = "v(%s)" % pos if neg is None else "v(%s)-v(%s)" % (pos, neg)
    step = period / 1000
    while True:
        stop = periods * period
        text = scaled_deck(os.path.join(DATA, deck), scale) + (
            ".tran %g %g 0 %g\n.control\nrun\nlinearize\nlet vout = %s\nwrdata %s vout\n.endc\n.end\n"
            % (step, stop, step, probe, out))
        open(cir, "w").write(text)
        if os.path.exists(out):
            os.remove(out)
        subprocess.run(["ngspice", "-b", cir], capture_output=True, text=True)
        rows = [tuple(map(float, l.split()[:2])) for l in open(out) if l.strip()] if os.path.exists(out) else []
        if not rows or rows[-1][0] < stop * 0.999:
            raise RuntimeError("ngspice did not finish " + cir)
        last = measure(rows, rows[-1][0], period)
        before = measure(rows, rows[-1][0] - 10 * period, period)
        if abs(last[0] - before[0]) <= 1e-4 * abs(last[0]) or periods >= 6400:
            return last, periods
        periods *= 2


def main():
    missing = ngspice_missing("ngspice-loadout")
    if missing is not None:
        return missing
    tally = Tally("ngspice-loadout")
    ok = tally.ok

    def near(got, want):
        return got is not None and abs(got - want) <= TOL * abs(want)

    with tempfile.TemporaryDirectory() as tmp:
        for deck, period, periods in DECKS:
            r = subprocess.run([BIN, "check", "--format", "json", "--fail-on", "never",
                                os.path.join(DATA, deck)], capture_output=True, text=True)
            f = json.loads(r.stdout)["files"][0]
            outs = f.get("loaded_outputs") or []
            ok(len(outs) == 1 and outs[0]["simulated"], "%s: one loaded output, simulated" % deck)
            if not outs:
                continue
            o = outs[0]
            if o["kind"] == "ladder":
                ok(o["formula"] is not None and o["formula"]["drop"] > 0 and o["formula"]["ripple"] > 0,
                   "%s: the ladder's regulation formulas beside the simulation" % deck)
            for name, scale in CORNERS:
                got = o[name]
                (mean, lo, hi), ran = ngspice(tmp, deck, scale, period, periods, o["output"], o["output_low"])
                ok(near(got["mean"], mean), "%s %s corner mean: headroom %.4g V, ngspice %.4g V (%+.3f %%; "
                   "unloaded ideal %.4g V)" % (deck, name, got["mean"], mean, 100 * (got["mean"] / mean - 1),
                                               got["unloaded"]))
                ok(near(got["ripple"], hi - lo), "%s %s corner ripple: headroom %.4g V p-p, ngspice %.4g V p-p "
                   "(%+.2f %%; ngspice ran %d periods)" % (deck, name, got["ripple"], hi - lo,
                                                          100 * (got["ripple"] / (hi - lo) - 1), ran))
                ok(near(got["min"], lo) and near(got["max"], hi), "%s %s corner range: headroom %.4g .. %.4g V, "
                   "ngspice %.4g .. %.4g V" % (deck, name, got["min"], got["max"], lo, hi))
    return tally.done()


if __name__ == "__main__":
    sys.exit(main())
