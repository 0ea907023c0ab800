#!/usr/bin/env python3
"""The steady state's currents of `headroom check` against ngspice (Debian's
package, scripts/deps.sh) on the same netlist: tests/data/currents/xfmr_doubler.cir,
a transformer-fed full-wave doubler (230 V 50 Hz mains at +10 %, a 24 V-class
secondary with winding resistance and leakage, two 2,200 uF reservoirs, a
1 kohm load). The reference is ngspice's own steady state of that deck:
the source's amplitude times 1.1 (the file's *@source tol=10% at its high
end, the corner headroom's currents come from), 0 V sources in series with
each diode and reservoir to read their currents, the reservoirs started
near their steady voltage (.ic) and run for 3.5 s (175 periods, about
three load time constants 1 kohm x 1,100 uF) with a 20 us largest step
(T/1000); its last period gives each diode's mean and largest current and
each reservoir's rms current (trapezoidal integration over ngspice's
points). Checked:
  - each reservoir's ripple_current within 10 % of ngspice's;
  - each diode's avg_current within 5 % and its peak_current within 20 %;
  - each is labelled simulated, from the all-high corner;
  - the load's power is V^2 / R of the output (within 1 %), and the
    parts-table columns i_avg, i_peak, i_ripple and ripple_freq reach the
    rules: ratings just under the simulated values make diode-avg-current,
    diode-peak-current and cap-ripple-current fire, ratings just above keep
    them quiet.
And on tests/data/currents/breakdown_square.cir, two slow diodes driven
past their breakdown by square waves (20 V and 200 V knees): ngspice's run
at the +10 % corner with a 1 ns step and reltol 1e-6, its last period's
mean of v i at each diode (trapezoidal) and largest reverse voltage.
Checked: each diode's power at least 99 % of ngspice's and at most 115 %
(the charge the diode stores gives back what it takes over a period, so
the power is the junction's static current times its voltage, which moves
with the few millivolts of the knee the steps leave), and its
reverse_voltage at least ngspice's and within 1 % of it (the 20 V knee
sits at BV itself, as ngspice places it when IBV is below IS BV / Vt).
Prints each current with its headroom/ngspice ratio. Fails, not skips,
when CI is set and ngspice is missing."""
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
DECK = os.path.join(HERE, "data", "currents", "xfmr_doubler.cir")
PERIOD = 20e-3
SENSED = {"D1": "s top", "D2": "bot s", "C1": "top 0", "C2": "0 bot"}


def ngspice_deck(tmp):
    """The deck with the +10 % amplitude and a 0 V source ahead of each
    sensed part (its current flows from its first pin to its second)."""
    out = []
    for line in open(DECK):
        w = line.split()
        if w and w[0] in SENSED:
            a, b = SENSED[w[0]].split()
            assert w[1] == a and w[2] == b, line
            out.append("V%s %s %s_in 0\n" % (w[0], a, w[0]))
            out.append("%s %s_in %s %s\n" % (w[0], w[0], b, " ".join(w[3:])))
        elif line.lower().startswith(".end"):
            continue
        elif line.startswith("*@"):
            continue
        else:
            out.append(line)
    text = "".join(out).replace("sin(0 325 50)", "sin(0 357.5 50)")
    assert "357.5" in text
    data = os.path.join(tmp, "i.txt")
    text += (".ic v(top)=34 v(bot)=-34\n.options reltol=1e-4\n.tran 20u 3.5 0 20u\n"
             ".control\nrun\nwrdata %s i(vd1) i(vd2) i(vc1) i(vc2) v(top) v(bot)\n.endc\n.end\n" % data)
    path = os.path.join(tmp, "i.cir")
    open(path, "w").write(text)
    return path, data


def ngspice_currents(tmp):
    path, data = ngspice_deck(tmp)
    subprocess.run(["ngspice", "-b", path], capture_output=True, text=True)
    if not os.path.exists(data):
        raise RuntimeError("ngspice wrote no output for " + path)
    rows = [list(map(float, l.split())) for l in open(data)]
    t_end = rows[-1][0]
    last = [r for r in rows if r[0] >= t_end - PERIOD - 1e-12]
    ref = {}
    for name, col in (("D1", 1), ("D2", 3), ("C1", 5), ("C2", 7)):
        s = s2 = 0.0
        peak = -math.inf
        for a, b in zip(last, last[1:]):
            h, x, y = b[0] - a[0], a[col], b[col]
            s += h * (x + y) / 2
            s2 += h * (x * x + x * y + y * y) / 3
            peak = max(peak, y)
        span = last[-1][0] - last[0][0]
        ref[name] = {"avg": s / span, "rms": math.sqrt(s2 / span), "peak": peak}
    vout = sum((b[9] - b[11] + a[9] - a[11]) / 2 * (b[0] - a[0]) for a, b in zip(last, last[1:]))
    ref["vout"] = vout / (last[-1][0] - last[0][0])
    return ref


BREAKDOWN = os.path.join(HERE, "data", "currents", "breakdown_square.cir")
BD_PERIOD = 100e-6


def ngspice_breakdown(tmp):
    """ngspice's mean power and largest reverse voltage of D1 and D2 of
    breakdown_square.cir at the +10 % corner (a 0 V source ahead of each)."""
    out = []
    for line in open(BREAKDOWN):
        w = line.split()
        if line.startswith("*@") or line.lower().startswith(".end"):
            continue
        if w and w[0] in ("D1", "D2"):
            out.append("VS%s %s m%s 0\n" % (w[0], w[1], w[0]))
            out.append("%s m%s %s\n" % (w[0], w[0], " ".join(w[2:])))
            continue
        out.append(line.replace("pulse(-30 30 ", "pulse(-33 33 ").replace("pulse(-300 300 ", "pulse(-330 330 "))
    text = "".join(out)
    assert "pulse(-33 33 " in text and "pulse(-330 330 " in text
    data = os.path.join(tmp, "bd.txt")
    text += (".options reltol=1e-6\n.tran 1n 1m 0.8m 1n\n.control\nrun\n"
             "wrdata %s v(mD1) v(k) i(vsD1) v(mD2) v(k2) i(vsD2)\n.endc\n.end\n" % data)
    path = os.path.join(tmp, "bd.cir")
    open(path, "w").write(text)
    subprocess.run(["ngspice", "-b", path], capture_output=True, text=True)
    if not os.path.exists(data):
        raise RuntimeError("ngspice wrote no output for " + path)
    rows = [list(map(float, l.split())) for l in open(data)]
    last = [r for r in rows if r[0] >= rows[-1][0] - BD_PERIOD - 1e-12]
    ref = {}
    for name, col in (("D1", 1), ("D2", 7)):
        pw = [(r[0], (r[col] - r[col + 2]) * r[col + 4], r[col + 2] - r[col]) for r in last]
        e = sum((b[0] - a[0]) * (a[1] + b[1]) / 2 for a, b in zip(pw, pw[1:]))
        ref[name] = {"power": e / (pw[-1][0] - pw[0][0]), "reverse": max(x[2] for x in pw)}
    return ref


def check_breakdown(tmp, ok):
    ref = ngspice_breakdown(tmp)
    f = headroom([BREAKDOWN])
    got = {(s["part"], s["quantity"]): s for s in f["stresses"]}
    for d in ("D1", "D2"):
        s, want = got.get((d, "power")), ref[d]["power"]
        val = s["worst"] if s else None
        ok(val is not None and 0.99 * want <= val <= 1.15 * want and s["basis"] == "simulated",
           "%s power in breakdown: headroom %s W, ngspice %.5g W (ratio %s, allowed 0.99 to 1.15)"
           % (d, val, want, "%.4f" % (val / want) if val else "-"))
        s, want = got.get((d, "reverse_voltage")), ref[d]["reverse"]
        val = s["worst"] if s else None
        ok(val is not None and want <= val <= 1.01 * want,
           "%s reverse_voltage at its knee: headroom %s V, ngspice %.5g V (allowed 1 to 1.01 times)"
           % (d, val, want))


def headroom(args):
    r = subprocess.run([BIN, "check", "--format", "json", "--fail-on", "never"] + args,
                       capture_output=True, text=True)
    return json.loads(r.stdout)["files"][0]


def main():
    missing = ngspice_missing("ngspice-currents")
    if missing is not None:
        return missing
    tally = Tally("ngspice-currents")
    ok = tally.ok

    with tempfile.TemporaryDirectory() as tmp:
        ref = ngspice_currents(tmp)
        f = headroom([DECK])
        got = {(s["part"], s["quantity"]): s for s in f["stresses"]}
        checks = [("C1", "ripple_current", "rms", 0.10), ("C2", "ripple_current", "rms", 0.10),
                  ("D1", "avg_current", "avg", 0.05), ("D2", "avg_current", "avg", 0.05),
                  ("D1", "peak_current", "peak", 0.20), ("D2", "peak_current", "peak", 0.20)]
        for part, qty, key, tol in checks:
            s = got.get((part, qty))
            want = ref[part][key]
            val = s["worst"] if s else None
            ok(val is not None and abs(val - want) <= tol * abs(want),
               "%s %s: headroom %s A, ngspice %.6g A (ratio %s, allowed +-%.0f %%)"
               % (part, qty, val, want, "%.4f" % (val / want) if val else "-", 100 * tol))
            ok(s is not None and s["basis"] == "simulated" and "high end" in (s["corner"] or "")
               and s["unit"] == "A", "%s %s is labelled simulated at the all-high corner" % (part, qty))
        for part in ("D1", "D2"):
            s = got.get((part, "rms_current"))
            print("ngspice-currents: note %s rms_current: headroom %s A, ngspice %.6g A"
                  % (part, s["worst"] if s else None, ref[part]["rms"]))
        rl = got.get(("RL", "power"))
        p_ref = ref["vout"] ** 2 / 1e3
        ok(rl is not None and rl["element"] == "R" and rl["unit"] == "W" and
           abs(rl["worst"] - p_ref) <= 0.01 * p_ref,
           "RL power: headroom %s W, ngspice's output %.4f V gives %.4f W" %
           (rl["worst"] if rl else None, ref["vout"], p_ref))
        ok(f["fallback"]["currents"]["simulated"] and abs(f["fallback"]["currents"]["period"] - PERIOD) < 1e-12,
           "fallback.currents: simulated over one 20 ms period")
        check_breakdown(tmp, ok)

        # the parts table's current columns reach the rules
        def rated(scale, name):
            path = os.path.join(tmp, name)
            with open(path, "w", newline="") as fh:
                w = csv.writer(fh)
                w.writerow(["ref", "kind", "v_rated", "i_avg", "i_peak", "i_ripple", "ripple_freq",
                            "ripple_temp", "esr", "life_h", "life_temp"])
                for d in ("D1", "D2"):
                    w.writerow([d, "rectifier", "400V", "%gA" % (got[(d, "avg_current")]["worst"] * scale),
                                "%gA" % (got[(d, "peak_current")]["worst"] * scale), "", "", "", "", "", ""])
                for c in ("C1", "C2"):
                    w.writerow([c, "alu-electrolytic", "50V", "", "", "%gA" % (got[(c, "ripple_current")]["worst"] * scale),
                                "100Hz", "105", "0.08", "2000", "105"])
            return {(g["rule"], g["part"]): g for g in
                    headroom(["--profile", "basic", "--parts", path, DECK])["findings"]}
        low, high = rated(0.8, "low.csv"), rated(1.25, "high.csv")
        for rule, parts in (("diode-avg-current", ("D1", "D2")), ("diode-peak-current", ("D1", "D2")),
                            ("cap-ripple-current", ("C1", "C2"))):
            for p in parts:
                g = low.get((rule, p))
                ok(g is not None and g["unit"] == "A" and g["rating"] is not None,
                   "%s fires on %s rated 20 %% under its current" % (rule, p))
                ok((rule, p) not in high, "%s quiet on %s rated 25 %% over its current" % (rule, p))
        g = low.get(("cap-ripple-current", "C1"))
        ok(g is not None and "100 Hz" in g["limits"] and "105 C" in g["limits"] and "not scaled" in g["limits"],
           "cap-ripple-current gives the rating's frequency and temperature, unscaled: %s"
           % (g["limits"] if g else "no finding"))
    return tally.done()


if __name__ == "__main__":
    sys.exit(main())
