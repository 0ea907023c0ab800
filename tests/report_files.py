#!/usr/bin/env python3
"""What a report of `headroom check` says about the files of its run, read
back from any format, so that tests can hold the formats against each other.

    python3 tests/report_files.py FORMAT REPORT
    python3 tests/report_files.py compare JSON_REPORT FORMAT:REPORT...

The first prints one JSON object: "counts" [seen, checked, not_checked, skipped] as
the format states them, "listed" the same four counted from the entries the
format lists (files checked and not checked, skipped entries), "diags" the
located diagnostics "file:line:col: severity: message" it carries (apart
from findings), "skipped" its [path, reason] pairs, and "not_checked" the
paths it marks not checked. FORMAT: json, sarif, junit, csv, html, text.
Exits 1 (with the reason) when the report cannot be read that way.

The second holds each report against the JSON one of the same run: the
same counts, stated and listed alike, seen = checked + not checked +
skipped, the same diagnostics (the text report may hold more such lines:
its findings look alike), the same skipped entries with their reasons, as
many files not checked. Prints a line per report; exits 1 on a mismatch."""
import csv
import html.parser
import json
import re
import sys
import urllib.parse
import xml.etree.ElementTree as ET


def loc(file, line, col):
    return "%s:%s:%s" % (file, line, col) if line else file


def from_json(text):
    d = json.loads(text)
    s = d["summary"]
    diags = [
        "%s: %s: %s" % (loc(g["file"], g["line"], g["col"]), g["severity"], g["message"])
        for f in d["files"] for g in f["errors"] + f["warnings"]]
    nc = [f["path"] for f in d["files"] if f["status"] == "not_checked"]
    return {
        "counts": [s["seen"], s["checked"], s["not_checked"], s["skipped"]],
        "listed": [len(d["files"]) + len(d["skipped"]), len(d["files"]) - len(nc), len(nc),
                   len(d["skipped"])],
        "diags": diags, "skipped": [[k["path"], k["reason"]] for k in d["skipped"]],
        "not_checked": nc}


def sarif_path(uri):
    """The path of a file URI or relative reference (percent-decoded)."""
    return urllib.parse.unquote(uri[len("file://"):] if uri.startswith("file://") else uri)


def from_sarif(text):
    run = json.loads(text)["runs"][0]
    inv = run["invocations"][0]
    p = inv["properties"]
    diags, skipped, nc = [], [], []
    for n in inv["toolExecutionNotifications"]:
        pl = n["locations"][0]["physicalLocation"]
        path = sarif_path(pl["artifactLocation"]["uri"])
        msg = n["message"]["text"]
        if "descriptor" in n:
            r = pl.get("region", {})
            diags.append("%s: %s: %s" % (loc(path, r.get("startLine"), r.get("startColumn")),
                                         n["level"], msg))
        elif msg.startswith("skipped: "):
            skipped.append([path, msg[len("skipped: "):]])
        elif msg.startswith("not checked: "):
            nc.append(path)
    if inv["executionSuccessful"] != (p["filesNotChecked"] == 0 and
                                      not any(": error: " in g for g in diags)):
        raise ValueError("executionSuccessful disagrees with the notifications")
    checked = len({sarif_path(r["locations"][0]["physicalLocation"]["artifactLocation"]["uri"])
                   for r in run["results"]})
    return {
        "counts": [p["filesSeen"], p["filesChecked"], p["filesNotChecked"], p["filesSkipped"]],
        # SARIF lists no file without a finding or a diagnostic: the checked
        # files are taken from the stated counts
        "listed": [p["filesChecked"] + len(nc) + len(skipped), p["filesChecked"], len(nc),
                   len(skipped)],
        "diags": diags, "skipped": skipped, "not_checked": nc, "with_results": checked}


DIAG = re.compile(r"^(.*?): (error|warning|note): (.*) \[[^\]]*\]$")


def diag_line(line):
    """'file:l:c: severity: message [code]' without the code."""
    m = DIAG.match(line)
    if not m:
        raise ValueError("not a diagnostic line: %r" % line)
    return "%s: %s: %s" % m.groups()


def from_junit(text):
    root = ET.fromstring(text)
    suites = root.findall("testsuite")
    # "headroom run" holds the run's own findings (parts table, waiver file)
    files = [s for s in suites if s.get("name") not in ("files", "headroom run")]
    run = [s for s in suites if s.get("name") == "files"]
    if len(run) != 1:
        raise ValueError("no testsuite 'files'")
    props = {p.get("name"): int(p.get("value")) for p in run[0].iter("property")}
    diags, nc = [], []
    for s in files:
        case = [c for c in s.findall("testcase") if c.get("name") == "netlist"]
        if len(case) != 1:
            raise ValueError("%s: no testcase 'netlist'" % s.get("name"))
        for e in case[0].findall("error"):
            diags += [diag_line(x) for x in (e.text or "").splitlines() if x]
            if e.get("type") == "netlist":
                nc.append(s.get("name"))
        for o in case[0].findall("system-out"):
            diags += [diag_line(x) for x in (o.text or "").splitlines() if x]
    skipped = [[c.get("classname"), c.find("skipped").get("message")]
               for c in run[0].findall("testcase")]
    return {
        "counts": [props["files_seen"], props["files_checked"], props["files_not_checked"],
                   props["files_skipped"]],
        "listed": [len(files) + len(skipped), len(files) - len(nc), len(nc), len(skipped)],
        "diags": diags, "skipped": skipped, "not_checked": nc}


def from_csv(text):
    rows = list(csv.DictReader(text.splitlines()))
    diags, skipped, nc, checked, counts = [], [], [], 0, None
    for r in rows:
        k = r["record"]
        if k in ("error", "warning", "note"):
            diags.append("%s: %s: %s" % (loc(r["file"], r["line"], r["col"]), k, r["message"]))
        elif k == "file-skipped":
            skipped.append([r["file"], r["message"]])
        elif k == "file-not-checked":
            nc.append(r["file"])
        elif k == "file-checked":
            checked += 1
        elif k == "summary":
            counts = [int(x) for x in re.findall(r"\d+", r["message"])]
        elif k not in ("part", "caution"):
            raise ValueError("unknown record %r" % k)
    return {"counts": counts, "listed": [checked + len(nc) + len(skipped), checked, len(nc),
                                         len(skipped)],
            "diags": diags, "skipped": skipped, "not_checked": nc}


class Page(html.parser.HTMLParser):
    """The page's file sections, the items of its diagnostic lists, the rows
    of its skipped table and the counts in its summary."""

    COUNTS = ("seen", "checked", "not-checked", "skipped")

    def __init__(self):
        super().__init__()
        self.section = None            # id or class of the section we are in
        self.item = self.cell = self.count = None
        self.counts, self.diags, self.skipped, self.row = {}, [], [], None
        self.files = self.nc = 0

    def handle_starttag(self, tag, attrs):
        a = dict(attrs)
        cls = (a.get("class") or "").split()
        if tag == "section":
            self.section = a.get("id") or (cls[0] if cls else None)
            self.files += self.section == "file"
        elif tag == "p" and "not-checked" in cls:
            self.nc += 1
        elif tag == "ul" and "diags" in cls:
            self.in_diags = True
        elif tag == "li" and getattr(self, "in_diags", False):
            self.item = ""
        elif tag == "tr" and self.section == "skipped":
            self.row = []
        elif tag == "td" and self.row is not None:
            self.cell = ""
        elif tag == "span" and self.section == "summary":
            self.count = next((k for k in self.COUNTS if k in cls), None)

    def handle_endtag(self, tag):
        if tag == "ul":
            self.in_diags = False
        elif tag == "li" and self.item is not None:
            self.diags.append(self.item.strip())
            self.item = None
        elif tag == "td" and self.cell is not None:
            self.row.append(self.cell)
            self.cell = None
        elif tag == "tr" and self.row is not None:
            if len(self.row) == 2:
                self.skipped.append(self.row)
            self.row = None
        elif tag == "span":
            self.count = None
        elif tag == "section":
            self.section = None

    def handle_data(self, data):
        if self.item is not None:
            self.item += data
        if self.cell is not None:
            self.cell += data
        if self.count:
            self.counts[self.count] = int(data)


def from_html(text):
    p = Page()
    p.feed(text)
    diags = [diag_line(x.strip()) for x in p.diags]
    c = p.counts
    return {"counts": [c["seen"], c["checked"], c["not-checked"], c["skipped"]],
            "listed": [p.files + len(p.skipped), p.files - p.nc, p.nc, len(p.skipped)],
            "diags": diags, "skipped": p.skipped, "not_checked": p.nc}


def from_text(text):
    counts, diags, skipped, nc, files = None, [], [], [], 0
    for line in text.splitlines():
        m = re.match(r"^(\d+) files? seen: (\d+) checked, (\d+) not checked, (\d+) skipped$", line)
        if m:
            counts = [int(x) for x in m.groups()]
            continue
        m = re.match(r"^(.*): skipped: (.*)$", line)
        if m:
            skipped.append(list(m.groups()))
            continue
        m = re.match(r"^(.*): not checked: .*$", line)
        if m:
            nc.append(m.group(1))
            files += 1
            continue
        if re.match(r"^\S.*: \d+ structures?, \d+ findings?", line):
            files += 1
        elif DIAG.match(line):
            diags.append(diag_line(line))  # findings too: the caller takes a subset
    return {"counts": counts, "listed": [files + len(skipped), files - len(nc), len(nc),
                                         len(skipped)],
            "diags": diags, "skipped": skipped, "not_checked": nc}


READERS = {"json": from_json, "sarif": from_sarif, "junit": from_junit, "csv": from_csv,
           "html": from_html, "text": from_text}

def problems(ref, fmt, got):
    """What differs between the JSON reading ref and got (format fmt)."""
    out = []
    seen, checked, nc, skipped = got["counts"]
    if seen != checked + nc + skipped:
        out.append("seen %d != %d checked + %d not checked + %d skipped" % (seen, checked, nc, skipped))
    if got["counts"] != ref["counts"]:
        out.append("counts %s, the JSON report says %s" % (got["counts"], ref["counts"]))
    if got["listed"] != got["counts"]:
        out.append("lists %s entries, states %s" % (got["listed"], got["counts"]))
    missing = [g for g in ref["diags"] if g not in got["diags"]]
    if missing:
        out.append("%d diagnostics missing, e.g. %s" % (len(missing), missing[0]))
    if fmt != "text" and sorted(got["diags"]) != sorted(ref["diags"]):
        out.append("%d diagnostics, the JSON report has %d" % (len(got["diags"]), len(ref["diags"])))
    if got["skipped"] != ref["skipped"]:
        out.append("skipped entries differ: %s" % [k for k in got["skipped"] if k not in ref["skipped"]][:2])
    n = got["not_checked"] if isinstance(got["not_checked"], int) else len(got["not_checked"])
    if n != len(ref["not_checked"]):
        out.append("%d files not checked, the JSON report has %d" % (n, len(ref["not_checked"])))
    return out


def compare(ref_path, pairs):
    ref = from_json(open(ref_path, encoding="utf-8").read())
    bad = problems(ref, "json", ref)
    print("report_files: json: %s; %d diagnostics, %d skipped%s" % (
        ref["counts"], len(ref["diags"]), len(ref["skipped"]), "; " + "; ".join(bad) if bad else ""))
    for pair in pairs:
        fmt, path = pair.split(":", 1)
        got = READERS[fmt](open(path, encoding="utf-8").read())
        p = problems(ref, fmt, got)
        print("report_files: %s: %s" % (fmt, "; ".join(p) if p else "agrees"))
        bad += p
    return 1 if bad else 0


if __name__ == "__main__":
    if len(sys.argv) >= 3 and sys.argv[1] == "compare":
        try:
            sys.exit(compare(sys.argv[2], sys.argv[3:]))
        except (ValueError, KeyError, TypeError, ET.ParseError) as e:
            print("report_files: FAIL %s" % e)
            sys.exit(1)
    if len(sys.argv) != 3 or sys.argv[1] not in READERS:
        sys.exit("usage: report_files.py json|sarif|junit|csv|html|text REPORT")
    try:
        out = READERS[sys.argv[1]](open(sys.argv[2], encoding="utf-8").read())
    except (ValueError, KeyError, TypeError, ET.ParseError) as e:
        print("report_files: %s: %s" % (sys.argv[2], e), file=sys.stderr)
        sys.exit(1)
    json.dump(out, sys.stdout)
    print()
