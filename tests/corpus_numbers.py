#!/usr/bin/env python3
"""Every capacitor and diode of the clamps, doublers, multipliers and
rectifiers (with their reservoir capacitors) in the third-party corpus gets
a number: proven by the analysis or simulated (docs/check.md, "Proven and
simulated"). The corpus is read in place from $HEADROOM_CORPUS (never
copied into this repository); without it the test is skipped with a
message, or fails when CI is set.

The files: each one where `headroom topo` finds a clamp, detector, doubler,
ladder or rectifier, and the files whose diode-capacitor networks are
rectifiers with a reservoir capacitor in a converter or clamps (read by
hand; topo calls them networks because transistors or switches drive
them). Per file, `headroom check --format json --fail-on never FILE`:
  - the number of structure capacitors and diodes (voltage and reverse
    voltage) is as listed, so a file that loses a structure is noticed;
  - each has basis proven or simulated and a bounded worst value, except
    where the file is listed in BLOCKED: a part without a number there must
    name one of the listed parts in its reason and carry a stress-unsettled
    warning that says so; or in NO_RUN (every part modelled, but nothing
    for the solver to run to): its reason must say so.
The power-up surge (surge_current) is outside this test: the solver does not
simulate switch-on, and where the analysis does not settle a structure its
surge stays a stress-unsettled warning (docs/rules/stress-unsettled.md).
"""
import json
import os
import subprocess
import sys

HERE = os.path.dirname(os.path.abspath(__file__))
BIN = os.environ.get("HEADROOM", os.path.join(os.path.dirname(HERE), "build", "headroom"))
TAG = "corpus-numbers"

# file -> structure capacitors and diodes (voltage stresses) it has
FILES = {
    # found by topo: clamps, detectors, doublers, ladders, rectifiers
    "ece3410/3_lab/spice/bridge_rectifier.sp": 4,
    "ece3410/3_lab/spice/exercise3.sp": 2,
    "ece3410/3_lab/spice/exercise5.sp": 2,
    "ece3410/misc/envelope_detector.sp": 2,
    "learning_ngspice/circuits/09_fontes_alimentacao/01_retificadores.cir": 11,
    "ngspice/examples/cider/serial/dbridge.cir": 4,
    "ngspice/examples/various/v-i-sources-am-ffm.cir": 2,
    "python_spice/archive/vDub.net": 4,
    "python_spice/archive/vDubMult.net": 16,
    "python_spice/archive/vDubTry.net": 16,
    "spice_sims/Rectifiers/bridge rectifier/bridge_rectifier.cir": 4,
    "spice_sims/Rectifiers/peak rectifier/peak_rectifier.cir": 2,
    "spice_sims/Rectifiers/peak rectifier/peak_rectifierR.cir": 2,
    "xyce/Netlists/Certification_Tests/BUG_746_SON/raw_file_mutual_inductors.cir": 4,
    "xyce/Netlists/Certification_Tests/BUG_775_SON/bug775son.cir": 10,
    "xyce/Netlists/Output/HB/hb-prn.cir": 2,
    "xyce/Netlists/SENS/fullWaveDummy.cir": 4,
    "xyce/Netlists/SENS/fullWaveRectDiode.cir": 4,
    "xyce/Netlists/SENS/fullWaveRectDiodeAdjoint.cir": 4,
    # networks that are converter rectifiers with a reservoir capacitor
    "learning_ngspice/circuits/14_conversores_dcdc/01_buck_boost_conversores.cir": 6,
    "ngspice/examples/vdmos/dcdc.sp": 2,
    "xyce/Netlists/Certification_Tests/BUG_456/push_pull_xyce_baseline.cir": 15,
    "xyce/Netlists/TIA/TRAP/push_pull_xyce_baseline.cir": 15,
    # networks that are clamps (input protection, a latch clamp, a
    # timer's charge diode on its timing capacitor)
    "xyce/Netlists/TIA/TRAP/teststep1.cir": 14,
    "xyce/Netlists/Message/Device/DeviceBlock_extractModelName_3.cir": 12,
    "learning_ngspice/circuits/10_timer_555/01_timer_555_astavel_monostavel_pwm.cir": 2,
}

# file -> (parts the solver has no model for, why no number can be given)
BLOCKED = {
    "xyce/Netlists/Message/Device/DeviceBlock_extractModelName_3.cir":
        (["XQ2.Q1", "X9.EBCONTROL"],
         "a bipolar transistor of Xyce's level 4, and a control that integrates a power "
         "of a voltage over time (SDT)"),
}

# file -> (what the reason of a part without a number says, why): every
# part is modelled, but the circuit gives the solver nothing to run to, or
# more to run than a file's allowance
PUSH_PULL = ("the run needs more work than allowed",
             "a push-pull converter whose 40 s output time constant (1 uF, 40 Mohm) "
             "keeps it charging over some 100,000 periods of its 352 us drive; shooting "
             "does not converge through its switching, and plain periods would take hours")
NO_RUN = {
    "xyce/Netlists/Certification_Tests/BUG_456/push_pull_xyce_baseline.cir": PUSH_PULL,
    "xyce/Netlists/TIA/TRAP/push_pull_xyce_baseline.cir": PUSH_PULL,
}


def check_file(corpus, rel, want):
    """Problems with one file, as a list of lines; counts into stats."""
    path = os.path.join(corpus, rel)
    r = subprocess.run([BIN, "check", "--format", "json", "--fail-on", "never", path],
                       capture_output=True, text=True, timeout=300)
    if r.returncode != 0:
        return ["%s: exit %d: %s" % (rel, r.returncode, r.stderr.strip()[:300])], {}
    f = json.loads(r.stdout)["files"][0]
    stresses = [s for s in f["stresses"]
                if s["structure"] and s["quantity"] in ("voltage", "reverse_voltage")]
    warned = {x["part"] for x in f["findings"] if x["rule"] == "stress-unsettled"}
    blockers, _ = BLOCKED.get(rel, ([], ""))
    no_run, _ = NO_RUN.get(rel, (None, ""))
    bad, stats = [], {"proven": 0, "simulated": 0, "none": 0}
    if len(stresses) != want:
        bad.append("%s: %d structure capacitors and diodes, %d expected"
                   % (rel, len(stresses), want))
    for s in stresses:
        stats[s["basis"]] = stats.get(s["basis"], 0) + 1
        if s["basis"] in ("proven", "simulated") and s["bounded"] and s["worst"] is not None:
            continue
        why = s["unproven"] or ""
        named = any(why.startswith(b + " has no model in the solver") for b in blockers)
        named = named or (no_run is not None and no_run in why)
        if not named:
            bad.append("%s: %s (%s) has no number: %s" % (rel, s["part"], s["quantity"], why))
        elif s["part"] not in warned:
            bad.append("%s: %s has no number and no stress-unsettled warning" % (rel, s["part"]))
    if (blockers or no_run) and stats["none"] == 0:
        bad.append("%s: every part has a number now: take the file out of BLOCKED" % rel)
    return bad, stats


def main():
    corpus = os.environ.get("HEADROOM_CORPUS",
                            os.path.join(HERE, "..", "..", "shared", "corpus", "real"))
    if not os.path.isfile(os.path.join(corpus, "MANIFEST.tsv")):
        if os.environ.get("CI"):
            print("%s: FAIL, no corpus at %s (set HEADROOM_CORPUS)" % (TAG, corpus))
            return 1
        print("%s: SKIPPED, no corpus at %s (set HEADROOM_CORPUS)" % (TAG, corpus))
        return 0
    failed, totals = [], {"proven": 0, "simulated": 0, "none": 0}
    for rel, want in FILES.items():
        bad, stats = check_file(corpus, rel, want)
        failed += bad
        for k, v in stats.items():
            totals[k] = totals.get(k, 0) + v
        note = ""
        if rel in BLOCKED:
            note = "  no number beside %s: %s" % (", ".join(BLOCKED[rel][0]), BLOCKED[rel][1])
        if rel in NO_RUN:
            note = "  no number: %s" % NO_RUN[rel][1]
        print("%s: %-78s %s%s" % (TAG, rel, " ".join("%s %d" % kv for kv in stats.items()),
                                  note))
    for line in failed:
        print("%s: FAIL %s" % (TAG, line))
    print("%s: %d files, %d parts: %d proven, %d simulated, %d without a number "
          "(each beside a part the solver has no model for, or with nothing to run to); %d failed"
          % (TAG, len(FILES), sum(totals.values()), totals["proven"], totals["simulated"],
             totals["none"], len(failed)))
    return 1 if failed else 0


if __name__ == "__main__":
    sys.exit(main())
