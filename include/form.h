/* form.h: affine forms of node waveforms,
 *   w(t) = c0 + sum_j d_j e_j + sum_i c_i s_i(t),
 * with s_i the zero-mean AC parts of the independent sources (sig.h), e_j in
 * [-1, 1] the DC symbol of source j (its offset somewhere in its tolerance
 * band, the same value wherever the source appears, so a clamp's level and
 * the rail it clamps to move together) and c0 an interval [lo, hi] (a rail
 * that moves slowly between two values, or what a non-affine step lost).
 * Forms are immutable once built and live in an arena. Their extremes over
 * a common period are exact for DC, one source, or sines of one frequency,
 * exact at breakpoints for piecewise-linear sources, and sampled otherwise. */
#ifndef HEADROOM_FORM_H
#define HEADROOM_FORM_H

#include <stddef.h>
#include <stdint.h>

#include "arena.h"
#include "sig.h"

/* A term's src is a source index (an AC term) or FORM_DC | index (that
 * source's DC symbol); sorting by src puts the AC terms first. */
#define FORM_DC 0x80000000u

struct form_term {
	uint32_t src;
	double c;
};

struct form {
	double lo, hi;         /* constant part */
	uint32_t n;            /* terms, sorted by src, no zero coefficient */
	struct form_term t[];
};

/* How two DC parts combine where the analysis is not affine. */
enum form_join {
	FORM_MAX,   /* the larger of the two, for every value of the symbols */
	FORM_MIN,   /* the smaller */
	FORM_HULL,  /* anything between the two */
	FORM_JOIN_COUNT
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
/* x's time-varying part with the constant [lo, hi] (x's DC symbols dropped) */
struct form *form_with_const(struct arena *ar, const struct form *x,
			     double lo, double hi);
/* x's time-varying part only (constant 0, no DC symbols) */
struct form *form_ac(struct arena *ar, const struct form *x);
/* mid + half * e_i: source i's DC offset anywhere in [mid - half, mid + half],
 * the same wherever it appears */
struct form *form_offset(struct arena *ar, double mid, uint32_t i, double half);
/* x's time-varying part with y's DC part (constant and DC symbols) */
struct form *form_with_dc(struct arena *ar, const struct form *x,
			  const struct form *y);
/* x's DC symbols with the constant [lo, hi] (time-varying part dropped) */
struct form *form_dc_at(struct arena *ar, const struct form *x, double lo,
			double hi);
/* A DC part enclosing join(x, y) for every value of the symbols (affine
 * arithmetic: x's symbols stay, the difference of the others widens the
 * constant by their largest effect); exact when both have the same symbols.
 * Time-varying parts are dropped. */
struct form *form_dc_join(struct arena *ar, enum form_join how,
			  const struct form *x, const struct form *y);

/* True if x has no time-varying part (DC symbols do not vary in time). */
int form_is_dc(const struct form *x);
/* Range of x's DC part over every value of its symbols. */
void form_dc_range(const struct form *x, double *lo, double *hi);
/* The same for x - y, without building it. */
void form_dc_range_diff(const struct form *x, const struct form *y, double *lo,
			double *hi);
/* True if x and y have the same time-varying part (within 1e-12 relative);
 * DC symbols are not compared. */
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
