#!/usr/bin/env python3
"""stored-charge discharge times against ngspice (tests/data/charge).

Each netlist is run in ngspice (Debian package) with its source cut off by
a switch (off resistance 1e12 ohm, a 1e12 ohm leak keeps the cut node
defined) once the circuit has charged; `meas ... when ... fall` gives the
time from the cut to 60 V. headroom's times come from its JSON findings
(docs/rules/stored-charge.md):
  - dc440_slow: one RC, t = R C ln(440 / 60): within 1 % of ngspice;
  - dc440_fast: 8.2 kohm is fast enough: no finding, ngspice under 2 s;
  - dc440_bare: no path: a finding, and ngspice still above 60 V at the end;
  - ladder3_stack: the smoothing capacitors (with their stack) and the
    stack at d3 are sound (never shorter than ngspice) and within 25 %;
  - fw_doubler_pair: a full-wave doubler on a floating source, bled only
    across its output: each capacitor drains with the other (a pair in
    series through the source's node), sound and within 25 %.
Figures when this was written (ngspice 42): dc440_slow 4.383 s (headroom
4.383 s); ladder3_stack members 3.10 s (headroom 3.568 s), stack at d3
5.11 s (headroom 5.582 s), coupling capacitors 3.86 s (headroom's estimate
4.281 s).

Fails, not skips, when CI is set and ngspice is missing."""
import json
import os
import re
import shutil
import subprocess
import sys
import tempfile

HERE = os.path.dirname(os.path.abspath(__file__))
ROOT = os.path.dirname(HERE)
BIN = os.environ.get("HEADROOM", os.path.join(ROOT, "build", "headroom"))
DATA = os.path.join(HERE, "data", "charge")

UNITS = {"ms": 1e-3, "us": 1e-6, "s": 1.0, "ks": 1e3}


def seconds(text):
    m = re.search(r"takes ([0-9.]+) (ms|us|s|ks) to fall", text)
    return float(m.group(1)) * UNITS[m.group(2)] if m else None


def findings(name):
    r = subprocess.run([BIN, "check", "--format", "json", "--fail-on", "never",
                        os.path.join(DATA, name)], capture_output=True, text=True)
    if r.returncode != 0:
        sys.exit("ngspice_charge: headroom failed on %s: %s" % (name, r.stderr))
    doc = json.loads(r.stdout)
    return [f for f in doc["files"][0]["findings"] if f["rule"] == "stored-charge"]


def deck(name, source, t_off, t_end, step, probes):
    """The netlist with `source` cut off at t_off and one meas per probe."""
    lines = []
    for line in open(os.path.join(DATA, name)):
        low = line.strip().lower()
        if low.startswith("*@") or low == ".end":
            continue
        words = line.split()
        if words and words[0].upper() == source:
            node = words[1]
            words[1] = node + "_src"
            line = " ".join(words) + "\n"
            line += "SOFF %s_src %s ctl 0 swoff\nRLEAK %s 0 1e12\n" % (node, node, node)
            line += "VCTL ctl 0 PWL(0 1 %g 1 %g 0)\n" % (t_off, t_off + 1e-5)
            line += ".model swoff sw(vt=0.5 vh=0.1 ron=0.01 roff=1e12)\n"
        lines.append(line)
    lines.append(".tran %g %g 0 %g uic\n.control\nrun\n" % (step, t_end, step * 5))
    for i, (expr, _) in enumerate(probes):
        lines.append("let p%d = %s\n" % (i, expr))
        lines.append("meas tran t%d when p%d=60 fall=1 td=%g\n" % (i, i, t_off))
    lines.append("meas tran vend find p0 at=%g\n.endc\n.end\n" % (t_end * 0.999))
    return "".join(lines)


def ngspice(text):
    with tempfile.TemporaryDirectory() as tmp:
        path = os.path.join(tmp, "d.cir")
        open(path, "w").write(text)
        r = subprocess.run(["ngspice", "-b", path], capture_output=True, text=True, cwd=tmp)
    out = {}
    for m in re.finditer(r"^(t\d+|vend)\s*=\s*([-+0-9.eE]+)", r.stdout, re.M):
        out[m.group(1)] = float(m.group(2))
    return out


def main():
    if not shutil.which("ngspice"):
        if os.environ.get("CI"):
            sys.exit("ngspice_charge: FAIL ngspice is not installed (CI is set)")
        print("ngspice_charge: SKIPPED ngspice is not installed")
        return
    fails = []

    def check(name, ok):
        if not ok:
            fails.append(name)
            print("ngspice_charge: FAIL " + name)

    # one capacitor and one resistor: the RC law itself
    t_off = 0.01
    sim = ngspice(deck("dc440_slow.cir", "V1", t_off, 6, 1e-4, [("v(bus)", "C1")]))
    mine = [seconds(f["message"]) for f in findings("dc440_slow.cir") if f["part"] == "C1"]
    print("ngspice_charge: dc440_slow C1: ngspice %.3f s, headroom %s s" % (sim.get("t0", -1) - t_off, mine))
    check("dc440_slow: one finding with a time", len(mine) == 1 and mine[0] is not None)
    if mine and mine[0] and "t0" in sim:
        check("dc440_slow: within 1 %% of ngspice", abs(mine[0] - (sim["t0"] - t_off)) <= 0.01 * mine[0])

    sim = ngspice(deck("dc440_fast.cir", "V1", t_off, 4, 1e-4, [("v(bus)", "C1")]))
    check("dc440_fast: ngspice under 2 s", "t0" in sim and sim["t0"] - t_off < 2)
    check("dc440_fast: no finding", findings("dc440_fast.cir") == [])

    sim = ngspice(deck("dc440_bare.cir", "V1", t_off, 4, 1e-4, [("v(bus)", "C1")]))
    check("dc440_bare: ngspice keeps the charge", sim.get("vend", 0) > 400 and "t0" not in sim)
    check("dc440_bare: a no-path finding",
          any("no discharge path" in f["message"] for f in findings("dc440_bare.cir")))

    def stack_times(name, t_off, t_end, step, probes):
        """Each probe's time to 60 V in ngspice against headroom's finding:
        both there, sound (not shorter) and within 25 %."""
        sim = ngspice(deck(name, "VS", t_off, t_end, step, probes))
        found = {f["part"]: seconds(f["message"]) for f in findings(name)}
        tag = name[:-4]
        for i, (_, part) in enumerate(probes):
            ref = sim.get("t%d" % i)
            got = found.get(part)
            print("ngspice_charge: %s %s: ngspice %s s, headroom %s s" %
                  (tag, part, None if ref is None else round(ref - t_off, 3), got))
            check("%s %s: both have a time" % (tag, part), ref is not None and got is not None)
            if ref is not None and got is not None:
                check("%s %s: sound (not shorter than ngspice)" % (tag, part), got >= ref - t_off)
                check("%s %s: within 25 %% of ngspice" % (tag, part), got <= 1.25 * (ref - t_off))

    # the ladder: members drain with their stack, the stack at d3
    stack_times("ladder3_stack.cir", 0.3, 9, 1e-5,
                [("v(d3)", "d3"), ("v(d1)", "CD1"), ("v(d2)-v(d1)", "CD2"), ("v(d3)-v(d2)", "CD3")])
    # a full-wave doubler on a floating source: each capacitor drains with
    # the other through the bleeder across the pair
    stack_times("fw_doubler_pair.cir", 0.2, 10, 1e-4,
                [("v(top)-v(bot)", "top"), ("v(top)-v(b)", "C1"), ("v(b)-v(bot)", "C2")])
    print("ngspice_charge: %d failed" % len(fails))
    sys.exit(1 if fails else 0)


main()
