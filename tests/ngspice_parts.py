#!/usr/bin/env python3
"""Flattened parts of headroom against ngspice's own expansion of the same
deck: ngspice (Debian package) runs each deck in batch mode with a
`listing expand` control block on a scratch copy, and its expanded element
lines are compared with `headroom parts --format json`: the same parts (by
hierarchical name), the same nodes for two-terminal parts, and the same
resolved values for R, C and L (relative 1e-9).

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
DECKS = sorted(
    [os.path.join(HERE, "data", "flatten", f) for f in os.listdir(os.path.join(HERE, "data", "flatten"))]
    + [os.path.join(ROOT, "examples", f) for f in os.listdir(os.path.join(ROOT, "examples")) if f.endswith(".cir")])

SCALE = {"t": 1e12, "g": 1e9, "meg": 1e6, "k": 1e3, "mil": 25.4e-6, "m": 1e-3,
         "u": 1e-6, "n": 1e-9, "p": 1e-12, "f": 1e-15}


def spice_number(text):
    """A SPICE number with a scale suffix (ngspice manual, section 2.1.1)."""
    m = re.match(r"^([-+]?(?:\d+\.?\d*|\.\d+)(?:[eE][-+]?\d+)?)([a-zA-Z]*)$", text)
    if not m:
        return None
    value, letters = float(m.group(1)), m.group(2).lower()
    for key in ("meg", "mil", "t", "g", "k", "m", "u", "n", "p", "f"):
        if letters.startswith(key):
            return value * SCALE[key]
    return value


def normalise(name):
    """ngspice writes an instance part as letter.path.name ("r.x1.r1", and
    "d.xtop.d.xi.d1" for nested ones); headroom as path.name ("X1.R1")."""
    parts = name.lower().split(".")
    if len(parts) == 1:
        return parts[0]
    letter, rest = parts[0], parts[1:]
    return ".".join([p for p in rest[:-1] if p != letter] + [rest[-1]])


def ngspice_parts(deck, tmp):
    copy = os.path.join(tmp, os.path.basename(deck))
    with open(deck, encoding="utf-8", errors="replace") as f:
        text = f.read()
    block = ".control\nlisting expand\n.endc\n"
    if re.search(r"(?im)^\.end\s*$", text):
        text = re.sub(r"(?im)^\.end\s*$", block + ".end", text, count=1)
    else:
        text += "\n" + block + ".end\n"
    with open(copy, "w", encoding="utf-8") as f:
        f.write(text)
    out = subprocess.run(["ngspice", "-b", copy], capture_output=True, text=True,
                         cwd=tmp, timeout=120).stdout
    parts = {}
    first = True
    for line in out.splitlines():
        m = re.match(r"^\s*\d+ : (.*)$", line)
        if not m:
            continue
        if first:  # the first listed line is the title
            first = False
            continue
        words = m.group(1).split()
        if not words or words[0].startswith(".") or not words[0][0].isalpha():
            continue
        parts[normalise(words[0])] = words
    return parts


def headroom_parts(deck):
    out = subprocess.run([BIN, "parts", "--format", "json", deck], capture_output=True, text=True)
    if out.returncode != 0:
        raise RuntimeError("headroom failed on %s: %s" % (deck, out.stderr))
    return {p["path"].lower(): p for p in json.loads(out.stdout)["files"][0]["parts"]}


def compare(deck, tmp):
    ng = ngspice_parts(deck, tmp)
    hr = headroom_parts(deck)
    problems = []
    if set(ng) != set(hr):
        problems.append("parts differ: only ngspice %s, only headroom %s"
                        % (sorted(set(ng) - set(hr)), sorted(set(hr) - set(ng))))
    checked = 0
    for name in sorted(set(ng) & set(hr)):
        words, part = ng[name], hr[name]
        letter = part["letter"]
        if letter in "rcldvi" and len(words) >= 3:
            if [w.lower() for w in words[1:3]] != [n.lower() for n in part["nodes"][:2]]:
                problems.append("%s: nodes %s vs %s" % (name, words[1:3], part["nodes"][:2]))
        if letter in "rcl" and len(words) >= 4:
            v = spice_number(words[3])
            if v is not None and abs(v - part["value"]) > 1e-9 * max(abs(v), 1e-30):
                problems.append("%s: value %g (ngspice) vs %g" % (name, v, part["value"]))
            checked += 1
    return len(hr), checked, problems


def main():
    if shutil.which("ngspice") is None:
        if os.environ.get("CI"):
            print("ngspice-parts: FAIL ngspice is not installed (scripts/deps.sh installs it)")
            print("ngspice-parts: 0 passed, 1 failed")
            return 1
        print("ngspice-parts: SKIPPED, ngspice is not installed")
        return 0
    passed = failed = 0
    with tempfile.TemporaryDirectory() as tmp:
        for deck in DECKS:
            n, checked, problems = compare(deck, tmp)
            rel = os.path.relpath(deck, ROOT)
            if problems:
                failed += 1
                for p in problems:
                    print("ngspice-parts: FAIL %s: %s" % (rel, p))
            else:
                passed += 1
                print("ngspice-parts: %s: %d parts agree with ngspice's expansion, %d values compared"
                      % (rel, n, checked))
    print("ngspice-parts: %d passed, %d failed" % (passed, failed))
    return 1 if failed else 0


if __name__ == "__main__":
    sys.exit(main())
