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

/* A simulated stress above its analytic bound by more than this (relative,
 * plus VERIFY_GAP_ABS volts) is an analysis gap: the solver's own accuracy
 * (reltol 1e-3) is not mistaken for one. */
#define VERIFY_GAP_REL 2e-3
#define VERIFY_GAP_ABS 0.01

/* Conductance from every node to ground when parts are left out. */
#define VERIFY_GSHUNT 1e-12

/* Samples kept of each stressed part's simulated waveform (for plots). */
#define VERIFY_TRACE_POINTS 240

/* Bounds on one file's simulation; 0 takes the solver's defaults (2000
 * periods, 20,000,000 Newton iterations). */
struct verify_limits {
	unsigned max_periods;
	unsigned long max_work;   /* Newton iterations */
};

/* Simulates a's circuit and fills sim_worst of every voltage and reverse
 * stress in sr, and sr->verify. A circuit the solver cannot take (no
 * repeating source, no convergence, past the limits) is reported in
 * sr->verify->why, not as an error. lim may be NULL. Allocates in a->ar.
 * Returns 0 on out-of-memory. */
int verify_run(struct audit *a, const struct profile *p, const struct verify_limits *lim,
	       struct stress_result *sr);

/* True when stress s was simulated above its bound (see VERIFY_GAP_*). */
int verify_gap(const struct stress *s);

#endif
