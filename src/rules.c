/* rules.c: findings. Each rule is a small function of one stress (or one
 * structure, or one *@expect line); the table below is the list reports and
 * `headroom rules` show, and docs/rules/ID.md explains each [rules-list]. */
#include "rules.h"

#include <assert.h>
#include <math.h>
#include <stdarg.h>
#include <stdio.h>
#include <string.h>

#include "loadout.h"
#include "num.h"

/* Designated initialisers tie each row to its enum constant [rules-list]. */
const struct rule_info rules_table[RULE_COUNT] = {
	[RULE_CAP_OVERVOLTAGE] = {"cap-overvoltage", DIAG_ERROR, "a capacitor sees more than its rated voltage"},
	[RULE_CAP_DERATING] = {"cap-derating", DIAG_WARNING, "a capacitor is above the profile's share of its rating"},
	[RULE_CAP_REVERSE_BIAS] = {"cap-reverse-bias", DIAG_ERROR, "a polarised capacitor is reverse-biased past its limit"},
	[RULE_DIODE_OVERVOLTAGE] = {"diode-overvoltage", DIAG_ERROR, "a diode's reverse voltage is above its rating"},
	[RULE_DIODE_DERATING] = {"diode-derating", DIAG_WARNING, "a diode's reverse voltage is above the profile's share of its rating"},
	[RULE_SURGE_DERATING] = {"surge-derating", DIAG_WARNING, "the power-up surge through a diode is above the profile's share of its surge rating"},
	[RULE_SURGE_EXCESS] = {"surge-excess", DIAG_ERROR, "the power-up surge through a diode is above its surge rating itself"},
	[RULE_SURGE_UNBOUNDED] = {"surge-unbounded", DIAG_WARNING, "nothing limits the power-up surge through a diode"},
	[RULE_STORED_CHARGE] = {"stored-charge", DIAG_WARNING, "a capacitor holds a hazardous voltage and does not discharge in time"},
	[RULE_CLAMP_DROOP] = {"clamp-droop", DIAG_WARNING, "the load makes a clamp's capacitor droop too much each period"},
	[RULE_SLOW_RECOVERY] = {"slow-recovery", DIAG_WARNING, "a diode recovers too slowly for the drive frequency"},
	[RULE_DIODE_AVG_CURRENT] = {"diode-avg-current", DIAG_WARNING, "a diode's mean forward current (simulated) is above the profile's share of its average-current rating"},
	[RULE_DIODE_PEAK_CURRENT] = {"diode-peak-current", DIAG_WARNING, "a diode's repetitive peak forward current (simulated) is above the profile's share of its repetitive peak rating"},
	[RULE_CAP_RIPPLE_CURRENT] = {"cap-ripple-current", DIAG_WARNING, "a capacitor's ripple current (simulated, rms) is above the profile's share of its rated ripple current"},
	[RULE_ZENER_POWER] = {"zener-power", DIAG_WARNING, "a diode working in breakdown takes more power (simulated) than the profile's share of its power rating"},
	[RULE_CAP_LIFE_SHORT] = {"cap-life-short", DIAG_WARNING, "an electrolytic capacitor's estimated life at the ambient temperature, with its ripple heating, is shorter than the profile requires"},
	[RULE_RATING_MISSING] = {"rating-missing", DIAG_NOTE, "a part in a structure has no rating"},
	[RULE_INTENT_MISS] = {"intent-miss", DIAG_ERROR, "a node leaves the range its *@expect line declares"},
	[RULE_STRESS_UNSETTLED] = {"stress-unsettled", DIAG_WARNING, "a part's stress could not be bounded"},
	[RULE_DIODE_LOOP] = {"diode-loop", DIAG_ERROR, "a diode is driven forward straight from the sources with nothing to limit its current"},
	[RULE_PART_TWIN] = {"part-twin", DIAG_NOTE, "two parts repeat each other on the same nodes inside a diode-capacitor network"},
	[RULE_PARTS_UNMATCHED] = {"parts-unmatched", DIAG_WARNING, "a parts-table row rates no capacitor or diode of any file checked"},
	[RULE_BREAKDOWN_WORK] = {"breakdown-work", DIAG_NOTE, "a zener works in reverse breakdown: its stress is power, not reverse voltage"},
	[RULE_ANALYSIS_GAP] = {"analysis-gap", DIAG_ERROR, "the simulation (--verify) exceeds a part's analytic worst case"},
	[RULE_WAIVER_EXPIRED] = {"waiver-expired", DIAG_WARNING, "a waiver's date has passed: what it covered is reported again"},
	[RULE_WAIVER_UNUSED] = {"waiver-unused", DIAG_NOTE, "a waiver matches no finding"},
};
_Static_assert(sizeof rules_table / sizeof rules_table[0] == RULE_COUNT,
	       "one row per rule");
const size_t rules_count = RULE_COUNT;

const struct rule_info *rules_find(const char *id)
{
	for (size_t i = 0; i < rules_count; i++)
		if (strcmp(rules_table[i].id, id) == 0)
			return &rules_table[i];
	return NULL;
}

/* Standard rated-voltage steps: capacitors along the usual R10-based
 * ladder, diodes along common VRRM steps (common practice, no source). */
static const double cap_steps[] = {2.5, 4, 6.3, 10, 16, 25, 35, 50, 63, 80,
	100, 160, 200, 250, 315, 350, 400, 450, 500, 630, 800, 1000, 1250, 1600,
	2000, 2500, 3000, 4000, 5000, 6300, 8000, 10000, 12500, 16000, 20000,
	25000, 30000, 40000, 50000};
static const double diode_steps[] = {20, 30, 40, 50, 60, 100, 150, 200, 300,
	400, 500, 600, 800, 1000, 1200, 1500, 1600, 1800, 2000, 2500, 3000, 4000,
	5000, 6000, 8000, 10000, 12000, 15000, 20000, 30000, 40000, 50000};

int rules_pct_digits(double pct, double limit)
{
	return floor(pct + 0.5) <= floor(limit + 0.5) ? 1 : 0;
}

double rules_standard_rating(double v, int diode)
{
	const double *s = diode ? diode_steps : cap_steps;
	size_t n = diode ? sizeof diode_steps / sizeof *diode_steps
			 : sizeof cap_steps / sizeof *cap_steps;
	for (size_t i = 0; i < n; i++)
		if (s[i] >= v * (1 - 1e-12))
			return s[i];
	return NAN;
}

struct ctx {
	const struct audit *a;
	struct arena *ar;        /* the stage's memory */
	const struct rating *r;
	const struct profile *p;
	const struct stress_result *s;
	struct rules_result *out;
	int oom;
};

static const char *str(struct ctx *x, const char *fmt, ...)
	DIAG_PRINTF(2, 3);

static const char *str(struct ctx *x, const char *fmt, ...)
{
	char buf[1024];
	va_list ap;
	va_start(ap, fmt);
	vsnprintf(buf, sizeof buf, fmt, ap);
	va_end(ap);
	const char *c = arena_strdup(x->ar, buf);
	if (!c)
		x->oom = 1;
	return c ? c : "";
}

struct finding *rules_add(struct rules_result *rr, struct arena *ar,
			  enum rule_id id)
{
	assert(id < RULE_COUNT);
	const struct rule_info *r = &rules_table[id];
	if (rr->n == rr->cap) {
		size_t ncap = rr->cap ? rr->cap * 2 : 32;
		struct finding *v = arena_alloc(ar, ncap * sizeof *v);
		if (!v)
			return NULL;
		if (rr->n)
			memcpy(v, rr->f, rr->n * sizeof *v);
		rr->f = v;
		rr->cap = ncap;
	}
	struct finding *f = &rr->f[rr->n++];
	memset(f, 0, sizeof *f);
	f->rule = r;
	f->part = NL_NONE;
	f->structure = -1;
	f->worst = f->limit = f->rating = NAN;
	f->unit = "V";
	return f;
}

static struct finding *add(struct ctx *x, enum rule_id rule, uint32_t part,
			   int32_t st)
{
	struct finding *f = rules_add(x->out, x->ar, rule);
	if (!f) {
		x->oom = 1;
		return NULL;
	}
	f->part = part;
	f->structure = st;
	f->worst = f->limit = f->rating = NAN;
	f->unit = "V";
	if (part != NL_NONE) {
		const struct nl_part *pt = nl_part_at(x->a->er.circuit, part);
		f->loc = nl_part_loc(pt);
		f->subject = pt->path;
	}
	return f;
}

static const char *v(struct ctx *x, double val, const char *unit)
{
	char b[40];
	num_format_eng(val, unit, b, sizeof b);
	return str(x, "%s", b);
}

/* "ladder stage 2, coupling column of S1 (ladder)" */
static const char *where(struct ctx *x, const struct stress *s)
{
	if (s->structure < 0)
		return "outside any structure";
	const struct topo_struct *t = &x->a->topo.s[s->structure];
	return str(x, "%s in S%d (%s)", s->role, s->structure + 1, topo_kind_name(t->kind));
}

/* "; power-up peak 40.8 V, above the steady state", or "" */
static const char *powerup(struct ctx *x, const struct stress *s)
{
	if (!stress_powerup_above(s))
		return "";
	return str(x, "; power-up peak %s (from the zero state), above the steady state",
		   v(x, s->sim_powerup, "V"));
}

/* "; simulated 287.6 V: confirmed by simulation", or "" */
static const char *simulation(struct ctx *x, const struct stress *s)
{
	if (!isfinite(s->sim_worst))
		return "";
	return str(x, "; simulated %s%s%s: %s", v(x, s->sim_worst, "V"),
		   s->sim_low ? " (offsets and rails at the bottom of their band)" : "", powerup(x, s),
		   s->sim_near_open ? "not compared (beside a part the solver left open)"
		   : stress_gap(s) ? "ABOVE the analytic bound (analysis-gap)"
		   : stress_confirmed(s) ? "confirmed by simulation"
		   : str(x, "the bound holds, simulated %.0f %% below it",
			 100 * (1 - s->sim_worst / s->worst)));
}

/* I^2 t without a prefix: "3.772 A^2 s" (a "mA2s" would read as mA squared) */
static const char *i2t_text(struct ctx *x, double i2t)
{
	return str(x, "%.4g A^2 s", i2t);
}

/* The analytic bound, and the simulated pulse with how it is judged. */
static const char *surge_computation(struct ctx *x, const struct stress *s)
{
	const char *bound = isfinite(s->analytic) && s->series_r > 0
				    ? str(x, "analytic bound = peak drive %s / series %s = %s",
					  v(x, s->analytic * s->series_r, "V"), v(x, s->series_r, "ohm"), v(x, s->analytic, "A"))
				    : "no analytic bound";
	if (!isfinite(s->surge_i2t))
		return str(x, "%s: power-up surge: %s (%s)", where(x, s), bound, s->corner);
	const struct rating *r = &x->r[s->part];
	double t = stress_surge_width(r);
	return str(x, "%s: %s: forward pulse peak %s, I2t = integral of i^2 over the pulse = %s, "
		      "equivalent half-sine width 2 I2t / peak^2 = %s; as a half-sine of the rating's "
		      "%s with the same I2t: sqrt(2 I2t / %s) = %s (I2t scaling: common practice, no "
		      "source); %s",
		   where(x, s), s->corner, v(x, s->worst, "A"), i2t_text(x, s->surge_i2t),
		   v(x, s->surge_width, "s"), v(x, t, "s"), v(x, t, "s"),
		   v(x, stress_surge_judged(s, r), "A"), bound);
}

static const char *computation(struct ctx *x, const struct stress *s)
{
	const struct nl_circuit *c = x->a->er.circuit;
	const struct nl_part *p = nl_part_at(c, s->part);
	const uint32_t *q = nl_pins(c, p);
	const char *n0 = nl_node_at(c, q[0])->name, *n1 = nl_node_at(c, q[1])->name;
	if (s->qty == SQ_SURGE)
		return surge_computation(x, s);
	const char *simulated = simulation(x, s);
	if (s->basis == SB_SIMULATED)
		simulated = str(x, "%s; simulated, not proven: %s", simulated, s->unproven);
	const char *best = isfinite(s->best) ? str(x, "best case %s", v(x, s->best, "V"))
			   : s->hull ? "no best case"
				     : "no best case (the run's diodes were nearly ideal)";
	const char *over = s->hull ? "at any time"
			   : s->corner && strstr(s->corner, "no source repeats") ? "over the run"
										 : "over a period";
	if (p->kind == NL_D)
		return str(x, "%s: reverse = max v(%s) - v(%s) %s = %s (%s); %s%s", where(x, s), n1,
			   n0, over, v(x, s->worst, "V"), s->corner, best, simulated);
	return str(x, "%s: |V| = max |v(%s) - v(%s)| %s = %s (%s); %s%s", where(x, s), n0, n1, over,
		   v(x, s->worst, "V"), s->corner, best, simulated);
}

static void gap(struct ctx *x, const struct stress *s)
{
	struct finding *f = add(x, RULE_ANALYSIS_GAP, s->part, s->structure);
	if (!f)
		return;
	int diode = nl_part_at(x->a->er.circuit, s->part)->kind == NL_D;
	double peak = stress_simulated_peak(s);
	f->message = str(x, "the simulation puts %s %s on %s%s, above its analytic worst case %s: "
			    "that bound is not sound here",
			 v(x, peak, "V"), diode ? "reverse" : "across", f->subject,
			 peak > s->sim_worst ? " at power-up" : "", v(x, s->worst, "V"));
	f->worst = peak;
	f->computation = computation(x, s);
	f->fix = peak > s->sim_worst
		 ? "the analysis bounds the steady state; the first charge overshoots it: rate the "
		   "part for the simulated peak, or slow the start (series resistance, soft start)"
		 : "report the netlist: the analysis missed a mechanism; until then judge the part "
		   "by the simulated value";
}

static const char *fix_rating(struct ctx *x, double worst, double factor,
			      int diode)
{
	double need = worst / (factor > 0 ? factor : 1);
	double std = rules_standard_rating(need, diode);
	if (isnan(std))
		return str(x, "no standard step reaches %s: split the stress (series parts) or lower it", v(x, need, "V"));
	return str(x, "use a part rated %s or more: the smallest standard step at or above %s / %.0f%% = %s",
		   v(x, std, "V"), v(x, worst, "V"), factor * 100, v(x, need, "V"));
}

static const char *limits(struct ctx *x, const struct rating *r, double factor,
			  const char *key, const char *note)
{
	return str(x, "rating %s (%s); limit %s = %.0f%% of it (profile %s, %s%s%s)",
		   v(x, r->v_rated.value, "V"), r->v_rated.from ? r->v_rated.from : "?",
		   v(x, r->v_rated.value * factor, "V"), factor * 100, x->p->name, key,
		   note && *note ? ": " : "", note ? note : "");
}

static void overvoltage(struct ctx *x, const struct stress *s, const char *cls)
{
	const struct rating *r = &x->r[s->part];
	const char *note, *key, *kind = r->kind;
	double factor = profile_kind_key(x->p, cls, kind, "voltage", &note, &key);
	if (isnan(factor)) {
		factor = 1;
		key = "no factor: the rating itself";
	}
	int diode = strcmp(cls, "diode") == 0;
	const char *what = diode ? "reverse" : "across it";
	/* a simulated peak above the bound (power-up or steady state) is
	   judged itself: the analysis-gap finding says why */
	double worst = stress_judged(s);
	const char *when = worst > s->worst ? " (simulated)" : "";
	struct finding *f = NULL;
	if (worst > r->v_rated.value) {
		f = add(x, diode ? RULE_DIODE_OVERVOLTAGE : RULE_CAP_OVERVOLTAGE, s->part, s->structure);
		if (f)
			f->message = str(x, "%s sees %s %s worst case%s, above its %s rating",
					 f->subject, v(x, worst, "V"), what, when, v(x, r->v_rated.value, "V"));
	} else if (worst > r->v_rated.value * factor) {
		f = add(x, diode ? RULE_DIODE_DERATING : RULE_CAP_DERATING, s->part, s->structure);
		if (f)
			f->message = str(x, "%s sees %s %s worst case%s, %.*f%% of its %s rating (limit %.0f%%)",
					 f->subject, v(x, worst, "V"), what, when,
					 rules_pct_digits(100 * worst / r->v_rated.value, factor * 100),
					 100 * worst / r->v_rated.value, v(x, r->v_rated.value, "V"), factor * 100);
	}
	if (!f)
		return;
	f->worst = worst;
	f->rating = r->v_rated.value;
	f->limit = r->v_rated.value * factor;
	f->computation = computation(x, s);
	f->limits = limits(x, r, factor, key, note);
	f->fix = fix_rating(x, worst, factor, diode);
}

static void reverse_bias(struct ctx *x, const struct stress *s)
{
	const struct rating *r = &x->r[s->part];
	if (!r->kind || !profile_polarised(r->kind) || isnan(s->rev_min))
		return;
	const char *n1, *n2;
	double lv = profile_kind(x->p, "cap", r->kind, "reverse_v", &n1);
	double lf = profile_kind(x->p, "cap", r->kind, "reverse_fraction", &n2);
	/* the smaller of the two limits that are given; none given: 0 V */
	double lim = isnan(lv) ? INFINITY : lv;
	if (!isnan(lf) && !isnan(r->v_rated.value))
		lim = fmin(lim, lf * r->v_rated.value);
	if (isinf(lim))
		lim = 0;
	if (s->rev_min >= -lim - 1e-9)
		return;
	struct finding *f = add(x, RULE_CAP_REVERSE_BIAS, s->part, s->structure);
	if (!f)
		return;
	f->worst = -s->rev_min;
	f->limit = lim;
	f->rating = r->v_rated.value;
	f->message = str(x, "%s (%s, first node +) is reverse-biased by %s, past its %s limit",
			 f->subject, r->kind, v(x, -s->rev_min, "V"), v(x, lim, "V"));
	f->computation = str(x, "%s: lowest v(+) - v(-) over the corners = %s", where(x, s),
			     v(x, s->rev_min, "V"));
	f->limits = str(x, "reverse limit %s (profile %s: cap.%s.reverse_v%s)", v(x, lim, "V"),
			x->p->name, r->kind, isnan(lf) ? "" : " and reverse_fraction");
	f->fix = "turn the capacitor round, use a bipolar or non-polarised part, or keep the node from inverting";
}

static void missing(struct ctx *x, const struct stress *s, const char *cls)
{
	const char *note;
	double factor = profile_kind(x->p, cls, x->r[s->part].kind, "voltage", &note);
	struct finding *f = add(x, RULE_RATING_MISSING, s->part, s->structure);
	if (!f)
		return;
	f->worst = stress_judged(s);
	f->message = str(x, "%s has no voltage rating; it sees %s worst case%s", f->subject,
			 v(x, f->worst, "V"), f->worst > s->worst ? " (simulated)" : "");
	f->computation = computation(x, s);
	f->fix = fix_rating(x, f->worst, isnan(factor) ? 1 : factor, strcmp(cls, "diode") == 0);
}

/* A charge at or below the profile's hazard_charge (when it sets one) is
 * too small to hurt, whatever the voltage (docs/rules/stored-charge.md). */
static int enough_charge(const struct ctx *x, double q)
{
	double qmin = profile_value(x->p, "hazard_charge", NULL);
	return isnan(qmin) || q > qmin;
}

static const char *charge_limits(struct ctx *x, double hz, double tmax)
{
	double qmin = profile_value(x->p, "hazard_charge", NULL);
	return str(x, "hazard voltage %s, discharge within %s%s%s (profile %s)", v(x, hz, "V"),
		   isnan(tmax) ? "no time set: only a missing path is reported" : v(x, tmax, "s"),
		   isnan(qmin) ? "" : ", charges above ", isnan(qmin) ? "" : v(x, qmin, "C"), x->p->name);
}

/* The bleeder that brings capacitance c from v below hz within tmax,
 * beside r_now already there: R <= tmax / (C ln(V / Vhaz)), P = V^2 / R. */
static const char *bleeder(struct ctx *x, const char *across, double c, double volts,
			   double r_now, double hz, double tmax)
{
	if (isnan(tmax))
		return str(x, "add a bleeder resistor across %s (the profile sets no discharge_time to size it)",
			   across);
	double need = tmax / (c * log(volts / hz));
	double r = isfinite(r_now) && r_now > need ? 1 / (1 / need - 1 / r_now) : need;
	return str(x, "add a bleeder of at most %s across %s (%s in all: R <= t / (C ln(V / %s)) with t %s); "
		      "it dissipates %s at %s (P = V^2 / R): rate it for that power and voltage, "
		      "or switch a discharge resistor in at power-off",
		   v(x, r, "ohm"), across, v(x, need, "ohm"), v(x, hz, "V"), v(x, tmax, "s"),
		   v(x, volts * volts / r, "W"), v(x, volts, "V"));
}

static const char *node_name(const struct ctx *x, uint32_t n)
{
	return nl_node_at(x->a->er.circuit, n)->name;
}

/* How the capacitor drains, for the computation line [stress-drain]. */
/* ", Cpar 500 nF (the coupling column ...)" or ", Cpar 0" */
static const char *cpar(struct ctx *x, const struct stress_stack *st)
{
	if (!(st->cpar_f > 0))
		return ", Cpar 0";
	return str(x, ", Cpar %s (the coupling column above stage 1, in series: it joins through the diodes "
		      "as the output falls)", v(x, st->cpar_f, "F"));
}

static const char *drain_text(struct ctx *x, const struct stress *s, double c, double hz)
{
	const char *open = "resistors only: sources disconnected, capacitors, diodes and inductors open";
	const struct stress_stack *st = s->stack >= 0 ? &x->s->stacks[s->stack] : NULL;
	switch (s->drain) {
	case SD_OWN:
		return str(x, "R = %s across it (%s); t = R C ln(V / %s) = %s", v(x, s->discharge_r, "ohm"),
			   open, v(x, hz, "V"), v(x, s->discharge_s, "s"));
	case SD_STACK:
		return str(x, "no resistor across it; one of %u capacitors in series from %s to %s: "
			      "Ceq %s%s, Vstack %s, R %s between them, tau = R (Ceq + Cpar) = %s, so it sees "
			      "tau / C = %s; t = -tau ln(1 - (V - %s) C / (Ceq Vstack)) = %s",
			   st->nseg, node_name(x, st->top), node_name(x, st->bottom), v(x, st->ceq_f, "F"),
			   cpar(x, st), v(x, st->v, "V"), v(x, st->r, "ohm"),
			   v(x, st->r * (st->ceq_f + st->cpar_f), "s"), v(x, s->discharge_r, "ohm"),
			   v(x, hz, "V"), v(x, s->discharge_s, "s"));
	case SD_OUTPUT:
		return str(x, "no resistor across it: estimated as emptying through its structure's diodes into "
			      "the output, R = %s from there to ground (not proven); t = R C ln(V / %s) = %s",
			   v(x, s->discharge_r, "ohm"), v(x, hz, "V"), v(x, s->discharge_s, "s"));
	default:
		(void)c;
		return str(x, "no resistor path across it (%s)%s", open,
			   st ? ", nor across its stack" : "");
	}
}

static void stored_charge(struct ctx *x, const struct stress *s)
{
	const char *note;
	double hz = profile_hazard(x->p);
	double tmax = profile_value(x->p, "discharge_time", &note);
	const struct nl_part *p = nl_part_at(x->a->er.circuit, s->part);
	double c = p->value * (p->ext ? p->ext->mult : 1.0);
	if (isnan(hz) || !(s->worst > hz) || !enough_charge(x, c * s->worst) ||
	    (s->drain != SD_NONE && !(s->discharge_s > tmax)))
		return;
	struct finding *f = add(x, RULE_STORED_CHARGE, s->part, s->structure);
	if (!f)
		return;
	const struct stress_stack *st = s->stack >= 0 ? &x->s->stacks[s->stack] : NULL;
	f->worst = s->worst;
	f->limit = hz;
	const char *held = str(x, "%s holds %s (%s, %s)", f->subject, v(x, s->worst, "V"),
			       v(x, s->energy_j, "J"), v(x, c * s->worst, "C"));
	f->message = s->drain == SD_NONE ? str(x, "%s and has no discharge path", held)
		     : isinf(s->discharge_s) ? str(x, "%s and its stack empties before it falls below %s", held, v(x, hz, "V"))
		     : str(x, "%s and takes %s to fall below %s%s", held, v(x, s->discharge_s, "s"), v(x, hz, "V"),
			   s->drain == SD_STACK ? str(x, " with its stack (%s to %s)", node_name(x, st->top),
						      node_name(x, st->bottom))
			   : s->drain == SD_OUTPUT ? " (estimate)" : "");
	f->computation = str(x, "%s: E = C V^2 / 2 = %s, Q = C V = %s; %s", where(x, s), v(x, s->energy_j, "J"),
			     v(x, c * s->worst, "C"), drain_text(x, s, c, hz));
	f->limits = charge_limits(x, hz, tmax);
	f->fix = bleeder(x, f->subject, c, s->worst, s->drain == SD_OWN ? s->discharge_r : INFINITY, hz, tmax);
	if (st)
		f->fix = str(x, "%s; or bleed the whole stack from %s to %s", f->fix, node_name(x, st->top),
			     node_name(x, st->bottom));
}

/* A series stack whose total is a hazard: named by its output node, the
 * place a hand meets the whole voltage. */
static void stack_charge(struct ctx *x, const struct stress_stack *st)
{
	double hz = profile_hazard(x->p), tmax = profile_value(x->p, "discharge_time", NULL);
	double q = st->ceq_f * st->v;
	if (isnan(hz) || !(st->v > hz) || !enough_charge(x, q) || (isfinite(st->r) && !(st->t > tmax)))
		return;
	struct finding *f = add(x, RULE_STORED_CHARGE, NL_NONE, st->structure);
	if (!f)
		return;
	const char *top = node_name(x, st->top), *bot = node_name(x, st->bottom);
	f->loc = nl_part_loc(nl_part_at(x->a->er.circuit, st->first));
	f->subject = top;
	f->worst = st->v;
	f->limit = hz;
	const char *where = st->structure >= 0 ? str(x, " (output of S%d)", st->structure + 1) : "";
	const char *held = str(x, "the stack of %u capacitors in series from %s to %s%s holds %s (%s, %s)",
			       st->nseg, top, bot, where, v(x, st->v, "V"),
			       v(x, 0.5 * st->ceq_f * st->v * st->v, "J"), v(x, q, "C"));
	f->message = isfinite(st->r) ? str(x, "%s and takes %s to fall below %s", held, v(x, st->t, "s"), v(x, hz, "V"))
				     : str(x, "%s and has no discharge path", held);
	const char *whose = st->structure >= 0
				    ? str(x, "S%d (%s)", st->structure + 1,
					  topo_kind_name(x->a->topo.s[st->structure].kind))
				    : "two capacitors joined by a node only capacitors hold";
	f->computation = str(x, "%s: Ceq = 1 / sum(1 / C) = %s%s; Vstack = sum of the members' worst = %s; "
				"R = %s from %s to %s (resistors only: sources disconnected, capacitors, diodes and "
				"inductors open); t = R (Ceq + Cpar) ln(Vstack / %s) = %s",
			     whose, v(x, st->ceq_f, "F"),
			     cpar(x, st), v(x, st->v, "V"), isfinite(st->r) ? v(x, st->r, "ohm") : "none", top, bot,
			     v(x, hz, "V"), isfinite(st->r) ? v(x, st->t, "s") : "infinite");
	f->limits = charge_limits(x, hz, tmax);
	f->fix = str(x, "%s; a string of equal resistors, one across each capacitor, does the same and shares the voltage",
		     bleeder(x, str(x, "the stack (%s to %s)", top, bot), st->ceq_f + st->cpar_f, st->v, st->r, hz, tmax));
}

static double period_of(struct ctx *x, int32_t st)
{
	return st >= 0 ? x->s->st[st].period : 0;
}

static void recovery(struct ctx *x, const struct stress *s)
{
	const struct rating *r = &x->r[s->part];
	const char *note;
	double frac = profile_value(x->p, "recovery_fraction", &note);
	double T = period_of(x, s->structure), trr = r->trr.value;
	if (isnan(trr) || isnan(frac) || !(T > 0) || !(trr > frac * T))
		return;
	struct finding *f = add(x, RULE_SLOW_RECOVERY, s->part, s->structure);
	if (!f)
		return;
	f->worst = trr;
	f->limit = frac * T;
	f->unit = "s";
	f->message = str(x, "%s recovers in %s, %.1f%% of the %s drive period (limit %.0f%%)",
			 f->subject, v(x, trr, "s"), 100 * trr / T, v(x, T, "s"), frac * 100);
	f->computation = str(x, "%s: trr from %s; drive period %s", where(x, s), r->trr.from, v(x, T, "s"));
	f->limits = str(x, "recovery fraction %.0f%% (profile %s)", frac * 100, x->p->name);
	f->fix = "use a faster diode (fast-recovery or Schottky) or a lower drive frequency";
}

/* "a pulse of 51.41 A peak, 2.855 ms wide (equivalent half-sine), I2t
 * 3.772 A2s", or for the bound "108.5 A (analytic bound; ...)". */
static const char *surge_pulse(struct ctx *x, const struct stress *s)
{
	if (!isfinite(s->surge_i2t))
		return str(x, "%s (analytic bound, its width not known: judged as if it lasted the "
			      "rating's whole pulse)",
			   v(x, s->worst, "A"));
	return str(x, "a pulse of %s peak, %s wide (equivalent half-sine), I2t %s (simulated)",
		   v(x, s->worst, "A"), v(x, s->surge_width, "s"), i2t_text(x, s->surge_i2t));
}

/* "30 A for a half-sine of 8.3 ms (I2t 3.735 A^2 s)" */
static const char *surge_rating(struct ctx *x, const struct rating *r)
{
	double t = stress_surge_width(r), i2t = stress_surge_rated_i2t(r);
	if (isnan(r->i_surge.value))
		return str(x, "I2t %s (a half-sine of %s peaking at %s)", i2t_text(x, i2t), v(x, t, "s"),
			   v(x, stress_surge_rated(r), "A"));
	return str(x, "%s for a half-sine of %s (I2t %s%s)", v(x, r->i_surge.value, "A"), v(x, t, "s"),
		   i2t_text(x, i2t), r->i2t.value <= i2t ? ", its own I2t rating" : "");
}

static void surge_rules(struct ctx *x, const struct stress *s)
{
	const struct rating *r = &x->r[s->part];
	if (!s->bounded) {
		/* no number is no verdict: said, never dropped */
		struct finding *f = add(x, RULE_STRESS_UNSETTLED, s->part, s->structure);
		if (f) {
			f->unit = "A";
			f->message = str(x, "the power-up surge through %s has no worst case (%s)",
					 f->subject, where(x, s));
			const struct stress_surge *sg = x->s->surge;
			const char *why = s->unproven ? s->unproven
							: "the analytic surge is the peak drive over the series "
							  "resistance, known only where the analysis settles the "
							  "structure's nodes";
			f->computation = str(x, "not proven: %s; not simulated: %s", why,
					     sg && sg->why ? sg->why : "the solver gave this diode no current");
			f->fix = "simulate the switch-on at the highest input with the source's real "
				 "impedance and compare the peak current with the diode's surge rating, or "
				 "waive this finding with the reason";
		}
		return;
	}
	/* the analysis settled the path and found no resistance in it: a
	   simulated figure then depends on little more than the diode model's
	   exponential, so none is judged (where the analysis did not settle
	   the path, analytic is NaN and the simulated pulse is judged) */
	if (s->series_r <= 0 && !isnan(s->analytic)) {
		struct finding *f = add(x, RULE_SURGE_UNBOUNDED, s->part, s->structure);
		if (!f)
			return;
		f->unit = "A";
		f->message = str(x, "nothing limits the power-up surge through %s: no resistance between the source and the discharged capacitor",
				 f->subject);
		f->computation = str(x, "%s: series resistance 0 (source, series parts and model RS)", where(x, s));
		f->fix = "add a series resistor or an inrush limiter, or give the diode model its RS";
		return;
	}
	const char *note, *key;
	double factor = profile_kind_key(x->p, "diode", r->kind, "surge", &note, &key);
	double judged = stress_surge_judged(s, r), rated = stress_surge_rated(r);
	if (isnan(rated) || isnan(factor) || !(judged > rated * factor))
		return;
	/* above the rating itself the part is over-stressed (an error); between
	   the profile's share and the rating it only lacks margin (a warning) */
	int over = judged > rated;
	struct finding *f = add(x, over ? RULE_SURGE_EXCESS : RULE_SURGE_DERATING, s->part, s->structure);
	if (!f)
		return;
	f->worst = judged;
	f->rating = rated;
	f->limit = rated * factor;
	f->unit = "A";
	f->message = str(x, "power-up surge through %s: %s, %s its surge rating of %s (%.0f%% of it%s)",
			 f->subject, surge_pulse(x, s), over ? "above" : str(x, "above %.0f%% of", factor * 100),
			 surge_rating(x, r), 100 * judged / rated,
			 isfinite(s->surge_i2t) ? ", by I2t" : "");
	f->computation = computation(x, s);
	f->limits = str(x, "surge rating %s (%s); limit %s (profile %s, %s)", surge_rating(x, r),
			r->i_surge.from ? r->i_surge.from : r->i2t.from, v(x, f->limit, "A"), x->p->name, key);
	f->fix = isfinite(s->surge_i2t)
			 ? str(x, "add series resistance or an inrush limiter (the pulse's I2t falls as the "
				  "resistance in its path rises), or use a diode whose surge rating is at least %s "
				  "for %s",
			       v(x, judged / factor, "A"), v(x, stress_surge_width(r), "s"))
			 : str(x, "raise the series resistance to at least %s, or use a diode with a higher surge "
				  "rating; or let the solver run the circuit (the pulse's width then counts)",
			       v(x, s->worst * s->series_r / f->limit, "ohm"));
}

/* A diode driven into reverse breakdown on purpose (rating.h): its
 * reverse voltage is held at BV by the diode itself; what can hurt it is
 * the power it then takes (Vz times its current), not the voltage. A
 * rectifier given a reverse rating of its own keeps its voltage rules. */
static int in_breakdown(const struct ctx *x, const struct stress *s)
{
	return s->qty == SQ_REVERSE && s->bounded &&
	       rating_breakdown(nl_part_at(x->a->er.circuit, s->part), &x->r[s->part], s->worst);
}

/* The part's power stress (current.c), or NULL. */
static const struct stress *power_of(const struct ctx *x, uint32_t part)
{
	for (size_t i = 0; i < x->s->n; i++)
		if (x->s->s[i].part == part && x->s->s[i].qty == SQ_POWER)
			return &x->s->s[i];
	return NULL;
}

static void breakdown_note(struct ctx *x, const struct stress *s)
{
	struct finding *f = add(x, RULE_BREAKDOWN_WORK, s->part, s->structure);
	if (!f)
		return;
	const struct stress *pw = power_of(x, s->part);
	const char *power = pw && pw->bounded
		? str(x, "%s on average (simulated; zener-power judges it against p_rated)", v(x, pw->worst, "W"))
		: str(x, "Vz times its current, which the simulation could not give here (%s)",
		      pw && pw->unproven ? pw->unproven : "no steady state");
	f->message = str(x, "%s works in reverse breakdown at about %s: its stress is the power it takes, %s",
			 f->subject, v(x, s->worst, "V"), power);
	f->worst = s->worst;
	f->computation = computation(x, s);
	f->fix = pw && pw->bounded
		? "give the zener its power rating (p_rated in the parts table or *@part) so that zener-power "
		  "judges it; give it kind=zener to say the breakdown is intended"
		: "check the zener's power against its rating at the highest input; give it kind=zener "
		  "in the parts table to say the breakdown is intended";
}

static void part_rules(struct ctx *x, const struct stress *s)
{
	const struct nl_part *p = nl_part_at(x->a->er.circuit, s->part);
	const char *cls = p->kind == NL_D ? "diode" : "cap";
	if (stress_qty_is_flow(s->qty))
		return; /* current.c judges the currents and the power */
	if (s->qty == SQ_SURGE) {
		surge_rules(x, s);
		return;
	}
	if (!s->bounded) {
		struct finding *f = add(x, RULE_STRESS_UNSETTLED, s->part, s->structure);
		if (f) {
			f->message = str(x, "%s has no worst case: neither the analysis nor the solver could bound it (%s)",
					 f->subject, where(x, s));
			f->computation = str(x, "not proven: %s", s->unproven ? s->unproven : "unknown");
			f->fix = "run the circuit in a simulator at its worst corners and rate the part from that, "
				 "or waive this finding with the reason";
		}
		return;
	}
	if (stress_gap(s))
		gap(x, s);
	if (in_breakdown(x, s)) {
		breakdown_note(x, s);
		return;
	}
	if (isnan(x->r[s->part].v_rated.value)) {
		if (s->structure >= 0)
			missing(x, s, cls);
	} else {
		overvoltage(x, s, cls);
	}
	if (p->kind == NL_C) {
		reverse_bias(x, s);
		stored_charge(x, s);
	} else {
		recovery(x, s);
	}
}

static void droop(struct ctx *x, size_t si)
{
	const struct stress_struct *f0 = &x->s->st[si];
	const char *note;
	double lim = profile_value(x->p, "droop_limit", &note);
	if (isnan(lim) || !(f0->droop_frac > lim))
		return;
	const struct topo_struct *t = &x->a->topo.s[si];
	uint32_t part = NL_NONE;
	for (uint32_t k = 0; k < t->nparts && part == NL_NONE; k++)
		if (t->parts[k].kind == TR_COUPLING_CAP)
			part = t->parts[k].part;
	/* a load that drains more than the whole swing in a period leaves no DC
	   on the capacitor: that is no clamp (an AC-coupled termination, a
	   differentiator) and the droop formula means nothing there */
	if (f0->droop_v > f0->swing)
		return;
	struct finding *f = add(x, RULE_CLAMP_DROOP, part, (int32_t)si);
	if (!f)
		return;
	f->worst = f0->droop_v;
	f->limit = lim * f0->swing;
	f->message = str(x, "the clamp of S%zu droops %s per period under its %s load, %.1f%% of its %s swing (limit %.0f%%)",
			 si + 1, v(x, f0->droop_v, "V"), v(x, f0->load_r, "ohm"), 100 * f0->droop_frac,
			 v(x, f0->swing, "V"), lim * 100);
	f->computation = str(x, "droop = Vcap T / (R C) with T %s, R %s%s", v(x, f0->period, "s"),
			     v(x, f0->load_r, "ohm"),
			     f0->bias_share < 1
				     ? str(x, ", C at %.0f%% of nominal under its worst DC bias (c_bias)%s",
					   100 * f0->bias_share,
					   f0->bias_past ? ", a voltage past the end of its curve" : "")
				     : "");
	f->limits = str(x, "droop limit %.0f%% of the swing (profile %s)", lim * 100, x->p->name);
	f->fix = "raise the coupling capacitance or the load resistance";
}

/* "low corner (every source at its low end)" */
static const char *corner_name(struct ctx *x, int high)
{
	return str(x, "%s corner (%s)", high ? "high" : "low", x->s->loadsim->corner[high]);
}

/* "v(d3) 2.022 kV .. 2.051 kV at the low corner, 2.472 kV .. 2.508 kV at the high" */
static const char *loaded_ranges(struct ctx *x, const char *node, uint32_t id)
{
	const struct stress_loadsim *ls = x->s->loadsim;
	return str(x, "v(%s) %s .. %s at the low corner, %s .. %s at the high", node,
		   v(x, ls->node_min[0][id], "V"), v(x, ls->node_max[0][id], "V"),
		   v(x, ls->node_min[1][id], "V"), v(x, ls->node_max[1][id], "V"));
}

/* An *@expect on a loaded output whose corners were simulated is judged
 * there: the lowest value over both corners (the low corner's, for a
 * positive output) against min, the highest (the high corner's) against
 * max, the corner named. Returns 0 when the node is no such output. */
static int intent_loaded(struct ctx *x, const struct annot *an, uint32_t id, double want_lo,
			 double want_hi)
{
	const struct stress_loadsim *ls = x->s->loadsim;
	int32_t si = id == NL_NONE ? -1 : loadout_of_node(x->a, x->s, id);
	if (si < 0 || !ls || !ls->simulated || !x->s->st[si].out.simulated)
		return 0;
	int klo = ls->node_min[1][id] < ls->node_min[0][id], khi = ls->node_max[1][id] >= ls->node_max[0][id];
	double lo = ls->node_min[klo][id], hi = ls->node_max[khi][id];
	if (lo >= want_lo && hi <= want_hi)
		return 1;
	struct finding *f = add(x, RULE_INTENT_MISS, NL_NONE, si);
	if (!f)
		return 1;
	int over = hi > want_hi, under = lo < want_lo;
	const char *load = v(x, x->s->st[si].load_r, "ohm");
	f->loc = an->loc;
	f->subject = an->target;
	f->worst = over ? hi : lo;
	f->limit = over ? want_hi : want_lo;
	if (over && under)
		f->message = str(x, "node %s ranges %s at the %s .. %s at the %s under its %s load "
				    "(simulated), outside the declared %s .. %s",
				 an->target, v(x, lo, "V"), corner_name(x, klo), v(x, hi, "V"),
				 corner_name(x, khi), load, v(x, want_lo, "V"), v(x, want_hi, "V"));
	else
		f->message = str(x, "node %s %s %s at the %s under its %s load (simulated), %s the "
				    "declared %s %s",
				 an->target, over ? "rises to" : "falls to", v(x, f->worst, "V"),
				 corner_name(x, over ? khi : klo), load, over ? "above" : "below",
				 over ? "max" : "min", v(x, f->limit, "V"));
	f->computation = str(x, "basis: simulated, the output of S%d (%s) in its periodic steady state with "
				"the diodes as modelled and the circuit's own load: %s; the analysis's "
				"unloaded ideal-diode range is not used for a loaded output",
			     si + 1, topo_kind_name(x->a->topo.s[si].kind), loaded_ranges(x, an->target, id));
	f->fix = "raise the stage capacitance or the drive frequency, lighten the load, tighten the "
		 "source tolerance, or change the *@expect line";
	return 1;
}

/* Why a loaded output's *@expect falls back on the analysis, or "". */
static const char *intent_basis(struct ctx *x, uint32_t id)
{
	int32_t si = id == NL_NONE ? -1 : loadout_of_node(x->a, x->s, id);
	if (si < 0)
		return "; basis: the analysis (ideal diodes, no load)";
	return str(x, "; basis: the analysis (ideal diodes, no load), as the loaded output of S%d was "
		      "not simulated: %s",
		   si + 1, x->s->st[si].out.why ? x->s->st[si].out.why : "?");
}

static void intent(struct ctx *x, const struct annot *an)
{
	const struct nl_circuit *c = x->a->er.circuit;
	uint32_t id = nl_node_find(c, an->target, strlen(an->target));
	const struct annot_kv *mn = annot_get(an, "min"), *mx = annot_get(an, "max");
	if (intent_loaded(x, an, id, mn ? mn->num : -INFINITY, mx ? mx->num : INFINITY))
		return;
	double lo = INFINITY, hi = -INFINITY;
	for (size_t k = 0; id != NL_NONE && k < x->s->ncorners; k++) {
		const struct prop_node *n = &x->s->runs[k].nodes[id];
		double a, b;
		int exact;
		if (n->state != PS_RESOLVED)
			continue;
		form_range(&x->s->runs[k].fc, n->f, &a, &b, &exact);
		lo = fmin(lo, a);
		hi = fmax(hi, b);
	}
	double want_lo = mn ? mn->num : -INFINITY, want_hi = mx ? mx->num : INFINITY;
	if (lo == INFINITY) {
		struct finding *g = add(x, RULE_STRESS_UNSETTLED, NL_NONE, -1);
		if (g) {
			g->loc = an->loc;
			g->subject = an->target;
			g->message = str(x, "*@expect names node '%s', which %s: nothing to compare", an->target,
					 id == NL_NONE ? "is not in the circuit" : "the analysis could not settle");
		}
		return;
	}
	if (lo >= want_lo && hi <= want_hi)
		return;
	struct finding *f = add(x, RULE_INTENT_MISS, NL_NONE, -1);
	if (!f)
		return;
	f->loc = an->loc;
	f->subject = an->target;
	f->worst = hi > want_hi ? hi : lo;
	f->limit = hi > want_hi ? want_hi : want_lo;
	f->message = str(x, "node %s ranges %s .. %s over the corners, outside the declared %s .. %s",
			 an->target, v(x, lo, "V"), v(x, hi, "V"), mn ? v(x, want_lo, "V") : "-",
			 mx ? v(x, want_hi, "V") : "-");
	f->computation = str(x, "the node's range at every corner of the source tolerances%s",
			     intent_basis(x, id));
	f->fix = "change the design or the *@expect line";
}

int rules_run(const struct audit *a, const struct rating *r, const struct profile *p,
	      const struct stress_result *s, struct arena *ar, struct rules_result *out)
{
	struct ctx x = {a, ar, r, p, s, out, 0};
	memset(out, 0, sizeof *out);
	for (size_t i = 0; i < s->n && !x.oom; i++)
		part_rules(&x, &s->s[i]);
	for (size_t i = 0; i < s->nstacks && !x.oom; i++)
		stack_charge(&x, &s->stacks[i]);
	for (size_t i = 0; i < a->topo.n && !x.oom; i++)
		droop(&x, i);
	for (uint32_t i = 0; i < a->nannots && !x.oom; i++)
		if (a->annots[i].kind == AN_EXPECT)
			intent(&x, &a->annots[i]);
	return !x.oom;
}
