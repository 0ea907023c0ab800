# headroom derating profile: basic -- the least conservative of the three.
# For commercial products where the common "use parts at 80 % of rating"
# rule is the design standard. Every value cites its source after '#':
# "seen in" a source, "seen only in a secondary source", "from memory" (the
# marks of docs/sources.md), or "common practice, no source".
name = basic
description = commercial practice: parts at up to 80 % of their rating

source_tol = 5%                  # common practice, no source: regulated supplies and signal sources
hazard_voltage = 60V             # IEC 62368-1 ES1 limit of 60 V DC (from memory, docs/sources.md §6); docs/design.md §7 default
discharge_time = 5s              # common practice, no source
droop_limit = 10%                # common practice, no source: clamp droop per period, fraction of the swing
recovery_fraction = 10%          # common practice, no source: trr as a fraction of the drive period
ambient = 40                    # common practice, no source: air around the parts, degC (docs/life.md)
life_required = 20000           # common practice, no source: hours each electrolytic must last (docs/life.md)

cap.default.voltage = 80%        # "20 % derating = use at <= 80 % of rated" (seen in passive-components.eu, KEMET chart; docs/sources.md §1f)
cap.alu-electrolytic.voltage = 80%   # same commercial rule (docs/sources.md §1f, M: no single standard)
cap.alu-electrolytic.reverse_v = 1.0V  # about 1 V DC reverse, intermittent only (seen in Nippon Chemi-Con guidance; docs/sources.md §2)
cap.tantalum.voltage = 50%       # MnO2 tantalum <= 50 % of rated up to 85 C (seen in KEMET T491 via Digi-Key forum; docs/sources.md §1f)
cap.tantalum.derate_from = 85     # MnO2 tantalum: category voltage falls linearly from UR at 85 C (seen in the KEMET B45196 datasheet cautions, docs/sources.md §1)
cap.tantalum.derate_to = 125      # ... to 2/3 UR at 125 C (same source)
cap.tantalum.voltage_at_max = 67%  # 2/3 of UR at 125 C (same source)
cap.tantalum.reverse_v = 1.0V    # <= 10 % of UR and <= 1.0 V at 25 C (seen only in a secondary source, docs/sources.md §2)
cap.tantalum.reverse_fraction = 10%  # same source as the line above
cap.polymer.voltage = 80%        # polymer tantalum: 20 % derating typical (seen only in a secondary source: KEMET via aggregator; docs/sources.md §1f)
cap.polymer.reverse_v = 0V       # treat as 0 V (from memory, docs/sources.md §2)
cap.supercap.voltage = 90%       # common practice, no source
cap.supercap.reverse_v = 0V      # common practice, no source: polarised, no reverse allowance

diode.default.voltage = 80%      # commercial 80 % of VRRM (from memory, docs/sources.md §1f)
diode.default.surge = 100%       # common practice, no source: the datasheet IFSM as is

# currents and power (docs/check.md, "Currents and power"): the solver's steady state at the high corner
cap.default.ripple_current = 100%   # common practice, no source: the datasheet ripple rating at its temperature as is
diode.default.avg_current = 90%  # SD-18 Table 1A general-purpose diode IF, protected environment L2 (seen, docs/sources.md §1a)
diode.rectifier.avg_current = 90%    # SD-18 Table 1A power rectifier IF, protected environment L2 (seen, docs/sources.md §1a)
diode.default.peak_current = 100%    # common practice, no source: the datasheet IFRM as is (SD-18 Table 1A has no IFRM row)
diode.default.power = 80%        # common practice, no source: the commercial 80 % rule (docs/sources.md §1f) applied to a zener's power
