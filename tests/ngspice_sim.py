#!/usr/bin/env python3
"""The built-in transient solver against ngspice (Debian package), on the
same netlists (tests/data/sim: one per structure kind, both polarities, a
transformer-driven doubler, a three-winding transformer with one tight and
two loose couplings, a loaded ladder, a 1 MHz pump, a boost switched by a
level-3 MOSFET, resistor-capacitor loads, a zener in breakdown, a pump fed from
a supply switched on for seconds, a zener clamp and detector at `.temp 100`
whose diode models ngspice and headroom both move to that temperature).

For each deck, `headroom sim` runs to its periodic steady state from zero
initial conditions (shooting-Newton, docs/solver.md) and prints the last
period of the probes the deck lists ("* probe: a" for a node, "* probe: a,b"
for the voltage across a part). ngspice then runs the same netlist (.tran
with uic, the same largest step: 1/200 of the period) from zero until it
has reached its own steady state: the peaks over its last period and over
the period half-way through the run agree within 1e-4, the run made four
times longer until they do. The steady state is compared, not the same
window of time from zero: the shooting reaches it in fewer periods than a
transient needs. The period is the one `sim` reports: beside a far slower
PULSE supply (held at its high level, docs/solver.md) that of the fast
sources, so ngspice's run stays within the supply's high phase.

And per deck, the time steps do not collapse: over the first 20 periods
from zero, headroom takes at most twice as many time points as ngspice
with the same largest step.

Checks, per probe, over the last period of each:
  peak      the largest |v| agrees within 0.5 %;
  waveform  at every one of our time points, ngspice's waveform (linearly
            interpolated) comes within 2 % of the probe's peak-to-peak,
            allowing a time shift of half the largest step (ngspice's
            points on a fast edge are that far apart: an edge placed a
            fraction of a step later is not a wrong voltage); for the ripple of a near-DC
            node, smaller than either simulator's own tolerance, the bound
            is 0.1 % of the peak (reltol).
ngspice's side (its last steady-state period, the periods it took, its
time points over the first 20) is kept in tests/data/sim/reference.json
with each deck's SHA-256, probes, period and largest step, and simulated
again only when one of those changes (or with --regen); our side is run
every time. Every comparison is printed. Fails, not skips, when CI is set
and ngspice is missing."""
import bisect
import hashlib
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
DATA = os.path.join(HERE, "data", "sim")


def probes(text):
    return re.findall(r"(?m)^\* probe: (\S+)\s*$", text)


def max_step(text):
    """A deck may ask for a smaller largest step ("* max-step: 5n", SPICE
    suffixes), for ringing faster than 1/200 of the period."""
    m = re.search(r"(?m)^\* max-step: (\S+)\s*$", text)
    if not m:
        return None
    scale = {"n": 1e-9, "u": 1e-6, "m": 1e-3}
    v = m.group(1)
    return float(v[:-1]) * scale[v[-1]] if v[-1] in scale else float(v)


def ours(deck, names, step):
    args = [BIN, "sim", deck] + (["--max-step", "%g" % step] if step else [])
    for n in names:
        args += ["--node", n]
    r = subprocess.run(args, capture_output=True, text=True)
    if r.returncode != 0:
        raise RuntimeError("headroom sim failed on %s: %s" % (deck, r.stderr))
    m = re.search(r"steady after (\d+) periods of (\S+) s", r.stderr)
    if not m:
        raise RuntimeError("no steady state on %s: %s" % (deck, r.stderr))
    rows = [list(map(float, line.split(","))) for line in r.stdout.splitlines()[1:]]
    return int(m.group(1)), float(m.group(2)), rows, r.stderr.strip()


def ngspice_vector(probe):
    """ngspice's name for a probe: v(a), v(a,b); ground written as 0."""
    a, _, b = probe.partition(",")
    if not b or b == "0":
        return "v(%s)" % a
    if a == "0":
        return "v(%s)" % b  # negated when read back
    return "v(%s,%s)" % (a, b)


def ngspice(deck, names, tstop, tmax, tmp):
    text = open(deck).read()
    text = re.sub(r"(?im)^\.end\s*$", "", text)
    vecs = " ".join(ngspice_vector(n) for n in names)
    text += ("\n.tran %g %g 0 %g uic\n.control\nrun\nwrdata %s %s\n.endc\n.end\n"
             % (tmax, tstop, tmax, os.path.join(tmp, "out.txt"), vecs))
    path = os.path.join(tmp, "deck.cir")
    open(path, "w").write(text)
    r = subprocess.run(["ngspice", "-b", path], capture_output=True, text=True, cwd=tmp)
    # ngspice -b exits 1 after a .control run ("no simulations run"): the
    # data file is what tells
    if not os.path.exists(os.path.join(tmp, "out.txt")):
        raise RuntimeError("ngspice failed on %s: %s" % (deck, (r.stdout + r.stderr)[-2000:]))
    t, cols = [], [[] for _ in names]
    for line in open(os.path.join(tmp, "out.txt")):
        f = list(map(float, line.split()))
        t.append(f[0])
        for i, n in enumerate(names):
            cols[i].append(-f[2 * i + 1] if n.startswith("0,") else f[2 * i + 1])
    return t, cols


def peaks_over(t, cols, a, b):
    sel = [i for i, x in enumerate(t) if a - 1e-15 <= x <= b + 1e-15]
    return [max(abs(c[i]) for i in sel) for c in cols]


def ngspice_converged(deck, names, period, tmax, tmp, start):
    """ngspice from zero, run until it has reached its own steady state:
    the peaks over the last period and over the period at half the run
    agree within 1e-4 (relative); the run is made four times longer until
    they do, up to 40,000 periods. Returns the periods run and the data."""
    k = max(start, 40)
    while True:
        nt, ncols = ngspice(deck, names, k * period, tmax, tmp)
        last = peaks_over(nt, ncols, (k - 1) * period, k * period)
        half = peaks_over(nt, ncols, (k // 2 - 1) * period, (k // 2) * period)
        if all(abs(a - b) <= 1e-4 * max(abs(a), 1e-9) for a, b in zip(last, half)) or k >= 40000:
            return k, nt, ncols
        k *= 4


def interp(t, v, x):
    lo, hi = 0, len(t) - 1
    while hi - lo > 1:
        mid = (lo + hi) // 2
        if t[mid] <= x:
            lo = mid
        else:
            hi = mid
    if t[hi] == t[lo]:
        return v[lo]
    return v[lo] + (v[hi] - v[lo]) * (x - t[lo]) / (t[hi] - t[lo])


def distance(nt, nv, x, v, dt):
    """How far v is from ngspice's values over [x - dt, x + dt], widened to
    ngspice's own time points on either side: between two points ngspice
    knows nothing, and its straight line across a switch's edge starts the
    edge up to a step before the instant the switch really changes (a
    solver that places its edge at the crossing would otherwise differ
    from it by the whole swing)."""
    lo, hi = x - dt, x + dt
    i = bisect.bisect_right(nt, lo) - 1
    j = bisect.bisect_left(nt, hi)
    vals = [interp(nt, nv, x)]
    vals += nv[max(i, 0):min(j, len(nt) - 1) + 1]
    a, b = min(vals), max(vals)
    return 0.0 if a <= v <= b else min(abs(v - a), abs(v - b))


def compare(name, probe, ot, ov, nt, nv, t0, step):
    sel = [i for i, x in enumerate(nt) if x >= t0 - 1e-15]
    nt, nv = [nt[i] for i in sel], [nv[i] for i in sel]
    npk = max(abs(v) for v in nv)
    opk = max(abs(v) for v in ov)
    p2p = max(ov) - min(ov)
    dt = step / 2
    worst = max(distance(nt, nv, x, v, dt) for x, v in zip(ot, ov))
    # the ripple of a near-DC node can be smaller than either simulator's
    # own tolerance (reltol 1e-3 of the value): then that is the bound
    bound = max(0.02 * p2p, 1e-3 * npk)
    peak_ok = abs(opk - npk) <= 0.005 * max(abs(npk), 1e-9)
    wave_ok = worst <= bound
    print("ngspice-sim: %-18s v(%s): peak %.5g V, ngspice %.5g V (%+.3f %%) %s; "
          "waveform worst %.3g V (%.2f %% of %.4g V p-p; bound %.3g V) %s"
          % (name, probe, opk, npk, 100 * (opk - npk) / max(abs(npk), 1e-12),
             "ok" if peak_ok else "FAIL", worst, 100 * worst / max(p2p, 1e-12), p2p,
             bound, "ok" if wave_ok else "FAIL"))
    return peak_ok, wave_ok


def step_counts(deck, names, period, step):
    """Time points over the first 20 periods from zero: ours (`sim
    --until`, its summary's accepted points); ngspice's (the rows its
    wrdata writes: one per accepted time point, same largest step) are
    kept with its reference."""
    args = [BIN, "sim", deck, "--until", "%g" % (20 * period), "--node", names[0]]
    if step:
        args += ["--max-step", "%g" % step]
    r = subprocess.run(args, capture_output=True, text=True)
    m = re.search(r"(\d+) points", r.stderr)
    return int(m.group(1)) if m else None


REFERENCE = os.path.join(DATA, "reference.json")


def load_cache():
    try:
        with open(REFERENCE, encoding="utf-8") as fh:
            return json.load(fh).get("decks", {})
    except (OSError, ValueError):
        return {}


def save_cache(cache):
    version = subprocess.run(["ngspice", "-v"], capture_output=True, text=True).stdout
    m = re.search(r"ngspice-\S+", version)
    with open(REFERENCE, "w", encoding="utf-8") as fh:
        json.dump({"generator": "tests/ngspice_sim.py", "ngspice": m.group(0) if m else "?",
                   "decks": cache}, fh, indent=1, sort_keys=True)
        fh.write("\n")


def reference(f, deck, text, names, period, step, periods, cache, regen):
    """ngspice's last steady-state period (times from its start) and its
    time points over 20 periods from zero, from the cache while the deck,
    its probes, its period and the largest step are the same; otherwise
    simulated again (and the cache updated)."""
    tmax = step or period / 200
    e = cache.get(f)
    digest = hashlib.sha256(text.encode()).hexdigest()
    if (regen or not e or e["sha256"] != digest or e["names"] != names or
            abs(e["period"] - period) > 1e-9 * period or e["tmax"] != tmax):
        with tempfile.TemporaryDirectory() as tmp:
            k, nt, ncols = ngspice_converged(deck, names, period, tmax, tmp, 2 * periods)
        with tempfile.TemporaryDirectory() as tmp:
            theirs = len(ngspice(deck, names[:1], 20 * period, tmax, tmp)[0])
        t0 = (k - 1) * period
        keep = [i for i, x in enumerate(nt) if x >= t0 - 1e-15]
        e = cache[f] = {"sha256": digest, "names": names, "period": period, "tmax": tmax,
                        "periods": k, "t": [nt[i] - t0 for i in keep],
                        "cols": [[c[i] for i in keep] for c in ncols], "points20": theirs}
        cache["__changed__"] = True
    return e


def main():
    if not shutil.which("ngspice"):
        if os.environ.get("CI"):
            print("ngspice-sim: FAIL: ngspice is missing and CI is set")
            return 1
        print("ngspice-sim: SKIPPED: ngspice not installed (scripts/deps.sh installs it)")
        return 0
    args = sys.argv[1:]
    regen = "--regen" in args
    args = [a for a in args if a != "--regen"]
    decks = sorted(f for f in os.listdir(DATA) if f.endswith(".cir"))
    if args:  # only the decks named (file names in tests/data/sim)
        decks = [f for f in decks if f in args]
    cache = load_cache()
    passed = failed = 0
    for f in decks:
        deck = os.path.join(DATA, f)
        text = open(deck).read()
        names, step = probes(text), max_step(text)
        periods, period, rows, summary = ours(deck, names, step)
        print("ngspice-sim: " + summary)
        t0 = periods * period
        e = reference(f, deck, text, names, period, step, periods, cache, regen)
        print("ngspice-sim: ngspice from zero to its own steady state: %d periods" % e["periods"])
        # ngspice's last period laid over ours (both start at a period boundary)
        nt = [x + t0 for x in e["t"]]
        ot = [r[0] for r in rows]
        for i, n in enumerate(names):
            ok = compare(f, n, ot, [r[i + 1] for r in rows], nt, e["cols"][i], t0,
                         step or period / 200)
            for good in ok:
                passed += good
                failed += not good
        mine, theirs = step_counts(deck, names, period, step), e["points20"]
        good = mine is not None and mine <= 2 * theirs
        print("ngspice-sim: %-18s time points over 20 periods from zero: headroom %s, ngspice %d "
              "(%.2fx; at most 2x) %s" % (f, mine, theirs, (mine or 0) / max(theirs, 1),
                                          "ok" if good else "FAIL"))
        passed += good
        failed += not good
    if cache.pop("__changed__", False):
        save_cache(cache)
        print("ngspice-sim: ngspice's runs written to %s" % os.path.relpath(REFERENCE, ROOT))
    print("ngspice-sim: %d passed, %d failed (%d decks)" % (passed, failed, len(decks)))
    return 1 if failed else 0


if __name__ == "__main__":
    sys.exit(main())
