/* simbound.h: a number for every stress the analysis cannot prove. The
 * whole circuit is run by the transient solver to its periodic steady
 * state at the worst corners of the source tolerances with the diodes as
 * modelled, and at the all-high corner once more with nearly ideal diodes
 * (the analysis's own idealisation, usually the higher); each unproven
 * stress takes the largest value seen, plus the solver's error allowance,
 * and is labelled
 * "simulated, not proven". A stress in an island with a part neither the
 * analysis nor the solver models gets no number: the rules then warn. */
#ifndef HEADROOM_SIMBOUND_H
#define HEADROOM_SIMBOUND_H

#include "audit.h"
#include "profile.h"
#include "stress.h"

/* Allowance for the solver's own error on a simulated bound (its reltol
 * is 1e-3; steady state is judged to 1e-4 a period): relative, plus volts. */
#define SIMBOUND_REL 5e-3
#define SIMBOUND_ABS 0.01

/* At most this many sources get a corner of their own (the others move
 * together in the all-high and all-low corners). */
#define SIMBOUND_MAX_SOLO 4

/* A file whose voltages are all proven is run once, for its currents, with
 * at most this many periods, Newton iterations, and Newton iterations
 * times unknowns: a tenth to a twentieth of the allowance of a voltage run
 * (the examples settle within 60 periods and 800,000 iterations times
 * unknowns). */
#define SIMBOUND_FLOW_PERIODS 400
/* The currents' run settles on towards this change per period, relative
 * to the largest capacitor voltage, where its allowance leaves room
 * (simrun.h; the voltage runs: 1e-4). */
#define SIMBOUND_FLOW_TOL 1e-6
#define SIMBOUND_FLOW_WORK 500000ul
#define SIMBOUND_FLOW_TOTAL 3000000ul

/* A file's simulation allowance, Newton iterations times unknowns over all
 * its runs (docs/check.md, "Proven and simulated"): about ten seconds for a
 * small circuit. */
#define SIMBOUND_TOTAL_WORK 150000000ul

struct simbound_limits {
	unsigned max_periods;     /* per run; 0: 4000 */
	unsigned long max_work;   /* Newton iterations per run; 0: 10,000,000 */
	unsigned long total_work; /* per file, all runs, in Newton iterations
				     times unknowns; 0: SIMBOUND_TOTAL_WORK; a
				     fifth more for each corner past five */
};

/* Simulates where sr has unproven stresses and fills their numbers (basis,
 * worst, best, corner, energy) and sr->fallback; the all-high corner's run
 * with the diodes as modelled also leaves every part's current over its
 * steady-state period in sr->fallback->flow (or why not in flow_why), for
 * every file with a stress. lim may be NULL. Allocates in ar. Returns 0
 * on out-of-memory. */
int simbound_run(const struct audit *a, const struct profile *p,
		 const struct simbound_limits *lim, struct arena *ar,
		 struct stress_result *sr);

#endif
