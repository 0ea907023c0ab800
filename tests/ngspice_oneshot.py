#!/usr/bin/env python3
"""Circuits in which no source repeats (tests/data/oneshot: DC rails only,
or a single step): `headroom check` simulates them from switch-on through
the sources' events to the state they settle to (docs/solver.md, "No
repeating source"). Reference: ngspice, the same netlist run from the zero
state (.tran ... uic) for 200 ms, long past every time constant here, with
the circuit's own diode models and again with near-ideal ones (is=1e-9
n=0.05, as tests/ngspice_families.py). Per capacitor (peak |V|) and diode
(peak reverse voltage), at zero source tolerance:
  sound   headroom's worst >= the real-diode reference * (1 - 1e-3) - 1 mV
  tight   headroom's worst <= max(real, ideal reference) * 1.03 + 0.1 V
The reference peak is taken over the settled end of the run (the last
20 ms) for a deck whose sources never move (its power-up is not a working
state, as for periodic circuits), over the whole run for a deck with a
step. ngspice missing: a failure when CI is set, otherwise a visible skip."""
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
DATA = os.path.join(HERE, "data", "oneshot")
TAG = "ngspice-oneshot"
STOP = 0.2
IDEAL = "is=1e-9 n=0.05"


def parts(text):
    """(name, kind, a, b) of every C and D card."""
    out = []
    for line in text.splitlines()[1:]:
        t = line.split()
        if t and t[0][0].lower() in "cd" and len(t) >= 3:
            out.append((t[0].lower(), t[0][0].lower(), t[1].lower(), t[2].lower()))
    return out


def ideal(text):
    return re.sub(r"(?im)^(\.model\s+\S+\s+d\s*\().*\)", r"\1%s)" % IDEAL, text)


def node(n):
    return "0" if n == "0" else "v(%s)" % n


def simulate(text, ps, window):
    """name -> peak over the window (s before the end; None: whole run)."""
    body = re.sub(r"(?im)^\.end\s*$", "", text)
    vecs, lines = [], []
    for name, kind, a, b in ps:
        expr = "%s-%s" % (node(b), node(a)) if kind == "d" else "%s-%s" % (node(a), node(b))
        vecs.append(name)
        lines.append("let x_%s = %s" % (name, expr.replace("-0", "")))
    with tempfile.TemporaryDirectory() as d:
        out = os.path.join(d, "out.txt")
        ctl = [".options rshunt=1e12 reltol=1e-5", ".tran 10u %g 0 10u uic" % STOP, ".control",
               "run"] + lines
        if window:
            ctl.append("linearize")
        for name in vecs:
            ctl.append("let y_%s = x_%s" % (name, name))
        ctl += ["wrdata %s %s" % (out, " ".join("y_" + n for n in vecs)), ".endc", ".end"]
        deck = os.path.join(d, "deck.cir")
        with open(deck, "w") as f:
            f.write(body + "\n".join(ctl) + "\n")
        subprocess.run(["ngspice", "-b", deck], capture_output=True, text=True, timeout=600)
        rows = [list(map(float, l.split())) for l in open(out) if l.strip()]
    peak = {}
    for k, (name, kind, _, _) in enumerate(ps):  # wrdata: time, value per vector
        col = [r[2 * k + 1] for r in rows if not window or r[0] >= STOP - window]
        peak[name] = max(col) if kind == "d" else max(abs(v) for v in col)
    return peak


def tool(path):
    r = subprocess.run([BIN, "check", "--format", "json", "--source-tol", "0", "--fail-on",
                        "never", path], capture_output=True, text=True, timeout=300)
    f = json.loads(r.stdout)["files"][0]
    return {s["part"].lower(): s for s in f["stresses"]
            if s["quantity"] in ("voltage", "reverse_voltage")}


def main():
    gone = ngspice_missing(TAG)
    if gone is not None:
        return gone
    t = Tally(TAG)
    for fn in sorted(os.listdir(DATA)):
        if not fn.endswith(".cir"):
            continue
        path = os.path.join(DATA, fn)
        text = open(path).read()
        moving = re.search(r"(?im)^v\S*\s.*\b(pulse|pwl|exp|sin)\s*\(", text)
        window = None if moving else 0.02
        ps = parts(text)
        real, near = simulate(text, ps, window), simulate(ideal(text), ps, window)
        got = tool(path)
        for name, kind, _, _ in ps:
            s = got.get(name)
            if not s or s["worst"] is None:
                t.ok(False, "%s %s: no number from the tool" % (fn, name))
                continue
            w, r, i = s["worst"], real[name], near[name]
            t.ok(s["basis"] == "simulated" and "switch-on" in (s.get("corner") or ""),
                 "%s %s: simulated from switch-on (%s)" % (fn, name, s["basis"]))
            t.ok(w >= r * (1 - 1e-3) - 1e-3,
                 "%s %s: sound, %.4g V >= ngspice %.4g V" % (fn, name, w, r))
            t.ok(w <= max(r, i) * 1.03 + 0.1,
                 "%s %s: tight, %.4g V <= ngspice max(%.4g, %.4g) V + 3 %% + 0.1 V"
                 % (fn, name, w, r, i))
    return t.done()


if __name__ == "__main__":
    sys.exit(main())
