/* current.h: the stresses of the steady state's currents (docs/check.md,
 * "Currents and power"): for each diode its mean forward current, its
 * repetitive peak and its rms current; for each capacitor its rms
 * (ripple) current; for each zener (a diode working in reverse breakdown)
 * and each resistor of a diode-capacitor network its mean power. The
 * numbers are the solver's (simbound.h: the all-high corner with the
 * diodes as modelled), labelled simulated; the analysis bounds voltages
 * only. A part the solver gave nothing still gets its stresses, without a
 * number and with the reason. current_judge applies the rules on them. */
#ifndef HEADROOM_CURRENT_H
#define HEADROOM_CURRENT_H

#include "audit.h"
#include "profile.h"
#include "rating.h"
#include "rules.h"
#include "stress.h"

/* Adds the current and power stresses of every stressed diode and
 * capacitor, and of each resistor sharing an island (proof.h) with a
 * diode and a capacitor, to sr from sr->fallback's flows (after
 * simbound_run); each part's go right after its own voltage stresses,
 * the resistors' at the end. r: the ratings (for the zener test).
 * Allocates in ar. Returns 0 on out-of-memory. */
int current_run(const struct audit *a, const struct rating *r, double ambient_c, struct arena *ar,
		struct stress_result *sr);

/* The current rules (diode-avg-current, diode-peak-current,
 * cap-ripple-current, zener-power) on sr's current and power stresses
 * with ratings r and profile p: a number above the profile's share of
 * its rating is a finding; a rated part with no number a stress-unsettled
 * one. Appends to out (after rules_run), allocating in ar. Returns 0 on
 * out-of-memory. */
int current_judge(const struct audit *a, const struct rating *r, const struct profile *p,
		  const struct stress_result *sr, struct arena *ar, struct rules_result *out);

#endif
