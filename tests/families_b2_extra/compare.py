#!/usr/bin/env python3
"""Compares the tool's worst values for the circuits in this folder with ngspice runs
(real and near-ideal diodes, from zero over the given number of periods; peaks over the
last period and over the whole run). Run from the repository root."""
import os, sys, tempfile, json
sys.path.insert(0, os.path.join(os.path.dirname(os.path.abspath(__file__)), '..'))
import ngspice_families as nf
cases = {
 'f08_b2_am_detector.cir': (1e-3, 50e-9, [8, 16]),
 'f02_b2_sffm_doubler.cir': (1e-3, 50e-9, [16, 32]),
 'f07_b2_pwl_repeat_detector.cir': (100e-6, 0.2e-6, [64, 128]),
 'f06_b2_exp_surge_clamp.cir': (1e-3, 0.1e-6, [1]),
 'f06_b2_single_pulse_clamp.cir': (1e-3, 0.5e-6, [1]),
 'f07_b2_damped_sin_detector.cir': (1e-3, 0.1e-6, [1]),
}
out = {}
for f, (period, tmax, ns) in cases.items():
    text = open('tests/families_b2_extra/' + f).read()
    worst, err = nf.tool_worst('tests/families_b2_extra/' + f)
    with tempfile.TemporaryDirectory() as tmp:
        parts = nf.parts_of(text, tmp)
        rows = {}
        for ideal in (False, True):
            for n in ns:
                res, o = nf.simulate(text, {}, ideal, parts, period, tmax, n, tmp, 'run')
                if res is None:
                    print(f, 'ngspice failed', o[-1500:]); break
            for path, letter, a, b in parts:
                r = res[path]
                if letter == 'c':
                    last = max(abs(r['hi2']), abs(r['lo2'])); pu = max(abs(r['hip']), abs(r['lop']))
                else:
                    last, pu = r['hi2'], r['hip']
                rows.setdefault(path, {})['ideal' if ideal else 'real'] = (last, pu, n)
    print('\n' + f)
    for p, r in sorted(rows.items()):
        w = (worst or {}).get(p)
        print('  %-5s tool %8s  real last %.4g (run %.4g)  ideal last %.4g (run %.4g)  periods %d' % (
            p, '-' if w is None else '%.4g' % w, r['real'][0], r['real'][1], r['ideal'][0], r['ideal'][1], r['real'][2]))
