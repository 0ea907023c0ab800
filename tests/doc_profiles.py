#!/usr/bin/env python3
"""docs/profiles.md against the program. Every fenced block of the page is
an example and is run:
  ```profile  written to a file and read by `headroom rules --profile FILE`;
  ```spice    written to a .cir file and checked (`headroom check --format json`);
  ```sh       each line run as a command, `headroom` being the built program;
a block of any other kind, or none, fails (no example escapes the test).
An HTML comment right after a block states what the page promises:
  <!-- expect: draft -->            the profile is reported as a draft
  <!-- expect: sourced -->          ... as not a draft
  <!-- expect: error 'TEXT' -->     rejected, exit 2, TEXT on standard error
  <!-- expect: profile NAME -->     the netlist is checked with profile NAME
  <!-- expect: tol SOURCE VALUE --> the structure driven by SOURCE uses that tolerance
Without a comment the example must simply be accepted. The table of shipped
values ("The shipped profiles") is compared cell by cell with what
`headroom rules --profile NAME` prints. Ends with "doc-profiles: N passed,
N failed"."""
import json
import os
import re
import shlex
import subprocess
import sys
import tempfile

HERE = os.path.dirname(os.path.abspath(__file__))
ROOT = os.path.dirname(HERE)
BIN = os.path.abspath(os.environ.get("HEADROOM", os.path.join(ROOT, "build", "headroom")))
DOC = os.path.join(ROOT, "docs", "profiles.md")

passed = failed = 0


def check(name, ok, detail=""):
    global passed, failed
    if ok:
        passed += 1
    else:
        failed += 1
        print("doc-profiles: FAIL %s%s" % (name, (": " + detail) if detail else ""))


def blocks(text):
    """(line, info, body, expect) for each fenced block, indented or not."""
    lines = text.split("\n")
    i, out = 0, []
    while i < len(lines):
        m = re.match(r"^(\s*)```(\S*)\s*$", lines[i])
        if not m:
            i += 1
            continue
        indent, info, start = m.group(1), m.group(2), i + 1
        body = []
        i += 1
        while i < len(lines) and lines[i].strip() != "```":
            body.append(lines[i][len(indent):] if lines[i].startswith(indent) else lines[i])
            i += 1
        i += 1
        expect = None
        if i < len(lines):
            e = re.match(r"^\s*<!-- expect: (.*) -->\s*$", lines[i])
            if e:
                expect = e.group(1)
        out.append((start, info, "\n".join(body) + "\n", expect))
    return out


def run(args, cwd=ROOT):
    return subprocess.run([BIN] + args, capture_output=True, text=True, cwd=cwd)


def rules_values(profile):
    """key -> value, and the draft/sourced line, from `headroom rules`."""
    r = run(["rules", "--profile", profile])
    vals, status = {}, None
    inside = False
    for line in r.stdout.split("\n"):
        if line.startswith("profile "):
            inside = True
            continue
        if not inside:
            continue
        m = re.match(r"^  (draft|sourced):", line)
        if m:
            status = m.group(1)
            continue
        m = re.match(r"^  (\S+)\s+(\S+)", line)
        if m:
            vals[m.group(1)] = float(m.group(2))
    return r, vals, status


def parse_value(text):
    """A profile value as the page writes it: 80%, 60V, 2s, 1.0 V, 0.5."""
    t = text.strip().replace(" ", "").replace(",", "")
    if t.endswith("%"):
        return float(t[:-1]) / 100
    t = re.sub(r"([Vsh]|°C)$", "", t)
    return float(t)


def profile_block(tmp, line, body, expect):
    name = re.search(r"^name\s*=\s*(\S+)", body, re.M)
    path = os.path.join(tmp, (name.group(1) if name else "example%d" % line) + ".profile")
    with open(path, "w") as f:
        f.write(body)
    where = "profile example at docs/profiles.md:%d" % line
    if expect and expect.startswith("error "):
        r = run(["rules", "--profile", path])
        want = expect[len("error "):].strip("'")
        check(where + " is rejected as the page says", r.returncode == 2 and want in r.stderr,
              "exit %d, stderr %r" % (r.returncode, r.stderr[:300]))
        return
    r, vals, status = rules_values(path)
    check(where + " is accepted", r.returncode == 0, r.stderr[:300])
    for m in re.finditer(r"^\s*([A-Za-z_.\-0-9]+)\s*=\s*([^#\n]*?)\s*(#.*)?$", body, re.M):
        key, val = m.group(1).lower(), m.group(2)
        if key in ("name", "description"):
            continue
        got = vals.get(key)
        check("%s: %s = %s" % (where, key, val),
              got is not None and abs(got - parse_value(val)) < 1e-9, "rules prints %r" % got)
    if expect in ("draft", "sourced"):
        check(where + " is " + expect, status == expect, "rules says %r" % status)
    elif expect:
        check(where + ": unknown expectation", False, expect)


def spice_block(tmp, line, body, expect):
    path = os.path.join(tmp, "example%d.cir" % line)
    with open(path, "w") as f:
        f.write(body)
    where = "netlist example at docs/profiles.md:%d" % line
    r = run(["check", "--format", "json", "--fail-on", "never", path])
    if expect and expect.startswith("error "):
        want = expect[len("error "):].strip("'")
        check(where + " is rejected as the page says", r.returncode == 2 and want in r.stderr,
              "exit %d, stderr %r" % (r.returncode, r.stderr[:300]))
        return
    ok = r.returncode == 0 and ": error:" not in r.stderr
    check(where + " is accepted", ok, r.stderr[:300])
    if not ok:
        return
    f = json.loads(r.stdout)["files"][0]
    if expect and expect.startswith("profile "):
        want = expect.split()[1]
        check(where + " is checked with profile " + want, f.get("profile") == want, repr(f.get("profile")))
    elif expect and expect.startswith("tol "):
        _, src, val = expect.split()
        tols = [s["source"]["tol"] for s in f["structures"] if s["source"]["part"] == src]
        check(where + " gives %s the tolerance %s" % (src, val),
              tols and all(abs(t - float(val)) < 1e-9 for t in tols), repr(tols))
    elif expect:
        check(where + ": unknown expectation", False, expect)


def sh_block(line, body):
    for cmd in body.strip().split("\n"):
        words = shlex.split(cmd)
        if not words or words[0] != "headroom":
            check("command at docs/profiles.md:%d starts with headroom" % line, False, cmd)
            continue
        r = run(words[1:])
        check("command at docs/profiles.md:%d runs: %s" % (line, cmd), r.returncode in (0, 1),
              "exit %d, %s" % (r.returncode, r.stderr[:300]))


def shipped_table(text):
    """Each cell of the shipped-profiles table against the profile files."""
    sec = text.split("## The shipped profiles", 1)[1].split("\n## ", 1)[0]
    rows = [l for l in sec.split("\n") if l.startswith("| `")]
    check("the shipped-profiles table has rows", len(rows) > 20, str(len(rows)))
    profiles = {n: rules_values(n)[1] for n in ("basic", "industrial", "flight")}
    for row in rows:
        cells = [c.strip() for c in row.strip("|").split("|")]
        key = cells[0].strip("`")
        for name, cell in zip(("basic", "industrial", "flight"), cells[1:]):
            vals = profiles[name]
            m = re.match(r"^–\s*(?:\((.*)\))?$", cell)
            if m:  # not set in the file; what applies through <class>.default
                ok = key not in vals
                if m.group(1):
                    cls, _, field = key.split(".")
                    dflt = vals.get("%s.default.%s" % (cls, field))
                    ok = ok and dflt is not None and abs(dflt - parse_value(m.group(1))) < 1e-9
                check("table: %s %s = %s" % (name, key, cell), ok,
                      "file has %r" % vals.get(key))
            else:
                got = vals.get(key)
                check("table: %s %s = %s" % (name, key, cell),
                      got is not None and abs(got - parse_value(cell)) < 1e-9, "file has %r" % got)


def main():
    text = open(DOC, encoding="utf-8").read()
    found = blocks(text)
    check("docs/profiles.md has examples", len(found) >= 5, str(len(found)))
    with tempfile.TemporaryDirectory() as tmp:
        for line, info, body, expect in found:
            if info == "profile":
                profile_block(tmp, line, body, expect)
            elif info == "spice":
                spice_block(tmp, line, body, expect)
            elif info == "sh":
                sh_block(line, body)
            else:
                check("block at docs/profiles.md:%d has a kind this test runs (profile, spice, sh)"
                      % line, False, repr(info))
    shipped_table(text)
    print("doc-profiles: %d passed, %d failed" % (passed, failed))
    return 1 if failed else 0


if __name__ == "__main__":
    sys.exit(main())
