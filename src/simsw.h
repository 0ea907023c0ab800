/* simsw.h: the solver's voltage-controlled switch (S card, .model SW):
 * a resistance of RON or ROFF between its two nodes, chosen by its
 * control voltage with hysteresis and held between time points. Used by
 * sim.c only; the behaviour is in docs/solver.md. */
#ifndef HEADROOM_SIMSW_H
#define HEADROOM_SIMSW_H

#include "arena.h"
#include "nl.h"
#include "simmat.h"

struct simdev;

struct simsw {
	double vt, vh;    /* threshold and hysteresis (V) */
	double gon, goff; /* 1/RON, 1/ROFF (S) */
};

/* NULL when p (an opaque part) is a switch the solver models, else why
 * not (a static string). */
const char *simsw_refusal(const struct nl_part *p);

/* Fills switch d (its pins already set) from p's model; it starts off.
 * Returns 0 on out-of-memory. */
int simsw_fill(struct arena *ar, const struct nl_part *p, struct simdev *d);

/* The switch's matrix positions; 0 on out-of-memory. */
int simsw_need(struct simdev *d, struct simmat *m);

/* Stamps the switch in the state its control voltage at iterate x sets:
 * on above VT + VH, off below VT - VH, else as at the last accepted time
 * point (its q0). A state other than the last stamp's sets *limited, so
 * that Newton does not stop on it, and counts one in *flips. With hold,
 * the last stamp's state is kept whatever the control says. */
void simsw_stamp(struct simdev *d, struct simmat *m, const double *x, int hold, int *limited,
		 unsigned *flips);

/* Where in the step from the accepted point xprev to x the control
 * voltage crossed the threshold that changed the switch's state, as a
 * share of the step in (0, 1] (linear between the two points); 1 when
 * the state did not change. */
double simsw_crossing(const struct simdev *d, const double *xprev, const double *x);

#endif
