/* sig.c: steady state of SPICE independent sources. Waveform definitions
 * follow the ngspice manual's independent-source section (from memory):
 * SIN(VO VA FREQ TD THETA PHASE) = VO + VA e^{-THETA (t-TD)}
 * sin(2 pi FREQ (t-TD) + PHASE), PULSE(V1 V2 TD TR TF PW PER), PWL pairs with
 * r= (repeat from that time) and td=, SFFM(VO VA FC MDI FS). */
#include "sig.h"

#include <math.h>
#include <string.h>

#define SIG_PI 3.14159265358979323846

static const char *const kind_names[] = {"dc", "sin", "pulse", "pwl", "sffm", "am"};
_Static_assert(sizeof kind_names / sizeof kind_names[0] == SIG_COUNT, "one name per kind");

const char *sig_kind_name(enum sig_kind k)
{
	return kind_names[k];
}

static double arg(const struct nl_source *s, uint32_t i, double dflt)
{
	return i < s->nargs ? s->args[i] : dflt;
}

static void set_dc(struct sig *o, double v, const char *note)
{
	memset(o, 0, sizeof *o);
	o->kind = SIG_DC;
	o->mean = v;
	o->note = note;
}

static void from_sin(const struct nl_source *s, struct sig *o)
{
	double vo = arg(s, 0, 0), va = arg(s, 1, 0), f = arg(s, 2, 0);
	double td = arg(s, 3, 0), theta = arg(s, 4, 0), ph = arg(s, 5, 0);
	if (f <= 0 || va == 0) {
		set_dc(o, vo, f <= 0 ? "sin without a frequency: its offset is used" : NULL);
		return;
	}
	memset(o, 0, sizeof *o);
	o->kind = SIG_SIN;
	o->mean = vo;
	o->amp = fabs(va);
	o->w = 2 * SIG_PI * f;
	/* the delay only shifts the phase in steady state */
	o->phase = ph * SIG_PI / 180 - o->w * td + (va < 0 ? SIG_PI : 0);
	o->period = 1 / f;
	o->ac_min = -o->amp;
	o->ac_max = o->amp;
	if (theta != 0)
		o->note = "damping ignored: the amplitude is taken as written (its worst case)";
}

/* Stores one period of breakpoints (t[0] = 0 ... t[n-1] = period, linear
 * between) with its mean removed; t0 delays the whole waveform. */
static int set_points(struct sig *o, struct arena *ar, const double *t,
		      const double *v, size_t n, double t0)
{
	double *tt = arena_alloc(ar, n * sizeof *tt);
	double *vv = arena_alloc(ar, n * sizeof *vv);
	if (!tt || !vv)
		return 0;
	double period = t[n - 1], mean = 0;
	for (size_t i = 1; i < n; i++)
		mean += (v[i] + v[i - 1]) / 2 * (t[i] - t[i - 1]);
	mean /= period;
	o->mean = mean;
	o->ac_min = o->ac_max = v[0] - mean;
	for (size_t i = 0; i < n; i++) {
		tt[i] = t[i];
		vv[i] = v[i] - mean;
		o->ac_min = fmin(o->ac_min, vv[i]);
		o->ac_max = fmax(o->ac_max, vv[i]);
	}
	o->t = tt;
	o->v = vv;
	o->npts = n;
	o->period = period;
	o->t0 = t0;
	return 1;
}

static int from_pulse(const struct nl_source *s, struct arena *ar,
		      struct sig *o)
{
	double v1 = arg(s, 0, 0), v2 = arg(s, 1, 0), td = arg(s, 2, 0);
	double tr = arg(s, 3, 0), tf = arg(s, 4, 0), per = arg(s, 6, 0);
	double pw = arg(s, 5, per > 0 ? per / 2 : 0);
	if (per <= 0) {
		set_dc(o, v1, "single pulse: it settles to its initial value");
		return 1;
	}
	memset(o, 0, sizeof *o);
	o->kind = SIG_PULSE;
	double t[5] = {0, tr, tr + pw, tr + pw + tf, per};
	double v[5] = {v1, v2, v2, v1, v1};
	if (tr + pw + tf <= per * (1 + 1e-12))
		return set_points(o, ar, t, v, 5, td);
	/* rise, width and fall overrun the period: as SPICE does (time taken
	 * modulo the period), the shape is cut at the period and the next one
	 * starts again from v1 */
	size_t n = 1;
	for (size_t i = 1; i < 4 && t[i] < per; i++, n++)
		;
	double u = per, at_per = u < tr ? v1 + (v2 - v1) * u / tr
			   : u < tr + pw ? v2 : v2 + (v1 - v2) * (u - tr - pw) / tf;
	t[n] = per;
	v[n] = at_per;
	return set_points(o, ar, t, v, n + 1, td);
}

/* The PWL of a card at time t (before the first point: its first value). */
static double pwl_value(const struct nl_source *s, double t)
{
	size_t n = s->nargs / 2;
	if (t <= s->args[0])
		return s->args[1];
	for (size_t i = 1; i < n; i++) {
		double t1 = s->args[2 * i], t0 = s->args[2 * i - 2];
		if (t <= t1) {
			double v0 = s->args[2 * i - 1], v1 = s->args[2 * i + 1];
			return t1 > t0 ? v0 + (v1 - v0) * (t - t0) / (t1 - t0) : v1;
		}
	}
	return s->args[2 * n - 1];
}

static int from_pwl(const struct nl_source *s, struct arena *ar,
		    struct sig *o)
{
	size_t n = s->nargs / 2;
	double last = s->args[2 * (n - 1) + 1];
	double rep = s->pwl_repeat, tlast = s->args[2 * (n - 1)];
	if (rep < 0 || tlast - rep <= 0) {
		set_dc(o, last, rep < 0 ? "pwl without repeat: it settles to its last value" : "pwl repeat time is not before its last point: its last value is used");
		return 1;
	}
	memset(o, 0, sizeof *o);
	o->kind = SIG_PWL;
	double *t = arena_alloc(ar, (n + 1) * sizeof *t);
	double *v = arena_alloc(ar, (n + 1) * sizeof *v);
	if (!t || !v)
		return 0;
	/* one period runs from the repeat time to the last point */
	size_t k = 1;
	t[0] = 0;
	v[0] = pwl_value(s, rep);
	for (size_t i = 0; i < n; i++)
		if (s->args[2 * i] > rep) {
			t[k] = s->args[2 * i] - rep;
			v[k++] = s->args[2 * i + 1];
		}
	return set_points(o, ar, t, v, k, s->pwl_delay + rep);
}

static void from_sffm(const struct nl_source *s, struct sig *o)
{
	double vo = arg(s, 0, 0), va = arg(s, 1, 0), fc = arg(s, 2, 0);
	double mdi = arg(s, 3, 0), fs = arg(s, 4, 0);
	if (fc <= 0 || va == 0) {
		set_dc(o, vo, fc <= 0 ? "sffm without a carrier frequency: its offset is used" : NULL);
		return;
	}
	memset(o, 0, sizeof *o);
	o->kind = SIG_SFFM;
	o->mean = vo;
	o->amp = fabs(va);
	o->wc = 2 * SIG_PI * fc;
	o->mdi = mdi;
	o->ws = 2 * SIG_PI * fs;
	o->ac_min = -o->amp;
	o->ac_max = o->amp;
	o->period = fs > 0 ? 1 / fs : 1 / fc;
	if (fs > 0 && fabs(fc / fs - nearbyint(fc / fs)) > 1e-9)
		o->note = "sffm carrier is not a multiple of the signal frequency: extremes are sampled";
}

/* AM(VA VO MF FC TD PHASE): amp (VO + sin(2 pi MF u + ph)) sin(2 pi FC u
 * + ph), u = t - TD. ngspice takes its seventh value as the phase of both
 * sines (the sixth is not used): checked by simulating the source in
 * ngspice, which is what decks written for it expect. Extremes are sampled
 * at 64 points per carrier cycle and widened by the largest error that
 * spacing allows (1 - cos(pi/64) of the peak), so they bound the wave. */
static void from_am(const struct nl_source *s, struct sig *o)
{
	double va = arg(s, 0, 0), vo = arg(s, 1, 0), mf = arg(s, 2, 0), fc = arg(s, 3, 0);
	double td = arg(s, 4, 0), ph = arg(s, 6, 0) * SIG_PI / 180;
	if (mf <= 0 || fc <= 0 || va == 0) {
		set_dc(o, 0, mf <= 0 || fc <= 0 ? "am without its frequencies: taken as 0 V" : NULL);
		return;
	}
	memset(o, 0, sizeof *o);
	o->kind = SIG_AM;
	o->amp = va;
	o->am_vo = vo;
	o->wc = 2 * SIG_PI * fc;
	o->ws = 2 * SIG_PI * mf;
	o->phase = ph;
	o->t0 = td;
	o->period = 1 / mf;
	if (fabs(fc / mf - nearbyint(fc / mf)) > 1e-9)
		o->note = "am carrier is not a multiple of the modulation frequency: extremes are sampled";
	double n = fmin(fmax(64 * fc / mf, 256), 1 << 20), lo = 0, hi = 0;
	for (double k = 0; k < n; k++) {
		double v = sig_ac(o, k / n * o->period);
		lo = fmin(lo, v);
		hi = fmax(hi, v);
	}
	double slack = fabs(va) * (fabs(vo) + 1) * (1 - cos(SIG_PI / 64));
	o->ac_min = lo - slack;
	o->ac_max = hi + slack;
}

int sig_from_source(const struct nl_source *src, struct arena *ar,
		    struct sig *out)
{
	switch (src->wave) {
	case NL_WAVE_SIN:
		from_sin(src, out);
		return 1;
	case NL_WAVE_PULSE:
		return from_pulse(src, ar, out);
	case NL_WAVE_PWL:
		return from_pwl(src, ar, out);
	case NL_WAVE_EXP:
		set_dc(out, src->nargs ? src->args[0] : src->dc,
		       "exp settles to its initial value");
		return 1;
	case NL_WAVE_SFFM:
		from_sffm(src, out);
		return 1;
	case NL_WAVE_AM:
		from_am(src, out);
		return 1;
	default:
		set_dc(out, src->dc, NULL);
		return 1;
	}
}

static double pwl_at(const struct sig *s, double t)
{
	t = fmod(t - s->t0, s->period);
	if (t < 0)
		t += s->period;
	size_t lo = 0, hi = s->npts - 1;
	while (hi - lo > 1) {
		size_t mid = (lo + hi) / 2;
		if (s->t[mid] <= t)
			lo = mid;
		else
			hi = mid;
	}
	double dt = s->t[hi] - s->t[lo];
	if (dt <= 0)
		return s->v[hi];
	return s->v[lo] + (s->v[hi] - s->v[lo]) * (t - s->t[lo]) / dt;
}

double sig_ac(const struct sig *s, double t)
{
	switch (s->kind) {
	case SIG_SIN:
		return s->amp * sin(s->w * t + s->phase);
	case SIG_PULSE:
	case SIG_PWL:
		return pwl_at(s, t);
	case SIG_SFFM:
		return s->amp * sin(s->wc * t + s->mdi * sin(s->ws * t));
	case SIG_AM: {
		double u = t - s->t0;
		return s->amp * (s->am_vo + sin(s->ws * u + s->phase)) * sin(s->wc * u + s->phase);
	}
	default:
		return 0;
	}
}
