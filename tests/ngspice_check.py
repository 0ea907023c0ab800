#!/usr/bin/env python3
"""Worst-case stresses of `headroom check` against ngspice transient runs of
the same netlists (tests/data/topo: every structure kind, both polarities,
biased clamps, a slowly moving rail, a transformer-driven doubler, a pump;
examples/: real diodes, series resistance, loads, a loaded ladder).

For each capacitor and diode that headroom bounds, at zero source tolerance:
  soundness  headroom's worst is never below the peak that ngspice shows
             with realistic diode models (1N4148-like, is=2.52n n=1.752
             rs=0.568, from memory; the examples keep their own models),
             allowing 0.5 % for the simulation's own accuracy;
  tightness  (tests/data/topo) headroom's worst is within 3 % + 2 Vf of the
             peak that ngspice shows with near-ideal diodes (is=1e-9
             n=0.05), Vf being the realistic model's drop at 1 mA (0.58 V);
             for a capacitor in series with others with nothing at their
             joints, the peak across the whole string (leakage divides its
             DC, docs/check.md).
A rail given as a slowly moving range is simulated at the top of its range;
the diode bound there covers the rail's whole movement, which a fixed-rail
run cannot show, so those decks are checked for soundness only.
ngspice comes from Debian's packages (scripts/deps.sh); the test fails, not
skips, when CI is set and it is missing. Each comparison is printed."""
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
REALISTIC = ".model dideal d(is=2.52n n=1.752 rs=0.568)"
VF = 0.584  # the realistic model at 1 mA: 1.752 * 25.85 mV * ln(1 + 1m/2.52n) + 0.568 * 1m


def decks():
    topo = os.path.join(HERE, "data", "topo")
    out = [(os.path.join(topo, f), True) for f in sorted(os.listdir(topo)) if f.endswith(".cir")]
    ex = os.path.join(ROOT, "examples")
    out += [(os.path.join(ex, f), False) for f in sorted(os.listdir(ex)) if f.endswith(".cir")]
    return out


def rails_at_max(text):
    for m in re.finditer(r"(?im)^\*@source\s+(\S+).*\bmax=(\S+)", text):
        name, top = re.escape(m.group(1)), m.group(2)
        text = re.sub(r"(?im)^(%s\s+\S+\s+\S+)\s.*$" % name, r"\1 dc %s" % top, text)
    return text


def headroom(path, *args):
    r = subprocess.run([BIN] + list(args) + [path], capture_output=True, text=True)
    if r.returncode == 2:
        raise RuntimeError("headroom %s failed on %s: %s" % (args[0], path, r.stderr))
    return json.loads(r.stdout)


def simulate(text, nodes, period, tmp, name):
    text = re.sub(r"(?ims)^\.control.*?^\.endc\s*$", "", text)
    text = re.sub(r"(?im)^\.(tran|print|plot|probe|save)\b.*$", "", text)
    out = os.path.join(tmp, name + ".txt")
    step = period / 200
    block = (".tran %g %g 0 %g\n.control\nset wr_singlescale\nset wr_vecnames\noption numdgt=9\n"
             "run\nwrdata %s %s\n.endc\n" % (step, 300 * period, step, out,
                                             " ".join("v(%s)" % n for n in nodes)))
    text = re.sub(r"(?im)^\.end\s*$", block + ".end", text, count=1)
    deck = os.path.join(tmp, name + ".cir")
    with open(deck, "w", encoding="utf-8") as f:
        f.write(text)
    subprocess.run(["ngspice", "-b", deck], capture_output=True, text=True, cwd=tmp, timeout=900)
    rows = [l.split() for l in open(out) if l.strip() and not l.lstrip().startswith("time")]
    t_end = float(rows[-1][0])
    last = [[float(v) for v in r] for r in rows if float(r[0]) >= t_end - 2 * period]
    os.remove(out)
    return {n: [r[i + 1] for r in last] for i, n in enumerate(nodes)}


def peak(wave, part):
    a = wave.get(part["nodes"][0].lower(), None)
    b = wave.get(part["nodes"][1].lower(), None)
    va = a if a is not None else [0.0] * len(b)
    vb = b if b is not None else [0.0] * len(a)
    if part["letter"] == "d":  # reverse: cathode above anode
        return max(k - x for x, k in zip(va, vb))
    return max(abs(x - k) for x, k in zip(va, vb))


def check(deck, tight, tmp):
    text = open(deck, encoding="utf-8").read()
    real = text.replace(".model dideal d(is=1e-9 n=0.05)", REALISTIC)
    scratch = os.path.join(tmp, "real_" + os.path.basename(deck))
    with open(scratch, "w", encoding="utf-8") as f:
        f.write(real)
    report = headroom(scratch, "check", "--format", "json", "--source-tol", "0", "--fail-on", "never")
    f0 = report["files"][0]
    periods = [1.0 / s["source"]["frequency"] for s in f0["structures"]
               if s.get("source") and s["source"].get("frequency")]
    stresses = [s for s in f0["stresses"] if s["bounded"] and s["quantity"] in ("voltage", "reverse_voltage")
                and s["structure"] is not None]
    if not periods or not stresses:
        return 0, []
    parts = {p["path"]: p for p in headroom(scratch, "parts", "--format", "json")["files"][0]["parts"]}
    nodes = sorted({n.lower() for s in stresses for n in parts[s["part"]]["nodes"] if n != "0"})
    period = max(periods)
    slow = re.search(r"(?im)^\*@source\s+\S+.*\bmin=", text) is not None
    wave_real = simulate(rails_at_max(real), nodes, period, tmp, "real")
    wave_ideal = simulate(rails_at_max(text), nodes, period, tmp, "ideal") if tight else None
    problems = []
    for s in stresses:
        p = parts[s["part"]]
        sim = peak(wave_real, p)
        sound = s["worst"] >= sim - 0.005 * abs(sim)
        verdict = "ok" if sound else "FAIL soundness"
        extra = ""
        if tight and not slow:
            # a member of a series string of capacitors with nothing at
            # their joints is bounded by the whole string (docs/check.md,
            # "Ungraded capacitor strings"): tight against the string's peak
            ends = re.search(r"capacitors in series from (\S+) to (\S+) with nothing", s.get("corner") or "")
            ideal = peak(wave_ideal, {"nodes": list(ends.groups()), "letter": "c"} if ends else p)
            margin = 0.03 * abs(ideal) + 2 * VF
            extra = ", ideal-diode simulation %.4g (margin %.3g)" % (ideal, s["worst"] - ideal)
            if abs(s["worst"] - ideal) > margin:
                verdict = "FAIL tightness"
        print("ngspice-check: %s %s: bound %.4g V, simulated %.4g V (realistic diodes, headroom above by %.3g)%s %s"
              % (os.path.relpath(deck, ROOT), s["part"], s["worst"], sim, s["worst"] - sim, extra, verdict))
        if verdict != "ok":
            problems.append(s["part"])
    return len(stresses), problems


def main():
    if shutil.which("ngspice") is None:
        if os.environ.get("CI"):
            print("ngspice-check: FAIL ngspice is not installed (scripts/deps.sh installs it)")
            print("ngspice-check: 0 passed, 1 failed")
            return 1
        print("ngspice-check: SKIPPED, ngspice is not installed")
        return 0
    passed = failed = 0
    with tempfile.TemporaryDirectory() as tmp:
        for deck, tight in decks():
            n, problems = check(deck, tight, tmp)
            if n == 0:
                continue
            if problems:
                failed += 1
            else:
                passed += 1
    print("ngspice-check: %d passed, %d failed" % (passed, failed))
    return 1 if failed else 0


if __name__ == "__main__":
    sys.exit(main())
