/* verify.h: `check --verify`: a second, independent opinion on every
 * analytic stress. The whole circuit (each structure with its own sources,
 * series impedances and loads, as drawn) is simulated by the transient
 * solver (sim.h) to periodic steady state at the corner where the analysis
 * found the worst: every source's amplitude and offset at +tol, a slowly
 * moving rail at the top of its range; capacitors start from the voltages
 * the analysis predicts. Each stress then carries its simulated value.
 * Parts the solver has no model for (transistors, behavioural sources) are
 * left out, open, and named in the report: the analysis ignores them too. */
#ifndef HEADROOM_VERIFY_H
#define HEADROOM_VERIFY_H

#include "audit.h"
#include "profile.h"
#include "stress.h"

/* Bounds on one file's simulation; 0 takes the solver's defaults (2000
 * periods, 20,000,000 Newton iterations). */
struct verify_limits {
	unsigned max_periods;
	unsigned long max_work;   /* Newton iterations */
};

/* The power-up run: from the zero state at the same corner, until its
 * steady state or this many periods (the first charge's overshoot comes
 * in the first periods; a slower build-up approaches the steady state from
 * below, which the steady-state run covers). */
#define VERIFY_POWERUP_PERIODS 100

/* A source that repeats this many times more slowly than the fastest is
 * a slow rail: held at its extremes and moved between them (quasi-static)
 * rather than simulated through its period. */
#define VERIFY_SLOW 20

/* Simulates a's circuit and fills sim_worst of every voltage and reverse
 * stress in sr, and sr->verify. A circuit the solver cannot take (no
 * repeating source, no convergence, past the limits) is reported in
 * sr->verify->why, not as an error. lim may be NULL. Allocates in ar.
 * Returns 0 on out-of-memory. */
int verify_run(const struct audit *a, const struct profile *p, const struct verify_limits *lim,
	       struct arena *ar, struct stress_result *sr);

#endif
