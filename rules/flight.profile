# headroom derating profile: flight -- the most conservative of the three,
# for space and high-reliability work. Values follow NASA EEE-INST-002
# (GSFC) derating as recalled: FROM MEMORY, the document was not available
# to check (docs/sources.md §1b). Confirm against the current edition before
# relying on them.
name = flight
description = NASA EEE-INST-002 style derating (from memory: confirm before relying on it)

source_tol = 10%                 # common practice, no source
hazard_voltage = 60V             # IEC 62368-1 ES1 limit of 60 V DC (from memory, docs/sources.md §6); docs/design.md §7 default
discharge_time = 1s              # common practice, no source
droop_limit = 2%                 # common practice, no source
recovery_fraction = 2%           # common practice, no source
ambient = 70                    # common practice, no source: air around the parts, degC (docs/life.md)
life_required = 100000           # common practice, no source: hours each electrolytic must last (docs/life.md)

cap.default.voltage = 50%        # common practice, no source: the strictest of the kinds below
cap.ceramic-c0g.voltage = 60%    # EEE-INST-002 ceramic (CCR/CKR/CDR) 0.60 (from memory, docs/sources.md §1b)
cap.ceramic-x7r.voltage = 50%    # EEE-INST-002 ceramic 0.60 (from memory, docs/sources.md §1b), lowered to the industrial 0.50 for class 2 DC-bias loss (common practice)
cap.ceramic.voltage = 50%        # as ceramic-x7r above
cap.glass.voltage = 50%          # EEE-INST-002 glass, mica 0.50 (from memory, docs/sources.md §1b)
cap.mica.voltage = 50%           # EEE-INST-002 glass, mica 0.50 (from memory, docs/sources.md §1b)
cap.film.voltage = 60%           # EEE-INST-002 plastic film 0.60 (from memory, docs/sources.md §1b)
cap.tantalum.voltage = 50%       # EEE-INST-002 solid tantalum (CSR/CWR) 0.50 (from memory, docs/sources.md §1b)
cap.tantalum.derate_from = 85     # MnO2 tantalum: category voltage falls linearly from UR at 85 C (seen in the KEMET B45196 datasheet cautions, docs/sources.md §1)
cap.tantalum.derate_to = 125      # ... to 2/3 UR at 125 C (same source)
cap.tantalum.voltage_at_max = 67%  # 2/3 of UR at 125 C (same source)
cap.tantalum.reverse_v = 0V      # EEE-INST-002: no reverse voltage on tantalum (from memory, docs/sources.md §1b)
cap.polymer.voltage = 50%        # common practice, no source: as solid tantalum
cap.polymer.reverse_v = 0V       # treat as 0 V (from memory, docs/sources.md §2)
cap.alu-electrolytic.voltage = 50%   # not a preferred flight part; no number recalled: common practice, no source
cap.alu-electrolytic.reverse_v = 0V  # common practice, no source
cap.supercap.voltage = 50%       # common practice, no source
cap.supercap.reverse_v = 0V      # common practice, no source

diode.default.voltage = 70%      # EEE-INST-002 diode PIV 0.70 (from memory, docs/sources.md §1b)
diode.default.surge = 50%        # EEE-INST-002 diode IFSM 0.50 (from memory, docs/sources.md §1b)
diode.schottky.voltage = 70%     # EEE-INST-002 Schottky PIV 0.70 (from memory, docs/sources.md §1b)

# currents and power (docs/check.md, "Currents and power"): the solver's steady state at the high corner
cap.default.ripple_current = 70%    # common practice, no source
diode.default.avg_current = 50%  # EEE-INST-002 diode IF(avg) 0.50 (from memory, docs/sources.md §1b)
diode.schottky.avg_current = 50% # EEE-INST-002 Schottky IF 0.50 (from memory, docs/sources.md §1b)
diode.default.peak_current = 50% # no IFRM figure recalled: EEE-INST-002's IF(avg) 0.50 reused (from memory, docs/sources.md §1b)
diode.default.power = 50%        # EEE-INST-002 zener power 0.50 (from memory, docs/sources.md §1b)
