#!/usr/bin/env python3
"""The JSON report of `headroom check` validated against docs/report.schema.json
(and `headroom rules --format json` against docs/rules.schema.json)
with the jsonschema package (Debian: python3-jsonschema), on the examples
(with their parts table), on every hand-written structure netlist, on a
file with netlist errors, on a folder with skipped files and a reader
warning, on tests/data/currents (currents, powers, their findings, and a
file with no steady state to take currents from) and on the loaded outputs'
netlists; the summary is recomputed from the lists, the loaded outputs'
figures checked against each other. Prints one line per document."""
import json
import os
import subprocess
import sys

try:
    import jsonschema
except ImportError:
    if os.path.exists("/usr/bin/python3") and sys.executable != "/usr/bin/python3":
        os.execv("/usr/bin/python3", ["/usr/bin/python3"] + sys.argv)
    print("report-schema: FAIL the jsonschema package is missing (scripts/deps.sh installs python3-jsonschema)")
    print("report-schema: 0 passed, 1 failed")
    sys.exit(1)

HERE = os.path.dirname(os.path.abspath(__file__))
ROOT = os.path.dirname(HERE)
BIN = os.environ.get("HEADROOM", os.path.join(ROOT, "build", "headroom"))
schema = json.load(open(os.path.join(ROOT, "docs", "report.schema.json")))
runs = [
    ["--parts", os.path.join(ROOT, "examples", "parts.csv"), os.path.join(ROOT, "examples")],
    [os.path.join(HERE, "data", "topo")],
    [os.path.join(HERE, "data", "two_errors.cir"), os.path.join(ROOT, "examples", "rf_doubler.cir")],
    ["--profile", "flight", "--source-tol", "0", os.path.join(ROOT, "examples", "mains_doubler.cir")],
    ["--parts", os.path.join(HERE, "data", "inputs", "parts_shared.csv"),
     "--waivers", os.path.join(HERE, "data", "inputs", "unused.waivers"),
     os.path.join(HERE, "data", "inputs", "batch", "probe_clamp.cir")],
    [os.path.join(HERE, "data", "files")],
    ["--source-tol", "10", os.path.join(HERE, "data", "powerup", "xfmr_fullwave_doubler.cir")],
    # currents, powers and their rules; a file with no steady state (fallback.currents.why)
    ["--parts", os.path.join(HERE, "data", "currents", "parts.csv"), os.path.join(HERE, "data", "currents")],
    [os.path.join(HERE, "data", "loadout")],
]


def surges_agree(doc):
    """Each simulated surge's figures agree: width 2 I2t / peak^2, the
    judged current the half-sine of the rating's width with the pulse's I2t,
    and the ratio that over the rating's own half-sine peak. Returns how
    many were simulated."""
    n = 0
    for f in doc["files"]:
        for s in f.get("stresses", []):
            if s["quantity"] != "surge_current" or s.get("surge_i2t") is None:
                continue
            n += 1
            i2t, pk, tw = s["surge_i2t"], s["worst"], s["rating_surge_width"]
            if pk > 0 and abs(s["surge_width"] - 2 * i2t / pk ** 2) > 1e-6 * s["surge_width"]:
                raise ValueError("%s: surge_width is not 2 I2t / peak^2" % s["part"])
            if abs(s["surge_judged"] - (2 * i2t / tw) ** 0.5) > 1e-6 * max(s["surge_judged"], 1e-12):
                raise ValueError("%s: surge_judged is not sqrt(2 I2t / width)" % s["part"])
            if s["rating_i2t"] is not None and s["ratio"] is not None and \
                    abs(s["ratio"] - (i2t / s["rating_i2t"]) ** 0.5) > 1e-6 * max(s["ratio"], 1e-12):
                raise ValueError("%s: the ratio is not sqrt(I2t / rated I2t)" % s["part"])
    return n


def outputs_agree(doc):
    """Each loaded output names a structure of its file of the same kind and
    output node; simulated, its corners hold numbers that agree (min <= mean
    <= max, ripple max - min, sag |unloaded| - |mean|, the high corner
    above the low in size) and no reason; not simulated, a reason and no
    simulated number. Returns how many were simulated."""
    n = 0
    for f in doc["files"]:
        kinds = {s["id"]: s for s in f.get("structures", [])}
        for o in f.get("loaded_outputs", []):
            st = kinds.get(o["structure"])
            if not st or st["kind"] != o["kind"] or st["output"] != o["output"]:
                raise ValueError("%s: %s is no structure of that kind and output" % (f["path"], o["structure"]))
            if not o["simulated"]:
                if not o["why"] or any(o[c][k] is not None for c in ("low", "high") for k in ("mean", "min", "max")):
                    raise ValueError("%s %s: not simulated without a reason, or with numbers" % (f["path"], o["structure"]))
                continue
            n += 1
            if o["why"] is not None:
                raise ValueError("%s %s: simulated with a reason" % (f["path"], o["structure"]))
            for c in ("low", "high"):
                x = o[c]
                if not (x["min"] <= x["mean"] <= x["max"]) or abs(x["ripple"] - (x["max"] - x["min"])) > 1e-6 * max(abs(x["max"]), 1):
                    raise ValueError("%s %s %s: mean, min, max and ripple disagree" % (f["path"], o["structure"], c))
                if x["unloaded"] is not None and abs(x["sag"] - (abs(x["unloaded"]) - abs(x["mean"]))) > 1e-6 * max(abs(x["mean"]), 1):
                    raise ValueError("%s %s %s: sag is not |unloaded| - |mean|" % (f["path"], o["structure"], c))
            if abs(o["high"]["mean"]) < abs(o["low"]["mean"]):
                raise ValueError("%s %s: the high corner's output is below the low's" % (f["path"], o["structure"]))
    return n


def summary_agrees(doc):
    """The batch summary is recomputed from the per-file sections: counts
    per rule from the unwaived findings (the run's own ones too), and the most stressed parts from
    every bounded, rated stress (worst / rating, highest first)."""
    per_rule, sev = {}, {"error": 0, "warning": 0, "note": 0}
    ratios = []
    for f in doc["files"] + [{"findings": doc["run_findings"]}]:
        for g in f["findings"]:
            if not g["waived"]:
                per_rule[g["rule"]] = per_rule.get(g["rule"], 0) + 1
                sev[g["severity"]] += 1
        for s in f.get("stresses", []):
            if s.get("bounded") and s.get("ratio") is not None and s["ratio"] > 0:
                ratios.append(s["ratio"])
    sm = doc["summary"]
    if sm["per_rule"] != per_rule:
        raise ValueError("summary per_rule %s, findings give %s" % (sm["per_rule"], per_rule))
    if (sm["errors"], sm["warnings"], sm["notes"]) != (sev["error"], sev["warning"], sev["note"]):
        raise ValueError("summary counts disagree with the findings")
    # the files: every one read is listed with its status, every skipped
    # entry with its reason; the counts add up; the diagnostics are counted
    status = [f["status"] for f in doc["files"]]
    files = (sm["seen"], sm["checked"], sm["not_checked"], sm["skipped"])
    if files != (len(status) + len(doc["skipped"]), status.count("checked"),
                 status.count("not_checked"), len(doc["skipped"])):
        raise ValueError("summary counts files %s, the lists give others" % (files,))
    if sm["not_checked"] != sm["netlist_errors"] or sm["files"] != len(status):
        raise ValueError("not_checked, netlist_errors and files disagree")
    diags = [g["severity"] for f in doc["files"] for g in f["errors"] + f["warnings"]]
    want = {"errors": diags.count("error"), "warnings": diags.count("warning"),
            "notes": diags.count("note")}
    if sm["diagnostics"] != want:
        raise ValueError("summary diagnostics %s, the files give others" % sm["diagnostics"])
    for f in doc["files"]:
        if any(g["severity"] != "error" for g in f["errors"]) or \
                any(g["severity"] == "error" for g in f["warnings"]):
            raise ValueError("%s: an error among the warnings or the reverse" % f["path"])
        if (f["status"] == "not_checked") != ("not_checked" in f):
            raise ValueError("%s: not_checked given without the status or the reverse" % f["path"])
    top = sorted(ratios, reverse=True)[:5]
    got = [t["ratio"] for t in sm["most_stressed"]]
    if len(got) != len(top) or any(abs(a - b) > 1e-6 * max(1, b) for a, b in zip(got, top)):
        raise ValueError("most_stressed %s, stresses give %s" % (got, top))


passed = failed = 0
for args in runs:
    r = subprocess.run([BIN, "check", "--format", "json"] + args, capture_output=True, text=True)
    try:
        doc = json.loads(r.stdout)
        jsonschema.validate(doc, schema)
        summary_agrees(doc)
        nsurge = surges_agree(doc)
        nout = outputs_agree(doc)
        print("report-schema: %s: valid (%d files, %d findings, %d simulated surges, %d simulated loaded "
              "outputs)" % (" ".join(os.path.relpath(a, ROOT) if os.path.isabs(a) else a for a in args),
                            len(doc["files"]), sum(len(f["findings"]) for f in doc["files"]), nsurge, nout))
        passed += 1
    except (ValueError, jsonschema.ValidationError) as e:
        print("report-schema: FAIL %s: %s" % (args, str(e)[:400]))
        failed += 1
# `headroom rules --format json` against docs/rules.schema.json, for each
# shipped profile: the rules are those of the text listing, and each limit
# is the value its profile line gives.
rules_schema = json.load(open(os.path.join(ROOT, "docs", "rules.schema.json")))
for prof in ["basic", "industrial", "flight"]:
    r = subprocess.run([BIN, "rules", "--format", "json", "--profile", prof], capture_output=True, text=True)
    t = subprocess.run([BIN, "rules", "--profile", prof], capture_output=True, text=True)
    try:
        doc = json.loads(r.stdout)
        jsonschema.validate(doc, rules_schema)
        listed = [l.split()[0] for l in t.stdout.split("\n\n")[0].splitlines()[1:]]
        if [x["id"] for x in doc["rules"]] != listed:
            raise ValueError("rules differ from the text listing")
        lines = open(doc["profile"]["path"]).read().splitlines()
        for lim in doc["profile"]["limits"]:
            if not lines[lim["line"] - 1].lstrip().startswith(lim["key"]):
                raise ValueError("%s is not on line %d" % (lim["key"], lim["line"]))
        print("report-schema: rules --profile %s: valid (%d rules, %d limits)" % (
            prof, len(doc["rules"]), len(doc["profile"]["limits"])))
        passed += 1
    except (ValueError, jsonschema.ValidationError) as e:
        print("report-schema: FAIL rules --profile %s: %s" % (prof, str(e)[:400]))
        failed += 1
print("report-schema: %d passed, %d failed" % (passed, failed))
sys.exit(1 if failed else 0)
