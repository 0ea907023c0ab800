/* hull.c: see hull.h. Nodes held by chains of independent voltage sources
 * from ground get the range of their sources' values (every level of the
 * waveform, its tolerance, a declared min/max); the other nodes are
 * joined into islands through resistors, diodes, switches and zero-volt
 * sources; an island that touches any other element, holds a capacitance
 * between two of its own nodes (where a switch or an edge could pump it)
 * or one returned to a node that moves, is not covered. */
#include "hull.h"

#include <math.h>
#include <string.h>

#include "dmodel.h"
#include "expr.h"

struct hx {
	const struct audit *a;
	const struct profile *p;
	const struct nl_circuit *c;
	double *lo, *hi;       /* per node: the held range, NaN when free */
	unsigned char *steady; /* per node: held at a value constant in time */
	uint32_t *up;          /* per node: union-find over the free nodes */
	unsigned char *bad;    /* per island root: not covered */
	double *ilo, *ihi;     /* per island root: the range it spans */
};

static void widen(double *lo, double *hi, double v, double tol)
{
	*lo = fmin(*lo, v - fabs(v) * tol);
	*hi = fmax(*hi, v + fabs(v) * tol);
}

/* The range of voltage source i's value over all time, every level at
 * either end of its tolerance; 0 when its waveform is not known. */
static int source_range(const struct hx *x, uint32_t i, double *lo, double *hi)
{
	const struct nl_part *pt = nl_part_at(x->c, i);
	const struct nl_source *s = pt->ext ? pt->ext->src : NULL;
	double tol = stress_source_tol(x->a, x->p, i);
	*lo = INFINITY, *hi = -INFINITY;
	if (!s || s->unknown)
		return 0;
	widen(lo, hi, s->dc, tol);
	const double *g = s->args;
	uint32_t n = s->nargs;
	switch (s->wave) {
	case NL_WAVE_NONE:
		break;
	case NL_WAVE_SIN:
	case NL_WAVE_SFFM: {
		double vo = n > 0 ? g[0] : 0, va = n > 1 ? fabs(g[1]) * (1 + tol) : 0;
		widen(lo, hi, vo, tol);
		*lo -= va, *hi += va;
		break;
	}
	case NL_WAVE_AM: {
		double m = n > 1 ? fabs(g[0]) * (fabs(g[1]) + 1) * (1 + tol) : INFINITY;
		*lo = fmin(*lo, -m), *hi = fmax(*hi, m);
		break;
	}
	case NL_WAVE_PULSE:
	case NL_WAVE_EXP:
		for (uint32_t k = 0; k < n && k < 2; k++)
			widen(lo, hi, g[k], tol);
		break;
	case NL_WAVE_PWL:
		for (uint32_t k = 1; k < n; k += 2)
			widen(lo, hi, g[k], tol);
		break;
	default:
		return 0;
	}
	const struct audit_source *as = x->a->sources ? &x->a->sources[i] : NULL;
	if (as && isfinite(as->min) && isfinite(as->max))
		*lo = fmin(*lo, as->min), *hi = fmax(*hi, as->max);
	return isfinite(*lo) && isfinite(*hi);
}

/* The values a behavioural expression can take when each is a number
 * written in it: a choice between such values (a comparator's `c ? 5 :
 * 0`), nested or negated; 0 for anything else (a probe, arithmetic). */
static int levels(const struct expr *e, unsigned depth, double *lo, double *hi)
{
	if (!e || depth > 32)
		return 0;
	switch (e->op) {
	case EXPR_NUM:
		*lo = fmin(*lo, e->num), *hi = fmax(*hi, e->num);
		return isfinite(e->num);
	case EXPR_NEG: {
		double l = INFINITY, h = -INFINITY;
		if (!levels(e->args[0], depth + 1, &l, &h))
			return 0;
		*lo = fmin(*lo, -h), *hi = fmax(*hi, -l);
		return 1;
	}
	case EXPR_COND:
		return levels(e->args[1], depth + 1, lo, hi) && levels(e->args[2], depth + 1, lo, hi);
	default:
		return 0;
	}
}

/* A behavioural voltage source whose output takes only written values
 * (a macro-model's comparator or latch): its range, pin 0 over pin 1. */
static int behav_range(const struct nl_part *pt, double *lo, double *hi)
{
	const struct nl_behav *b = pt->ext ? pt->ext->behav : NULL;
	*lo = INFINITY, *hi = -INFINITY;
	return b && !b->current && !b->resistance && levels(b->e, 0, lo, hi);
}

static int is_steady(const struct nl_part *pt)
{
	const struct nl_source *s = pt->ext ? pt->ext->src : NULL;
	return !s || (s->wave == NL_WAVE_NONE && !s->unknown);
}

/* Holds the nodes that chains of voltage sources tie to ground, breadth
 * first from ground; queue has room for every node. */
static void hold(struct hx *x, uint32_t *queue)
{
	size_t head = 0, tail = 0;
	x->lo[NL_GROUND] = x->hi[NL_GROUND] = 0;
	x->steady[NL_GROUND] = 1;
	queue[tail++] = NL_GROUND;
	while (head < tail) {
		uint32_t m = queue[head++], n;
		const uint32_t *adj = nl_adjacency(x->c, m, &n);
		for (uint32_t j = 0; j < n; j++) {
			const struct nl_part *pt = nl_part_at(x->c, adj[j]);
			double vlo, vhi;
			const uint32_t *q = nl_pins(x->c, pt);
			int src = pt->kind == NL_V && pt->npins == 2 && source_range(x, adj[j], &vlo, &vhi);
			/* a behavioural output from its reference pin: whatever
			   it reads, its value is one of the numbers written in it */
			int beh = !src && pt->npins >= 2 && q[1] == m && behav_range(pt, &vlo, &vhi);
			if (!src && !beh)
				continue;
			int up = q[1] == m; /* v(q0) - v(q1) = value */
			uint32_t o = up ? q[0] : q[1];
			if (!isnan(x->lo[o]))
				continue;
			x->lo[o] = up ? x->lo[m] + vlo : x->lo[m] - vhi;
			x->hi[o] = up ? x->hi[m] + vhi : x->hi[m] - vlo;
			x->steady[o] = x->steady[m] && src && is_steady(pt);
			queue[tail++] = o;
		}
	}
}

static uint32_t root(uint32_t *up, uint32_t n)
{
	while (up[n] != n)
		n = up[n] = up[up[n]];
	return n;
}

static int is_free(const struct hx *x, uint32_t n)
{
	return isnan(x->lo[n]);
}

static void join(struct hx *x, uint32_t m, uint32_t n)
{
	if (is_free(x, m) && is_free(x, n))
		x->up[root(x->up, m)] = root(x->up, n);
}

/* 1 when the part carries current from its higher node to its lower
 * between pins 0 and 1, and nothing else: a positive resistor, a diode,
 * a switch's contacts, a voltage source of zero volts (a wire). */
static int passive(const struct nl_part *pt)
{
	const char *mt = pt->model ? pt->model->type : "";
	switch (pt->kind) {
	case NL_R:
		return pt->value > 0 && !(pt->ext && pt->ext->behavioural);
	case NL_D:
		return 1;
	case NL_V:
		return pt->npins == 2 && is_steady(pt) && pt->ext && pt->ext->src &&
		       pt->ext->src->dc == 0;
	case NL_OPAQUE:
		return (pt->letter == 's' && pt->npins == 4 && strcmp(mt, "sw") == 0) ||
		       (pt->letter == 'w' && pt->npins == 2 && strcmp(mt, "csw") == 0);
	default:
		return 0;
	}
}

/* 1 when the part holds charge between its pins 0 and 1 */
static int stores(const struct nl_part *pt)
{
	if (pt->kind == NL_C)
		return 1;
	return pt->kind == NL_D && (dmodel_value(pt->model, DM_CJO) > 0 ||
				    dmodel_value(pt->model, DM_TT) > 0);
}

/* The pins of a part through which current flows: a controlled source's,
 * a behavioural source's or a switch's control and probe pins carry none. */
static uint32_t current_pins(const struct nl_part *pt)
{
	if (pt->kind == NL_E || pt->kind == NL_G || pt->kind == NL_F || pt->kind == NL_H ||
	    pt->letter == 'b' || pt->letter == 's' || pt->letter == 'w')
		return pt->npins < 2 ? pt->npins : 2;
	return pt->kind == NL_K ? 0 : pt->npins;
}

/* What one part does to the islands it touches: a bad island, or a wider
 * range (a held node reached, a capacitor's initial charge). */
static void touch(struct hx *x, uint32_t i)
{
	const struct nl_part *pt = nl_part_at(x->c, i);
	const uint32_t *q = nl_pins(x->c, pt);
	uint32_t np = current_pins(pt);
	int ok = passive(pt) || pt->kind == NL_C;
	for (uint32_t k = 0; k < np; k++) {
		if (!is_free(x, q[k]))
			continue;
		uint32_t r = root(x->up, q[k]);
		uint32_t o = np == 2 ? q[1 - k] : NL_NONE;
		if (!ok || o == NL_NONE) {
			x->bad[r] = 1;
			continue;
		}
		if (is_free(x, o)) {
			/* a capacitance between two free nodes can be pumped */
			x->bad[r] = (unsigned char)(x->bad[r] | stores(pt));
			continue;
		}
		x->bad[r] = (unsigned char)(x->bad[r] | (stores(pt) && !x->steady[o]));
		x->ilo[r] = fmin(x->ilo[r], x->lo[o]);
		x->ihi[r] = fmax(x->ihi[r], x->hi[o]);
		double ic = pt->kind == NL_C && pt->ext ? pt->ext->ic : NAN;
		if (isfinite(ic)) { /* v(q0) - v(q1) = ic at the start */
			double s = k == 0 ? ic : -ic;
			x->ilo[r] = fmin(x->ilo[r], x->lo[o] + s);
			x->ihi[r] = fmax(x->ihi[r], x->hi[o] + s);
		}
	}
}

/* The range of node n: held, or its island's; 0 when not covered. */
static int node_range(const struct hx *x, uint32_t n, double *lo, double *hi)
{
	if (!is_free(x, n)) {
		*lo = x->lo[n], *hi = x->hi[n];
		return 1;
	}
	uint32_t r = root(x->up, n);
	*lo = x->ilo[r], *hi = x->ihi[r];
	return !x->bad[r];
}

/* A part kept as opaque with its connections not known (a code-model
 * instance) could touch any node of its subcircuit instance, or of the
 * whole circuit at the top level: every island a part of that instance
 * touches is not covered, as the solver treats it (simbound.c). */
static void unknown_pins(struct hx *x, const char *path)
{
	const char *dot = strrchr(path, '.');
	size_t n = dot ? (size_t)(dot - path) + 1 : 0;
	for (size_t i = 0; i < nl_part_count(x->c); i++) {
		const struct nl_part *pt = nl_part_at(x->c, i);
		const uint32_t *q = nl_pins(x->c, pt);
		if (strncmp(pt->path, path, n) != 0)
			continue;
		for (uint32_t k = 0; k < pt->npins; k++)
			if (is_free(x, q[k]))
				x->bad[root(x->up, q[k])] = 1;
	}
}

static int setup(struct hx *x, struct arena *ar)
{
	size_t nn = nl_node_count(x->c), np = nl_part_count(x->c);
	x->lo = arena_alloc(ar, nn * sizeof *x->lo);
	x->hi = arena_alloc(ar, nn * sizeof *x->hi);
	x->ilo = arena_alloc(ar, nn * sizeof *x->ilo);
	x->ihi = arena_alloc(ar, nn * sizeof *x->ihi);
	x->up = arena_alloc(ar, nn * sizeof *x->up);
	x->steady = arena_zalloc(ar, nn);
	x->bad = arena_zalloc(ar, nn);
	if (!x->lo || !x->hi || !x->ilo || !x->ihi || !x->up || !x->steady || !x->bad)
		return 0;
	for (size_t n = 0; n < nn; n++) {
		x->lo[n] = x->hi[n] = NAN;
		x->ilo[n] = x->ihi[n] = 0; /* every node starts from 0 V at power-up */
		x->up[n] = (uint32_t)n;
	}
	uint32_t *queue = arena_alloc(ar, nn * sizeof *queue);
	if (!queue)
		return 0;
	hold(x, queue);
	for (size_t i = 0; i < np; i++) {
		const struct nl_part *pt = nl_part_at(x->c, i);
		if ((passive(pt) || pt->kind == NL_C) && pt->npins == 2) {
			const uint32_t *q = nl_pins(x->c, pt);
			join(x, q[0], q[1]);
		}
	}
	for (size_t i = 0; i < np; i++)
		touch(x, (uint32_t)i);
	for (size_t i = 0; i < np; i++) {
		const struct nl_part *pt = nl_part_at(x->c, i);
		if (pt->kind == NL_OPAQUE && pt->npins == 0)
			unknown_pins(x, pt->path);
	}
	return 1;
}

static void bound(const struct hx *x, struct stress *s)
{
	const struct nl_part *pt = nl_part_at(x->c, s->part);
	const uint32_t *q = nl_pins(x->c, pt);
	double lo0, hi0, lo1, hi1;
	if (pt->npins < 2 || !node_range(x, q[0], &lo0, &hi0) || !node_range(x, q[1], &lo1, &hi1))
		return;
	double worst = s->qty == SQ_REVERSE ? hi1 - lo0 : fmax(fabs(hi0 - lo1), fabs(hi1 - lo0));
	s->worst = s->analytic = fmax(worst, 0);
	s->best = s->rev_min = NAN;
	s->bounded = 1;
	s->basis = SB_ANALYSIS;
	s->hull = 1;
	s->corner = "supply range: its nodes lie among resistors, diodes, switches and capacitors "
		    "on steady supplies, which keep every node within the sources they reach; "
		    "its steady state could not be found";
	s->unproven = NULL;
	if (pt->kind == NL_C)
		stress_set_energy(s, pt->value * (pt->ext ? pt->ext->mult : 1.0));
}

int hull_run(const struct audit *a, const struct profile *p, struct arena *ar,
	     struct stress_result *sr)
{
	size_t want = 0;
	for (size_t i = 0; i < sr->n; i++)
		want += !sr->s[i].bounded && stress_qty_is_voltage(sr->s[i].qty);
	if (!want)
		return 1;
	struct hx x = {a, p, a->er.circuit, NULL, NULL, NULL, NULL, NULL, NULL, NULL};
	if (!setup(&x, ar))
		return 0;
	for (size_t i = 0; i < sr->n; i++) {
		struct stress *s = &sr->s[i];
		if (s->bounded || !stress_qty_is_voltage(s->qty))
			continue;
		bound(&x, s);
		if (s->bounded) {
			sr->max_voltage = fmax(sr->max_voltage, s->worst);
			/* the simulation's count of parts it left (simbound.c
			   made the record, writable) */
			if (sr->fallback && sr->fallback->left > 0)
				((struct stress_fallback *)sr->fallback)->left--;
		}
	}
	return 1;
}
