/* simsrc.c: see simsrc.h. Forms, from the ngspice manual (section
 * "Independent Sources for Transient Analysis"):
 *   SIN(VO VA FREQ TD THETA PHASE): VO + VA sin(PHASE) before TD, then
 *     VO + VA e^{-THETA (t-TD)} sin(2 pi FREQ (t-TD) + PHASE), PHASE in
 *     degrees;
 *   PULSE(V1 V2 TD TR TF PW PER), linear edges;
 *   PWL(t1 v1 t2 v2 ...) r=REPEAT td=DELAY, held at the ends;
 *   EXP(V1 V2 TD1 TAU1 TD2 TAU2);
 *   SFFM(VO VA FC MDI FS): VO + VA sin(2 pi FC t + MDI sin(2 pi FS t));
 *   AM(VA VO MF FC TD .. PH): 0 before TD, then VA (VO + sin(2 pi MF u + PH))
 *     sin(2 pi FC u + PH), u = t - TD, PH (degrees) the seventh value as
 *     ngspice reads it (checked by simulation in ngspice). */
#include "simsrc.h"

#include <math.h>

#define SIMSRC_PI 3.14159265358979323846

static double arg(const struct nl_source *s, uint32_t i, double dflt)
{
	return i < s->nargs && isfinite(s->args[i]) ? s->args[i] : dflt;
}

static double sin_value(const struct nl_source *s, const struct simsrc_span *sp,
			double t)
{
	double vo = arg(s, 0, 0), va = arg(s, 1, 0);
	double f = arg(s, 2, sp->stop > 0 ? 1 / sp->stop : 0);
	double td = arg(s, 3, 0), theta = arg(s, 4, 0);
	double ph = arg(s, 5, 0) * SIMSRC_PI / 180;
	if (t < td)
		return vo + va * sin(ph);
	double u = t - td;
	return vo + va * exp(-theta * u) * sin(2 * SIMSRC_PI * f * u + ph);
}

struct pulse {
	double v1, v2, td, tr, tf, pw, per;
};

static struct pulse pulse_of(const struct nl_source *s, const struct simsrc_span *sp)
{
	struct pulse p;
	p.v1 = arg(s, 0, 0);
	p.v2 = arg(s, 1, 0);
	p.td = arg(s, 2, 0);
	p.tr = arg(s, 3, 0);
	p.tf = arg(s, 4, 0);
	p.pw = arg(s, 5, sp->stop);
	p.per = arg(s, 6, sp->stop);
	if (p.tr <= 0)
		p.tr = sp->step;
	if (p.tf <= 0)
		p.tf = sp->step;
	if (p.per <= 0)
		p.per = INFINITY;
	return p;
}

static double pulse_value(const struct pulse *p, double t)
{
	if (t < p->td)
		return p->v1;
	double u = isfinite(p->per) ? fmod(t - p->td, p->per) : t - p->td;
	if (u < p->tr)
		return p->v1 + (p->v2 - p->v1) * u / p->tr;
	if (u < p->tr + p->pw)
		return p->v2;
	if (u < p->tr + p->pw + p->tf)
		return p->v2 + (p->v1 - p->v2) * (u - p->tr - p->pw) / p->tf;
	return p->v1;
}

/* The PWL's own time: delay removed, repeats folded back onto the part of
 * the list from r= to the last point. */
static double pwl_time(const struct nl_source *s, double t)
{
	uint32_t n = s->nargs / 2;
	double u = t - (s->pwl_delay > 0 ? s->pwl_delay : 0);
	double last = s->args[2 * (n - 1)];
	double r = s->pwl_repeat;
	if (r >= 0 && u > last && last > r)
		u = r + fmod(u - r, last - r);
	return u;
}

static double pwl_value(const struct nl_source *s, double t)
{
	uint32_t n = s->nargs / 2;
	if (n == 0)
		return s->dc;
	double u = pwl_time(s, t);
	if (u <= s->args[0])
		return s->args[1];
	for (uint32_t i = 1; i < n; i++) {
		double t0 = s->args[2 * i - 2], t1 = s->args[2 * i];
		if (u <= t1) {
			double v0 = s->args[2 * i - 1], v1 = s->args[2 * i + 1];
			return t1 > t0 ? v0 + (v1 - v0) * (u - t0) / (t1 - t0) : v1;
		}
	}
	return s->args[2 * n - 1];
}

static double exp_value(const struct nl_source *s, const struct simsrc_span *sp,
			double t)
{
	double v1 = arg(s, 0, 0), v2 = arg(s, 1, 0), td1 = arg(s, 2, 0);
	double tau1 = arg(s, 3, sp->step), td2 = arg(s, 4, td1 + sp->step);
	double tau2 = arg(s, 5, sp->step);
	double v = v1;
	if (t > td1)
		v += (v2 - v1) * (1 - exp(-(t - td1) / tau1));
	if (t > td2)
		v += (v1 - v2) * (1 - exp(-(t - td2) / tau2));
	return v;
}

double simsrc_value(const struct nl_source *src, const struct simsrc_span *sp,
		    double t)
{
	switch (src->wave) {
	case NL_WAVE_SIN:
		return sin_value(src, sp, t);
	case NL_WAVE_PULSE: {
		struct pulse p = pulse_of(src, sp);
		return pulse_value(&p, t);
	}
	case NL_WAVE_PWL:
		return pwl_value(src, t);
	case NL_WAVE_EXP:
		return exp_value(src, sp, t);
	case NL_WAVE_AM: {
		double va = arg(src, 0, 0), vo = arg(src, 1, 0), mf = arg(src, 2, 0);
		double fc = arg(src, 3, 0), td = arg(src, 4, 0);
		double ph = arg(src, 6, 0) * SIMSRC_PI / 180, u = t - td;
		if (u < 0)
			return 0;
		return va * (vo + sin(2 * SIMSRC_PI * mf * u + ph)) * sin(2 * SIMSRC_PI * fc * u + ph);
	}
	case NL_WAVE_SFFM: {
		double vo = arg(src, 0, 0), va = arg(src, 1, 0);
		double fc = arg(src, 2, sp->stop > 0 ? 1 / sp->stop : 0);
		double mdi = arg(src, 3, 0), fs = arg(src, 4, fc);
		return vo + va * sin(2 * SIMSRC_PI * fc * t +
				     mdi * sin(2 * SIMSRC_PI * fs * t));
	}
	default:
		return src->dc;
	}
}

/* The first of corners c[0..n) (offsets within a period starting at base)
 * after t, looking at this period and the next. */
static double first_after(double base, double per, const double *c, int n,
			  double t)
{
	for (int k = 0; k < 2; k++)
		for (int i = 0; i < n; i++) {
			double x = base + k * per + c[i];
			if (x > t)
				return x;
		}
	return INFINITY;
}

static double pulse_corner(const struct nl_source *s, const struct simsrc_span *sp,
			   double t)
{
	struct pulse p = pulse_of(s, sp);
	double c[4] = {0, p.tr, p.tr + p.pw, p.tr + p.pw + p.tf};
	if (t < p.td)
		return p.td;
	double base = p.td;
	if (isfinite(p.per))
		base += floor((t - p.td) / p.per) * p.per;
	return first_after(base, isfinite(p.per) ? p.per : INFINITY, c, 4, t);
}

static double pwl_corner(const struct nl_source *s, double t)
{
	uint32_t n = s->nargs / 2;
	double d = s->pwl_delay > 0 ? s->pwl_delay : 0;
	double last = n ? s->args[2 * (n - 1)] : 0, r = s->pwl_repeat;
	double u = t - d, base = 0;
	if (r >= 0 && last > r && u > last) {
		double span = last - r;
		base = floor((u - r) / span) * span;
		for (uint32_t i = 0; i < n; i++) {
			double x = s->args[2 * i];
			if (x >= r && d + base + x > t)
				return d + base + x;
		}
		return d + base + span + r;
	}
	for (uint32_t i = 0; i < n; i++)
		if (d + s->args[2 * i] > t)
			return d + s->args[2 * i];
	return r >= 0 && last > r ? d + last + (last - r) : INFINITY;
}

double simsrc_next_corner(const struct nl_source *src,
			  const struct simsrc_span *sp, double t)
{
	double eps = 1e-12 * (sp->stop > 0 ? sp->stop : 1);
	t += eps;
	switch (src->wave) {
	case NL_WAVE_PULSE:
		return pulse_corner(src, sp, t);
	case NL_WAVE_PWL:
		return pwl_corner(src, t);
	case NL_WAVE_SIN: {
		double td = arg(src, 3, 0);
		return td > t ? td : INFINITY;
	}
	case NL_WAVE_EXP: {
		double td1 = arg(src, 2, 0), td2 = arg(src, 4, td1 + sp->step);
		return td1 > t ? td1 : td2 > t ? td2 : INFINITY;
	}
	case NL_WAVE_AM: {
		double td = arg(src, 4, 0);
		return td > t ? td : INFINITY;
	}
	default:
		return INFINITY;
	}
}

double simsrc_period(const struct nl_source *src, const struct simsrc_span *sp)
{
	switch (src->wave) {
	case NL_WAVE_SIN: {
		double f = arg(src, 2, sp->stop > 0 ? 1 / sp->stop : 0);
		return f > 0 && arg(src, 1, 0) != 0 ? 1 / f : 0;
	}
	case NL_WAVE_PULSE: {
		struct pulse p = pulse_of(src, sp);
		return isfinite(p.per) ? p.per : 0;
	}
	case NL_WAVE_PWL: {
		uint32_t n = src->nargs / 2;
		double last = n ? src->args[2 * (n - 1)] : 0;
		return src->pwl_repeat >= 0 && last > src->pwl_repeat
			       ? last - src->pwl_repeat : 0;
	}
	case NL_WAVE_SFFM: {
		double fc = arg(src, 2, 0);
		return fc > 0 ? 1 / fc : 0;
	}
	case NL_WAVE_AM: {
		double mf = arg(src, 2, 0);
		return mf > 0 && arg(src, 3, 0) > 0 ? 1 / mf : 0;
	}
	default:
		return 0;
	}
}

double simsrc_fastest(const struct nl_source *src, const struct simsrc_span *sp)
{
	double per = simsrc_period(src, sp);
	if (src->wave == NL_WAVE_AM && arg(src, 3, 0) > 0)
		return per > 0 ? fmin(per, 1 / arg(src, 3, 0)) : 1 / arg(src, 3, 0);
	if (src->wave == NL_WAVE_SFFM && arg(src, 2, 0) > 0)
		return 1 / (arg(src, 2, 0) + fabs(arg(src, 3, 0) * arg(src, 4, 0)));
	return per;
}

double simsrc_settled_from(const struct nl_source *src,
			   const struct simsrc_span *sp)
{
	switch (src->wave) {
	case NL_WAVE_SIN: {
		double theta = arg(src, 4, 0);
		return arg(src, 3, 0) + (theta > 0 ? 10 / theta : 0);
	}
	case NL_WAVE_PULSE: {
		struct pulse p = pulse_of(src, sp);
		return isfinite(p.per)		? p.td
		       : p.pw >= SIMSRC_HELD ? p.td + p.tr /* held (sim.c) */
					     : p.td + p.tr + p.pw + p.tf;
	}
	case NL_WAVE_PWL: {
		uint32_t n = src->nargs / 2;
		double d = src->pwl_delay > 0 ? src->pwl_delay : 0;
		double last = n ? src->args[2 * (n - 1)] : 0, r = src->pwl_repeat;
		return d + (r >= 0 && last > r ? r : last);
	}
	case NL_WAVE_EXP: {
		double td1 = arg(src, 2, 0), td2 = arg(src, 4, td1 + sp->step);
		return td2 + 10 * arg(src, 5, sp->step);
	}
	case NL_WAVE_AM:
		return arg(src, 4, 0);
	default:
		return 0;
	}
}

void simsrc_range(const struct nl_source *src, const struct simsrc_span *sp,
		  double *lo, double *hi)
{
	double per = simsrc_period(src, sp);
	double t0 = per > 0 ? simsrc_settled_from(src, sp) : 0;
	double span = per > 0 ? per : fmax(sp->stop, simsrc_settled_from(src, sp));
	if (!isfinite(t0))
		t0 = 0;
	*lo = *hi = simsrc_value(src, sp, t0);
	for (int k = 1; k <= 2000; k++) {
		double v = simsrc_value(src, sp, t0 + span * k / 2000);
		*lo = fmin(*lo, v), *hi = fmax(*hi, v);
	}
	for (double t = simsrc_next_corner(src, sp, t0); t < t0 + span;
	     t = simsrc_next_corner(src, sp, t)) {
		double v = simsrc_value(src, sp, t);
		*lo = fmin(*lo, v), *hi = fmax(*hi, v);
	}
}

/* Mean of a waveform that is linear between its corners, over one period
 * from t0 (trapezoids between corners, each taken just inside its ends so
 * that a jump at a corner counts on the right side). */
static double piecewise_mean(const struct nl_source *src,
			     const struct simsrc_span *sp, double t0, double per)
{
	double sum = 0, a = t0, end = t0 + per;
	for (unsigned guard = 0; a < end && guard < 4000000u; guard++) {
		double b = fmin(simsrc_next_corner(src, sp, a), end);
		double e = 1e-9 * (b - a);
		sum += 0.5 * (simsrc_value(src, sp, a + e) + simsrc_value(src, sp, b - e)) * (b - a);
		a = b;
	}
	return sum / per;
}

double simsrc_mean(const struct nl_source *src, const struct simsrc_span *sp)
{
	double per = simsrc_period(src, sp);
	switch (src->wave) {
	case NL_WAVE_SIN:
	case NL_WAVE_SFFM:
		return arg(src, 0, 0);
	case NL_WAVE_AM:
		return 0; /* both sines average out */
	case NL_WAVE_PULSE:
		return per > 0 ? piecewise_mean(src, sp, arg(src, 2, 0), per) : arg(src, 0, 0);
	case NL_WAVE_PWL: {
		uint32_t n = src->nargs / 2;
		double d = src->pwl_delay > 0 ? src->pwl_delay : 0;
		if (n == 0)
			return src->dc;
		return per > 0 ? piecewise_mean(src, sp, d + src->args[2 * (n - 1)], per)
			       : src->args[2 * n - 1];
	}
	case NL_WAVE_EXP:
		return arg(src, 0, 0); /* both edges done, it is back at V1 */
	default:
		return src->dc;
	}
}
