/* current.c: see current.h. Each number is the solver's: the mean, rms
 * and largest of a part's current over one steady-state period and the
 * mean of v i (simrun.h, integrals over the accepted points). Then the
 * four rules on them (docs/rules/diode-avg-current.md,
 * diode-peak-current.md, cap-ripple-current.md, zener-power.md). The
 * voltages are stress.c's and simbound.c's, every other verdict rules.c's. */
#include "current.h"

#include <math.h>
#include <stdarg.h>
#include <stdio.h>
#include <string.h>

#include "life.h"
#include "num.h"

struct build {
	const struct audit *a;
	const struct rating *r;
	double ambient_c;
	const struct stress_result *sr;
	struct stress *out;
	size_t n;
};

/* Why part has no simulated current, or NULL when it has one. */
static const char *missing_why(const struct stress_result *sr, uint32_t part)
{
	const struct stress_fallback *fb = sr->fallback;
	uint32_t is = sr->island ? sr->island[part] : NL_NONE;
	if (!fb)
		return "the circuit was not simulated";
	if (fb->flow_blocked && is != NL_NONE && fb->flow_blocked[is])
		return fb->flow_blocked_why ? fb->flow_blocked_why
					    : "a part of its island has no model in the solver";
	if (!fb->flow)
		return fb->flow_why ? fb->flow_why : "the circuit was not simulated";
	if (!isfinite(fb->flow[part].rms))
		return "the solver has no current for this part";
	return NULL;
}

static double value_of(const struct stress_flow *f, enum stress_qty q)
{
	switch (q) {
	case SQ_AVG_CURRENT: return f->avg;
	case SQ_PEAK_CURRENT: return fmax(f->peak, 0);
	case SQ_POWER: return f->power;
	default: return f->rms; /* the rms and the ripple current */
	}
}

/* Turns a life stress, which add() gave the part's ripple current, into
 * the estimate in hours (life.h) at the run's ambient. */
static void life_fill(const struct build *b, struct stress *s)
{
	const struct rating *r = &b->r[s->part];
	struct life_in in = {r->life_h.value, r->life_temp.value, b->ambient_c, s->worst,
			     r->esr.value, r->rth_ca.value};
	struct life_out o;
	s->life_ambient_c = b->ambient_c;
	if (!life_estimate(&in, &o)) {
		s->bounded = 0;
		s->basis = SB_NONE;
		s->best = s->worst = NAN;
		s->unproven = isnan(r->life_temp.value) ? "life_h is given without its temperature (life_temp)"
							: "the ripple current or the ambient is not a number";
		return;
	}
	s->worst = s->best = o.hours;
	s->life_core_c = o.core_c;
	s->life_rise_c = o.rise_c;
	s->life_hotter_h = o.hotter_h;
	s->life_flags = (o.heating_known ? LIFE_HEATED : 0u) | (o.capped ? LIFE_CAPPED : 0u) |
			(o.over_rated ? LIFE_OVER_RATED : 0u);
	if (!o.heating_known) {
		s->basis = SB_ESTIMATE;
		s->unproven = "self-heating not included (esr and rth_ca not both given): the real life "
			      "is shorter";
	} else {
		s->unproven = "from the solver's ripple current (docs/life.md)";
	}
}

/* Appends stress q of part, placed like base (its voltage stress; NULL
 * for a resistor, which belongs to no structure). */
static void add(struct build *b, const struct stress *base, uint32_t part, enum stress_qty q)
{
	const char *why = missing_why(b->sr, part);
	const struct stress_fallback *fb = b->sr->fallback;
	/* a file with no currents at all says why once (its fallback, the
	   reports' currents line); only a rated quantity is listed without
	   its number, for the stress-unsettled warning */
	double rated = q == SQ_LIFE ? b->r[part].life_h.value : stress_rating(&b->r[part], q)->value;
	if (why && !(fb && fb->flow) && isnan(rated))
		return;
	if (!b->out) { /* counting */
		b->n++;
		return;
	}
	struct stress *s = &b->out[b->n++];
	memset(s, 0, sizeof *s);
	s->part = part;
	s->structure = base ? base->structure : -1;
	s->role = base ? base->role : "";
	s->role_kind = base ? base->role_kind : TR_COUNT;
	s->qty = q;
	s->rev_min = s->analytic = s->sim_worst = s->sim_powerup = NAN;
	s->energy_j = s->series_r = s->discharge_s = NAN;
	s->surge_i2t = s->surge_width = s->surge_phase = NAN;
	s->discharge_r = INFINITY;
	s->stack = -1;
	if (why) {
		s->basis = SB_NONE;
		s->best = s->worst = NAN;
		s->unproven = why;
		return;
	}
	s->bounded = 1;
	s->basis = SB_SIMULATED;
	/* m= parallel copies share the current and the power: each is rated */
	const struct nl_part *pt = nl_part_at(b->a->er.circuit, part);
	double m = pt->ext && isfinite(pt->ext->mult) && pt->ext->mult > 0 ? pt->ext->mult : 1;
	s->worst = s->best = value_of(&fb->flow[part], q) / m;
	s->corner = fb->flow_corner;
	s->unproven = "currents come from the solver only: the analysis bounds voltages";
	if (q == SQ_LIFE)
		life_fill(b, s);
}

/* The stresses of part after its last voltage or surge stress; base is
 * its voltage stress. */
static void part_flows(struct build *b, const struct stress *base)
{
	const struct nl_part *p = nl_part_at(b->a->er.circuit, base->part);
	if (p->kind == NL_C) {
		add(b, base, base->part, SQ_RIPPLE_CURRENT);
		if (!isnan(b->r[base->part].life_h.value))
			add(b, base, base->part, SQ_LIFE);
		return;
	}
	add(b, base, base->part, SQ_AVG_CURRENT);
	add(b, base, base->part, SQ_PEAK_CURRENT);
	add(b, base, base->part, SQ_RMS_CURRENT);
	if (base->qty == SQ_REVERSE && base->bounded &&
	    rating_breakdown(p, &b->r[base->part], base->worst))
		add(b, base, base->part, SQ_POWER);
}

/* Islands that hold a stressed diode and a stressed capacitor: the
 * diode-capacitor networks whose resistors get a power stress. */
static unsigned char *networks(const struct build *b, struct arena *ar)
{
	const struct nl_circuit *c = b->a->er.circuit;
	const struct stress_result *sr = b->sr;
	unsigned char *m = arena_zalloc(ar, nl_node_count(c) + 1);
	for (size_t i = 0; m && sr->island && i < sr->n; i++) {
		uint32_t is = sr->island[sr->s[i].part];
		if (is != NL_NONE)
			m[is] |= nl_part_at(c, sr->s[i].part)->kind == NL_D ? 1 : 2;
	}
	return m;
}

/* One pass over the stresses: counts what it would write (b->out NULL),
 * or writes the old stresses and the new ones in their places. */
static void build_pass(struct build *b, const size_t *last, const unsigned char *net)
{
	const struct nl_circuit *c = b->a->er.circuit;
	const struct stress_result *sr = b->sr;
	for (size_t i = 0; i < sr->n; i++) {
		const struct stress *s = &sr->s[i];
		if (b->out)
			b->out[b->n] = *s;
		b->n++;
		const struct stress *base = s;
		while (base > sr->s && base[-1].part == s->part)
			base--; /* the part's first stress: its voltage */
		if (last[s->part] == i && stress_qty_is_voltage(base->qty))
			part_flows(b, base);
	}
	for (uint32_t i = 0; sr->island && i < nl_part_count(c); i++)
		if (nl_part_at(c, i)->kind == NL_R && sr->island[i] != NL_NONE &&
		    net[sr->island[i]] == 3)
			add(b, NULL, i, SQ_POWER);
}

int current_run(const struct audit *a, const struct rating *r, double ambient_c, struct arena *ar,
		struct stress_result *sr)
{
	size_t np = nl_part_count(a->er.circuit);
	if (sr->n == 0)
		return 1;
	struct build b = {a, r, ambient_c, sr, NULL, 0};
	size_t *last = arena_alloc(ar, (np + 1) * sizeof *last);
	unsigned char *net = networks(&b, ar);
	if (!last || !net)
		return 0;
	for (size_t i = 0; i < sr->n; i++)
		last[sr->s[i].part] = i;
	build_pass(&b, last, net);
	if (b.n == sr->n)
		return 1; /* nothing to add */
	b.out = arena_alloc(ar, b.n * sizeof *b.out);
	if (!b.out)
		return 0;
	b.n = 0;
	build_pass(&b, last, net);
	sr->s = b.out;
	sr->n = b.n;
	return 1;
}

/* ---- the rules ---- */

struct judge {
	const struct audit *a;
	const struct rating *r;
	const struct profile *p;
	const struct stress_result *sr;
	struct arena *ar;
	struct rules_result *out;
	int oom;
};

static const char *fmt(struct judge *j, const char *f, ...) DIAG_PRINTF(2, 3);

static const char *fmt(struct judge *j, const char *f, ...)
{
	char buf[1024];
	va_list ap;
	va_start(ap, f);
	vsnprintf(buf, sizeof buf, f, ap);
	va_end(ap);
	const char *c = arena_strdup(j->ar, buf);
	if (!c)
		j->oom = 1;
	return c ? c : "";
}

static const char *eng(struct judge *j, double val, const char *unit)
{
	char b[40];
	num_format_eng(val, unit, b, sizeof b);
	return fmt(j, "%s", b);
}

static struct finding *finding(struct judge *j, enum rule_id id, const struct stress *s)
{
	struct finding *f = rules_add(j->out, j->ar, id);
	if (!f) {
		j->oom = 1;
		return NULL;
	}
	const struct nl_part *pt = nl_part_at(j->a->er.circuit, s->part);
	f->part = s->part;
	f->structure = s->structure;
	f->loc = nl_part_loc(pt);
	f->subject = pt->path;
	f->unit = stress_qty_unit(s->qty);
	return f;
}

/* What each judged quantity is called in a sentence, its rule and the
 * rating's column [stress-qty]. */
static const struct {
	const char *what, *column;
	enum rule_id rule;
} judged[SQ_COUNT] = {
	[SQ_AVG_CURRENT] = {"mean forward current", "i_avg", RULE_DIODE_AVG_CURRENT},
	[SQ_PEAK_CURRENT] = {"repetitive peak forward current", "i_peak", RULE_DIODE_PEAK_CURRENT},
	[SQ_RIPPLE_CURRENT] = {"ripple current (rms)", "i_ripple", RULE_CAP_RIPPLE_CURRENT},
	[SQ_POWER] = {"mean power", "p_rated", RULE_ZENER_POWER},
};

/* "high-side diode in S1 (doubler-full-wave)" */
static const char *place(struct judge *j, const struct stress *s)
{
	if (s->structure < 0)
		return "outside any structure";
	return fmt(j, "%s in S%d (%s)", s->role, s->structure + 1,
		   topo_kind_name(j->a->topo.s[s->structure].kind));
}

static const char *how(struct judge *j, const struct stress *s)
{
	static const char *const formula[SQ_COUNT] = {
		[SQ_AVG_CURRENT] = "mean of i(anode to cathode)",
		[SQ_PEAK_CURRENT] = "largest i(anode to cathode)",
		[SQ_RIPPLE_CURRENT] = "rms of i through it",
		[SQ_POWER] = "mean of v(anode) - v(cathode) times i(anode to cathode)",
	};
	const struct stress_fallback *fb = j->sr->fallback;
	return fmt(j, "%s: %s over one steady-state period of %s = %s (%s); the solver's number, "
		      "not proven",
		   place(j, s), formula[s->qty], eng(j, fb ? fb->flow_period : NAN, "s"),
		   eng(j, s->worst, stress_qty_unit(s->qty)), s->corner ? s->corner : "?");
}

/* A ripple rating's conditions, and that the number is not scaled to
 * the ripple's own frequency (no general multiplier: each series has
 * its own, docs/sources.md §12). */
static const char *ripple_terms(struct judge *j, const struct rating *r)
{
	const struct stress_fallback *fb = j->sr->fallback;
	const char *at = isnan(r->ripple_freq.value) ? "at a frequency not given (ripple_freq)"
						     : fmt(j, "at %s", eng(j, r->ripple_freq.value, "Hz"));
	const char *temp = isnan(r->ripple_temp.value) ? "a temperature not given (ripple_temp)"
						       : fmt(j, "%g C", r->ripple_temp.value);
	return fmt(j, "; rated %s and %s; not scaled to the ripple's frequency (its waveform "
		      "repeats at %s): frequency multipliers belong to each capacitor series",
		   at, temp, eng(j, fb && fb->flow_period > 0 ? 1 / fb->flow_period : NAN, "Hz"));
}

static const char *fix_of(struct judge *j, const struct stress *s, double need)
{
	const char *u = stress_qty_unit(s->qty);
	switch (s->qty) {
	case SQ_RIPPLE_CURRENT:
		return fmt(j, "use a capacitor rated for at least %s ripple at the ripple's frequency and "
			      "your temperature, or parallel parts, or lower the ripple (a larger "
			      "capacitance, a series resistance or inductance ahead of it)",
			   eng(j, need, u));
	case SQ_POWER:
		return fmt(j, "use a zener rated for at least %s, or raise the series resistance that "
			      "feeds it so that less current flows in breakdown",
			   eng(j, need, u));
	case SQ_PEAK_CURRENT:
		return fmt(j, "use a diode rated for at least %s repetitive peak (i_peak), or lower the "
			      "peaks: more series resistance ahead of the reservoir widens the conduction "
			      "angle",
			   eng(j, need, u));
	default:
		return fmt(j, "use a diode rated for at least %s average (i_avg), or share the load: the "
			      "mean forward current is the load's current through the diode",
			   eng(j, need, u));
	}
}

/* A rated part whose current has no number: said, never dropped. */
static void unsettled(struct judge *j, const struct stress *s)
{
	struct finding *f = finding(j, RULE_STRESS_UNSETTLED, s);
	if (!f)
		return;
	f->message = fmt(j, "%s has a rating for its %s (%s) but no simulated number for it (%s)",
			 f->subject, judged[s->qty].what, judged[s->qty].column, place(j, s));
	f->computation = fmt(j, "not simulated: %s", s->unproven ? s->unproven : "unknown");
	f->fix = "simulate the circuit at its highest input to its steady state and compare the "
		 "part's current with its rating, or waive this finding with the reason";
}

static void judge_one(struct judge *j, const struct stress *s)
{
	const struct rating *r = &j->r[s->part];
	const struct rating_field *rf = stress_rating(r, s->qty);
	const char *cls = nl_part_at(j->a->er.circuit, s->part)->kind == NL_D ? "diode" : "cap";
	if (!judged[s->qty].what || isnan(rf->value))
		return;
	if (!s->bounded) {
		unsettled(j, s);
		return;
	}
	const char *note, *key;
	double k = profile_kind_key(j->p, cls, r->kind, stress_qty_derating(s->qty), &note, &key);
	if (isnan(k)) {
		k = 1;
		key = "no factor: the rating itself";
		note = NULL;
	}
	if (!(s->worst > rf->value * k))
		return;
	struct finding *f = finding(j, judged[s->qty].rule, s);
	if (!f)
		return;
	const char *u = stress_qty_unit(s->qty);
	f->worst = s->worst;
	f->rating = rf->value;
	f->limit = rf->value * k;
	f->message = s->worst > rf->value
			     ? fmt(j, "%s's %s is %s (simulated), above its %s rating itself (%.0f%% of it)", f->subject,
				   judged[s->qty].what, eng(j, s->worst, u), eng(j, rf->value, u), 100 * s->worst / rf->value)
			     : fmt(j, "%s's %s is %s (simulated), %.*f%% of its %s rating (limit %.0f%%)", f->subject,
				   judged[s->qty].what, eng(j, s->worst, u),
				   rules_pct_digits(100 * s->worst / rf->value, 100 * k), 100 * s->worst / rf->value,
				   eng(j, rf->value, u), 100 * k);
	f->computation = how(j, s);
	f->limits = fmt(j, "%s %s (%s); limit %s = %.0f%% of it (profile %s, %s%s%s)%s", judged[s->qty].column,
			eng(j, rf->value, u), rf->from ? rf->from : "?", eng(j, f->limit, u), 100 * k, j->p->name,
			key, note && *note ? ": " : "", note ? note : "",
			s->qty == SQ_RIPPLE_CURRENT ? ripple_terms(j, r) : "");
	f->fix = fix_of(j, s, s->worst / k);
}

/* "41,000 h (4.7 years)" */
static const char *hours(struct judge *j, double h)
{
	return fmt(j, "%.0f h (%.1f years)", h, h / 8760);
}

/* The simulated ripple current of part (its ripple_current stress). */
static double ripple_of(const struct judge *j, uint32_t part)
{
	for (size_t i = 0; i < j->sr->n; i++)
		if (j->sr->s[i].part == part && j->sr->s[i].qty == SQ_RIPPLE_CURRENT)
			return j->sr->s[i].worst;
	return NAN;
}

/* cap-life-short: the estimate below the profile's required life. */
static void judge_life(struct judge *j, const struct stress *s)
{
	const struct rating *r = &j->r[s->part];
	const char *note;
	double need = profile_value(j->p, "life_required", &note);
	if (!s->bounded || isnan(need) || !(s->worst < need))
		return;
	struct finding *f = finding(j, RULE_CAP_LIFE_SHORT, s);
	if (!f)
		return;
	int heated = (s->life_flags & LIFE_HEATED) != 0;
	f->worst = s->worst;
	f->limit = need;
	f->rating = r->life_h.value;
	f->message = fmt(j, "%s is estimated to last %s at %g C ambient, less than the %s the "
			    "profile requires%s", f->subject, hours(j, s->worst), s->life_ambient_c,
			 hours(j, need), heated ? "" : " (without its self-heating: shorter still)");
	f->computation = fmt(j, "%s: core %.1f C = %g C ambient + %.1f C ripple heating (%s rms%s); "
				"life = %s x 2^((%g C - core) / 10)%s; 10 C hotter: %s%s",
			     place(j, s), s->life_core_c, s->life_ambient_c, s->life_rise_c,
			     eng(j, ripple_of(j, s->part), "A"),
			     heated ? fmt(j, " through %g ohm ESR and %g C/W", r->esr.value, r->rth_ca.value)
				    : "; esr and rth_ca not both given",
			     hours(j, r->life_h.value), r->life_temp.value,
			     s->life_core_c < LIFE_FLOOR_C ? " (taken at 40 C: no credit below)" : "",
			     hours(j, s->life_hotter_h),
			     s->life_flags & LIFE_OVER_RATED ? "; the core runs above its rated temperature"
							     : "");
	f->limits = fmt(j, "life_required %s (profile %s%s%s); rated %s at %g C (%s)", hours(j, need),
			j->p->name, note && *note ? ": " : "", note ? note : "", hours(j, r->life_h.value),
			r->life_temp.value, r->life_h.from ? r->life_h.from : "?");
	f->fix = "use a capacitor with a longer rated life or a higher rated temperature, lower its "
		 "ripple current (a larger or a parallel capacitor), or cool it";
}

int current_judge(const struct audit *a, const struct rating *r, const struct profile *p,
		  const struct stress_result *sr, struct arena *ar, struct rules_result *out)
{
	struct judge j = {a, r, p, sr, ar, out, 0};
	for (size_t i = 0; i < sr->n && !j.oom; i++) {
		if (sr->s[i].qty == SQ_LIFE)
			judge_life(&j, &sr->s[i]);
		else if (stress_qty_is_flow(sr->s[i].qty))
			judge_one(&j, &sr->s[i]);
	}
	return !j.oom;
}
