#!/usr/bin/env python3
"""Propagated node ranges against ngspice transient runs of the same
netlists (tests/data/topo: the hand-written structure cases).
ngspice (Debian package) runs each deck on a scratch copy for 300 periods of
its slowest source, with the diodes' own models (tests/data/topo uses a
near-ideal diode, is=1e-9 n=0.05: about 18 mV at 1 mA); the last two
periods give each node's simulated minimum and maximum.

Checks, for every settled node of every structure:
  soundness  the propagated range contains the simulated one (allowing
             0.5 % of the node's peak for the simulation's own accuracy);
  tightness  each end lies within 2 % of the node's peak.
The examples, with real diodes, source resistance and loads, are compared
with ngspice by the stress tests of the check command instead.
A rail given as a slowly moving range (*@source NAME min= max=) is run at
the top of its range: the capacitor charges to the highest level the rail
reaches and keeps it (docs/design.md §6), so that is the corner the range shows.

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


def decks():
    topo = os.path.join(HERE, "data", "topo")
    out = [os.path.join(topo, f) for f in sorted(os.listdir(topo)) if f.endswith(".cir")]
    return out


def analysis(deck):
    r = subprocess.run([BIN, "topo", "--format", "json", deck], capture_output=True, text=True)
    if r.returncode != 0:
        raise RuntimeError("headroom topo failed on %s: %s" % (deck, r.stderr))
    return json.loads(r.stdout)["files"][0]["structures"]


def period_of(structs):
    periods = [1.0 / s["source"]["frequency"] for s in structs
               if s.get("source") and s["source"].get("frequency")]
    return max(periods) if periods else None


def rails_at_max(text):
    """Sets every source with a *@source min/max range to its maximum."""
    for m in re.finditer(r"(?im)^\*@source\s+(\S+).*\bmax=(\S+)", text):
        name, top = re.escape(m.group(1)), m.group(2)
        text = re.sub(r"(?im)^(%s\s+\S+\s+\S+)\s.*$" % name, r"\1 dc %s" % top, text)
    return text


def simulate(deck, nodes, period, tmp):
    text = rails_at_max(open(deck, encoding="utf-8").read())
    text = re.sub(r"(?ims)^\.control.*?^\.endc\s*$", "", text)
    text = re.sub(r"(?im)^\.(tran|print|plot|probe|save)\b.*$", "", text)
    out = os.path.join(tmp, "wave.txt")
    step = period / 200
    block = (".tran %g %g 0 %g\n.control\nset wr_singlescale\nset wr_vecnames\noption numdgt=9\n"
             "run\nwrdata %s %s\n.endc\n" % (step, 300 * period, step, out,
                                             " ".join("v(%s)" % n for n in nodes)))
    text = re.sub(r"(?im)^\.end\s*$", block + ".end", text, count=1)
    copy = os.path.join(tmp, os.path.basename(deck))
    with open(copy, "w", encoding="utf-8") as f:
        f.write(text)
    r = subprocess.run(["ngspice", "-b", copy], capture_output=True, text=True, cwd=tmp, timeout=600)
    if not os.path.exists(out):
        raise RuntimeError("ngspice gave no waveforms for %s: %s" % (deck, r.stdout[-500:] + r.stderr[-500:]))
    rows = [l.split() for l in open(out) if l.strip() and not l.lstrip().startswith("time")]
    t_end = float(rows[-1][0])
    last = [r for r in rows if float(r[0]) >= t_end - 2 * period]
    os.remove(out)
    return {n: (min(float(r[i + 1]) for r in last), max(float(r[i + 1]) for r in last))
            for i, n in enumerate(nodes)}


def check(deck, tmp):
    structs = analysis(deck)
    period = period_of(structs)
    if not structs or period is None:
        return [], 0
    nodes = {}
    for s in structs:
        for n in s["nodes"]:
            if n["name"] != "0" and n["min"] is not None:
                # a rail given as a range is an input, not a result
                rail = n["class"] == "fixed" and n["min"] != n["max"]
                nodes[n["name"]] = (n["min"], n["max"], rail)
    sim = simulate(deck, sorted(nodes), period, tmp)
    problems = []
    for name, (lo, hi, rail) in sorted(nodes.items()):
        slo, shi = sim[name]
        peak = max(abs(lo), abs(hi), 1e-3)
        sound = 0.005 * peak
        tight = 0.02 * peak
        ok_sound = lo <= slo + sound and shi <= hi + sound
        ok_tight = rail or (abs(slo - lo) <= tight and abs(shi - hi) <= tight)
        verdict = "ok" if ok_sound and ok_tight else "FAIL"
        print("ngspice-topo: %s %s: propagated [%.4g, %.4g] simulated [%.4g, %.4g] %s"
              % (os.path.relpath(deck, ROOT), name, lo, hi, slo, shi, verdict))
        if verdict != "ok":
            problems.append(name)
    return problems, len(nodes)


def main():
    if shutil.which("ngspice") is None:
        if os.environ.get("CI"):
            print("ngspice-topo: FAIL ngspice is not installed (scripts/deps.sh installs it)")
            print("ngspice-topo: 0 passed, 1 failed")
            return 1
        print("ngspice-topo: SKIPPED, ngspice is not installed")
        return 0
    passed = failed = 0
    with tempfile.TemporaryDirectory() as tmp:
        for deck in decks():
            problems, n = check(deck, tmp)
            if n == 0:
                continue
            if problems:
                failed += 1
            else:
                passed += 1
    print("ngspice-topo: %d passed, %d failed" % (passed, failed))
    return 1 if failed else 0


if __name__ == "__main__":
    sys.exit(main())
