/* stress.c: worst-case stresses over corners. Formulas and their sources:
 *  - ladder regulation under load I (half-wave Cockcroft-Walton, equal stage
 *    capacitors C, drive frequency f, N stages): drop
 *    dV = I/(fC) (2N^3/3 + N^2/2 - N/6), ripple dv = I/(fC) N(N+1)/2, optimum
 *    N = sqrt(Vp f C / I): Kuffel, Zaengl & Kuffel, High Voltage Engineering
 *    Fundamentals, 2nd ed., section 2.2 (from memory; the same formulas are
 *    seen in secondary sources, docs/sources.md §3);
 *  - clamp droop per period with load R: dV = Vcap T / (R C) (docs/design.md §6);
 *  - surge: I = Vpeak / R_series (docs/design.md §6);
 *  - stored energy E = C V^2 / 2 (the discharge is discharge.c's). */
#include "stress.h"

#include "cstring.h"
#include "dmodel.h"
#include "annot.h"
#include "proof.h"

#include <math.h>
#include <stdio.h>
#include <string.h>

enum { C_NOM, C_HI, C_LO, C_VF, C_VFH, C_VFL, NCORNER };

/* A: the forward current of the high corner's drops. A clamp's capacitor
 * holds the lowest input plus its diode's drop at the peak of the current
 * that recharges it, far above the 1 mA of the low corner's drops (which
 * lower stresses); 10 mA is the small-signal diodes' usual datasheet test
 * point (common practice, no source). */
#define STRESS_VF_HIGH_A 10e-3

/* Offsets are intervals in the two tolerance corners: each source's DC
 * independently anywhere in its band, so rails that move apart are seen. */
static const char *const corner_names[NCORNER] = {
	"nominal sources, ideal diodes",
	"amplitudes at +tol, each offset anywhere in its band (pulse and pwl scaled whole), ideal diodes",
	"amplitudes at -tol, each offset anywhere in its band (pulse and pwl scaled whole), ideal diodes",
	"amplitudes and offsets at -tol, diode forward drops",
	"amplitudes at +tol, each offset anywhere in its band (pulse and pwl scaled whole), diode "
	"forward drops at 10 mA",
	"amplitudes at -tol, each offset anywhere in its band (pulse and pwl scaled whole), diode "
	"forward drops at 10 mA"};

double stress_tolerance(const struct audit *a, const struct profile *p,
			uint32_t part)
{
	double t = a->sources[part].tol;
	if (isnan(t))
		t = profile_value(p, "source_tol", NULL);
	return isnan(t) ? 0 : t;
}

double stress_source_tol(const struct audit *a, const struct profile *p, uint32_t part)
{
	const struct nl_part *pt = nl_part_at(a->er.circuit, part);
	if (pt->kind == NL_V)
		return stress_tolerance(a, p, part);
	/* a current source moves only by a tolerance declared on it: inside
	   a model (an amplifier's bias currents) it is no supply */
	return pt->kind == NL_I && !isnan(a->sources[part].tol) ? a->sources[part].tol : 0;
}

struct ctx {
	const struct audit *a;
	struct arena *ar;        /* the stage's memory */
	const unsigned char *skip; /* per node: left unsettled in the corner runs */
	const char **why0;         /* the proof without diodes in breakdown */
	uint32_t *island0;
	const struct rating *r;
	const struct profile *p;
	struct prop_result runs[NCORNER];
	uint32_t *struct_of;     /* part -> structure index or UINT32_MAX */
	const struct topo_part **tpart_of; /* per part, NULL outside structures */
	double *vworst;          /* per part: its worst |V|, NaN when unknown */
	struct cstring cs;       /* ungraded capacitor strings (cstring.h) */
	struct stress_struct *fig; /* the structure being figured */
};

int stress_scales_whole(const struct nl_part *p)
{
	const struct nl_source *src = p->kind == NL_V && p->ext ? p->ext->src : NULL;
	return src && (src->wave == NL_WAVE_PULSE || src->wave == NL_WAVE_PWL);
}

static int run_corner(struct ctx *x, int k)
{
	const struct nl_circuit *c = x->a->er.circuit;
	size_t np = nl_part_count(c);
	double *amp = arena_alloc(x->ar, (np + 1) * sizeof *amp);
	double *olo = arena_alloc(x->ar, (np + 1) * sizeof *olo);
	double *ohi = arena_alloc(x->ar, (np + 1) * sizeof *ohi);
	int drops = k == C_VF || k == C_VFH || k == C_VFL, high = k == C_HI || k == C_VFH;
	int low = k == C_LO || k == C_VFL;
	double *vf = drops ? arena_alloc(x->ar, (np + 1) * sizeof *vf) : NULL;
	if (!amp || !olo || !ohi || (drops && !vf))
		return 0;
	/* a forward drop raises some stresses (a clamp's capacitor holds the
	   lowest input plus its diode's drop): the high corner with drops */
	for (size_t i = 0; i < np; i++) {
		const struct nl_part *p = nl_part_at(c, i);
		double t = p->kind == NL_V ? stress_tolerance(x->a, x->p, (uint32_t)i) : 0;
		amp[i] = high ? 1 + t : low || k == C_VF ? 1 - t : 1;
		olo[i] = high || low ? 1 - t : k == C_VF ? 1 - t : 1;
		ohi[i] = high || low ? 1 + t : k == C_VF ? 1 - t : 1;
		/* a PULSE or PWL scales whole: its levels move together, so a
		   level at 0 V stays at 0 V (the mean moves with the swing) */
		if (stress_scales_whole(p))
			olo[i] = ohi[i] = amp[i];
		if (vf)
			vf[i] = p->kind != NL_D  ? 0
				: k != C_VF ? rating_vf_at(p, x->r[i].kind, STRESS_VF_HIGH_A)
					     : rating_vf(p, x->r[i].kind);
	}
	struct prop_corner corner = {amp, olo, ohi, vf, x->skip};
	return prop_run(c, x->a->ranges, &corner, x->ar, &x->runs[k]);
}

/* ---- islands no stress needs ---- */

/* The nominal run's held nodes: those that cut islands (proof.c). */
static int held(const struct ctx *x, uint32_t n)
{
	const struct prop_node *p = &x->a->prop.nodes[n];
	return n == NL_GROUND || (p->state == PS_RESOLVED &&
				  (p->how == PH_GROUND || p->how == PH_SOURCE || p->how == PH_VCVS));
}

/* Islands a stress may need: proven ones, those with a diode or a part of
 * a structure, an inductor a K couples (its partner's island follows it)
 * and the node of a *@expect line. */
static void keep_islands(const struct ctx *x, const char **why, const uint32_t *island,
			 unsigned char *keep)
{
	const struct nl_circuit *c = x->a->er.circuit;
	for (size_t i = 0; i < nl_part_count(c); i++) {
		const struct nl_part *p = nl_part_at(c, i);
		if (p->kind == NL_K && p->ext)
			for (int k = 0; k < 2; k++)
				if (p->ext->ctrl_part[k] != NL_NONE &&
				    island[p->ext->ctrl_part[k]] != NL_NONE)
					keep[island[p->ext->ctrl_part[k]]] = 1;
		if (island[i] != NL_NONE && (!why[i] || p->kind == NL_D || x->tpart_of[i]))
			keep[island[i]] = 1;
	}
	for (uint32_t k = 0; k < x->a->nannots; k++) {
		const struct annot *an = &x->a->annots[k];
		uint32_t id = an->kind == AN_EXPECT
				      ? nl_node_find(c, an->target, strlen(an->target)) : NL_NONE, n;
		const uint32_t *adj = id != NL_NONE ? nl_adjacency(c, id, &n) : NULL;
		for (uint32_t j = 0; adj && j < n; j++)
			if (island[adj[j]] != NL_NONE)
				keep[island[adj[j]]] = 1;
	}
}

/* The corner runs leave alone the free nodes of islands that hold no part
 * a stress needs: islands that break an assumption of the analysis and
 * have no diode and no structure (an amplifier stage beside a transistor).
 * Their capacitors would be unproven parts of no diode-capacitor network,
 * which are not listed (judge_proofs), so nothing is lost, and a deck of
 * amplifier cells does not pay four propagations for them. Diodes in
 * breakdown only change the reasons of islands with diodes, which are
 * kept: the proof here runs without them. */
static int skip_islands(struct ctx *x)
{
	const struct nl_circuit *c = x->a->er.circuit;
	size_t np = nl_part_count(c), nn = nl_node_count(c);
	const char **why;
	uint32_t *island;
	unsigned char *none = arena_zalloc(x->ar, np + 1), *keep = arena_zalloc(x->ar, nn + 1);
	unsigned char *skip = arena_zalloc(x->ar, nn + 1);
	if (!none || !keep || !skip || !proof_run(c, &x->a->prop, none, x->ar, &why, &island))
		return 0;
	x->why0 = why;
	x->island0 = island;
	keep_islands(x, why, island, keep);
	for (size_t i = 0; i < np; i++) {
		const struct nl_part *p = nl_part_at(c, i);
		const uint32_t *q = nl_pins(c, p);
		for (uint8_t k = 0; island[i] != NL_NONE && !keep[island[i]] && k < p->npins; k++)
			skip[q[k]] = !held(x, q[k]);
	}
	x->skip = skip;
	return 1;
}

/* v(n0) - v(n1) extremes at corner k; 0 when a node is not settled. */
static int across_nodes(const struct ctx *x, int k, uint32_t n0, uint32_t n1,
			double *lo, double *hi)
{
	const struct prop_result *r = &x->runs[k];
	const struct prop_node *a = &r->nodes[n0], *b = &r->nodes[n1];
	if (a->state != PS_RESOLVED || b->state != PS_RESOLVED || a->conflict || b->conflict)
		return 0;
	struct arena_mark m = arena_mark(x->ar); /* the difference is scratch */
	const struct form *d = form_lin(x->ar, 1, a->f, -1, b->f);
	int exact;
	if (d)
		form_range(&r->fc, d, lo, hi, &exact);
	arena_reset(x->ar, m);
	return d != NULL;
}

static int across(const struct ctx *x, int k, const struct nl_part *p,
		  double *lo, double *hi)
{
	const uint32_t *q = nl_pins(x->a->er.circuit, p);
	return across_nodes(x, k, q[0], q[1], lo, hi);
}

/* A member of an ungraded capacitor string (cstring.h) is bounded by the
 * whole string: its worst is the string's, its best case not shown (its
 * share of the DC may be nothing), and the corner says why. */
static void string_member(struct ctx *x, uint32_t i, struct stress *s)
{
	uint32_t k = x->cs.n ? x->cs.of[i] : NL_NONE;
	if (k == NL_NONE || !s->bounded)
		return;
	for (int j = 0; j < NCORNER; j++) {
		double lo, hi;
		if (!across_nodes(x, j, x->cs.end0[k], x->cs.end1[k], &lo, &hi)) {
			s->bounded = 0;
			s->best = s->worst = s->rev_min = NAN;
			s->basis = SB_NONE;
			return;
		}
		if (fmax(hi, -lo) > s->worst) {
			s->worst = fmax(hi, -lo);
			s->corner = corner_names[j];
		}
	}
	const char *note = cstring_note(x->a->er.circuit, &x->cs, i, x->ar);
	char buf[600];
	snprintf(buf, sizeof buf, "%s; %s", s->corner ? s->corner : "?", note ? note : "");
	const char *corner = arena_strdup(x->ar, buf);
	s->corner = corner ? corner : s->corner;
	s->best = NAN;
	s->analytic = s->worst;
}

static void set_role(const struct ctx *x, uint32_t part, struct stress *s)
{
	const struct topo_part *tp = x->tpart_of[part];
	s->role = tp ? tp->role : "";
	s->role_kind = tp ? tp->kind : TR_COUNT;
}

static void part_stress(struct ctx *x, uint32_t i, struct stress *s)
{
	const struct nl_part *p = nl_part_at(x->a->er.circuit, i);
	memset(s, 0, sizeof *s);
	s->sim_worst = NAN;
	s->sim_powerup = NAN;
	s->sim_wave = NULL;
	s->surge_i2t = s->surge_width = s->surge_phase = NAN;
	s->part = i;
	s->structure = x->struct_of[i] == UINT32_MAX ? -1 : (int32_t)x->struct_of[i];
	set_role(x, i, s);
	s->qty = p->kind == NL_D ? SQ_REVERSE : SQ_VOLTAGE;
	s->best = INFINITY;
	s->worst = -INFINITY;
	s->rev_min = INFINITY;
	s->bounded = 1;
	for (int k = 0; k < NCORNER; k++) {
		double lo, hi;
		if (!across(x, k, p, &lo, &hi)) {
			s->bounded = 0;
			continue;
		}
		/* a diode: reverse is cathode above anode, v(p1) - v(p0) */
		double v = p->kind == NL_D ? -lo : fmax(hi, -lo);
		if (v > s->worst) {
			s->worst = v;
			s->corner = corner_names[k];
		}
		s->best = fmin(s->best, p->kind == NL_D ? fmax(-lo, 0) : fmax(fmax(hi, -lo), 0));
		s->rev_min = fmin(s->rev_min, lo);
	}
	if (!s->bounded || s->worst == -INFINITY) {
		s->bounded = 0;
		s->best = s->worst = s->rev_min = NAN;
	}
	s->basis = s->bounded ? SB_ANALYSIS : SB_NONE;
	s->analytic = s->worst;
	if (p->kind == NL_C)
		string_member(x, i, s);
}

static const char *const basis_names[SB_COUNT] = {"proven", "simulated", "none", "estimate"};

/* [stress-qty] */
static const struct {
	const char *name, *unit;
} qty_names[SQ_COUNT] = {
	[SQ_VOLTAGE] = {"voltage", "V"},
	[SQ_REVERSE] = {"reverse_voltage", "V"},
	[SQ_SURGE] = {"surge_current", "A"},
	[SQ_AVG_CURRENT] = {"avg_current", "A"},
	[SQ_PEAK_CURRENT] = {"peak_current", "A"},
	[SQ_RMS_CURRENT] = {"rms_current", "A"},
	[SQ_RIPPLE_CURRENT] = {"ripple_current", "A"},
	[SQ_POWER] = {"power", "W"},
	[SQ_LIFE] = {"life", "h"},
};

const char *stress_qty_name(enum stress_qty q)
{
	return q < SQ_COUNT ? qty_names[q].name : "?";
}

const char *stress_qty_unit(enum stress_qty q)
{
	return q < SQ_COUNT ? qty_names[q].unit : "?";
}

int stress_qty_is_voltage(enum stress_qty q)
{
	return q == SQ_VOLTAGE || q == SQ_REVERSE;
}

int stress_qty_is_flow(enum stress_qty q)
{
	return q >= SQ_AVG_CURRENT && q < SQ_COUNT;
}

const struct rating_field *stress_rating(const struct rating *r, enum stress_qty q)
{
	static const struct rating_field none = {NAN, NULL};
	switch (q) {
	case SQ_SURGE: return &r->i_surge;
	case SQ_AVG_CURRENT: return &r->i_avg;
	case SQ_PEAK_CURRENT: return &r->i_peak;
	case SQ_RIPPLE_CURRENT: return &r->i_ripple;
	case SQ_POWER: return &r->p_rated;
	case SQ_RMS_CURRENT:
	case SQ_LIFE: return &none;
	default: return &r->v_rated;
	}
}

const char *stress_qty_derating(enum stress_qty q)
{
	/* [stress-qty] */
	static const char *const field[SQ_COUNT] = {"voltage", "voltage", "surge", "avg_current",
						    "peak_current", "", "ripple_current", "power", ""};
	return q < SQ_COUNT ? field[q] : "";
}

double stress_surge_width(const struct rating *r)
{
	return r->surge_width.value > 0 ? r->surge_width.value : RATING_SURGE_WIDTH;
}

/* IFSM is the peak of a half-sine of the rating's width t, whose I^2 t is
 * IFSM^2 t / 2 (the mean of sin^2 is 1/2). */
double stress_surge_rated_i2t(const struct rating *r)
{
	double t = stress_surge_width(r), i = r->i_surge.value;
	double by_peak = i >= 0 ? i * i * t / 2 : NAN;
	if (isnan(r->i2t.value))
		return by_peak;
	return isnan(by_peak) ? r->i2t.value : fmin(by_peak, r->i2t.value);
}

double stress_surge_rated(const struct rating *r)
{
	double i2t = stress_surge_rated_i2t(r);
	return isnan(i2t) ? NAN : sqrt(2 * i2t / stress_surge_width(r));
}

/* Judged by I^2 t: the half-sine of the rating's width with the pulse's
 * I^2 t has the peak sqrt(2 I^2t / t) (common practice, no source). */
double stress_surge_judged(const struct stress *s, const struct rating *r)
{
	if (!s->bounded)
		return NAN;
	if (isfinite(s->surge_i2t))
		return sqrt(2 * s->surge_i2t / stress_surge_width(r));
	return s->worst;
}

double stress_rated(const struct rating *r, enum stress_qty q)
{
	return q == SQ_SURGE ? stress_surge_rated(r) : stress_rating(r, q)->value;
}

double stress_judged_as(const struct stress *s, const struct rating *r)
{
	if (!s->bounded)
		return NAN;
	return s->qty == SQ_SURGE ? stress_surge_judged(s, r) : stress_judged(s);
}

/* Reports sort by the bound (worst), the rules judge a simulated peak
 * above it: the ratio stays the bound's for voltages, as before. */
double stress_ratio(const struct stress *s, const struct rating *r)
{
	if (!s->bounded)
		return NAN;
	if (s->qty == SQ_SURGE)
		return stress_surge_judged(s, r) / stress_surge_rated(r);
	return s->worst / stress_rating(r, s->qty)->value;
}

const char *stress_basis_name(enum stress_basis b)
{
	return b < SB_COUNT ? basis_names[b] : "?";
}

/* Diodes the analysis drives past their BV: in breakdown, which the ideal
 * analysis does not model (a zener doing its job, or an overstressed
 * rectifier: the solver tells which). */
static unsigned char *breakdown_of(const struct ctx *x, const struct stress_result *out)
{
	const struct nl_circuit *c = x->a->er.circuit;
	unsigned char *b = arena_zalloc(x->ar, nl_part_count(c) + 1);
	for (size_t i = 0; b && i < out->n; i++) {
		const struct stress *s = &out->s[i];
		const struct nl_part *p = nl_part_at(c, s->part);
		double bv = p->kind == NL_D ? dmodel_given(p->model, DM_BV) : NAN;
		if (s->qty == SQ_REVERSE && s->bounded && bv > 0 && s->worst >= bv)
			b[s->part] = 1;
	}
	return b;
}

static void energy(struct ctx *x, struct stress *s);
static int push(struct ctx *x, struct stress_result *out, size_t *cap,
		const struct stress *s);

/* Capacitors and diodes left out so far (not in a structure, not
 * bounded) that share an island with a diode: they are part of a
 * diode-capacitor network too and get a stress of their own. */
/* Islands joined by coupled windings (K) share their diodes: a gate
 * transformer's primary blocking capacitor sits in the same network as the
 * diode on its secondary, though no wire joins them. Repeated until no
 * island changes, at most once per coupling (a chain of windings). */
static void coupled_islands(const struct nl_circuit *c, const uint32_t *island,
			    unsigned char *has_d)
{
	size_t np = nl_part_count(c), nk = 0;
	for (size_t i = 0; i < np; i++)
		nk += nl_part_at(c, i)->kind == NL_K;
	int again = nk > 0;
	for (size_t pass = 0; again && pass <= nk; pass++) {
		again = 0;
		for (size_t i = 0; i < np; i++) {
			const struct nl_part *k = nl_part_at(c, i);
			if (k->kind != NL_K || !k->ext || !k->ext->coupled_part)
				continue;
			int any = 0;
			for (uint32_t j = 0; j < k->ext->ncoupled; j++) {
				uint32_t l = k->ext->coupled_part[j];
				any |= l != NL_NONE && island[l] != NL_NONE && has_d[island[l]];
			}
			for (uint32_t j = 0; any && j < k->ext->ncoupled; j++) {
				uint32_t l = k->ext->coupled_part[j];
				if (l != NL_NONE && island[l] != NL_NONE && !has_d[island[l]]) {
					has_d[island[l]] = 1;
					again = 1;
				}
			}
		}
	}
}

/* An island that holds a source's other end where the source feeds a
 * diode-capacitor network (a winding stacked on a bias rail behind a
 * resistor): the network's current flows through that island, so it is
 * part of the network though the held node cuts the islands apart. */
static void stacked_islands(const struct ctx *x, const uint32_t *island, unsigned char *has_d)
{
	const struct nl_circuit *c = x->a->er.circuit;
	for (size_t i = 0; i < nl_part_count(c); i++) {
		const struct nl_part *p = nl_part_at(c, i);
		if ((p->kind != NL_V && p->kind != NL_E) || island[i] == NL_NONE || has_d[island[i]])
			continue;
		const uint32_t *q = nl_pins(c, p);
		for (int k = 0; k < 2 && !has_d[island[i]]; k++) {
			uint32_t n;
			const uint32_t *adj = q[k] != NL_GROUND && held(x, q[k]) ? nl_adjacency(c, q[k], &n)
										 : NULL;
			for (uint32_t j = 0; adj && j < n; j++)
				if (adj[j] != i && island[adj[j]] != NL_NONE && has_d[island[adj[j]]])
					has_d[island[i]] = 1;
		}
	}
}

static int add_island_parts(struct ctx *x, struct stress_result *out, size_t *cap,
			    const uint32_t *island, unsigned char *has_d)
{
	const struct nl_circuit *c = x->a->er.circuit;
	size_t np = nl_part_count(c);
	unsigned char *listed = arena_zalloc(x->ar, np + 1);
	if (!listed)
		return 0;
	for (size_t i = 0; i < out->n; i++)
		listed[out->s[i].part] = 1;
	for (size_t i = 0; i < np; i++)
		if (nl_part_at(c, i)->kind == NL_D && island[i] != NL_NONE)
			has_d[island[i]] = 1;
	coupled_islands(c, island, has_d);
	stacked_islands(x, island, has_d);
	for (uint32_t i = 0; i < np; i++) {
		const struct nl_part *pt = nl_part_at(c, i);
		if ((pt->kind != NL_C && pt->kind != NL_D) || listed[i] ||
		    island[i] == NL_NONE || !has_d[island[i]])
			continue;
		struct stress s;
		part_stress(x, i, &s);
		if (pt->kind == NL_C)
			energy(x, &s);
		if (!push(x, out, cap, &s))
			return 0;
	}
	return 1;
}

/* True when stress s belongs to no diode-capacitor network: outside every
 * structure, in an island without a diode (or none). */
static int outside_networks(const struct stress *s, const uint32_t *island,
			    const unsigned char *has_d)
{
	return s->structure < 0 && (island[s->part] == NL_NONE || !has_d[island[s->part]]);
}

/* Marks each stress whose island breaks an assumption of the analysis
 * (proof.h), and each the analysis could not bound, as unproven. A part of
 * no diode-capacitor network was listed only because the analysis bounded
 * it; where that bound does not hold it is dropped, as one the analysis
 * could not bound is never listed (an amplifier's bypass capacitors beside
 * a transistor are no concern of the check's and cost no simulation). */
static int judge_proofs(struct ctx *x, struct stress_result *out, size_t *cap)
{
	const char **why;
	uint32_t *island;
	size_t np = nl_part_count(x->a->er.circuit), any = 0;
	unsigned char *bd = breakdown_of(x, out);
	unsigned char *has_d = arena_zalloc(x->ar, nl_node_count(x->a->er.circuit) + 1);
	for (size_t i = 0; bd && i < np; i++)
		any |= bd[i];
	why = x->why0;
	island = x->island0; /* the same proof when no diode is in breakdown */
	if (!bd || !has_d ||
	    (any && !proof_run(x->a->er.circuit, &x->runs[C_NOM], bd, x->ar, &why, &island)) ||
	    !add_island_parts(x, out, cap, island, has_d))
		return 0;
	out->island = island;
	size_t kept = 0;
	for (size_t i = 0; i < out->n; i++) {
		struct stress *s = &out->s[i];
		if (s->qty != SQ_SURGE) {
			s->unproven = why[s->part];
			if (!s->bounded && !s->unproven)
				s->unproven = "the analysis could not settle the voltage at its nodes";
			if (s->unproven && outside_networks(s, island, has_d))
				continue;
		}
		out->s[kept++] = *s;
	}
	out->n = kept;
	out->max_voltage = 0;
	for (size_t i = 0; i < out->n; i++)
		if (out->s[i].bounded && out->s[i].qty != SQ_SURGE)
			out->max_voltage = fmax(out->max_voltage, out->s[i].worst);
	return 1;
}

/* 1 when diode `part` pins a node from a rail that moves between two
 * values (*@source min= max=: a constant interval in the forms): the pin
 * sets the node at the band's extreme in its own direction, but the node
 * rides with the rail anywhere in its band. */
static int banded_pin(const struct ctx *x, uint32_t part)
{
	const struct nl_circuit *c = x->a->er.circuit;
	const struct prop_result *r = &x->runs[C_NOM];
	const uint32_t *q = nl_pins(c, nl_part_at(c, part));
	for (int k = 0; k < 2; k++) {
		const struct prop_node *n = &r->nodes[q[k]], *o = &r->nodes[q[1 - k]];
		if (n->state == PS_RESOLVED && n->how == PH_PIN && n->by == part &&
		    o->state == PS_RESOLVED && o->f &&
		    o->f->hi - o->f->lo > 1e-9 * fmax(1, fabs(o->f->hi)))
			return 1;
	}
	return 0;
}

/* Every proven voltage of an island that holds a banded pin keeps its
 * proof as a floor only and asks the solver, whose number stands where it
 * is higher (simbound.c): a negative output stacked on a bus that may sit
 * anywhere from 36 to 60 V is pinned at the bus's bottom less the swing,
 * yet its capacitor to ground holds the bus's top less the swing while
 * the bus is high. The proof still stands where the solver's corners
 * (the band's ends, fixed) give less: a capacitor charged at the band's
 * top while the rail sits at its bottom is a state they do not run. */
static int banded_pins(struct ctx *x, struct stress_result *out)
{
	const struct nl_circuit *c = x->a->er.circuit;
	const uint32_t *island = out->island;
	unsigned char *flag = island ? arena_zalloc(x->ar, nl_node_count(c) + 1) : NULL;
	if (!flag)
		return island == NULL;
	int any = 0;
	for (size_t i = 0; i < nl_part_count(c); i++)
		if (nl_part_at(c, i)->kind == NL_D && island[i] != NL_NONE &&
		    banded_pin(x, (uint32_t)i))
			any = flag[island[i]] = 1;
	for (size_t i = 0; any && i < out->n; i++) {
		struct stress *s = &out->s[i];
		if (!stress_qty_is_voltage(s->qty) || s->unproven || s->basis != SB_ANALYSIS ||
		    !isfinite(s->worst) || island[s->part] == NL_NONE || !flag[island[s->part]])
			continue;
		s->floor = 1;
		s->analytic = s->worst;
		s->unproven = "a diode pins its network to a rail that moves between two values "
			      "(*@source min= max=): the proof takes the band's one end, the "
			      "network rides with the rail over all of it";
	}
	return 1;
}

void stress_set_energy(struct stress *s, double cap_f)
{
	s->energy_j = s->bounded ? 0.5 * cap_f * s->worst * s->worst : NAN;
}

static void energy(struct ctx *x, struct stress *s)
{
	const struct nl_circuit *c = x->a->er.circuit;
	const struct nl_part *p = nl_part_at(c, s->part);
	s->discharge_r = INFINITY; /* discharge.h, once the worst is final */
	s->stack = -1;
	s->discharge_s = NAN;
	stress_set_energy(s, p->value * (p->ext ? p->ext->mult : 1.0));
}

/* ---- structures ---- */

static double node_extreme(struct arena *ar, const struct prop_result *r, uint32_t a, uint32_t b,
			   double *lo, double *hi)
{
	*lo = *hi = NAN;
	if (a == NL_NONE || b == NL_NONE)
		return NAN;
	const struct prop_node *na = &r->nodes[a], *nb = &r->nodes[b];
	if (na->state != PS_RESOLVED || nb->state != PS_RESOLVED)
		return NAN;
	struct arena_mark m = arena_mark(ar); /* the difference is scratch */
	const struct form *d = form_lin(ar, 1, na->f, -1, nb->f);
	int exact;
	if (d)
		form_range(&r->fc, d, lo, hi, &exact);
	arena_reset(ar, m);
	return d ? fmax(fabs(*lo), fabs(*hi)) : NAN;
}

/* Conductance from node to settled nodes through resistors, and the
 * current they draw at the nominal corner (V across each / R). */
static double load_at(const struct ctx *x, uint32_t node, double *current)
{
	const struct nl_circuit *c = x->a->er.circuit;
	const struct prop_result *r = &x->runs[C_NOM];
	uint32_t n;
	const uint32_t *adj = nl_adjacency(c, node, &n);
	double g = 0;
	*current = 0;
	for (uint32_t i = 0; i < n; i++) {
		const struct nl_part *p = nl_part_at(c, adj[i]);
		if (p->kind != NL_R || !(p->value > 0))
			continue;
		const uint32_t *q = nl_pins(c, p);
		uint32_t other = q[0] == node ? q[1] : q[0];
		/* a resistor to a node that only it holds carries no DC */
		if (r->nodes[other].by == adj[i] || r->nodes[other].state != PS_RESOLVED)
			continue;
		double lo, hi, v = node_extreme(x->ar, r, node, other, &lo, &hi);
		double gi = (p->ext ? p->ext->mult : 1.0) / p->value;
		g += gi;
		if (!isnan(v))
			*current += gi * (lo + hi) / 2 * (lo + hi > 0 ? 1 : -1);
	}
	return g;
}

static double drive_period(const struct ctx *x, const struct topo_struct *t)
{
	if (t->drive_source == NL_NONE)
		return 0;
	const struct prop_result *r = &x->runs[C_NOM];
	return r->sigs[r->sig_of_part[t->drive_source]].period;
}

/* A capacitor's capacitance under its worst DC bias: the nominal value
 * times m=, times the share its c_bias curve leaves at its worst |V| (at
 * the curve's end when the voltage is unknown); noted in x->fig. */
static double cap_eff(const struct ctx *x, uint32_t part)
{
	const struct nl_part *p = nl_part_at(x->a->er.circuit, part);
	double c = p->value * (p->ext ? p->ext->mult : 1.0);
	const struct capbias *cb = x->r[part].c_bias;
	if (!cb)
		return c;
	double v = x->vworst ? x->vworst[part] : NAN;
	int past = 0;
	double k = capbias_share(cb, isnan(v) ? INFINITY : v, &past);
	if (x->fig) {
		x->fig->bias_share = fmin(x->fig->bias_share, k);
		x->fig->bias_past |= past;
	}
	return c * k;
}

static double struct_caps(const struct ctx *x, const struct topo_struct *t,
			  int smallest)
{
	double total = 0, min = INFINITY;
	for (uint32_t i = 0; i < t->nparts; i++) {
		const struct nl_part *p = nl_part_at(x->a->er.circuit, t->parts[i].part);
		if (p->kind != NL_C)
			continue;
		double c = cap_eff(x, t->parts[i].part);
		total += c;
		min = fmin(min, c);
	}
	return smallest ? min : total;
}

/* Capacitance of a clamp's coupling: pieces between the same two nodes add,
 * groups on different node pairs (a capacitor split in series) combine in
 * series. */
static double coupling_c(const struct ctx *x, const struct topo_struct *t)
{
	uint32_t a[16], b[16];
	double cg[16];
	int ng = 0;
	for (uint32_t i = 0; i < t->nparts; i++) {
		const struct nl_part *p = nl_part_at(x->a->er.circuit, t->parts[i].part);
		if (t->parts[i].kind != TR_COUPLING_CAP)
			continue;
		const uint32_t *q = nl_pins(x->a->er.circuit, p);
		int g = 0;
		while (g < ng && !((a[g] == q[0] && b[g] == q[1]) || (a[g] == q[1] && b[g] == q[0])))
			g++;
		if (g == ng && ng < 16) {
			a[ng] = q[0];
			b[ng] = q[1];
			cg[ng++] = 0;
		}
		if (g < 16)
			cg[g] += cap_eff(x, t->parts[i].part);
	}
	double inv = 0;
	for (int g = 0; g < ng; g++)
		inv += 1 / cg[g];
	return inv > 0 ? 1 / inv : INFINITY;
}

static void figures(struct ctx *x, size_t si, struct stress_struct *f,
		    const struct stress *coupling)
{
	const struct topo_struct *t = &x->a->topo.s[si];
	double lo, hi, cur = 0;
	memset(f, 0, sizeof *f);
	f->bias_share = 1;
	x->fig = f;
	f->period = drive_period(x, t);
	f->swing = 0;
	for (int k = 0; k < NCORNER; k++)
		if (!isnan(node_extreme(x->ar, &x->runs[k], t->drive, NL_GROUND, &lo, &hi)))
			f->swing = fmax(f->swing, hi - lo);
	double g = t->output != NL_NONE ? load_at(x, t->output, &cur) : 0;
	f->load_r = g > 0 ? 1 / g : INFINITY;
	if ((t->kind == TK_CLAMP_FLOOR || t->kind == TK_CLAMP_CEILING) && g > 0 && coupling &&
	    f->period > 0) {
		/* the whole coupling (pieces in series and in parallel) between the
		 * drive and the clamp node */
		double c = coupling_c(x, t), vcap = 0;
		for (int k = 0; k < NCORNER; k++)
			if (!isnan(node_extreme(x->ar, &x->runs[k], t->output, t->drive, &lo, &hi)))
				vcap = fmax(vcap, fmax(fabs(lo), fabs(hi)));
		(void)coupling;
		f->droop_c = c;
		f->droop_v = vcap * f->period / (f->load_r * c);
		f->droop_frac = f->swing > 0 ? f->droop_v / f->swing : 0;
	}
	if (t->kind == TK_LADDER && g > 0 && f->period > 0) {
		double n = floor(t->stages), fq = 1 / f->period;
		f->ladder_i = fabs(cur);
		f->ladder_c = struct_caps(x, t, 1);
		double k = f->ladder_i / (fq * f->ladder_c);
		f->ladder_drop = k * (2 * n * n * n / 3 + n * n / 2 - n / 6);
		f->ladder_ripple = k * n * (n + 1) / 2;
		f->ladder_nopt = f->ladder_i > 0 ? sqrt(f->swing / 2 * fq * f->ladder_c / f->ladder_i) : INFINITY;
	}
}

int stress_refigure_droop(struct stress_result *sr)
{
	for (size_t i = 0; i < sr->n; i++) {
		const struct stress *s = &sr->s[i];
		if (s->structure < 0 || s->role_kind != TR_COUPLING_CAP || s->qty != SQ_VOLTAGE ||
		    s->basis == SB_ANALYSIS)
			continue;
		struct stress_struct *f = &sr->st[s->structure];
		if (!(f->droop_c > 0) || !(f->load_r > 0))
			continue;
		f->droop_v = s->bounded ? s->worst * f->period / (f->load_r * f->droop_c) : 0;
		f->droop_frac = f->swing > 0 ? f->droop_v / f->swing : 0;
	}
	return 1;
}

/* At power-up every capacitor is discharged: a pinned node still sits at
 * the node its capacitors couple it to. */
static uint32_t at_power_up(const struct prop_result *r, uint32_t node)
{
	const struct prop_node *n = &r->nodes[node];
	return n->how == PH_PIN && n->anchor != NL_NONE ? n->anchor : node;
}

/* Power-up surge of a first-stage diode: its largest forward voltage with
 * the capacitors discharged, through everything in series with it. */
static void surge(struct ctx *x, size_t si, uint32_t part, struct stress *s)
{
	const struct nl_part *p = nl_part_at(x->a->er.circuit, part);
	const uint32_t *q = nl_pins(x->a->er.circuit, p);
	double v = 0, lo, hi;
	memset(s, 0, sizeof *s);
	s->sim_worst = NAN;
	s->sim_powerup = NAN;
	s->surge_i2t = s->surge_width = s->surge_phase = NAN;
	s->part = part;
	s->structure = (int32_t)si;
	set_role(x, part, s);
	s->qty = SQ_SURGE;
	uint32_t an = at_power_up(&x->runs[C_NOM], q[0]), ka = at_power_up(&x->runs[C_NOM], q[1]);
	for (int k = C_NOM; k < C_VF; k++) {
		double e = node_extreme(x->ar, &x->runs[k], an, ka, &lo, &hi);
		if (!isnan(e) && hi > v) {
			v = hi;
			s->corner = corner_names[k];
		}
	}
	double rs = dmodel_given(p->model, DM_RS);
	const struct prop_node *na = &x->runs[C_NOM].nodes[an], *nk = &x->runs[C_NOM].nodes[ka];
	s->series_r = na->zs + nk->zs + (isnan(rs) ? 0 : rs / (p->value > 0 ? p->value : 1));
	s->bounded = v > 0;
	s->worst = s->series_r > 0 ? v / s->series_r : INFINITY;
	s->best = s->worst;
	s->rev_min = NAN;
}

static int membership(struct ctx *x)
{
	size_t np = nl_part_count(x->a->er.circuit);
	x->struct_of = arena_alloc(x->ar, (np + 1) * sizeof *x->struct_of);
	x->tpart_of = arena_zalloc(x->ar, (np + 1) * sizeof *x->tpart_of);
	if (!x->struct_of || !x->tpart_of)
		return 0;
	for (size_t i = 0; i < np; i++)
		x->struct_of[i] = UINT32_MAX;
	for (size_t s = 0; s < x->a->topo.n; s++)
		for (uint32_t k = 0; k < x->a->topo.s[s].nparts; k++) {
			const struct topo_part *tp = &x->a->topo.s[s].parts[k];
			x->struct_of[tp->part] = (uint32_t)s;
			x->tpart_of[tp->part] = tp;
		}
	return 1;
}

static int first_stage_diode(const struct ctx *x, uint32_t part)
{
	const struct nl_part *p = nl_part_at(x->a->er.circuit, part);
	if (p->kind != NL_D || x->struct_of[part] == UINT32_MAX)
		return 0;
	/* tpart_of, not a walk over the structure: a network can hold every
	 * part of the circuit */
	const struct topo_struct *t = &x->a->topo.s[x->struct_of[part]];
	return t->kind != TK_NETWORK && x->tpart_of[part]->stage <= 1;
}

/* Room for every stress the parts can give (a capacitor one, a diode its
 * voltage and a surge), so that push never copies the list. */
static int reserve(struct ctx *x, struct stress_result *out, size_t *cap)
{
	const struct nl_circuit *c = x->a->er.circuit;
	size_t n = 0;
	for (uint32_t i = 0; i < nl_part_count(c); i++)
		n += nl_part_at(c, i)->kind == NL_C ? 1 : nl_part_at(c, i)->kind == NL_D ? 2 : 0;
	out->s = n ? arena_alloc(x->ar, n * sizeof *out->s) : NULL;
	*cap = out->s ? n : 0;
	return out->s || !n;
}

static int push(struct ctx *x, struct stress_result *out, size_t *cap,
		const struct stress *s)
{
	if (out->n == *cap) {
		size_t ncap = *cap ? *cap * 2 : 64;
		struct stress *v = arena_alloc(x->ar, ncap * sizeof *v);
		if (!v)
			return 0;
		if (out->n)
			memcpy(v, out->s, out->n * sizeof *v);
		out->s = v;
		*cap = ncap;
	}
	out->s[out->n++] = *s;
	return 1;
}

int stress_run(const struct audit *a, const struct rating *r, const struct profile *p,
	       struct arena *ar, struct stress_result *out)
{
	struct ctx x;
	memset(&x, 0, sizeof x);
	memset(out, 0, sizeof *out);
	x.a = a;
	x.ar = ar;
	x.r = r;
	x.p = p;
	if (!membership(&x) || !skip_islands(&x) || !cstring_find(a->er.circuit, ar, &x.cs))
		return 0;
	/* the nominal corner is the audit's own run (the same sources, ideal
	   diodes, nothing left unsettled) */
	x.runs[C_NOM] = a->prop;
	for (int k = 0; k < NCORNER; k++)
		if (k != C_NOM && !run_corner(&x, k))
			return 0;
	const struct nl_circuit *c = a->er.circuit;
	size_t cap = 0, np = nl_part_count(c);
	if (!reserve(&x, out, &cap))
		return 0;
	const struct stress **coupling = arena_zalloc(ar, (a->topo.n + 1) * sizeof *coupling);
	if (!coupling)
		return 0;
	for (uint32_t i = 0; i < np; i++) {
		const struct nl_part *pt = nl_part_at(c, i);
		if (pt->kind != NL_C && pt->kind != NL_D)
			continue;
		struct stress s;
		part_stress(&x, i, &s);
		if (!s.bounded && s.structure < 0)
			continue; /* not in a structure and not bounded: not listed */
		if (pt->kind == NL_C)
			energy(&x, &s);
		if (!push(&x, out, &cap, &s))
			return 0;
		if (s.bounded)
			out->max_voltage = fmax(out->max_voltage, s.worst);
		if (first_stage_diode(&x, i)) {
			struct stress sg;
			surge(&x, (size_t)s.structure, i, &sg);
			/* the first pulse with the capacitors discharged: a later one can
			   be larger (a pump's clock, a resonance, a reversed charge) */
			sg.basis = sg.bounded ? SB_ESTIMATE : SB_NONE;
			sg.unproven = sg.bounded ? "first-pulse formula, not simulated: the peak source "
						   "voltage over the series resistance with the capacitors "
						   "discharged; a later pulse can be larger"
						 : NULL;
			sg.analytic = sg.bounded ? sg.worst : NAN;
			if (!push(&x, out, &cap, &sg))
				return 0;
		}
	}
	for (size_t i = 0; i < out->n; i++)
		if (out->s[i].structure >= 0 && nl_part_at(c, out->s[i].part)->kind == NL_C &&
		    out->s[i].role_kind == TR_COUPLING_CAP && out->s[i].bounded)
			coupling[out->s[i].structure] = &out->s[i];
	out->st = arena_zalloc(ar, (a->topo.n + 1) * sizeof *out->st);
	if (!out->st)
		return 0;
	x.vworst = arena_alloc(ar, (np + 1) * sizeof *x.vworst);
	if (!x.vworst)
		return 0;
	for (size_t i = 0; i <= np; i++)
		x.vworst[i] = NAN;
	for (size_t i = 0; i < out->n; i++)
		if (out->s[i].qty == SQ_VOLTAGE && out->s[i].bounded)
			x.vworst[out->s[i].part] = out->s[i].worst;
	for (size_t s = 0; s < a->topo.n; s++)
		figures(&x, s, &out->st[s], coupling[s]);
	x.fig = NULL;
	if (!judge_proofs(&x, out, &cap) || !banded_pins(&x, out))
		return 0;
	for (int k = 0; k < NCORNER; k++)
		out->corners[out->ncorners++] = corner_names[k];
	struct prop_result *runs = arena_alloc(ar, sizeof x.runs);
	if (!runs)
		return 0;
	memcpy(runs, x.runs, sizeof x.runs);
	out->runs = runs;
	return 1;
}

double stress_simulated_peak(const struct stress *s)
{
	double p = s->sim_worst;
	if (isfinite(s->sim_powerup) && !(s->sim_powerup <= p))
		p = s->sim_powerup;
	return p;
}

int stress_powerup_above(const struct stress *s)
{
	return isfinite(s->sim_powerup) && isfinite(s->sim_worst) &&
	       s->sim_powerup > s->sim_worst * (1 + STRESS_GAP_REL) + STRESS_GAP_ABS;
}

int stress_gap(const struct stress *s)
{
	double p = stress_simulated_peak(s);
	return s->bounded && isfinite(p) && !s->sim_near_open &&
	       p > s->worst * (1 + STRESS_GAP_REL) + STRESS_GAP_ABS;
}

double stress_judged(const struct stress *s)
{
	double p = stress_simulated_peak(s);
	return isfinite(p) && !s->sim_near_open && s->bounded && p > s->worst ? p : s->worst;
}

int stress_confirmed(const struct stress *s)
{
	return s->bounded && isfinite(s->sim_worst) && !s->sim_near_open &&
	       s->sim_worst >= s->worst * (1 - STRESS_CONFIRM_BAND) - STRESS_GAP_ABS;
}

/* The DC part of v(pin 0) - v(pin 1) in the best-case propagation (sources
 * at -tol, diode drops), NaN when either node is not settled there. The
 * simulations start each capacitor there (stress.h). */
double stress_low_dc(const struct audit *a, const struct stress_result *sr,
		     struct arena *ar, const struct nl_part *p)
{
	const struct prop_result *r = &sr->runs[STRESS_CORNER_LOW];
	const uint32_t *q = nl_pins(a->er.circuit, p);
	const struct prop_node *n0 = &r->nodes[q[0]], *n1 = &r->nodes[q[1]];
	if (n0->state != PS_RESOLVED || n1->state != PS_RESOLVED || n0->conflict || n1->conflict)
		return NAN;
	const struct form *d = form_lin(ar, 1, n0->f, -1, n1->f);
	if (!d)
		return NAN;
	double lo, hi, alo, ahi;
	int exact;
	form_range(&r->fc, d, &lo, &hi, &exact);
	form_ac_range(&r->fc, d, &alo, &ahi, &exact);
	return (lo + hi) / 2 - (alo + ahi) / 2;
}
