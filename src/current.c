/* current.c: see current.h. Each number is the solver's: the mean, rms
 * and largest of a part's current over one steady-state period and the
 * mean of v i (simrun.h, integrals over the accepted points). The
 * voltages are stress.c's and simbound.c's, every verdict rules.c's. */
#include "current.h"

#include <math.h>
#include <string.h>


struct build {
	const struct audit *a;
	const struct rating *r;
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
		return "the circuit was not simulated (it has more parts than the simulation takes)";
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

/* Appends stress q of part, placed like base (its voltage stress; NULL
 * for a resistor, which belongs to no structure). */
static void add(struct build *b, const struct stress *base, uint32_t part, enum stress_qty q)
{
	struct stress *s = &b->out[b->n++];
	memset(s, 0, sizeof *s);
	s->part = part;
	s->structure = base ? base->structure : -1;
	s->role = base ? base->role : "";
	s->role_kind = base ? base->role_kind : TR_COUNT;
	s->qty = q;
	s->rev_min = s->analytic = s->sim_worst = s->sim_powerup = NAN;
	s->energy_j = s->series_r = s->discharge_s = NAN;
	s->discharge_r = INFINITY;
	s->stack = -1;
	const char *why = missing_why(b->sr, part);
	if (why) {
		s->basis = SB_NONE;
		s->best = s->worst = NAN;
		s->unproven = why;
		return;
	}
	const struct stress_fallback *fb = b->sr->fallback;
	s->bounded = 1;
	s->basis = SB_SIMULATED;
	s->worst = s->best = value_of(&fb->flow[part], q);
	s->corner = fb->flow_corner;
	s->unproven = "currents come from the solver only: the analysis bounds voltages";
}

/* The stresses of part after its last voltage or surge stress; base is
 * its voltage stress. */
static void part_flows(struct build *b, const struct stress *base)
{
	const struct nl_part *p = nl_part_at(b->a->er.circuit, base->part);
	if (p->kind == NL_C) {
		add(b, base, base->part, SQ_RIPPLE_CURRENT);
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

int current_run(const struct audit *a, const struct rating *r, struct arena *ar,
		struct stress_result *sr)
{
	const struct nl_circuit *c = a->er.circuit;
	size_t np = nl_part_count(c);
	if (sr->n == 0)
		return 1;
	struct build b = {a, r, sr, NULL, 0};
	size_t *last = arena_alloc(ar, (np + 1) * sizeof *last);
	unsigned char *net = networks(&b, ar);
	/* at most four more per stress (a diode's), one per resistor */
	b.out = arena_alloc(ar, (5 * sr->n + np + 1) * sizeof *b.out);
	if (!last || !net || !b.out)
		return 0;
	for (size_t i = 0; i < sr->n; i++)
		last[sr->s[i].part] = i;
	for (size_t i = 0; i < sr->n; i++) {
		const struct stress *s = &sr->s[i];
		b.out[b.n++] = *s;
		const struct stress *base = s;
		while (base > sr->s && base[-1].part == s->part)
			base--; /* the part's first stress: its voltage */
		if (last[s->part] == i && stress_qty_is_voltage(base->qty))
			part_flows(&b, base);
	}
	for (uint32_t i = 0; sr->island && i < np; i++)
		if (nl_part_at(c, i)->kind == NL_R && sr->island[i] != NL_NONE && net[sr->island[i]] == 3)
			add(&b, NULL, i, SQ_POWER);
	sr->s = b.out;
	sr->n = b.n;
	return 1;
}
