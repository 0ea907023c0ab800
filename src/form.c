/* form.c: affine waveform forms and their extremes. The sampled case takes
 * 64 points per shortest period (at least 2048, at most 2^20) plus every
 * breakpoint of piecewise-linear sources, then refines the best samples by
 * golden-section search; its accuracy is measured in tests/test_form.c.
 * DC symbols (FORM_DC terms) sort after the AC terms; everything that looks
 * at the waveform in time walks the first nac() terms only. */
#include "form.h"

#include <assert.h>
#include <math.h>
#include <string.h>

#define FORM_PI 3.14159265358979323846

static struct form *alloc_form(struct arena *ar, uint32_t n)
{
	struct form *f = arena_alloc(ar, sizeof *f + n * sizeof f->t[0]);
	if (f)
		f->n = n;
	return f;
}

/* The number of AC terms: they come before the DC symbols. */
static uint32_t nac(const struct form *x)
{
	uint32_t k = 0;
	while (k < x->n && !(x->t[k].src & FORM_DC))
		k++;
	return k;
}

/* Sum of |d_j| over x's DC symbols: their largest effect. */
static double dc_spread(const struct form *x)
{
	double s = 0;
	for (uint32_t i = nac(x); i < x->n; i++)
		s += fabs(x->t[i].c);
	return s;
}

struct form *form_const(struct arena *ar, double lo, double hi)
{
	struct form *f = alloc_form(ar, 0);
	if (f) {
		f->lo = lo;
		f->hi = hi;
	}
	return f;
}

struct form *form_source(const struct form_ctx *fc, struct arena *ar, uint32_t i, double c)
{
	const struct sig *s = &fc->sigs[i];
	int ac = s->kind != SIG_DC && c != 0;
	struct form *f = alloc_form(ar, ac ? 1 : 0);
	if (!f)
		return NULL;
	f->lo = f->hi = c * s->mean;
	if (ac) {
		f->t[0].src = i;
		f->t[0].c = c;
	}
	return f;
}

static void add_const(double a, double lo, double hi, double *rlo, double *rhi)
{
	if (a >= 0) {
		*rlo += a * lo;
		*rhi += a * hi;
	} else {
		*rlo += a * hi;
		*rhi += a * lo;
	}
}

struct form *form_lin(struct arena *ar, double a, const struct form *x,
		      double b, const struct form *y)
{
	assert(x && y);
	struct form *f = alloc_form(ar, x->n + y->n);
	if (!f)
		return NULL;
	f->lo = f->hi = 0;
	add_const(a, x->lo, x->hi, &f->lo, &f->hi);
	add_const(b, y->lo, y->hi, &f->lo, &f->hi);
	uint32_t i = 0, j = 0, k = 0;
	while (i < x->n || j < y->n) {
		uint32_t src;
		double c = 0;
		if (j >= y->n || (i < x->n && x->t[i].src < y->t[j].src)) {
			src = x->t[i].src;
			c = a * x->t[i++].c;
		} else if (i >= x->n || y->t[j].src < x->t[i].src) {
			src = y->t[j].src;
			c = b * y->t[j++].c;
		} else {
			src = x->t[i].src;
			c = a * x->t[i++].c + b * y->t[j++].c;
		}
		if (fabs(c) > 1e-15) {
			f->t[k].src = src;
			f->t[k++].c = c;
		}
	}
	f->n = k;
	return f;
}

struct form *form_with_const(struct arena *ar, const struct form *x,
			     double lo, double hi)
{
	uint32_t k = nac(x);
	struct form *f = alloc_form(ar, k);
	if (!f)
		return NULL;
	memcpy(f->t, x->t, k * sizeof x->t[0]);
	f->lo = lo;
	f->hi = hi;
	return f;
}

struct form *form_ac(struct arena *ar, const struct form *x)
{
	return form_with_const(ar, x, 0, 0);
}

struct form *form_offset(struct arena *ar, double mid, uint32_t i, double half)
{
	assert(!(i & FORM_DC));
	struct form *f = alloc_form(ar, half != 0 ? 1 : 0);
	if (!f)
		return NULL;
	f->lo = f->hi = mid;
	if (half != 0) {
		f->t[0].src = FORM_DC | i;
		f->t[0].c = half;
	}
	return f;
}

struct form *form_with_dc(struct arena *ar, const struct form *x,
			  const struct form *y)
{
	uint32_t kx = nac(x), ky = nac(y);
	struct form *f = alloc_form(ar, kx + y->n - ky);
	if (!f)
		return NULL;
	memcpy(f->t, x->t, kx * sizeof x->t[0]);
	memcpy(f->t + kx, y->t + ky, (y->n - ky) * sizeof y->t[0]);
	f->lo = y->lo;
	f->hi = y->hi;
	return f;
}

struct form *form_dc_at(struct arena *ar, const struct form *x, double lo,
			double hi)
{
	struct form c = {lo, hi, 0};
	struct form *f = form_with_dc(ar, &c, x);
	if (f) {
		f->lo = lo;
		f->hi = hi;
	}
	return f;
}

/* join(x, y) - x_sym = join(cx, cy + (y_sym - x_sym)), and the second lies
 * within [cy.lo - D, cy.hi + D], D the spread of y_sym - x_sym. */
struct form *form_dc_join(struct arena *ar, enum form_join how,
			  const struct form *x, const struct form *y)
{
	double xlo, xhi, ylo, yhi;
	form_dc_range(x, &xlo, &xhi);
	form_dc_range(y, &ylo, &yhi);
	/* keep the symbols of the one that decides most often */
	if ((how == FORM_MAX && yhi > xhi) || (how == FORM_MIN && ylo < xlo)) {
		const struct form *t = x;
		x = y;
		y = t;
	}
	struct form *d = form_lin(ar, 1, y, -1, x);
	if (!d)
		return NULL;
	double spread = dc_spread(d);
	ylo = y->lo - spread;
	yhi = y->hi + spread;
	double lo = how == FORM_MAX ? fmax(x->lo, ylo) : fmin(x->lo, ylo);
	double hi = how == FORM_MIN ? fmin(x->hi, yhi) : fmax(x->hi, yhi);
	return form_dc_at(ar, x, lo, hi);
}

int form_is_dc(const struct form *x)
{
	return nac(x) == 0;
}

void form_dc_range(const struct form *x, double *lo, double *hi)
{
	double s = dc_spread(x);
	*lo = x->lo - s;
	*hi = x->hi + s;
}

void form_dc_range_diff(const struct form *x, const struct form *y, double *lo,
			double *hi)
{
	uint32_t i = nac(x), j = nac(y);
	double s = 0;
	while (i < x->n || j < y->n) {
		if (j >= y->n || (i < x->n && x->t[i].src < y->t[j].src))
			s += fabs(x->t[i++].c);
		else if (i >= x->n || y->t[j].src < x->t[i].src)
			s += fabs(y->t[j++].c);
		else
			s += fabs(x->t[i++].c - y->t[j++].c);
	}
	*lo = x->lo - y->hi - s;
	*hi = x->hi - y->lo + s;
}

int form_same_ac(const struct form *x, const struct form *y)
{
	if (nac(x) != nac(y))
		return 0;
	for (uint32_t i = 0; i < nac(x); i++)
		if (x->t[i].src != y->t[i].src ||
		    fabs(x->t[i].c - y->t[i].c) > 1e-12 * fmax(fabs(x->t[i].c), 1))
			return 0;
	return 1;
}

double form_ac_at(const struct form_ctx *fc, const struct form *x, double t)
{
	double v = 0;
	for (uint32_t i = 0, k = nac(x); i < k; i++)
		v += x->t[i].c * sig_ac(&fc->sigs[x->t[i].src], t);
	return v;
}

/* Sines of one angular frequency add as phasors: exact amplitude. */
static int sine_phasor(const struct form_ctx *fc, const struct form *x,
		       double *amp)
{
	double w = 0, re = 0, im = 0;
	for (uint32_t i = 0, k = nac(x); i < k; i++) {
		const struct sig *s = &fc->sigs[x->t[i].src];
		if (s->kind != SIG_SIN || (w != 0 && fabs(s->w - w) > 1e-12 * w))
			return 0;
		w = s->w;
		re += x->t[i].c * s->amp * cos(s->phase);
		im += x->t[i].c * s->amp * sin(s->phase);
	}
	*amp = hypot(re, im);
	return 1;
}

/* Smallest T that is a whole multiple of both a and b (within 1e-9), with
 * multipliers up to 1000; 0 if none. */
static double common(double a, double b)
{
	for (int m = 1; m <= 1000; m++) {
		double k = m * a / b;
		if (fabs(k - nearbyint(k)) < 1e-9 * k && nearbyint(k) >= 1)
			return m * a;
	}
	return 0;
}

double form_period(const struct form_ctx *fc, const struct form *x, int *exact)
{
	double T = 0, pmax = 0;
	*exact = 1;
	for (uint32_t i = 0, k = nac(x); i < k; i++) {
		double p = fc->sigs[x->t[i].src].period;
		if (p <= 0)
			continue;
		pmax = fmax(pmax, p);
		if (T == 0) {
			T = p;
			continue;
		}
		double c = *exact ? common(T, p) : 0;
		if (c == 0)
			*exact = 0;
		else
			T = c;
	}
	if (!*exact)
		T = 100 * pmax;
	if (fc->nsigs && nac(x) && fc->sigs[x->t[0].src].kind == SIG_SFFM &&
	    fc->sigs[x->t[0].src].note)
		*exact = 0;
	return T;
}

static double shortest_period(const struct form_ctx *fc, const struct form *x)
{
	double p = INFINITY;
	for (uint32_t i = 0, k = nac(x); i < k; i++) {
		const struct sig *s = &fc->sigs[x->t[i].src];
		double q = s->kind == SIG_SFFM ? 2 * FORM_PI / (s->wc + fabs(s->mdi) * s->ws)
			 : s->kind == SIG_AM ? 2 * FORM_PI / (s->wc + s->ws)
					     : s->period;
		if (q > 0)
			p = fmin(p, q);
	}
	return p;
}

static int all_piecewise_linear(const struct form_ctx *fc, const struct form *x)
{
	for (uint32_t i = 0, m = nac(x); i < m; i++) {
		enum sig_kind k = fc->sigs[x->t[i].src].kind;
		if (k != SIG_PULSE && k != SIG_PWL)
			return 0;
	}
	return 1;
}

struct scan {
	double min, max, tmin, tmax;
};

static void visit(const struct form_ctx *fc, const struct form *x, double t,
		  struct scan *s)
{
	double v = form_ac_at(fc, x, t);
	if (v < s->min) {
		s->min = v;
		s->tmin = t;
	}
	if (v > s->max) {
		s->max = v;
		s->tmax = t;
	}
}

/* Golden-section refinement of an extremum bracketed in [a, b]. */
static double refine(const struct form_ctx *fc, const struct form *x, double a,
		     double b, int sign)
{
	const double g = 0.61803398874989485;
	double c = b - g * (b - a), d = a + g * (b - a);
	double fc_ = sign * form_ac_at(fc, x, c), fd = sign * form_ac_at(fc, x, d);
	for (int i = 0; i < 60; i++) {
		if (fc_ > fd) {
			b = d;
			d = c;
			fd = fc_;
			c = b - g * (b - a);
			fc_ = sign * form_ac_at(fc, x, c);
		} else {
			a = c;
			c = d;
			fc_ = fd;
			d = a + g * (b - a);
			fd = sign * form_ac_at(fc, x, d);
		}
	}
	return sign * fmax(fc_, fd);
}

static void breakpoints(const struct form_ctx *fc, const struct form *x,
			double T, struct scan *s)
{
	for (uint32_t i = 0, k = nac(x); i < k; i++) {
		const struct sig *g = &fc->sigs[x->t[i].src];
		if (g->kind != SIG_PULSE && g->kind != SIG_PWL)
			continue;
		double reps = floor(T / g->period + 0.5);
		if (reps * (double)g->npts > 4e6)
			continue; /* too many: sampling covers them */
		for (double r = 0; r < reps; r++)
			for (size_t j = 0; j < g->npts; j++)
				visit(fc, x, g->t0 + r * g->period + g->t[j], s);
	}
}

static void sampled(const struct form_ctx *fc, const struct form *x,
		    double *min, double *max, int *exact)
{
	double T = form_period(fc, x, exact);
	double n = ceil(64 * T / shortest_period(fc, x));
	n = fmin(fmax(n, 2048), 1 << 20);
	struct scan s = {INFINITY, -INFINITY, 0, 0};
	breakpoints(fc, x, T, &s);
	int pwl = all_piecewise_linear(fc, x);
	if (!pwl) {
		double dt = T / n;
		for (double k = 0; k < n; k++)
			visit(fc, x, k * dt, &s);
		s.max = fmax(s.max, refine(fc, x, s.tmax - dt, s.tmax + dt, 1));
		s.min = fmin(s.min, refine(fc, x, s.tmin - dt, s.tmin + dt, -1));
		*exact = 0;
	}
	*min = s.min;
	*max = s.max;
}

void form_ac_range(const struct form_ctx *fc, const struct form *x,
		   double *min, double *max, int *exact)
{
	double amp;
	uint32_t k = nac(x);
	*exact = 1;
	if (k == 0) {
		*min = *max = 0;
	} else if (k == 1) {
		const struct sig *s = &fc->sigs[x->t[0].src];
		double c = x->t[0].c;
		*min = c >= 0 ? c * s->ac_min : c * s->ac_max;
		*max = c >= 0 ? c * s->ac_max : c * s->ac_min;
		*exact = !(s->kind == SIG_SFFM && s->note);
	} else if (sine_phasor(fc, x, &amp)) {
		*min = -amp;
		*max = amp;
	} else {
		sampled(fc, x, min, max, exact);
	}
}

void form_range(const struct form_ctx *fc, const struct form *x, double *min,
		double *max, int *exact)
{
	double lo, hi;
	form_ac_range(fc, x, min, max, exact);
	form_dc_range(x, &lo, &hi);
	*min += lo;
	*max += hi;
}
