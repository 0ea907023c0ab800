#!/usr/bin/env python3
"""Behavioural sources in the built-in solver against ngspice (Debian
package): the decks of tests/data/behav drive diode-capacitor networks
through B sources (a comparator's square wave, a tanh amplifier, a clamped
I= load), E/G sources given by value=, and a clamped amplifier fed back
through a capacitor (Newton's hard case: both ends of the clamp flat), and polynomial (POLY) controlled sources. Each runs to its periodic steady
state in `headroom sim` and in ngspice from zero; the checks are those of
tests/ngspice_sim.py (same code): per probe the peak within 0.5 % of
ngspice's steady state, the waveform within 2 % of its peak-to-peak, and
at most twice ngspice's time points over 20 periods. Fails, not skips,
when CI is set and ngspice is missing."""
import os
import sys

HERE = os.path.dirname(os.path.abspath(__file__))
sys.path.insert(0, HERE)

import ngspice_sim  # noqa: E402

if __name__ == "__main__":
    ngspice_sim.DATA = os.path.join(HERE, "data", "behav")
    sys.exit(ngspice_sim.main())
