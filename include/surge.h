/* surge.h: the power-up surge through each first-stage diode, simulated.
 * The circuit is switched on from the zero state (every capacitor empty,
 * every inductor without current) with every source at the high end of its
 * tolerance, at every switch-on instant the sources allow, and run for
 * SURGE_PERIODS periods; each surge stress takes the forward current pulse
 * with the largest I^2 t its diode carried: its peak, its I^2 t and its
 * equivalent half-sine width (docs/check.md, "Power-up surge"). Where the
 * solver cannot run the circuit the analytic bound (stress.h) stays. */
#ifndef HEADROOM_SURGE_H
#define HEADROOM_SURGE_H

#include "audit.h"
#include "profile.h"
#include "simbound.h"
#include "stress.h"

/* Periods of the longest source period run after switch-on: the first
 * charge of the first stage comes in the first one (each diode's first
 * conduction at the latest in the half-period after its first). */
#define SURGE_PERIODS 2

/* Switch-on instants tried over one period when the sources allow a
 * choice: 24, every 15 degrees. The source voltage at switch-on is then
 * within 1 - cos(7.5 deg) = 0.9 % of its value at the worst instant. */
#define SURGE_INSTANTS 24

/* Work allowed for one file's surge runs, all instants together, in
 * Newton iterations times unknowns (lim->total_work when given). */
#define SURGE_WORK 20000000UL

/* Simulates the surge of every SQ_SURGE stress of sr: worst, best (the
 * peak), basis SB_SIMULATED, corner, surge_i2t, surge_width and
 * surge_phase, and sr->surge (what was run, or why not). lim may be NULL.
 * Allocates in ar. Returns 0 on out-of-memory. */
int surge_run(const struct audit *a, const struct profile *p, const struct simbound_limits *lim,
	      struct arena *ar, struct stress_result *sr);

#endif
