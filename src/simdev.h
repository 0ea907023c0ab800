/* simdev.h: the solver's devices: their unknowns, their matrix positions,
 * and their linearised stamps at one Newton iterate. Used by sim.c only;
 * the device equations are in docs/solver.md. */
#ifndef HEADROOM_SIMDEV_H
#define HEADROOM_SIMDEV_H

#include <stdint.h>

#include "nl.h"
#include "simbehav.h"
#include "simmat.h"

enum simdev_kind { SD_R, SD_C, SD_L, SD_K, SD_V, SD_I, SD_E, SD_G, SD_F,
		   SD_H, SD_D, SD_Q, SD_M, SD_S, SD_B };

/* Diode parameters after area scaling (SPICE level 1 names). */
struct simdev_diode {
	double is, n, rs, cjo, vj, m, tt, fc, bv, ibv;
	double nvt, vcrit, xbv;  /* derived */
};

struct simbjt;
struct simmos;
struct simsw;

struct simdev {
	uint8_t kind;
	uint8_t coupled;      /* L: one of a K pair (integrated by BDF2) */
	uint32_t part;        /* index in the circuit */
	long a, b, c, d;      /* unknown of each pin, -1 for ground */
	long br;              /* branch current unknown, or -1 */
	long br2;             /* K: second inductor's branch; F, H: control */
	long p;               /* diode: junction anode (internal node if rs) */
	uint32_t l1, l2;      /* K: the two windings' parts of this pair */
	double val;           /* conductance, C, L, M (for K), gain */
	const struct nl_source *src;
	double mean;          /* source: mean of its waveform */
	double ac_k, dc_v;    /* source: waveform about the mean times ac_k,
				 plus dc_v (the corner's mean) */
	struct simdev_diode *dm;
	struct simbjt *bj;    /* Q: the transport source (simbjt.h) */
	struct simmos *mos;   /* M: the channel (simmos.h) */
	struct simsw *sw;     /* S: the switch's model (simsw.h) */
	struct simbehav *bh;   /* SD_B: a behavioural source (B, E/G value=) */
	long h[8];            /* matrix handles */
	/* integration state: charge (C, D) or flux (L) and the element's
	 * current (C, D) or voltage (L) at the last accepted point, and the
	 * same at the iterate */
	double q0, f0, q, f;
	double vd;            /* diode: junction voltage of the linearisation */
	double cj;            /* diode: its charge's derivative there (F) */
	double lin_g, lin_i;  /* diode without RS: its companion at the last
				 stamp, i = lin_g v + lin_i (A/V, A) */
	double qh[3], th[3];  /* charge history for the error estimate */
};

/* What a stamp needs to know about the step. */
struct simdev_step {
	double t;             /* time of the point being solved */
	double a;             /* 2/h (trapezoidal) or 1/h (backward Euler) */
	double b;             /* 1 (trapezoidal) or 0 */
	const void *span;     /* struct simsrc_span */
	double gmin;
	/* BDF2 for coupled inductors: dq/dt = ga q_n + g1 q_{n-1} + g2 q_{n-2}
	   (variable step); gear 0 means backward Euler for them this step */
	int gear;
	double ga, g1, g2;
	double t_src; /* time the sources are evaluated at: t plus the
				 run's switch-on shift (sim_opts.t_shift) */
};

/* Registers the matrix positions of d. Returns 0 on out-of-memory. */
int simdev_need(struct simdev *d, struct simmat *m);

/* Stamps d linearised at iterate x (x[-1] is never read: ground is 0).
 * Sets *limited when a diode's junction voltage was limited. */
void simdev_stamp(struct simdev *d, const struct simdev_step *st,
		  struct simmat *m, const double *x, int *limited);

/* Charge (or flux) and its current (or voltage) at iterate x, into q, f
 * (a diode's are those of its last stamp, at the converged iterate). */
void simdev_update(struct simdev *d, const struct simdev_step *st,
		   const double *x);

/* The current through d from its pin 0 to its pin 1 (a source's from
 * its + pin through itself to its - pin) at the accepted solution x, as
 * the equations the solver met carry it: a resistor's v/R, a
 * capacitor's companion current, a diode's junction plus charge current
 * (through RS when it has one), a branch unknown; NaN for a device with
 * no one current (K, controlled sources). */
double simdev_current(const struct simdev *d, const double *x);

/* A diode's junction's static current at x (TT times it is its stored
 * charge). */
double simdev_junction_current(const struct simdev *d, const double *x);

/* A diode's dissipated power at x (junction's static current times its
 * voltage, plus RS's loss); NaN for any other device. */
double simdev_dissipation(const struct simdev *d, const double *x);

/* Fills the derived diode parameters. */
void simdev_diode_init(struct simdev_diode *m);

/* A zeroed device of kind between unknowns a (also its junction side p) and
 * b, with no other unknowns: what the transistor models build from. */
void simdev_blank(struct simdev *d, uint8_t kind, uint32_t part, long a, long b);

#endif
