/* simint.h: the solver's state, shared by sim.c (the time loop) and
 * simpss.c (the periodic steady state) only. */
#ifndef HEADROOM_SIMINT_H
#define HEADROOM_SIMINT_H

#include "arena.h"
#include "sim.h"
#include "simdev.h"
#include "simmat.h"
#include "simsrc.h"

/* Sensitivities of the charge-storing devices' history to the state at
 * the start of a shooting period (simpss.c): per device, m entries each. */
struct sim_sens {
	size_t m;                /* state entries (capacitors, inductors) */
	uint32_t *dev_of;        /* state entry -> device */
	double *dq0, *df0, *dqh1; /* ndev x m: d q0, d f0, d qh[1] */
	double *dqn;             /* ndev x m: the step's new d q */
	double *rhs;             /* n x m: right-hand sides, then dx */
	int broken;              /* a solve failed: the sensitivities are void */
};

/* The relative tolerance of the measured period (sim_fine_period): a
 * snap's ring is set within nanoseconds by the charge the recovery left,
 * and at 1e-3 or 1e-4 the rings that follow a 60 Hz rectifier's snap
 * re-trigger conduction at the wrong instants and run on for tens of
 * microseconds (docs/solver.md, "The measured period"). */
#define SIM_FINE_RELTOL 1e-5
/* Newton's absolute test on a diode's internal node behind its RS: a
 * voltage, but its drop across RS carries the diode's current (1 uV over
 * 0.1 ohm is 10 uA), so it is held far tighter than vntol; not to a
 * current's abstol, which the nanovolt of rounding noise on a floating
 * network's common mode never meets (docs/solver.md, "Diode"). */
#define SIM_RS_NODE_TOL 1e-8

struct sim {
	struct hr_alloc h;
	struct arena *ar;
	const struct nl_circuit *c;
	struct sim_opts o;
	struct simsrc_span span;
	size_t nnodes, n;        /* circuit nodes; unknowns */
	struct simdev *dev;
	size_t ndev;
	struct simmat *m;
	double *x, *xprev, *v;   /* iterate, last accepted, node voltages */
	long *rs_of;             /* per unknown: a diode's internal node behind
				    its RS: the unknown of its anode pin (-1:
				    ground); else -2 */
	double *d1, *d2;         /* each node unknown's last two accepted changes */
	unsigned ring_cuts, ring_quiet; /* sim.c's ringing() */
	long *shunt;             /* matrix handle of each node's diagonal */
	unsigned char *tie;      /* per node: tied to ground (sim.c's ground_ties) */
	double t, hstep;
	int behav_time;          /* a behavioural source reads the time */
	int after_corner;        /* next step is backward Euler */
	int snap_be;             /* steps after a snap still backward Euler */
	unsigned nhist;          /* accepted points in the error history */
	double hprev;            /* the last accepted step */
	double period;
	double fastest;          /* shortest source period (hold_slow) */
	double *turns_al;        /* per part: H per turn squared when the
				    inductor is a winding on a core model
				    (its value is turns), else 0; or NULL */
	uint32_t held;           /* first source held by hold_slow, or NL_NONE */
	double held_per, held_pw;
	struct sim_stats st;
	double *node_noise;      /* sim_node_noise, or NULL */
	unsigned long fine_end;  /* Newton iterations the finer steps may reach
				    (sim_fine_period) */
	struct sim_sens *sens;    /* shooting: sensitivities to track, or NULL */
	/* called at every accepted step before its charges become the
	   history (simpss.c sets it while shooting), or NULL */
	void (*on_step)(struct sim *s, const struct simdev_step *st);
};

/* Shared with simpss.c: node voltages from the iterate. */
void sim_node_voltages(struct sim *s);

#endif
