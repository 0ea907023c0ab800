# headroom derating profile: industrial -- the default, between basic and
# flight. Diode limits are NAVSEA SD-18 Table 1A, normal environment,
# quality level 2 (seen, docs/sources.md §1a; layout rebuilt from a flattened
# page, confirm against the SD-18 PDF). Capacitor limits: common practice
# and manufacturers' guidance, each line says which.
name = industrial
description = NAVSEA SD-18 Table 1A normal/L2 for diodes; manufacturer guidance for capacitors

source_tol = 10%                 # IEC 60038 mains 230 V +-10 % (secondary source, docs/sources.md §8); common practice for unregulated inputs
hazard_voltage = 60V             # IEC 62368-1 ES1 limit of 60 V DC (from memory, docs/sources.md §6); docs/design.md §7 default
discharge_time = 2s              # IEC 62368-1 5.5.2.2: voltage measured 2 s after disconnection (seen in a test-report excerpt, docs/sources.md §6)
droop_limit = 5%                 # common practice, no source
recovery_fraction = 5%           # common practice, no source
ambient = 55                    # common practice, no source: air around the parts, degC (docs/life.md)
life_required = 50000           # common practice, no source: hours each electrolytic must last (docs/life.md)

cap.default.voltage = 70%        # common practice, no source
cap.ceramic-c0g.voltage = 80%    # common practice, no source: class 1 ceramics lose no capacitance with bias
cap.ceramic-x7r.voltage = 50%    # common practice, no source: class 2 ceramics lose capacitance with DC bias
cap.ceramic.voltage = 50%        # as X7R (common practice, no source)
cap.film.voltage = 70%           # common practice, no source
cap.mica.voltage = 60%           # common practice, no source
cap.glass.voltage = 60%          # common practice, no source
cap.alu-electrolytic.voltage = 80%   # rated V >= DC + peak ripple (seen in the Chemi-Con guide, docs/sources.md §1f) with 20 % margin (common practice)
cap.alu-electrolytic.reverse_v = 1.0V  # about 1 V DC reverse, intermittent only (seen in Nippon Chemi-Con guidance; docs/sources.md §2)
cap.tantalum.voltage = 50%       # MnO2 tantalum <= 50 % of rated up to 85 C (seen in KEMET T491; docs/sources.md §1f)
cap.tantalum.derate_from = 85     # MnO2 tantalum: category voltage falls linearly from UR at 85 C (seen in the KEMET B45196 datasheet cautions, docs/sources.md §1)
cap.tantalum.derate_to = 125      # ... to 2/3 UR at 125 C (same source)
cap.tantalum.voltage_at_max = 67%  # 2/3 of UR at 125 C (same source)
cap.tantalum.reverse_v = 0.5V    # <= 3 % of UR and <= 0.5 V at 85 C (seen only in a secondary source, docs/sources.md §2)
cap.tantalum.reverse_fraction = 3%   # same source as the line above
cap.polymer.voltage = 80%        # polymer tantalum: 20 % derating (seen only in a secondary source: KEMET; docs/sources.md §1f)
cap.polymer.reverse_v = 0V       # treat as 0 V (from memory, docs/sources.md §2)
cap.supercap.voltage = 80%       # common practice, no source
cap.supercap.reverse_v = 0V      # common practice, no source

diode.default.voltage = 75%      # SD-18 Table 1A general-purpose diode VR, normal L2 (seen, docs/sources.md §1a)
diode.default.surge = 80%        # SD-18 Table 1A general-purpose diode IFSM, normal L2 (seen, docs/sources.md §1a)
diode.signal.voltage = 75%       # SD-18 Table 1A general-purpose/switching diode VR, normal L2 (seen, docs/sources.md §1a)
diode.signal.surge = 80%         # SD-18 Table 1A IFSM, normal L2 (seen, docs/sources.md §1a)
diode.rectifier.voltage = 75%    # SD-18 Table 1A power rectifier VR, normal L2 (seen, docs/sources.md §1a)
diode.fast-recovery.voltage = 75%    # SD-18 Table 1A power rectifier VR, normal L2 (seen, docs/sources.md §1a)
diode.hv-stack.voltage = 75%     # SD-18 Table 1A power rectifier VR, normal L2 (seen, docs/sources.md §1a)
diode.schottky.voltage = 80%     # SD-18 Table 1A Schottky/PIN VR, normal L2 (seen, docs/sources.md §1a)
diode.zener.voltage = 75%        # common practice, no source: as a general-purpose diode

# currents and power (docs/check.md, "Currents and power"): the solver's steady state at the high corner
cap.default.ripple_current = 80%    # common practice, no source: a fifth kept for the core's temperature rise
diode.default.avg_current = 90%  # SD-18 Table 1A general-purpose diode IF, normal L2 (seen, docs/sources.md §1a)
diode.rectifier.avg_current = 85%    # SD-18 Table 1A power rectifier IF, normal L2 (seen, docs/sources.md §1a)
diode.fast-recovery.avg_current = 85%    # SD-18 Table 1A power rectifier IF, normal L2 (seen, docs/sources.md §1a)
diode.hv-stack.avg_current = 85%     # SD-18 Table 1A power rectifier IF, normal L2 (seen, docs/sources.md §1a)
diode.default.peak_current = 90% # common practice, no source: SD-18 has no IFRM row; its general-purpose IF factor (docs/sources.md §1a) reused
diode.default.power = 75%        # common practice, no source: as the general-purpose diode's voltage factor
