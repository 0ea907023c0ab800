/* sim.h: the transient solver. It reads the flat circuit and nothing of
 * the analysis it is there to check: modified nodal analysis of R, C, L,
 * K, D, V, I, E, F, G, H; Newton-Raphson with junction limiting;
 * trapezoidal integration with backward Euler on the first step and after
 * every source corner; step size from a local truncation error estimate;
 * SuiteSparse KLU for the linear solves. docs/solver.md has the equations
 * and the limits. */
#ifndef HEADROOM_SIM_H
#define HEADROOM_SIM_H

#include <stddef.h>

#include "arena.h"
#include "nl.h"

#define SIM_MAX_WORK 20000000ul /* Newton iterations: some 5 M time points */

struct sim_opts {
	double stop;       /* SPICE's TSTOP, for waveform defaults only */
	double step;       /* SPICE's TSTEP, for pulse edges (0: stop/1000) */
	double max_step;   /* largest time step; 0: 1/200 of the shortest
			      source period, else stop/200 */
	double reltol;     /* 0: 1e-3 */
	double vntol;      /* V; 0: 1e-6 */
	double abstol;     /* A; 0: 1e-12 */
	/* per part (NULL: none): an independent source's waveform about its
	   mean is multiplied by ac_scale[i], its mean by dc_scale[i], or the
	   mean replaced by dc_set[i] when that is not NaN */
	const double *ac_scale, *dc_scale, *dc_set;
	const double *cap_v0; /* per part: a capacitor's voltage at t = 0
				 (NaN: its ic=, else 0); NULL: ic= or 0 */
	const unsigned char *leave_out; /* per part: non-zero leaves it out
					   (open); NULL: none */
	double gshunt;     /* S from every node to ground (0: none), so that a
			      node left floating by leave_out stays defined */
	unsigned long max_work; /* Newton iterations over the solver's life
				   (each one a factorisation and solve);
				   0: 20,000,000 */
	int ideal_diodes;  /* every diode nearly ideal (SIM_IDEAL_IS, _N) */
	int no_shooting;   /* sim_settle: plain settling only */
	double t_shift;    /* s: every independent source is evaluated at t +
			      t_shift, so a run from the zero state switches
			      the circuit on at that instant of the sources'
			      waveforms (0: as written) */
	int hold_slow;     /* a PULSE whose period and width are each at least
			      SIM_SLOW_RATIO times the shortest period of the
			      other sources is held at its second level after
			      its first rise (sim_held) */
	int fine;          /* the measured period's finer steps (sim_fine_period) */
};

/* How much slower than the fastest source a PULSE must be to be held. */
#define SIM_SLOW_RATIO 1000

/* The nearly ideal diode: IS 1e-9 A per unit area, N 0.05 (about 27 mV
 * at 1 mA), no RS, CJO or TT; BV and IBV as the model gives them. */
#define SIM_IDEAL_IS 1e-9
#define SIM_IDEAL_N 0.05

/* The largest coupling coefficient the solver takes (sim.c). */
#define SIM_K_MAX 0.9999
/* From this coupling on, both windings are integrated by BDF2 (sim.c). */
#define SIM_K_STIFF 0.999

struct sim;

/* Why a circuit cannot be simulated: the part and a sentence. */
struct sim_refusal {
	uint32_t part;     /* NL_NONE when no one part is to blame */
	char why[160];
};

enum sim_status { SIM_OK, SIM_REFUSED, SIM_NO_CONVERGENCE, SIM_SINGULAR,
		  SIM_BUDGET, SIM_OOM };

/* Builds the solver for circuit c (borrowed; must outlive the solver). On
 * SIM_REFUSED *ref says why (an opaque or behavioural part, a diode
 * without a usable model). */
enum sim_status sim_create(const struct nl_circuit *c, const struct sim_opts *o,
			   const struct hr_alloc *h, struct sim **out,
			   struct sim_refusal *ref);
/* 1 when the solver has a model for part i of c; else 0 with *ref set. */
int sim_part_supported(const struct nl_circuit *c, size_t i, struct sim_refusal *ref);
/* 1 when it has one with every diode nearly ideal (sim_opts.ideal_diodes):
 * a diode whose model is not a compact one (a device-level model) then
 * needs none. */
int sim_part_supported_ideal(const struct nl_circuit *c, size_t i);

/* The first source part held by hold_slow (NL_NONE: none), its period
 * and its width (s). */
uint32_t sim_held(const struct sim *s, double *period, double *width);

/* NULL when part i is simulated as its model is written, else what the
 * solver leaves out of that model (a static string). */
const char *sim_part_approx(const struct nl_circuit *c, size_t i);

/* Frees the solver. NULL is a no-op. */
void sim_destroy(struct sim *s);

/* Called at every accepted time point after the start with the node voltages
 * (indexed by node id; v[0] = 0). Return non-zero to stop the run. */
typedef int (*sim_point_fn)(void *ud, double t, const double *v);

/* Runs from the current time to t_end. */
enum sim_status sim_run(struct sim *s, double t_end, sim_point_fn fn, void *ud);

/* The solver's handle of diode part, or -1 when part is no diode of the
 * solver (left out, or another kind). */
long sim_diode_handle(const struct sim *s, uint32_t part);
/* The current through the diode of handle k (from sim_diode_handle; anode
 * to cathode, A: junction plus charge current) at the time reached. */
double sim_diode_current(const struct sim *s, long k);

/* The longest repetition period among the sources (0 if none repeats). */
double sim_period(const struct sim *s);
/* The shortest repetition period among the sources (0 if none repeats). */
double sim_cycle(const struct sim *s);
/* The time reached. */
double sim_time(const struct sim *s);
/* Node voltages at the time reached, indexed by node id (v[0] = 0). */
const double *sim_voltages(const struct sim *s);
/* Each part's current at the time reached into i (one entry per part of
 * the circuit), from its pin 0 to its pin 1 through the part: a
 * resistor's, a capacitor's (its integration companion's), a diode's
 * (junction and charge, through RS), an inductor's or a voltage source's
 * (from + through the source to -); NaN for parts left out and for those
 * with no one current (K, controlled and current sources). Meant for a
 * sim_point_fn, at an accepted point. */
void sim_currents(const struct sim *s, double *i);
/* Each diode's dissipated power at the time reached into p (one entry
 * per part): its junction's static current times the junction's voltage
 * plus its RS loss, the charge it stores left out; NaN for every other
 * part. For a sim_point_fn, as sim_currents. */
void sim_dissipation(const struct sim *s, double *p);

/* Periodic steady state: runs whole periods until the state (capacitor
 * voltages, inductor currents) at the start of successive periods agrees
 * within tol (relative to the largest) and the decay seen so far leaves
 * less than tol to come, or max_periods have run. Never before every
 * source's delay and other non-repeating part is over (simsrc.h). *periods gets the number run; the return is SIM_OK
 * with *settled 0 when the cap was hit. fn (may be NULL) sees every
 * accepted point on the way, as in sim_run. */
enum sim_status sim_settle(struct sim *s, double period, unsigned max_periods,
			   double tol, unsigned *periods, int *settled,
			   sim_point_fn fn, void *ud);

/* When the sources' non-repeating parts (delays, single pulses, PWL
 * points, EXP) are over, s; 0 when nothing moves. */
double sim_events_end(const struct sim *s);

/* 1 when a moving source's waveform happens once: a single pulse, a PWL
 * without repeat or an EXP whose levels differ (nl_source_once). */
int sim_has_oneshot(const struct sim *s);

/* The largest time step from here on, s (> 0). */
void sim_set_max_step(struct sim *s, double h);

/* From here on (on non-zero), in a circuit with diodes, the steps are
 * those of the measured period: the error estimate and each junction's
 * Newton test at SIM_FINE_RELTOL, each diode with a transit time followed
 * through its snap-off (the instant its stored charge runs out under a
 * reverse current, where a ring into its junction starts), and the steps
 * after a corner kept short until the estimate checks them
 * (docs/solver.md, "The measured period"). They stop where the run has
 * fewer than reserve Newton iterations of its allowance left, and the run
 * goes on at its own tolerance (sim_stats' fine_cut). 1 when they were
 * turned on. */
int sim_fine_period(struct sim *s, int on, unsigned long reserve);

struct sim_stats {
	unsigned long points, rejected, newton, fresh_lu, refactor_lu;
	size_t unknowns;
	unsigned long jumps; /* sim_settle: shooting-Newton periods that
				started from a new trial state */
	int fine_cut;        /* the measured period's finer steps ran out of
				their share of the allowance */
	double residual;   /* sim_settle: the last period's change of the state,
			      relative to its largest value */
	double settled_from; /* sim_settle: when the sources' non-repeating
				parts end (s); no steady state before it */
	double noise;      /* sim_settle: V; a steady state taken at the solver's
			      noise floor wanders by this much from one period
			      to the next (0: it settled outright) */
};
void sim_stats(const struct sim *s, struct sim_stats *out);

/* Where sim_settle stopped at the noise floor (sim_stats' noise): per node
 * (as sim_voltages), the largest change of its level from one period's
 * start to the next over the periods that showed it, in volts; NULL where
 * the run settled outright. */
const double *sim_node_noise(const struct sim *s);

const char *sim_status_text(enum sim_status st);

#endif
