/* simsrc.h: an independent source's value over time in a transient run,
 * as SPICE defines it (ngspice manual, "Independent sources": SIN, PULSE,
 * PWL with r= and td=, EXP, SFFM), and the corners (breakpoints) where the
 * waveform's slope jumps, so the solver can land on them. */
#ifndef HEADROOM_SIMSRC_H
#define HEADROOM_SIMSRC_H

#include "nl.h"

/* Defaults SPICE takes from the .tran card: step for rise and fall times,
 * stop for pulse width, period and SIN frequency. */
struct simsrc_span {
	double step, stop;
};

/* Value of src at time t >= 0. */
double simsrc_value(const struct nl_source *src, const struct simsrc_span *sp,
		    double t);

/* The first corner of src strictly after t (+ a small margin), or INFINITY. */
double simsrc_next_corner(const struct nl_source *src,
			  const struct simsrc_span *sp, double t);

/* The repetition period of src (SIN, PULSE, repeating PWL, SFFM carrier),
 * or 0 when it does not repeat. */
double simsrc_period(const struct nl_source *src, const struct simsrc_span *sp);
/* The period of the source's fastest content (an AM's carrier, an
 * SFFM's highest instantaneous frequency), else its period; 0 if none. */
double simsrc_fastest(const struct nl_source *src, const struct simsrc_span *sp);

/* A PULSE width that stands for "held for ever" (sim.c's slow PULSE):
 * such a pulse has played out its events at the end of its rise. */
#define SIMSRC_HELD 1e300

/* The time by which src has played out everything that does not repeat:
 * its delay, a single pulse, a PWL's part before its repeat (or all of a
 * PWL that does not repeat), ten time constants of a damped SIN or of an
 * EXP's second edge. A steady state is not looked for before it. */
double simsrc_settled_from(const struct nl_source *src,
			   const struct simsrc_span *sp);

/* The lowest and highest value of src over one period from when it
 * repeats (its corners and 2000 points between; a source that does not
 * repeat: over [0, stop] or its settled part). */
void simsrc_range(const struct nl_source *src, const struct simsrc_span *sp,
		  double *lo, double *hi);

/* The steady-state mean of src: the time average over one period of a
 * repeating source (SIN and SFFM: their offset), else the value it settles
 * at. Corner runs scale a source's mean and its variation apart. */
double simsrc_mean(const struct nl_source *src, const struct simsrc_span *sp);

#endif
