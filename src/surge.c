/* surge.c: the power-up surge simulated (surge.h). It runs the solver
 * from the zero state at the high corner and reads the diodes' currents;
 * what a pulse is and how it is judged are simrun.h's and stress.h's. It
 * leaves the analytic bound (stress.c) in place where it cannot run. */
#include "surge.h"

#include <math.h>
#include <stdio.h>
#include <string.h>

#include "num.h"
#include "simrun.h"
#include "simsrc.h"

struct sv {
	const struct audit *a;
	const struct profile *p;
	struct arena *ar;
	struct stress_result *sr;
	struct stress_surge *out;
	uint32_t *parts; /* the surge stresses' diodes */
	size_t n;
	struct simrun_pulse *best, *run;
	double *phase; /* per diode: the instant of its best */
	struct simrun_opts o;
	unsigned long work, total, per_run, size;
};

/* The longest repetition period of the sources (0: none repeats). */
static double longest_period(const struct nl_circuit *c)
{
	const struct simsrc_span span = {0, 0};
	double per = 0;
	for (size_t i = 0; i < nl_part_count(c); i++) {
		const struct nl_part *pt = nl_part_at(c, i);
		const struct nl_source *s = pt->ext ? pt->ext->src : NULL;
		if ((pt->kind == NL_V || pt->kind == NL_I) && s)
			per = fmax(per, simsrc_period(s, &span));
	}
	return per;
}

/* The switch-on instant is free when every source that varies is a plain
 * SIN (no delay, no damping): it then stands for a supply that has run
 * for ever, closed onto the circuit at any moment of its cycle. A PULSE,
 * PWL, EXP or delayed SIN describes a start of its own, which is kept. */
static int instant_free(const struct nl_circuit *c)
{
	for (size_t i = 0; i < nl_part_count(c); i++) {
		const struct nl_part *pt = nl_part_at(c, i);
		const struct nl_source *s = pt->ext ? pt->ext->src : NULL;
		if ((pt->kind != NL_V && pt->kind != NL_I) || !s || s->wave == NL_WAVE_NONE)
			continue;
		int plain = s->wave == NL_WAVE_SIN && !s->unknown &&
			    !(s->nargs > 3 && s->args[3] != 0) && !(s->nargs > 4 && s->args[4] != 0);
		if (!plain)
			return 0;
	}
	return 1;
}

/* The high corner, as the analysis's: every amplitude and offset at +tol,
 * a ranged source at its top. */
static int high_corner(struct sv *x)
{
	const struct nl_circuit *c = x->a->er.circuit;
	size_t np = nl_part_count(c);
	double *k = arena_alloc(x->ar, (np + 1) * sizeof *k);
	double *set = arena_alloc(x->ar, (np + 1) * sizeof *set);
	if (!k || !set)
		return 0;
	for (size_t i = 0; i < np; i++) {
		const struct nl_part *pt = nl_part_at(c, i);
		int src = pt->kind == NL_V || pt->kind == NL_I;
		k[i] = 1 + (src ? stress_tolerance(x->a, x->p, (uint32_t)i) : 0);
		set[i] = pt->kind == NL_V && isfinite(x->a->sources[i].max) ? x->a->sources[i].max : NAN;
	}
	x->o.ac_scale = x->o.dc_scale = k;
	x->o.dc_set = set;
	return 1;
}

/* The surge stresses' diodes, once each. */
static int diodes(struct sv *x)
{
	x->parts = arena_alloc(x->ar, (x->sr->n + 1) * sizeof *x->parts);
	if (!x->parts)
		return 0;
	for (size_t i = 0; i < x->sr->n; i++) {
		const struct stress *s = &x->sr->s[i];
		size_t k = 0;
		while (k < x->n && x->parts[k] != s->part)
			k++;
		if (s->qty == SQ_SURGE && k == x->n)
			x->parts[x->n++] = s->part;
	}
	size_t m = x->n + 1;
	x->best = arena_zalloc(x->ar, m * sizeof *x->best);
	x->run = arena_zalloc(x->ar, m * sizeof *x->run);
	x->phase = arena_alloc(x->ar, m * sizeof *x->phase);
	return x->best && x->run && x->phase;
}

/* One switch-on instant; each diode keeps the pulse with the largest I^2
 * t over the instants. Returns 0 when the run failed (why in x->out). */
static int one_run(struct sv *x, double shift, double phase_deg)
{
	const struct nl_circuit *c = x->a->er.circuit;
	struct hr_alloc h = *arena_hook(x->ar);
	struct simrun_result r;
	unsigned long left = (x->total - x->work) / x->size;
	x->o.t_shift = shift;
	x->o.max_work = left < x->per_run ? (left ? left : 1) : x->per_run;
	simrun_surge(c, &x->o, x->out->span, x->parts, x->n, &h, x->run, &r);
	x->out->runs++;
	if (r.stats.unknowns)
		x->size = r.stats.unknowns;
	x->work += r.stats.newton * x->size;
	if (r.status != SIM_OK) {
		x->out->why = sim_status_text(r.status);
		return 0;
	}
	x->out->instants++;
	for (size_t k = 0; k < x->n; k++)
		if (x->out->instants == 1 || x->run[k].i2t > x->best[k].i2t ||
		    !isfinite(x->run[k].i2t)) {
			x->best[k] = x->run[k];
			x->phase[k] = phase_deg;
		}
	return 1;
}

static const char *corner_text(struct sv *x, double phase)
{
	char buf[400], per[24];
	num_format_eng(x->out->period, "s", per, sizeof per);
	if (isnan(phase))
		snprintf(buf, sizeof buf, "simulated power-up from the zero state, every source at "
					  "its high end, switched on as written (the sources fix their start)");
	else
		snprintf(buf, sizeof buf, "simulated power-up from the zero state, every source at "
					  "its high end, switched on at %.0f deg of the %s period (the worst of %u "
					  "instants %.0f deg apart)",
			 phase, per, x->out->instants, 360.0 / SURGE_INSTANTS);
	return arena_strdup(x->ar, buf);
}

/* Writes each diode's pulse into its surge stresses. */
static int fill(struct sv *x, int swept)
{
	for (size_t i = 0; i < x->sr->n; i++) {
		struct stress *s = &x->sr->s[i];
		size_t k = 0;
		while (s->qty == SQ_SURGE && k < x->n && x->parts[k] != s->part)
			k++;
		if (s->qty != SQ_SURGE || k == x->n || !isfinite(x->best[k].i2t))
			continue;
		const struct simrun_pulse *b = &x->best[k];
		s->bounded = 1;
		s->basis = SB_SIMULATED;
		s->worst = s->best = b->peak_a;
		s->surge_i2t = b->i2t;
		s->surge_width = b->peak_a > 0 ? 2 * b->i2t / (b->peak_a * b->peak_a) : 0;
		s->surge_phase = swept ? x->phase[k] : NAN;
		if (!(s->corner = corner_text(x, s->surge_phase)))
			return 0;
	}
	return 1;
}

/* Sets x->out->why when the circuit cannot be simulated here. Returns 0
 * on out-of-memory. */
static int cannot(struct sv *x)
{
	const struct nl_circuit *c = x->a->er.circuit;
	size_t count;
	struct sim_refusal first;
	if (!simrun_unsupported(c, x->ar, &count, &first))
		return 0;
	if (count) {
		char buf[400];
		snprintf(buf, sizeof buf, "%s has no model in the solver (%s)",
			 nl_part_at(c, first.part)->path, first.why);
		return (x->out->why = arena_strdup(x->ar, buf)) != NULL;
	}
	if (!(x->out->period > 0))
		x->out->why = "no source repeats: the time to run after switch-on is not known";
	return 1;
}

int surge_run(const struct audit *a, const struct profile *p, const struct simbound_limits *lim,
	      struct arena *ar, struct stress_result *sr)
{
	struct sv x;
	memset(&x, 0, sizeof x);
	x.a = a, x.p = p, x.ar = ar, x.sr = sr;
	if (!(x.out = arena_zalloc(ar, sizeof *x.out)) || !diodes(&x))
		return 0;
	if (x.n == 0)
		return 1;
	sr->surge = x.out;
	const struct nl_circuit *c = a->er.circuit;
	x.out->period = longest_period(c);
	x.out->span = SURGE_PERIODS * x.out->period;
	if (!cannot(&x))
		return 0;
	if (x.out->why)
		return 1;
	if (!high_corner(&x))
		return 0;
	x.total = lim && lim->total_work ? lim->total_work : SURGE_WORK;
	x.per_run = lim && lim->max_work ? lim->max_work : 5000000;
	x.size = nl_node_count(c) + 1;
	int swept = instant_free(c);
	unsigned m = swept ? SURGE_INSTANTS : 1;
	for (unsigned k = 0; k < m; k++) {
		if (x.work >= x.total) {
			x.out->why = "the switch-on runs need more work than allowed for one file";
			break;
		}
		if (!one_run(&x, x.out->period * k / m, 360.0 * k / m))
			break;
	}
	/* every instant or none: a sweep cut short is no worst case */
	if (x.out->instants < m)
		return 1;
	x.out->simulated = 1;
	return fill(&x, swept);
}
