#!/usr/bin/env python3
"""The simulated power-up surge of `check` against ngspice (Debian's package,
scripts/deps.sh), the reference, on the same netlist:
tests/data/powerup/xfmr_fullwave_doubler.cir, a transformer-fed full-wave
doubler whose first charge is limited by the windings' resistance and the
leakage inductance (the analytic bound, peak drive over the series
resistance, leaves the leakage out and is about twice the real peak).

For each diode headroom reports the forward pulse with the largest I2t after
switch-on from the zero state at the +10 % corner, the worst over 24
switch-on instants 15 degrees apart (the deck's source is a plain SIN). The
reference: ngspice runs the same deck (a 0 V probe in series with each diode)
at the same corner from the zero state (uic) for two periods, its SIN's phase
set to each switch-on instant, with a 10 us largest step (5 us, 2.5 us
where ngspice stops early at 10 us); its pulses are cut
as headroom's are (forward current above 0.1 % of the pulse's peak).
Checked, each within 20 %:
  - the peak and the I2t at the instant headroom found worst, against
    ngspice at that instant;
  - the peak and the I2t against ngspice's worst over the 24 instants;
and that the surge finding, with a 30 A / 8.3 ms rating given in a parts
table, states the pulse's peak, width and I2t (surge-excess or surge-derating:
the rating's I2t is within 0.3 % of ngspice's pulse, so either is right). The shipped mains
doubler (examples/mains_doubler.cir: a 4.7 ohm limiter, diodes with a 4.3 us
transit time) is compared the same way at headroom's worst instant.
Fails, not skips, when CI is set and ngspice is missing."""
import csv
import json
import math
import os
import re
import subprocess
import sys
import tempfile

from ngspice_common import Tally, ngspice_missing

HERE = os.path.dirname(os.path.abspath(__file__))
ROOT = os.path.dirname(HERE)
BIN = os.environ.get("HEADROOM", os.path.join(ROOT, "build", "headroom"))
DECK = os.path.join(HERE, "data", "powerup", "xfmr_fullwave_doubler.cir")
PERIOD = 20e-3
INSTANTS = 24
TOL = 0.20


MAINS = os.path.join(ROOT, "examples", "mains_doubler.cir")


def probed_deck(phase, deck=DECK):
    """The deck at +10 % with its SIN's phase set, a probe before each
    diode; a node named "ac" renamed (ngspice reads it on a V card as the
    AC keyword)."""
    text = re.sub(r"(?i)sin\(0 325 50\)", "sin(0 357.5 50 0 0 %g)" % phase, open(deck).read())
    text = re.sub(r"(?im)^\.(end|tran|print)\b.*$", "", text)
    text = re.sub(r"(?m)(?<=[ \t])ac(?=[ \t])", "acnode", text)
    out = []
    for line in text.splitlines():
        f = line.split()
        if f and f[0].upper().startswith("D") and len(f) >= 4:
            out.append("V%sprobe %s %s_a 0" % (f[0], f[1], f[0]))
            line = " ".join([f[0], f[0] + "_a"] + f[2:])
        out.append(line)
    return "\n".join(out) + "\n"


def pulses(t, i):
    """The forward pulse with the largest I2t: (peak, I2t)."""
    best = (0.0, 0.0)
    peak = i2t = 0.0
    for k in range(1, len(t)):
        a, b = max(i[k - 1], 0.0), max(i[k], 0.0)
        ends = peak > 0 and (i[k] <= 0 or i[k] < 1e-3 * peak)
        if i[k] > 0 or ends:
            i2t += (a * a + b * b) / 2 * (t[k] - t[k - 1])
        if ends:
            best = max(best, (peak, i2t), key=lambda p: p[1])
            peak = i2t = 0.0
        elif i[k] > 0:
            peak = max(peak, i[k])
    return max(best, (peak, i2t), key=lambda p: p[1])


def ngspice_run(tmp, phase, diodes, deck=DECK):
    """ngspice at one switch-on instant; a run that stops early ("timestep
    too small", seen at some instants with a 10 us step) is run again with
    half the step."""
    name = "%s_%g" % (os.path.basename(deck), phase)
    path = os.path.join(tmp, name + ".cir")
    out = os.path.join(tmp, name + ".txt")
    vecs = " ".join("i(v%sprobe)" % d for d in diodes)
    for step in (10e-6, 5e-6, 2.5e-6):
        text = probed_deck(phase, deck) + (".tran %g %g 0 %g uic\n.control\nrun\nwrdata %s %s\n.endc\n.end\n"
                                     % (step, 2 * PERIOD, step, out, vecs))
        open(path, "w").write(text)
        if os.path.exists(out):
            os.remove(out)
        subprocess.run(["ngspice", "-b", path], capture_output=True, text=True)
        rows = [list(map(float, l.split())) for l in open(out) if l.strip()] if os.path.exists(out) else []
        if rows and rows[-1][0] >= 2 * PERIOD * 0.999:
            break
    else:
        raise RuntimeError("ngspice did not finish " + path)
    t = [r[0] for r in rows]
    return {d: pulses(t, [r[2 * k + 1] for r in rows]) for k, d in enumerate(diodes)}


def main():
    missing = ngspice_missing("ngspice-surge")
    if missing is not None:
        return missing
    tally = Tally("ngspice-surge")
    ok = tally.ok

    def near(got, want):
        return got is not None and want > 0 and abs(got - want) <= TOL * want

    with tempfile.TemporaryDirectory() as tmp:
        parts = os.path.join(tmp, "parts.csv")
        with open(parts, "w", newline="") as f:
            csv.writer(f).writerows([["ref", "i_surge", "v_rated"], ["D1", "30", "400"],
                                     ["D2", "30", "400"]])
        r = subprocess.run([BIN, "check", "--format", "json", "--fail-on", "never", "--source-tol", "10",
                            "--parts", parts, DECK], capture_output=True, text=True)
        f = json.loads(r.stdout)["files"][0]
        surges = {s["part"]: s for s in f["stresses"] if s["quantity"] == "surge_current"}
        ok(sorted(surges) == ["D1", "D2"] and (f.get("surge_simulation") or {}).get("instants") == INSTANTS,
           "a simulated surge for D1 and D2 over %d switch-on instants" % INSTANTS)
        ref = {ph: ngspice_run(tmp, ph, sorted(surges)) for ph in
               [360.0 * k / INSTANTS for k in range(INSTANTS)]}
        for d, s in sorted(surges.items()):
            ok(s["basis"] == "simulated", "%s surge basis %s" % (d, s["basis"]))
            ph, i2t = s.get("surge_phase"), s.get("surge_i2t") or 0.0
            at = ref.get(ph, (0.0, 0.0))[d] if ph in ref else (0.0, 0.0)
            ok(near(s["worst"], at[0]), "%s peak at %s deg: headroom %.2f A, ngspice %.2f A (analytic "
               "bound %.1f A)" % (d, ph, s["worst"], at[0], s["analytic"]))
            ok(near(i2t, at[1]), "%s I2t at %s deg: headroom %.4g A^2 s, ngspice %.4g A^2 s"
               % (d, ph, i2t, at[1]))
            worst = max((ref[p][d] for p in ref), key=lambda p: p[1])
            ok(near(s["worst"], worst[0]) and near(i2t, worst[1]),
               "%s worst over the instants: headroom %.2f A, %.4g A^2 s; ngspice %.2f A, %.4g A^2 s"
               % (d, s["worst"], i2t, worst[0], worst[1]))
            wide = 2 * i2t / s["worst"] ** 2
            ok(math.isclose(s.get("surge_width") or -1.0, wide, rel_tol=1e-6), "%s width is 2 I2t / peak^2" % d)
            fs = [x for x in f["findings"] if x["part"] == d and x["rule"].startswith("surge-")]
            msg = fs[0]["message"] if fs else ""
            # the rating's I2t (a half-sine of 30 A over 8.3 ms: 30^2 x 8.3 ms / 2 = 3.735 A^2 s)
            # sits within 0.3 % of ngspice's pulse: within 0.5 % either rule is right, past it
            # the one ngspice's I2t gives
            rated = 30.0 ** 2 * 8.3e-3 / 2
            want = {"surge-excess", "surge-derating"}
            if worst[1] > rated * 1.005:
                want = {"surge-excess"}
            elif worst[1] < rated * 0.995:
                want = {"surge-derating"}
            ok(len(fs) == 1 and fs[0]["rule"] in want and "peak" in msg and "wide" in msg
               and "I2t" in msg, "%s surge finding (%s) states peak, width and I2t: %s"
               % (d, " or ".join(sorted(want)), msg or "none"))
        # a second deck: the shipped mains doubler (no transformer, a
        # limiter resistor, diodes with a 4.3 us transit time)
        r = subprocess.run([BIN, "check", "--format", "json", "--fail-on", "never", "--source-tol", "10",
                            MAINS], capture_output=True, text=True)
        f = json.loads(r.stdout)["files"][0]
        surges = {s["part"]: s for s in f["stresses"] if s["quantity"] == "surge_current"}
        for d, s in sorted(surges.items()):
            at = ngspice_run(tmp, s["surge_phase"], sorted(surges), MAINS)[d]
            ok(near(s["worst"], at[0]) and near(s.get("surge_i2t") or 0.0, at[1]),
               "examples/mains_doubler.cir %s at %s deg: headroom %.2f A, %.4g A^2 s; ngspice %.2f A, "
               "%.4g A^2 s (analytic bound %.1f A)" % (d, s["surge_phase"], s["worst"],
                                                        s.get("surge_i2t") or 0.0, at[0], at[1], s["analytic"]))
    return tally.done()


if __name__ == "__main__":
    sys.exit(main())
