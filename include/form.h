/* form.h: affine forms of node waveforms, w(t) = c0 + sum_i c_i s_i(t), with
 * s_i the zero-mean AC parts of the independent sources (sig.h) and c0 an
 * interval [lo, hi] (a rail that moves slowly between two values). Forms are
 * immutable once built and live in an arena. Their extremes over a common
 * period are exact for DC, one source, or sines of one frequency, exact at
 * breakpoints for piecewise-linear sources, and sampled otherwise. */
#ifndef HEADROOM_FORM_H
#define HEADROOM_FORM_H

#include <stddef.h>
#include <stdint.h>

#include "arena.h"
#include "sig.h"

struct form_term {
	uint32_t src;
	double c;
};

struct form {
	double lo, hi;         /* constant part */
	uint32_t n;            /* terms, sorted by src, no zero coefficient */
	struct form_term t[];
};

/* The sources that forms refer to. */
struct form_ctx {
	const struct sig *sigs;
	size_t nsigs;
	struct arena *ar;    /* where the owner of the context builds forms */
};

/* Constructors: the new form is allocated in ar; NULL on out-of-memory. */
struct form *form_const(struct arena *ar, double lo, double hi);
/* mean + AC part of source i of fc, times c */
struct form *form_source(const struct form_ctx *fc, struct arena *ar, uint32_t i,
			 double c);
/* a*x + b*y (constant intervals combine by interval arithmetic) */
struct form *form_lin(struct arena *ar, double a, const struct form *x,
		      double b, const struct form *y);
/* x with its constant part replaced by [lo, hi] */
struct form *form_with_const(struct arena *ar, const struct form *x,
			     double lo, double hi);
/* x's time-varying part only (constant 0) */
struct form *form_ac(struct arena *ar, const struct form *x);

/* True if x has no time-varying part. */
int form_is_dc(const struct form *x);
/* True if x and y have the same time-varying part (within 1e-12 relative). */
int form_same_ac(const struct form *x, const struct form *y);

/* Extremes of x over one common period of its sources. *exact is 1 when
 * the result is exact (analytic or at breakpoints), 0 when sampled. */
void form_range(const struct form_ctx *fc, const struct form *x, double *min,
		double *max, int *exact);

/* The same for the AC part only (constant ignored). */
void form_ac_range(const struct form_ctx *fc, const struct form *x,
		   double *min, double *max, int *exact);

/* Value of x's AC part at time t. */
double form_ac_at(const struct form_ctx *fc, const struct form *x, double t);

/* One common period of x's sources (0 for DC); *exact 0 when the periods
 * are not commensurate and a long window stands in for it. */
double form_period(const struct form_ctx *fc, const struct form *x, int *exact);

#endif
