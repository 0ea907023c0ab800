#!/usr/bin/env python3
"""The HTML report's content, read with the standard library's HTML parser
(no browser; tests/html_browser.py covers rendering):
  - a capacitor whose voltage is negative (tests/data/html/neg_rail_over.cir:
    CRES at -220 V on a 140 V part, and the shipped ladder's X2.CAC-X4.CAC)
    is drawn against rating and limit lines on its own side: the trace's
    farthest point lies beyond both lines, on the same side of zero;
  - a part over its rating or limit carries a marker and words on its plot
    (an element of class over-mark, "over rating" in the plot, "Over its
    rating." in the caption); a part inside its limit carries neither; on a
    trace that varies (a clamp diode's reverse voltage) the ring sits on the
    trace's farthest point and the red stretches lie past the limit line,
    starting and ending on it;
  - every file's stress table holds the JSON report's stresses, in order,
    with the same part, quantity, worst, rating, ratio and basis (exact in
    data-v, and as displayed to the 4 digits shown), the CSV report's limit,
    and a verdict in words that agrees with the numbers;
  - the header names the version (as `headroom --version` prints it), the
    date (--today, else today's UTC date), the profile, the parts table,
    the waivers file and every netlist.
Ends with "html-report: N passed, N failed"."""
import csv
import datetime
import html.parser
import io
import json
import os
import re
import subprocess
import sys

HERE = os.path.dirname(os.path.abspath(__file__))
ROOT = os.path.dirname(HERE)
BIN = os.environ.get("HEADROOM", os.path.join(ROOT, "build", "headroom"))
DATA = os.path.join("tests", "data", "html")
NEG = os.path.join(DATA, "neg_rail_over.cir")
LADDER = os.path.join("examples", "detector_bias_ladder.cir")
RATING_COLOUR, LIMIT_COLOUR = "#8e24aa", "#8a5a00"  # docs/reports.md
passed = failed = 0


def check(name, ok, detail=""):
    global passed, failed
    if ok:
        passed += 1
    else:
        failed += 1
        print(f"html-report: FAIL {name} {detail}")


class Node:
    def __init__(self, tag, attrs, parent):
        self.tag, self.attrs, self.parent = tag, dict(attrs), parent
        self.children, self.text = [], ""

    def all(self, pred):
        for c in self.children:
            if pred(c):
                yield c
            yield from c.all(pred)

    def classes(self):
        return (self.attrs.get("class") or "").split()

    def text_all(self, sep=""):
        return self.text + sep.join(c.text_all(sep) for c in self.children)


class Tree(html.parser.HTMLParser):
    VOID = {"br", "meta", "hr", "img", "input", "link"}

    def __init__(self, text):
        super().__init__(convert_charrefs=True)
        self.root = Node("#root", [], None)
        self.cur = self.root
        self.feed(text)

    def handle_starttag(self, tag, attrs):
        n = Node(tag, attrs, self.cur)
        self.cur.children.append(n)
        if tag not in self.VOID:
            self.cur = n

    def handle_startendtag(self, tag, attrs):
        self.cur.children.append(Node(tag, attrs, self.cur))

    def handle_endtag(self, tag):
        n = self.cur
        while n is not self.root and n.tag != tag:
            n = n.parent
        if n is not self.root:
            self.cur = n.parent

    def handle_data(self, data):
        # text goes to the innermost open element, in document order
        # through a child node so that text_all keeps the order
        t = Node("#text", [], self.cur)
        t.text = data
        self.cur.children.append(t)


def run(args):
    return subprocess.run([BIN, "check", "--fail-on", "never"] + args, cwd=ROOT,
                          capture_output=True, text=True)


def figure_of(root, part):
    for f in root.all(lambda n: n.tag == "figure"):
        if f.attrs.get("data-part") == part:
            return f
        cap = next(f.all(lambda n: n.tag == "figcaption"), None)
        if cap and cap.text_all().split(" (")[0].split()[-1:] == [part]:
            return f
    return None


def ys_of(polyline):
    return [float(p.split(",")[1]) for p in polyline.attrs["points"].split()]


def beyond_lines(fig, colour):
    """True when the waveform's farthest point from the zero line lies
    beyond a line of this colour on the same side of zero; with the
    distances (trace, nearest such line on that side) for the message."""
    lines = list(fig.all(lambda n: n.tag == "line"))
    zero = [l for l in lines if "zero" in l.classes() or l.attrs.get("stroke") == "#c3cad2"]
    wave = next(fig.all(lambda n: n.tag == "polyline" and "wave" in n.classes()), None)
    if not zero or wave is None:
        return False, "no zero line or no waveform"
    y0 = float(zero[0].attrs["y1"])
    far = max(ys_of(wave), key=lambda y: abs(y - y0))
    side = [float(l.attrs["y1"]) for l in lines if l.attrs.get("stroke") == colour
            and (float(l.attrs["y1"]) - y0) * (far - y0) > 0]
    if not side:
        return False, f"trace at {far - y0:+.1f} from zero, no {colour} line on that side"
    near = min(side, key=lambda y: abs(y - y0))
    return abs(far - y0) > abs(near - y0), f"trace {far - y0:+.1f}, line {near - y0:+.1f}"


def plots(root, label):
    for part in ("CRES",) if label == "neg" else ("X2.CAC", "X3.CAC", "X4.CAC"):
        fig = figure_of(root, part)
        check(f"{label}: {part} is plotted", fig is not None)
        if fig is None:
            continue
        for what, colour in (("limit", LIMIT_COLOUR), ("rating", RATING_COLOUR)):
            ok, why = beyond_lines(fig, colour)
            check(f"{label}: {part}'s trace crosses its {what} line on its own side", ok, why)
        mark = list(fig.all(lambda n: "over-mark" in n.classes()))
        check(f"{label}: {part} carries an over-limit marker", len(mark) == 1)
        check(f"{label}: {part}'s marker says so in words",
              bool(mark) and "over rating" in mark[0].text_all(), mark[0].text_all() if mark else "")
        cap = next(fig.all(lambda n: n.tag == "figcaption"), None)
        check(f"{label}: {part}'s caption says so in words",
              cap is not None and "Over its rating." in cap.text_all())
    for part in ("CCL",) if label == "neg" else ("X1.CAC", "X1.CDC"):
        fig = figure_of(root, part)
        check(f"{label}: safe {part} is plotted", fig is not None)
        if fig is None:
            continue
        check(f"{label}: safe {part} carries no over-limit marker",
              not list(fig.all(lambda n: "over-mark" in n.classes() or "over-trace" in n.classes()))
              and "over" not in fig.classes())
        check(f"{label}: safe {part}'s words say nothing of being over",
              "over" not in fig.text_all().lower())


def varying():
    """DCL's reverse voltage swings 0..220 V; rated 200 V here."""
    import tempfile
    with tempfile.NamedTemporaryFile("w", suffix=".csv", delete=False) as t:
        t.write("ref,kind,v_rated\nDCL,rectifier,200V\n")
    try:
        root = Tree(run(["--format", "html", "--parts", t.name, NEG]).stdout).root
    finally:
        os.unlink(t.name)
    fig = figure_of(root, "DCL")
    ring = fig and next(fig.all(lambda n: n.tag == "circle"), None)
    check("varying: DCL is plotted over its rating, with a ring",
          fig is not None and "over" in fig.classes() and ring is not None)
    if fig is None or ring is None:
        return
    pts = [tuple(map(float, p.split(","))) for p in
           next(fig.all(lambda n: "wave" in n.classes())).attrs["points"].split()]
    y0 = float(next(fig.all(lambda n: "zero" in n.classes())).attrs["y1"])
    far = max(abs(y - y0) for _, y in pts)
    cx, cy = float(ring.attrs["cx"]), float(ring.attrs["cy"])
    on = [(x, y) for x, y in pts if abs(x - cx) < 0.06 and abs(abs(y - y0) - far) < 0.6]
    check("varying: the ring sits on the trace's farthest point", bool(on),
          f"ring ({cx}, {cy}), farthest {far:.1f} from zero")
    check("varying: the ring is not at an edge of the period", 45 < cx < 295, f"{cx}")
    lim = float(next(l for l in fig.all(lambda n: n.tag == "line")
                     if l.attrs.get("stroke") == LIMIT_COLOUR).attrs["y1"])
    runs = list(fig.all(lambda n: "over-trace" in n.classes()))
    check("varying: a red stretch is drawn", len(runs) >= 1)
    for r in runs:
        rp = [tuple(map(float, p.split(","))) for p in r.attrs["points"].split()]
        check("varying: the red stretch lies past the limit line",
              all(abs(y - y0) >= abs(lim - y0) - 0.06 for _, y in rp))
        ends = [p for p in (rp[0], rp[-1]) if 40.05 < p[0] < 299.95]
        check("varying: the red stretch starts and ends on the limit line",
              ends and all(abs(y - lim) < 0.06 for _, y in ends), f"{rp[0]} {rp[-1]} limit {lim}")


ENG = {"f": 1e-15, "p": 1e-12, "n": 1e-9, "u": 1e-6, "m": 1e-3, "": 1,
       "k": 1e3, "M": 1e6, "G": 1e9, "T": 1e12}


def shown(text):
    """'288.5 V', '962.5 mA', '22.1 mW', '1 kV', '157%' -> a number (None for '-')."""
    m = re.fullmatch(r"\s*(-?[\d.e+-]+)\s*(?:([fpnumkMGT]?)[VAW]|(%))\s*", text)
    if not m:
        return None
    return float(m.group(1)) * (0.01 if m.group(3) else ENG[m.group(2)])


def close(a, b, rel):
    if a is None or b is None:
        return a is None and b is None
    return abs(a - b) <= rel * max(abs(a), abs(b), 1e-30)


def table_rows(section):
    table = next(section.all(lambda n: n.tag == "table" and "stress" in n.classes()), None)
    if table is None:
        return None
    return [r for r in table.all(lambda n: n.tag == "tr") if "data-part" in r.attrs]


def cells(row):
    return [c for c in row.children if c.tag == "td"]


def one_row(name, row, s, limit):
    """A table row against a JSON stress and the CSV's limit."""
    td = cells(row)
    got = {"part": row.attrs["data-part"], "quantity": row.attrs["data-qty"]}
    want = {"part": s["part"], "quantity": s["quantity"]}
    check(f"{name}: row names the JSON's part and quantity", got == want, f"{got} {want}")
    for col, key, value in ((3, "worst", s["worst"]), (4, "rating", s["rating"]),
                            (5, "limit", limit), (6, "ratio", s["ratio"])):
        exact = td[col].attrs.get("data-v")
        exact = float(exact) if exact is not None else None
        check(f"{name} {s['part']} {key}: exact value", close(exact, value, 1e-9), f"{exact} {value}")
        # 4 significant digits; percentages whole
        got = shown(td[col].text_all())
        ok = (close(got, value, 6e-4) if key != "ratio" else
              got is not None and value is not None and abs(got - value) <= 0.0051)
        check(f"{name} {s['part']} {key}: displayed value", ok or (got is None and value is None),
              f"'{td[col].text_all()}' {value}")
    check(f"{name} {s['part']}: basis", td[7].text_all() == s["basis"], td[7].text_all())
    w, r = s["worst"], s["rating"]
    if s["quantity"] == "surge_current" and w is not None:
        # a surge is judged by its I2t: the half-sine of the rating's width
        # with the pulse's I2t against the rating's own (docs/check.md)
        w = s["surge_judged"]
        r = (2 * s["rating_i2t"] / s["rating_surge_width"]) ** 0.5 if s["rating_i2t"] is not None else None
    verdict = ("no number" if w is None else "no rating" if r is None else "over rating" if w > r
               else "over limit" if limit is not None and w > limit else "within limit")
    check(f"{name} {s['part']}: verdict '{verdict}' in words", td[8].text_all() == verdict,
          td[8].text_all())
    check(f"{name} {s['part']}: row marked over exactly when it is",
          ("over" in row.classes()) == verdict.startswith("over"))


def stress_tables(args, name):
    page = Tree(run(["--format", "html"] + args).stdout).root
    doc = json.loads(run(["--format", "json"] + args).stdout)
    limits = {}
    for r in csv.DictReader(io.StringIO(run(["--format", "csv"] + args).stdout)):
        if r["record"] != "part":
            continue
        limits.setdefault(r["file"], []).append(float(r["limit"]) if r["limit"] else None)
    sections = [s for s in page.all(lambda n: n.tag == "section" and "file" in n.classes())]
    check(f"{name}: a section per file", len(sections) == len(doc["files"]))
    total = 0
    for sec, f in zip(sections, doc["files"]):
        rows = table_rows(sec) or []
        want = f.get("stresses", [])
        check(f"{name} {f['path']}: a table row per JSON stress", len(rows) == len(want),
              f"{len(rows)} rows, {len(want)} stresses")
        lim = limits.get(f["path"], [])
        for i, (row, s) in enumerate(zip(rows, want)):
            one_row(f"{name} {f['path']}", row, s, lim[i] if i < len(lim) else "missing")
        total += len(rows)
    print(f"html-report: {name}: {total} stress rows compared with the JSON report")
    return total


def header(args, label, date):
    page = Tree(run(["--format", "html"] + args).stdout).root
    head = next(page.all(lambda n: n.tag == "header"), None)
    text = re.sub(r"\s+", " ", head.text_all(" ")) if head else ""
    version = subprocess.run([BIN, "--version"], capture_output=True, text=True).stdout.split()[-1]
    check(f"{label}: header names version {version}", re.search(r"\bversion " + re.escape(version) + r"\b", text), text[:300])
    if date:
        check(f"{label}: header gives the date {date}", date in text, text[:300])
    return text


def inputs():
    args = ["--today", "2026-12-01", "--profile", "industrial", "--parts", os.path.join(DATA, "parts.csv"),
            "--waivers", os.path.join(DATA, "waivers.txt"), NEG, LADDER]
    text = header(args, "inputs", "2026-12-01")
    for what in ("industrial", os.path.join(DATA, "parts.csv"), os.path.join(DATA, "waivers.txt"), NEG, LADDER):
        check(f"inputs: header names {what}", what in text, text[:400])
    check("inputs: the date is said to come from --today", "--today" in text)
    # no --today: today's UTC date (either side of midnight)
    before = datetime.datetime.now(datetime.timezone.utc).date().isoformat()
    text = header([NEG], "real date", None)
    after = datetime.datetime.now(datetime.timezone.utc).date().isoformat()
    check("real date: header gives today's UTC date", before in text or after in text, text[:300])
    check("real date: no parts table, no waivers said as such",
          re.search(r"parts table none", text) and re.search(r"waivers none", text), text[:400])


def outputs(args, name):
    """A line per loaded structure (class output) inside its file's
    section, in the JSON report's order, with the JSON's numbers in data-v
    (docs/reports.md, "Loaded outputs")."""
    page = Tree(run(["--format", "html"] + args).stdout).root
    doc = json.loads(run(["--format", "json"] + args).stdout)
    sections = [s for s in page.all(lambda n: n.tag == "section" and "file" in n.classes())]
    total = 0
    for sec, f in zip(sections, doc["files"]):
        lines = [p for p in sec.all(lambda n: n.tag == "p" and "output" in n.classes())]
        want = f.get("loaded_outputs", [])
        check(f"{name} {f['path']}: an output line per loaded structure", len(lines) == len(want),
              f"{len(lines)} lines, {len(want)} outputs")
        for line, o in zip(lines, want):
            vals = [float(n.attrs["data-v"]) for n in line.all(lambda n: "data-v" in n.attrs)]
            text = re.sub(r"\s+", " ", line.text_all())
            check(f"{name} {f['path']} {o['structure']}: names its output",
                  text.startswith("Output v(" + o["output"]), text[:80])
            if o["simulated"]:
                nums = [o["load_r"]] + [o[c][k] for c in ("low", "high")
                                        for k in ("mean", "min", "max", "ripple", "unloaded")]
                check(f"{name} {f['path']} {o['structure']}: the JSON's corners in data-v",
                      all(close(a, b, 1e-9) for a, b in zip(vals, nums)) and len(vals) >= len(nums),
                      f"{vals} {nums}")
            else:
                check(f"{name} {f['path']} {o['structure']}: says why it was not simulated",
                      "not simulated: " + (o["why"] or "?") in text, text)
            total += 1
    check(f"{name}: output lines found", total > 0)


def main():
    outputs(["examples", os.path.join("tests", "data", "loadout")], "outputs")
    neg = Tree(run(["--format", "html", "--today", "2026-12-01", NEG]).stdout).root
    plots(neg, "neg")
    ladder = Tree(run(["--format", "html", "--today", "2026-12-01", "--parts", "examples/parts.csv",
                       LADDER]).stdout).root
    plots(ladder, "ladder")
    varying()
    n = stress_tables(["--today", "2026-12-01", "--parts", "examples/parts.csv", "examples", NEG], "examples")
    check("the stress tables hold rows", n > 40, f"{n}")
    inputs()
    print(f"html-report: {passed} passed, {failed} failed")
    return 1 if failed else 0


if __name__ == "__main__":
    sys.exit(main())
