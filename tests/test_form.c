/* test_form.c: extremes of affine waveform forms. The exact cases (DC, one
 * source, sines of one frequency by phasor sum, piecewise-linear sources at
 * their breakpoints) are compared with brute-force evaluation at 2,000,000
 * points per common period; the sampled cases (mixed frequencies) measure
 * the accuracy that docs/structures.md states. References: the sum of
 * same-frequency sinusoids is a sinusoid of the phasor-sum amplitude
 * (any circuits textbook, from memory). */
#include "testutil.h"

#include <math.h>

#include "form.h"
#include "sig.h"

#define TWO_PI 6.283185307179586

static struct sig sine(double amp, double f, double ph_deg)
{
	struct sig s;
	memset(&s, 0, sizeof s);
	s.kind = SIG_SIN;
	s.amp = amp;
	s.w = TWO_PI * f;
	s.phase = ph_deg * TWO_PI / 360;
	s.period = 1 / f;
	s.ac_min = -amp;
	s.ac_max = amp;
	return s;
}

static struct sig pulse(struct arena *ar, double v1, double v2, double tr,
			double pw, double per)
{
	struct nl_source src;
	double args[7] = {v1, v2, 0, tr, tr, pw, per};
	memset(&src, 0, sizeof src);
	src.wave = NL_WAVE_PULSE;
	src.nargs = 7;
	src.args = args;
	struct sig s;
	assert_true(sig_from_source(&src, ar, &s));
	return s;
}

static void brute(const struct form_ctx *fc, const struct form *f, double T,
		  double *lo, double *hi)
{
	*lo = INFINITY;
	*hi = -INFINITY;
	for (int k = 0; k < 2000000; k++) {
		double v = form_ac_at(fc, f, T * k / 2000000.0);
		*lo = fmin(*lo, v);
		*hi = fmax(*hi, v);
	}
}

struct form_case {
	const char *what;
	int a, b;          /* source indices */
	double ca, cb;     /* coefficients */
	int exact;         /* expected exactness */
	double tol;        /* allowed error, fraction of the peak */
};

static void test_cases(void **state)
{
	(void)state;
	struct hr_alloc h = hr_alloc_default();
	struct arena *ar = arena_create(&h);
	struct sig sigs[6];
	sigs[0] = sine(10, 1e3, 0);
	sigs[1] = sine(4, 1e3, 60);
	sigs[2] = sine(3, 3e3, 10);
	sigs[3] = pulse(ar, 0, 5, 1e-6, 4e-6, 10e-6);
	sigs[4] = pulse(ar, -2, 2, 0.5e-6, 7e-6, 15e-6);
	sigs[5] = sine(1, 1.41421356e3, 0);
	struct form_ctx fc = {sigs, 6, ar};
	const struct form_case cases[] = {
		{"one sine", 0, 0, 1, 0, 1, 1e-12},
		{"two sines, one frequency", 0, 1, 1, -1, 1, 1e-9},
		{"sine and its third harmonic", 0, 2, 1, 1, 0, 1e-9},
		{"two pulses, periods 10u and 15u", 3, 4, 1, -1, 1, 1e-12},
		{"sine and pulse", 0, 3, 1e-3, 1, 0, 1e-6},
	};
	for (size_t i = 0; i < sizeof cases / sizeof cases[0]; i++) {
		const struct form_case *c = &cases[i];
		struct form *f = form_lin(fc.ar, c->ca, form_source(&fc, fc.ar, (uint32_t)c->a, 1),
					  c->cb, form_source(&fc, fc.ar, (uint32_t)c->b, 1));
		double lo, hi, blo, bhi;
		int exact, pexact;
		form_ac_range(&fc, f, &lo, &hi, &exact);
		double T = form_period(&fc, f, &pexact);
		brute(&fc, f, T, &blo, &bhi);
		double peak = fmax(fabs(blo), fabs(bhi));
		print_message("form: %-32s exact=%d  [%.9g, %.9g] brute [%.9g, %.9g]\n",
			      c->what, exact, lo, hi, blo, bhi);
		assert_int_equal(exact, c->exact);
		/* never narrower than brute force (up to its own grid error) */
		assert_true(lo <= blo + 1e-9 * peak && hi >= bhi - 1e-9 * peak);
		assert_true(fabs(lo - blo) <= c->tol * peak + 1e-7 * peak);
		assert_true(fabs(hi - bhi) <= c->tol * peak + 1e-7 * peak);
	}
	arena_destroy(ar);
}

/* Phasor sum: 10 sin(wt) - 4 sin(wt + 60 deg) has amplitude
 * sqrt(10^2 + 4^2 - 2*10*4*cos 60) = sqrt(76). */
static void test_phasor_value(void **state)
{
	(void)state;
	struct hr_alloc h = hr_alloc_default();
	struct arena *ar = arena_create(&h);
	struct sig sigs[2] = {sine(10, 50, 0), sine(4, 50, 60)};
	struct form_ctx fc = {sigs, 2, ar};
	struct form *f = form_lin(fc.ar, 1, form_source(&fc, fc.ar, 0, 1), -1, form_source(&fc, fc.ar, 1, 1));
	double lo, hi;
	int exact;
	form_ac_range(&fc, f, &lo, &hi, &exact);
	assert_true(fabs(hi - sqrt(76)) < 1e-12 && fabs(lo + sqrt(76)) < 1e-12);
	arena_destroy(ar);
}

/* Periods that share no small common multiple: a long window stands in and
 * the result says it is not exact. */
static void test_incommensurate(void **state)
{
	(void)state;
	struct hr_alloc h = hr_alloc_default();
	struct arena *ar = arena_create(&h);
	struct sig sigs[2] = {sine(1, 1e3, 0), sine(1, 1.41421356e3, 0)};
	struct form_ctx fc = {sigs, 2, ar};
	struct form *f = form_lin(fc.ar, 1, form_source(&fc, fc.ar, 0, 1), 1, form_source(&fc, fc.ar, 1, 1));
	double lo, hi;
	int exact;
	form_ac_range(&fc, f, &lo, &hi, &exact);
	assert_int_equal(exact, 0);
	assert_true(hi > 1.99 && hi <= 2.0 + 1e-12 && lo < -1.99);
	arena_destroy(ar);
}

/* PULSE and PWL steady state: mean and extremes. PULSE(0 5 0 1u 1u 4u 10u):
 * mean = 5 (4u + 1u)/10u = 2.5 V; PWL repeating 0->10 V ramp over 1 ms:
 * mean 5 V. */
static void test_signals(void **state)
{
	(void)state;
	struct hr_alloc h = hr_alloc_default();
	struct arena *ar = arena_create(&h);
	struct sig p = pulse(ar, 0, 5, 1e-6, 4e-6, 10e-6);
	assert_true(fabs(p.mean - 2.5) < 1e-12);
	assert_true(fabs(p.ac_max - 2.5) < 1e-12 && fabs(p.ac_min + 2.5) < 1e-12);
	double args[4] = {0, 0, 1e-3, 10};
	struct nl_source src;
	memset(&src, 0, sizeof src);
	src.wave = NL_WAVE_PWL;
	src.nargs = 4;
	src.args = args;
	src.pwl_repeat = 0;
	struct sig w;
	assert_true(sig_from_source(&src, ar, &w));
	assert_int_equal(w.kind, SIG_PWL);
	assert_true(fabs(w.mean - 5) < 1e-12 && fabs(w.period - 1e-3) < 1e-15);
	src.pwl_repeat = -1;
	assert_true(sig_from_source(&src, ar, &w));
	assert_int_equal(w.kind, SIG_DC);
	assert_true(w.mean == 10 && w.note != NULL);
	/* rise + width + fall longer than the period: SPICE takes time modulo
	 * the period, so PULSE(0 5 1u 1u 1u 1 1) is high nearly all the time
	 * (found by --verify on a third-party netlist, where this was once
	 * read as a single pulse settling at 0 V) */
	double over[7] = {0, 5, 1e-6, 1e-6, 1e-6, 1, 1};
	memset(&src, 0, sizeof src);
	src.wave = NL_WAVE_PULSE;
	src.nargs = 7;
	src.args = over;
	assert_true(sig_from_source(&src, ar, &w));
	assert_int_equal(w.kind, SIG_PULSE);
	assert_true(fabs(w.period - 1) < 1e-12);
	assert_true(fabs(w.mean + w.ac_max - 5) < 1e-9);  /* reaches 5 V */
	assert_true(fabs(w.mean - 5) < 1e-5);            /* and stays there */
	arena_destroy(ar);
}

/* x's DC part at one value of the symbols e[] (e[j] for source j). */
static void dc_at(const struct form *x, const double *e, double *lo, double *hi)
{
	double s = 0;
	for (uint32_t i = 0; i < x->n; i++)
		if (x->t[i].src & FORM_DC)
			s += x->t[i].c * e[x->t[i].src & ~FORM_DC];
	*lo = x->lo + s;
	*hi = x->hi + s;
}

/* DC symbols: a rail 12 V +- 0.6 V appears in two nodes; their difference
 * carries no offset (it was 1.2 V wide as intervals), a symbol never varies
 * in time, and the join of two DC parts encloses max, min and hull at every
 * corner of the symbols (3 symbols, every vertex and the centre; affine
 * functions take their extremes at vertices), and is exact for equal
 * symbols. */
static void test_dc_symbols(void **state)
{
	(void)state;
	struct hr_alloc h = hr_alloc_default();
	struct arena *ar = arena_create(&h);
	struct sig sigs[3] = {sine(1, 50, 0), sine(2, 50, 0), sine(3, 50, 0)};
	struct form_ctx fc = {sigs, 3, ar};
	struct form *rail = form_offset(ar, 12, 0, 0.6);
	struct form *node = form_lin(ar, 1, rail, 1, form_source(&fc, ar, 1, 1));
	double lo, hi;
	int exact;
	form_range(&fc, form_lin(ar, 1, node, -1, rail), &lo, &hi, &exact);
	assert_true(fabs(lo + 2) < 1e-12 && fabs(hi - 2) < 1e-12);
	assert_true(form_is_dc(rail) && !form_is_dc(node));
	form_range(&fc, node, &lo, &hi, &exact);
	assert_true(fabs(lo - 9.4) < 1e-12 && fabs(hi - 14.6) < 1e-12);
	form_dc_range_diff(node, rail, &lo, &hi);
	assert_true(fabs(lo) < 1e-12 && fabs(hi) < 1e-12);
	struct form *x = form_lin(ar, 1, form_offset(ar, 1, 0, 0.5), 2, form_offset(ar, 0, 1, 1));
	struct form *y = form_lin(ar, -1, form_offset(ar, 2, 1, 0.3), 1, form_offset(ar, 0, 2, 2));
	for (int how = 0; how < FORM_JOIN_COUNT; how++) {
		const struct form *j = form_dc_join(ar, (enum form_join)how, x, y);
		assert_non_null(j);
		assert_true(form_is_dc(j));
		for (int v = 0; v < 28; v++) {
			double e[3] = {v == 27 ? 0 : v % 3 - 1, v == 27 ? 0 : v / 3 % 3 - 1,
				       v == 27 ? 0 : v / 9 - 1};
			double xl, xh, yl, yh, jl, jh;
			dc_at(x, e, &xl, &xh);
			dc_at(y, e, &yl, &yh);
			dc_at(j, e, &jl, &jh);
			double want_lo = how == FORM_MAX ? fmax(xl, yl) : fmin(xl, yl);
			double want_hi = how == FORM_MIN ? fmin(xh, yh) : fmax(xh, yh);
			if (jl > want_lo + 1e-12 || jh < want_hi - 1e-12)
				fail_msg("join %d at vertex %d: [%g, %g] misses [%g, %g]", how, v,
					 jl, jh, want_lo, want_hi);
		}
	}
	const struct form *m = form_dc_join(ar, FORM_MAX, x, form_lin(ar, 1, x, 1, form_const(ar, 3, 3)));
	dc_at(m, (double[3]){0, 0, 0}, &lo, &hi);
	assert_true(fabs(lo - 4) < 1e-12 && fabs(hi - 4) < 1e-12);
	arena_destroy(ar);
}

int main(void)
{
	const struct CMUnitTest tests[] = {
		cmocka_unit_test(test_cases),
		cmocka_unit_test(test_phasor_value),
		cmocka_unit_test(test_incommensurate),
		cmocka_unit_test(test_signals),
		cmocka_unit_test(test_dc_symbols),
	};
	return cmocka_run_group_tests(tests, NULL, NULL);
}
