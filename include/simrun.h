/* simrun.h: what the commands ask of the solver: `headroom sim` (node
 * waveforms as CSV, over a set time or over one period of the steady
 * state) and `check --verify` (each part's extreme voltages over one
 * steady-state period at a chosen source corner). */
#ifndef HEADROOM_SIMRUN_H
#define HEADROOM_SIMRUN_H

#include <stdio.h>

#include "sim.h"

/* A part's current over the recorded steady-state period, with
 * sim_currents' sign (pin 0 to pin 1 through the part); NaN where the
 * solver has no current for it. Integrals over the accepted points,
 * exact for currents and voltages linear between them. */
struct simrun_flow {
	double avg;     /* mean current, A */
	double rms;     /* root mean square current, A */
	double peak;    /* largest current, A */
	double low;     /* smallest (most negative) current, A */
	double power;   /* mean of (v(pin 0) - v(pin 1)) times the current, W */
};

struct simrun_opts {
	double until;          /* > 0: plain run from 0 to here; 0: steady state */
	double from;           /* first time written (plain run) */
	double max_step;       /* 0: the solver's default */
	unsigned max_periods;  /* steady state: cap (0: 2000) */
	unsigned long max_work; /* Newton iterations in all (0: the solver's) */
	double settle_tol;     /* steady state: relative (0: 1e-4) */
	double flow_tol;       /* > 0, with flow: once settled, up to as many
				  periods again towards this tolerance, when
				  the work so far leaves room for it */
	const double *ac_scale, *dc_scale, *dc_set; /* source corner (sim.h) */
	const double *cap_v0;  /* capacitor start voltages per part, or NULL */
	const unsigned char *leave_out; /* parts left out (open), or NULL */
	double gshunt;         /* S from every node to ground (sim.h) */
	int ideal_diodes;      /* nearly ideal diodes (sim.h) */
	double t_shift;        /* switch-on instant of the sources (sim.h) */
	int hold_slow;         /* a far slower PULSE held at its second level
				  after its rise (sim.h) */
	int oneshot;           /* simrun_peaks, steady state asked for, no
				  source repeats: the extremes of the run
				  from switch-on (the zero state) through the
				  sources' events and of the state it settles
				  to (docs/solver.md, "No repeating source") */
	double *cap_end;       /* per part, or NULL: each capacitor's voltage
				  where the run ends (simrun_peaks, _track) */
	double *node_noise;    /* simrun_peaks: per node, or NULL: its noise
				  floor (sim_node_noise), 0 where the run
				  settled outright */
	/* simrun_peaks: parts whose voltage (pin 0 minus pin 1) is sampled at
	   trace_points even times over the recorded period (first and last
	   included) into trace[k * trace_points + j] */
	size_t ntrace;
	const uint32_t *trace_parts;
	unsigned trace_points;
	double *trace;
	/* simrun_peaks: one entry per part, or NULL: each part's current over
	   the recorded period */
	struct simrun_flow *flow;
	/* simrun_peaks: probes, each the voltage of node probe_pos[k] minus
	   node probe_neg[k], whose lowest, highest and time-averaged value
	   over the recorded period (the trapezoidal rule over the accepted
	   points) go to probe_min[k], probe_max[k], probe_mean[k] */
	size_t nprobe;
	const uint32_t *probe_pos, *probe_neg;
	double *probe_min, *probe_max, *probe_mean;
};

struct simrun_result {
	enum sim_status status;
	struct sim_refusal refusal;
	unsigned periods;
	int settled;           /* steady state reached within the cap */
	double period;         /* s; 0 when no source repeats */
	int oneshot;           /* the run was o->oneshot's, and settled */
	double t_end;          /* time reached */
	uint32_t held;         /* first source held by hold_slow (NL_NONE:
				  none), its period and width (s) */
	double held_per, held_pw;
	int coarse;            /* simrun_peaks: the measured period's finer
				  steps failed, and the run was redone
				  without them (sim_fine_period) */
	struct sim_stats stats;
};

/* Writes the voltages of nodes names[0..n) (node names; "a,b" is the
 * difference v(a) - v(b)) as CSV rows "time,v(a),..." to out. A name that
 * is not a node is reported in *bad (the name) with a 0 return; otherwise
 * returns 1 and fills *r (whose status may still be a failure). */
int simrun_csv(FILE *out, const struct nl_circuit *c, const char *const *names,
	       size_t n, const struct simrun_opts *o, const struct hr_alloc *h,
	       struct simrun_result *r, const char **bad);

/* Steady state at the corner in o, then one more period recorded: vmin
 * and vmax (arrays of one entry per part) get the extremes of each
 * two-pin part's voltage pin 0 minus pin 1 over that period; node_min and
 * node_max (one per node, may be NULL) the extremes of each node; o->flow
 * (when not NULL) each part's current over it. */
void simrun_peaks(const struct nl_circuit *c, const struct simrun_opts *o,
		  const struct hr_alloc *h, double *vmin, double *vmax,
		  double *node_min, double *node_max, struct simrun_result *r);

/* The way to the steady state: the circuit from the capacitor voltages
 * in o->cap_v0 (NULL: the zero state, each at its ic= or 0) at the corner
 * in o, run (plain periods: the trajectory itself is wanted) until its
 * steady state or for max_periods; vmin and vmax (one per part) get the
 * extremes of each two-pin part's voltage over the whole run. Power-up
 * is this from the zero state. */
void simrun_track(const struct nl_circuit *c, const struct simrun_opts *o,
		  unsigned max_periods, const struct hr_alloc *h, double *vmin,
		  double *vmax, struct simrun_result *r);

/* One forward current pulse of a diode (simrun_surge): a stretch of time
 * in which its current stays above 0 and above SIMRUN_PULSE_END of the
 * pulse's own peak so far. */
struct simrun_pulse {
	double peak_a;         /* its largest current, A */
	double i2t;            /* the integral of i^2 over it, A^2 s */
	double t_peak;         /* when the peak came, s after switch-on */
	double t_start, t_end; /* s after switch-on */
};

/* A pulse ends where its current falls below this share of its peak: the
 * tail beyond carries less than a millionth of its I^2 t per unit time. */
#define SIMRUN_PULSE_END 1e-3

/* Power-up: the circuit from the zero state (every capacitor at its ic=
 * or 0; o->cap_v0 is not used) at the corner and switch-on instant in o,
 * run for span seconds. Each diode parts[k] gets in pulse[k] the forward
 * current pulse with the largest I^2 t of the run (all zero when it never
 * conducts; NaN when the solver has no such diode). */
void simrun_surge(const struct nl_circuit *c, const struct simrun_opts *o, double span,
		  const uint32_t *parts, size_t n, const struct hr_alloc *h,
		  struct simrun_pulse *pulse, struct simrun_result *r);

/* Conductance from every node to ground when parts are left out, so that
 * a node they leave floating stays defined (S). */
#define SIMRUN_GSHUNT 1e-12

/* The parts of c the solver has no model for: a mask with one entry per
 * part (in ar), their count in *n, and the first one's refusal in *first
 * (part NL_NONE when none). NULL on out-of-memory. */
unsigned char *simrun_unsupported(const struct nl_circuit *c, struct arena *ar,
				  size_t *n, struct sim_refusal *first);

#endif
