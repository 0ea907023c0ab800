/* prop.c: the propagation of docs/design.md §6. Order matters and is fixed:
 *   1. sources, linear E sources, ideal transformers, and series R/L from
 *      a known node that is not ground into a node that is not both on a
 *      capacitor and on a diode (a load resistor never holds a node);
 *   2. AC shapes through capacitors (diodes open, resistors ignored):
 *      leaves follow their neighbour, other nodes take the capacitance-
 *      weighted mean of their neighbours;
 *   3. DC pins: a diode between a known node and a shaped node bounds the
 *      shaped node's DC so that the diode's forward voltage peaks at zero
 *      (ideal, no load); nodes are settled one at a time, and each settled
 *      node feeds steps 1 and 3 again;
 *   4. when nothing else applies: a shaped node on a resistor takes the DC
 *      of the resistor's other end (bleed), a node between capacitors only
 *      takes its charge-balance DC (no initial charge), an unknown node on a
 *      single resistor follows it.
 * Each node is settled once; work is linear in the number of parts. */
#include "prop.h"

#include <assert.h>
#include <math.h>
#include <string.h>

struct queue {
	uint32_t *q;
	size_t head, tail, cap;
};

struct run {
	const struct nl_circuit *c;
	const struct prop_range *ranges;
	const struct prop_corner *corner;
	struct arena *ar;
	struct prop_result *r;
	struct queue settled;   /* newly settled nodes to look around */
	struct queue pending;   /* shaped nodes with a diode bound */
	uint8_t *in_pending;
	uint8_t *capdiode;      /* node touches both a capacitor and a diode */
	uint32_t *k_of_l;       /* inductor part -> K part coupling it */
	struct queue fallback;  /* unsettled nodes next to newly settled ones */
	int oom;
};

static int q_init(struct run *u, struct queue *q, size_t cap)
{
	q->q = arena_alloc(u->ar, (cap + 1) * sizeof *q->q);
	q->head = q->tail = 0;
	q->cap = cap + 1;
	return q->q != NULL;
}

/* Each node enters each queue at most a few times; the ring never fills
 * past the node count plus one. */
static void q_push(struct queue *q, uint32_t v)
{
	q->q[q->tail] = v;
	q->tail = (q->tail + 1) % q->cap;
}

static int q_pop(struct queue *q, uint32_t *v)
{
	if (q->head == q->tail)
		return 0;
	*v = q->q[q->head];
	q->head = (q->head + 1) % q->cap;
	return 1;
}

static struct prop_node *N(struct run *u, uint32_t id)
{
	return &u->r->nodes[id];
}

static const uint32_t *pins(struct run *u, const struct nl_part *p)
{
	return nl_pins(u->c, p);
}

static int skipped(const struct run *u, uint32_t id)
{
	return u->corner && u->corner->skip && u->corner->skip[id];
}

static void settle(struct run *u, uint32_t id, const struct form *f,
		   enum prop_how how, uint32_t by)
{
	struct prop_node *n = N(u, id);
	if (!f) {
		u->oom = 1;
		return;
	}
	if (skipped(u, id))
		return;
	n->f = f;
	n->state = PS_RESOLVED;
	n->how = (uint8_t)how;
	n->by = by;
	if (how == PH_PIN || how == PH_DIVIDER || how == PH_BLEED)
		n->cls = PC_FREE;
	else
		n->cls = form_is_dc(f) ? PC_FIXED : PC_DRIVEN;
	q_push(&u->settled, id);
}

/* ---- step 1: sources, E, transformers ---- */

static const struct form *source_form(struct run *u, uint32_t part)
{
	uint32_t s = u->r->sig_of_part[part];
	const struct prop_range *rg = u->ranges ? &u->ranges[part] : NULL;
	if (rg && !isnan(rg->min))
		return form_const(u->r->fc.ar, rg->min, rg->max);
	const struct prop_corner *k = u->corner;
	if (!k || !k->amp)
		return form_source(&u->r->fc, u->r->fc.ar, s, 1.0);
	struct arena *ar = u->r->fc.ar;
	const struct form *f = form_source(&u->r->fc, ar, s, k->amp[part]);
	double a = u->r->sigs[s].mean * k->off_lo[part], b = u->r->sigs[s].mean * k->off_hi[part];
	/* the offset is one value in its band wherever the source appears:
	   its own DC symbol, not an interval */
	const struct form *off = form_offset(ar, (a + b) / 2, s, fabs(b - a) / 2);
	return f && off ? form_with_dc(ar, f, off) : NULL;
}

static void across_source(struct run *u, uint32_t id, uint32_t part)
{
	const uint32_t *p = pins(u, nl_part_at(u->c, part));
	uint32_t other = p[0] == id ? p[1] : p[0];
	if (N(u, other)->state == PS_RESOLVED || p[0] == p[1])
		return;
	const struct form *s = source_form(u, part);
	if (!s) {
		u->oom = 1;
		return;
	}
	/* v(p0) - v(p1) = s */
	double sign = p[0] == id ? -1.0 : 1.0;
	settle(u, other, form_lin(u->r->fc.ar, 1.0, N(u, id)->f, sign, s),
	       PH_SOURCE, part);
	N(u, other)->zs = N(u, id)->zs;
}

static int known(struct run *u, uint32_t id)
{
	return N(u, id)->state == PS_RESOLVED;
}

static void vcvs(struct run *u, uint32_t part)
{
	const struct nl_part *p = nl_part_at(u->c, part);
	if (p->npins != 4 || (p->ext && p->ext->behavioural))
		return;
	const uint32_t *q = pins(u, p);
	if (!known(u, q[2]) || !known(u, q[3]) || known(u, q[0]) == known(u, q[1]))
		return;
	struct form_ctx *fc = &u->r->fc;
	const struct form *ctl = form_lin(fc->ar, p->value, N(u, q[2])->f, -p->value,
					  N(u, q[3])->f);
	if (!ctl) {
		u->oom = 1;
		return;
	}
	if (known(u, q[1]))
		settle(u, q[0], form_lin(fc->ar, 1, N(u, q[1])->f, 1, ctl), PH_VCVS, part);
	else
		settle(u, q[1], form_lin(fc->ar, 1, N(u, q[0])->f, -1, ctl), PH_VCVS, part);
}

/* Ideal transformer: the secondary takes n = k sqrt(L2/L1) times the AC
 * of the primary (no DC passes); stated as an approximation in reports. */
static void transformer(struct run *u, uint32_t kpart)
{
	const struct nl_part *k = nl_part_at(u->c, kpart);
	if (!k->ext || k->ext->ctrl_part[0] == NL_NONE || k->ext->ctrl_part[1] == NL_NONE)
		return;
	for (int side = 0; side < 2; side++) {
		const struct nl_part *l1 = nl_part_at(u->c, k->ext->ctrl_part[side]);
		const struct nl_part *l2 = nl_part_at(u->c, k->ext->ctrl_part[1 - side]);
		const uint32_t *a = pins(u, l1), *b = pins(u, l2);
		if (!known(u, a[0]) || !known(u, a[1]) || known(u, b[0]) == known(u, b[1]))
			continue;
		if (l1->value <= 0 || l2->value <= 0)
			continue;
		double n = k->value * sqrt(l2->value / l1->value);
		struct form_ctx *fc = &u->r->fc;
		const struct form *dv = form_lin(fc->ar, n, N(u, a[0])->f, -n, N(u, a[1])->f);
		const struct form *ac = dv ? form_ac(fc->ar, dv) : NULL;
		if (!ac) {
			u->oom = 1;
			return;
		}
		uint32_t to = known(u, b[1]) ? b[0] : b[1], from = to == b[0] ? b[1] : b[0];
		settle(u, to, form_lin(fc->ar, 1, N(u, from)->f, to == b[0] ? 1 : -1, ac), PH_XFMR,
		       kpart);
		/* the primary's series resistance seen from the secondary: times
		   the turns ratio squared (the winding resistances and a series
		   limiter on the primary limit a secondary's surge too) */
		N(u, to)->zs = N(u, from)->zs + n * n * (N(u, a[0])->zs + N(u, a[1])->zs);
		return;
	}
}

/* Inductors coupled by a K card do not count as series paths. */
static int coupled(struct run *u, uint32_t part)
{
	return u->k_of_l[part] != NL_NONE;
}

/* ---- step 1b: series resistors and inductors ---- */

/* The single known non-ground node that id reaches through one R or L,
 * or NL_NONE (none, or several different ones). */
static uint32_t series_from(struct run *u, uint32_t id, int allow_ground,
			    uint32_t *via)
{
	uint32_t n, found = NL_NONE;
	const uint32_t *adj = nl_adjacency(u->c, id, &n);
	for (uint32_t i = 0; i < n; i++) {
		const struct nl_part *p = nl_part_at(u->c, adj[i]);
		if ((p->kind != NL_R && p->kind != NL_L) || coupled(u, adj[i]))
			continue;
		const uint32_t *q = pins(u, p);
		uint32_t other = q[0] == id ? q[1] : q[0];
		if (!known(u, other) || (other == NL_GROUND && !allow_ground))
			continue;
		if (found != NL_NONE && found != other)
			return NL_NONE;
		found = other;
		*via = adj[i];
	}
	return found;
}

static void try_series(struct run *u, uint32_t id)
{
	uint32_t via = NL_NONE;
	if (known(u, id) || u->capdiode[id] || N(u, id)->state == PS_SHAPED || skipped(u, id))
		return;
	uint32_t src = series_from(u, id, 0, &via);
	if (src == NL_NONE)
		return;
	settle(u, id, N(u, src)->f, PH_SERIES, via);
	const struct nl_part *p = nl_part_at(u->c, via);
	N(u, id)->zs = N(u, src)->zs +
		       (p->kind == NL_R ? p->value / (p->ext ? p->ext->mult : 1.0) : 0);
	N(u, id)->cls = N(u, src)->cls;
}

/* Looks around a newly settled node for step 1 work. */
static void around(struct run *u, uint32_t id)
{
	uint32_t n;
	const uint32_t *adj = nl_adjacency(u->c, id, &n);
	for (uint32_t i = 0; i < n && !u->oom; i++) {
		const struct nl_part *p = nl_part_at(u->c, adj[i]);
		if (p->kind == NL_V)
			across_source(u, id, adj[i]);
		else if (p->kind == NL_E)
			vcvs(u, adj[i]);
		else if (p->kind == NL_L && u->k_of_l[adj[i]] != NL_NONE)
			transformer(u, u->k_of_l[adj[i]]);
		else if ((p->kind == NL_R || p->kind == NL_L) && id != NL_GROUND) {
			const uint32_t *q = pins(u, p);
			try_series(u, q[0] == id ? q[1] : q[0]);
		}
	}
}

/* ---- step 2: AC shapes through capacitors ---- */

struct capn {          /* a node's distinct capacitor neighbours */
	uint32_t node;
	double c;
};

/* Distinct capacitor neighbours of id (parallel capacitors summed, m=
 * counted), into buf; returns how many (at most max). */
static uint32_t cap_neighbours(struct run *u, uint32_t id, struct capn *buf,
			       uint32_t max)
{
	uint32_t n, k = 0;
	const uint32_t *adj = nl_adjacency(u->c, id, &n);
	for (uint32_t i = 0; i < n; i++) {
		const struct nl_part *p = nl_part_at(u->c, adj[i]);
		if (p->kind != NL_C || !(p->value > 0))
			continue;
		const uint32_t *q = pins(u, p);
		uint32_t other = q[0] == id ? q[1] : q[0];
		if (other == id)
			continue;
		double c = p->value * (p->ext ? p->ext->mult : 1.0);
		uint32_t j = 0;
		while (j < k && buf[j].node != other)
			j++;
		if (j == k) {
			if (k == max)
				return max;
			buf[k].node = other;
			buf[k++].c = 0;
		}
		buf[j].c += c;
	}
	return k;
}

#define CAPN_MAX 64

struct shapes {
	uint32_t *deg;       /* distinct capacitor neighbours not pruned */
	uint32_t *unknown;   /* of those, neighbours without a shape yet */
	uint32_t *follows;   /* leaf -> the node it follows, or NL_NONE */
	uint8_t *pruned;
	uint32_t *stack;     /* shape_set's followers still to visit */
	struct queue ready, leaves;
};

static int has_shape(struct run *u, uint32_t id)
{
	return N(u, id)->state != PS_UNKNOWN;
}

static void shape_set(struct run *u, struct shapes *sh, uint32_t id,
		      const struct form *f, uint32_t anchor);

/* Weighted mean of the neighbours' AC parts. */
static void shape_mean(struct run *u, struct shapes *sh, uint32_t id)
{
	struct capn nb[CAPN_MAX];
	uint32_t k = cap_neighbours(u, id, nb, CAPN_MAX), best = 0;
	struct form_ctx *fc = &u->r->fc;
	const struct form *sum = form_const(fc->ar, 0, 0);
	double total = 0;
	for (uint32_t i = 0; i < k && sum; i++) {
		if (sh->pruned[nb[i].node] && sh->follows[nb[i].node] == id)
			continue;
		const struct form *f = N(u, nb[i].node)->f;
		sum = form_lin(fc->ar, 1, sum, nb[i].c, f);
		total += nb[i].c;
		if (nb[i].c > nb[best].c)
			best = i;
	}
	if (!sum || total <= 0) {
		u->oom |= !sum;
		return;
	}
	const struct form *mean = form_lin(fc->ar, 1 / total, sum, 0, sum);
	shape_set(u, sh, id, mean ? form_ac(fc->ar, mean) : NULL, nb[best].node);
}

static void shape_one(struct run *u, uint32_t id, const struct form *f, uint32_t anchor)
{
	struct prop_node *n = N(u, id);
	n->f = f;
	n->state = PS_SHAPED;
	n->cls = PC_FREE;
	n->anchor = anchor;
}

/* Gives id the shape f, and the same shape to every pruned leaf that
 * follows it, transitively. A chain of leaves can be as long as the circuit
 * (a series string of capacitors), so the followers go on an explicit stack
 * in the arena, not the call stack; each node is shaped once, so the stack
 * never holds more than the node count. */
static void shape_set(struct run *u, struct shapes *sh, uint32_t id,
		      const struct form *f, uint32_t anchor)
{
	if (!f) {
		u->oom = 1;
		return;
	}
	shape_one(u, id, f, anchor);
	size_t top = 0;
	sh->stack[top++] = id;
	struct capn nb[CAPN_MAX];
	while (top > 0) {
		uint32_t x = sh->stack[--top];
		uint32_t k = cap_neighbours(u, x, nb, CAPN_MAX);
		for (uint32_t i = 0; i < k; i++) {
			uint32_t v = nb[i].node;
			if (has_shape(u, v))
				continue;
			if (sh->pruned[v] && sh->follows[v] == x) {
				shape_one(u, v, f, x);
				sh->stack[top++] = v;
			} else if (!sh->pruned[v] && sh->unknown[v] > 0 && --sh->unknown[v] == 0) {
				q_push(&sh->ready, v);
			}
		}
	}
}

static int shapes_init(struct run *u, struct shapes *sh, size_t nn)
{
	sh->deg = arena_zalloc(u->ar, nn * sizeof *sh->deg);
	sh->unknown = arena_zalloc(u->ar, nn * sizeof *sh->unknown);
	sh->follows = arena_alloc(u->ar, nn * sizeof *sh->follows);
	sh->pruned = arena_zalloc(u->ar, nn);
	sh->stack = arena_alloc(u->ar, (nn + 1) * sizeof *sh->stack);
	if (!sh->deg || !sh->unknown || !sh->follows || !sh->pruned || !sh->stack ||
	    !q_init(u, &sh->ready, nn) || !q_init(u, &sh->leaves, nn))
		return 0;
	struct capn nb[CAPN_MAX];
	for (uint32_t id = 0; id < nn; id++) {
		sh->follows[id] = NL_NONE;
		if (has_shape(u, id) || skipped(u, id))
			continue;
		uint32_t k = cap_neighbours(u, id, nb, CAPN_MAX);
		sh->deg[id] = k;
		for (uint32_t i = 0; i < k; i++)
			sh->unknown[id] += !has_shape(u, nb[i].node);
		if (k == 1 && !has_shape(u, nb[0].node))
			q_push(&sh->leaves, id);
		else if (k > 0 && sh->unknown[id] == 0)
			q_push(&sh->ready, id);
	}
	return 1;
}

/* A leaf (one capacitor neighbour, no shape) carries no AC current: it
 * follows its neighbour, and is taken out of the neighbour's count. */
static void prune(struct run *u, struct shapes *sh, uint32_t id)
{
	struct capn nb[CAPN_MAX];
	uint32_t k = cap_neighbours(u, id, nb, CAPN_MAX);
	uint32_t v = NL_NONE;
	for (uint32_t i = 0; i < k; i++)
		if (!(sh->pruned[nb[i].node] && sh->follows[nb[i].node] == id))
			v = nb[i].node;
	if (v == NL_NONE || sh->pruned[id])
		return;
	if (has_shape(u, v)) {
		q_push(&sh->ready, id);
		return;
	}
	sh->pruned[id] = 1;
	sh->follows[id] = v;
	if (sh->deg[v] > 0)
		sh->deg[v]--;
	if (sh->unknown[v] > 0)
		sh->unknown[v]--;
	if (sh->deg[v] == 1 && !sh->pruned[v])
		q_push(&sh->leaves, v);
	else if (sh->unknown[v] == 0 && !sh->pruned[v])
		q_push(&sh->ready, v);
}

static int step_shapes(struct run *u)
{
	struct shapes sh;
	if (!shapes_init(u, &sh, u->r->nnodes))
		return 0;
	uint32_t id;
	for (;;) {
		if (q_pop(&sh.leaves, &id)) {
			prune(u, &sh, id);
		} else if (q_pop(&sh.ready, &id)) {
			if (!has_shape(u, id) && !sh.pruned[id])
				shape_mean(u, &sh, id);
		} else {
			break;
		}
		if (u->oom)
			return 0;
	}
	return 1;
}

/* ---- step 3: diode pins ---- */

#define PROP_EPS 1e-9

/* The tighter of an old bound (NULL: none) and a new one on a node's DC;
 * *moved is 1 when the new one decides (at the extreme that matters). */
static const struct form *tighter(struct run *u, enum form_join how,
				  const struct form *old, const struct form *v,
				  int *moved)
{
	double olo, ohi, vlo, vhi;
	if (!old) {
		*moved = 1;
		return v;
	}
	form_dc_range(old, &olo, &ohi);
	form_dc_range(v, &vlo, &vhi);
	*moved = how == FORM_MAX ? vhi > ohi : vlo < olo;
	return form_dc_join(u->r->fc.ar, how, old, v);
}

/* The bound that diode `part` puts on shaped node x, from known node r:
 * the DC of d = r - x plus the extreme of its AC part, keeping the DC
 * symbols of d (the pinned level moves with the rail that pins it). */
static void bound(struct run *u, uint32_t part, uint32_t r, uint32_t x)
{
	struct prop_node *n = N(u, x);
	const uint32_t *q = pins(u, nl_part_at(u->c, part));
	struct arena *ar = u->r->fc.ar;
	const struct form *d = form_lin(ar, 1, N(u, r)->f, -1, n->f);
	if (!d) {
		u->oom = 1;
		return;
	}
	double lo, hi;
	int exact, moved = 0;
	form_ac_range(&u->r->fc, d, &lo, &hi, &exact);
	/* a real diode conducts at its forward drop, not at zero */
	double vf = u->corner && u->corner->vf ? u->corner->vf[part] : 0;
	/* the constant of a slowly moving rail: the pin keeps its extreme */
	lo += d->lo;
	hi += d->hi;
	lo += vf;
	hi -= vf;
	const struct form *v = form_dc_at(ar, d, q[0] == r ? hi : lo, q[0] == r ? hi : lo);
	if (!v) {
		u->oom = 1;
		return;
	}
	if (q[0] == r) { /* r is the anode: x may not fall below r */
		n->klo = tighter(u, FORM_MAX, n->has_lo ? n->klo : NULL, v, &moved);
		n->lo_by = moved ? part : n->lo_by;
		n->has_lo = 1;
		u->oom |= !n->klo;
	} else { /* x is the anode: x may not rise above r */
		n->khi = tighter(u, FORM_MIN, n->has_hi ? n->khi : NULL, v, &moved);
		n->hi_by = moved ? part : n->hi_by;
		n->has_hi = 1;
		u->oom |= !n->khi;
	}
	if (!u->in_pending[x]) {
		u->in_pending[x] = 1;
		q_push(&u->pending, x);
	}
}

static void soft_bound(struct run *u, uint32_t part, uint32_t r, uint32_t x)
{
	struct prop_node *n = N(u, x), *m = N(u, r);
	double lo, hi;
	form_dc_range(m->f, &lo, &hi);
	if (pins(u, nl_part_at(u->c, part))[0] == r) {
		n->slo = n->has_slo ? fmax(n->slo, hi) : hi;
		n->has_slo = 1;
	} else {
		n->shi = n->has_shi ? fmin(n->shi, lo) : lo;
		n->has_shi = 1;
	}
}

/* A diode between two settled nodes: flag forward conduction where the
 * ideal no-load model says none can happen (a pinned node clipped). */
static void check(struct run *u, uint32_t part)
{
	const uint32_t *q = pins(u, nl_part_at(u->c, part));
	struct prop_node *a = N(u, q[0]), *k = N(u, q[1]);
	if (a->how != PH_PIN && k->how != PH_PIN)
		return;
	const struct form *d = form_lin(u->r->fc.ar, 1, a->f, -1, k->f);
	double lo, hi;
	int exact;
	if (!d) {
		u->oom = 1;
		return;
	}
	form_range(&u->r->fc, d, &lo, &hi, &exact);
	double vf = u->corner && u->corner->vf ? u->corner->vf[part] : 0;
	if (hi > vf + PROP_EPS * fmax(1, fabs(lo))) {
		struct prop_node *m = a->how == PH_PIN ? a : k;
		if (!m->conflict)
			u->r->nconflicts++;
		m->conflict = 1;
	}
}

/* True if a resistor or inductor (not a coupled one) touches node x. */
static int has_resistor(struct run *u, uint32_t x)
{
	uint32_t n;
	const uint32_t *adj = nl_adjacency(u->c, x, &n);
	for (uint32_t i = 0; i < n; i++) {
		const struct nl_part *p = nl_part_at(u->c, adj[i]);
		if ((p->kind == NL_R || p->kind == NL_L) && !coupled(u, adj[i]))
			return 1;
	}
	return 0;
}

static void diodes_at(struct run *u, uint32_t r)
{
	uint32_t n;
	const uint32_t *adj = nl_adjacency(u->c, r, &n);
	for (uint32_t i = 0; i < n && !u->oom; i++) {
		const struct nl_part *p = nl_part_at(u->c, adj[i]);
		if (p->kind != NL_D)
			continue;
		const uint32_t *q = pins(u, p);
		uint32_t x = q[0] == r ? q[1] : q[0];
		if (x == r)
			continue;
		/* A node without AC on a diode to a node without AC, with a
		 * resistor of its own, is set by the resistor (a zener feed, a
		 * diode OR): the diode only bounds what the resistor sets. */
		if (N(u, x)->state == PS_SHAPED && form_is_dc(N(u, x)->f) &&
		    form_is_dc(N(u, r)->f) && has_resistor(u, x))
			soft_bound(u, adj[i], r, x);
		else if (N(u, x)->state == PS_SHAPED)
			bound(u, adj[i], r, x);
		else if (N(u, x)->state == PS_RESOLVED && (q[1] == r || x < r))
			check(u, adj[i]);
	}
}

static void to_fallback(struct run *u, uint32_t r)
{
	uint32_t n;
	const uint32_t *adj = nl_adjacency(u->c, r, &n);
	for (uint32_t i = 0; i < n; i++) {
		const struct nl_part *p = nl_part_at(u->c, adj[i]);
		if (p->kind != NL_R && p->kind != NL_L && p->kind != NL_C)
			continue;
		const uint32_t *q = pins(u, p);
		uint32_t x = q[0] == r ? q[1] : q[0];
		if (!known(u, x) && !skipped(u, x) && u->fallback.tail + 1 != u->fallback.head)
			q_push(&u->fallback, x);
	}
}

static void finalize(struct run *u, uint32_t x)
{
	struct prop_node *n = N(u, x);
	if (n->state != PS_SHAPED)
		return;
	const struct form *dc = n->has_lo ? n->klo : n->khi;
	if (n->has_lo && n->has_hi) {
		double lo, hi, klo, khi;
		form_dc_range_diff(n->klo, n->khi, &lo, &hi);
		form_dc_range(n->khi, &klo, &khi);
		if (hi > PROP_EPS * fmax(1, fmax(fabs(klo), fabs(khi)))) {
			/* the diodes would clip the node: not an affine waveform */
			n->conflict = 1;
			u->r->nconflicts++;
		} else {
			/* held between two diodes: anywhere from one to the other */
			dc = form_dc_join(u->r->fc.ar, FORM_HULL, n->klo, n->khi);
		}
	}
	const struct form *f = dc ? form_with_dc(u->r->fc.ar, n->f, dc) : NULL;
	uint32_t by = n->has_lo ? n->lo_by : n->hi_by;
	n->pin_upper = !n->has_lo;
	settle(u, x, f, PH_PIN, by);
}

/* ---- step 4: what is left ---- */

static int only_capacitors(struct run *u, uint32_t x)
{
	uint32_t n;
	const uint32_t *adj = nl_adjacency(u->c, x, &n);
	for (uint32_t i = 0; i < n; i++) {
		const struct nl_part *p = nl_part_at(u->c, adj[i]);
		if (p->kind != NL_C)
			return 0;
		const uint32_t *q = pins(u, p);
		if (!known(u, q[0] == x ? q[1] : q[0]))
			return 0;
	}
	return n > 0;
}

/* Charge balance of a node between capacitors only, no initial charge:
 * v = sum C_i v_i / sum C_i. */
static void divider(struct run *u, uint32_t x)
{
	struct capn nb[CAPN_MAX];
	uint32_t k = cap_neighbours(u, x, nb, CAPN_MAX);
	struct form_ctx *fc = &u->r->fc;
	const struct form *sum = form_const(fc->ar, 0, 0);
	double total = 0;
	for (uint32_t i = 0; i < k && sum; i++) {
		sum = form_lin(fc->ar, 1, sum, nb[i].c, N(u, nb[i].node)->f);
		total += nb[i].c;
	}
	if (!sum) {
		u->oom = 1;
		return;
	}
	settle(u, x, form_lin(fc->ar, 1 / total, sum, 0, sum), PH_DIVIDER, NL_NONE);
}

/* The DC that resistors and inductors alone give node x when every one of
 * them ends on a settled node: sum G_i v_i / sum G_i (an inductor counts as
 * a very large conductance). NULL when some end is not settled yet. */
static const struct form *resistive_mean(struct run *u, uint32_t x,
					 uint32_t *via, uint32_t *count)
{
	uint32_t n;
	const uint32_t *adj = nl_adjacency(u->c, x, &n);
	struct form_ctx *fc = &u->r->fc;
	const struct form *sum = form_const(fc->ar, 0, 0);
	double total = 0;
	*count = 0;
	for (uint32_t i = 0; i < n && sum; i++) {
		const struct nl_part *p = nl_part_at(u->c, adj[i]);
		if ((p->kind != NL_R && p->kind != NL_L) || coupled(u, adj[i]))
			continue;
		const uint32_t *q = pins(u, p);
		uint32_t other = q[0] == x ? q[1] : q[0];
		if (other == x)
			continue;
		if (!known(u, other))
			return NULL;
		double g = p->kind == NL_L || p->value <= 0 ? 1e12 : 1 / p->value;
		g *= p->ext ? p->ext->mult : 1.0;
		sum = form_lin(fc->ar, 1, sum, g, N(u, other)->f);
		total += g;
		*via = adj[i];
		(*count)++;
	}
	if (!sum) {
		u->oom = 1;
		return NULL;
	}
	return *count ? form_lin(fc->ar, 1 / total, sum, 0, sum) : NULL;
}

/* The difference v(a) - v(b) when a voltage source or the secondary of a
 * settled transformer sits directly between a and b; NULL otherwise. */
static const struct form *floating_difference(struct run *u, uint32_t a,
					      uint32_t b)
{
	uint32_t n;
	const uint32_t *adj = nl_adjacency(u->c, a, &n);
	for (uint32_t i = 0; i < n; i++) {
		const struct nl_part *p = nl_part_at(u->c, adj[i]);
		const uint32_t *q = pins(u, p);
		if ((q[0] != a || q[1] != b) && (q[0] != b || q[1] != a))
			continue;
		double sign = q[0] == a ? 1.0 : -1.0;
		if (p->kind == NL_V) {
			const struct form *s = source_form(u, adj[i]);
			return s ? form_lin(u->r->fc.ar, sign, s, 0, s) : NULL;
		}
		uint32_t k = p->kind == NL_L ? u->k_of_l[adj[i]] : NL_NONE;
		if (k == NL_NONE)
			continue;
		const struct nl_part *kp = nl_part_at(u->c, k);
		uint32_t prim = kp->ext->ctrl_part[0] == adj[i] ? kp->ext->ctrl_part[1]
								: kp->ext->ctrl_part[0];
		const struct nl_part *l1 = nl_part_at(u->c, prim);
		const uint32_t *r = pins(u, l1);
		if (!known(u, r[0]) || !known(u, r[1]) || l1->value <= 0)
			continue;
		double t = sign * kp->value * sqrt(p->value / l1->value);
		const struct form *d = form_lin(u->r->fc.ar, t, N(u, r[0])->f, -t, N(u, r[1])->f);
		return d ? form_ac(u->r->fc.ar, d) : NULL;
	}
	return NULL;
}

/* A bridge fed from a floating input: diodes from a and b into x, from a
 * settled node m into a and b: x = m + peak |v(a) - v(b)| (ideal, no
 * load). Returns 1 when x was settled so. */
static int bridge(struct run *u, uint32_t x)
{
	uint32_t n, in[2], dio = NL_NONE, k = 0;
	const uint32_t *adj = nl_adjacency(u->c, x, &n);
	for (uint32_t i = 0; i < n && k < 2; i++) {
		const struct nl_part *p = nl_part_at(u->c, adj[i]);
		const uint32_t *q = pins(u, p);
		if (p->kind == NL_D && q[1] == x && !known(u, q[0]) && (k == 0 || in[0] != q[0])) {
			in[k++] = q[0];
			dio = adj[i];
		}
	}
	if (k < 2)
		return 0;
	const uint32_t *aa = nl_adjacency(u->c, in[0], &n);
	for (uint32_t i = 0; i < n; i++) {
		const struct nl_part *p = nl_part_at(u->c, aa[i]);
		const uint32_t *q = pins(u, p);
		uint32_t m = q[0];
		if (p->kind != NL_D || q[1] != in[0] || !known(u, m) || m == x)
			continue;
		const struct form *d = floating_difference(u, in[0], in[1]);
		if (!d)
			return 0;
		double lo, hi;
		int exact;
		form_range(&u->r->fc, d, &lo, &hi, &exact);
		double peak = fmax(hi, -lo);
		const struct form *base = N(u, m)->f;
		settle(u, x, form_dc_at(u->r->fc.ar, base, base->lo + peak, base->hi + peak),
		       PH_PIN, dio);
		return 1;
	}
	return 0;
}

/* True if a diode joins x to a node not settled yet. */
static int diode_to_unsettled(struct run *u, uint32_t x)
{
	uint32_t n;
	const uint32_t *adj = nl_adjacency(u->c, x, &n);
	for (uint32_t i = 0; i < n; i++) {
		const struct nl_part *p = nl_part_at(u->c, adj[i]);
		const uint32_t *q = pins(u, p);
		if (p->kind == NL_D && !known(u, q[0] == x ? q[1] : q[0]))
			return 1;
	}
	return 0;
}

static void fallback(struct run *u, uint32_t x)
{
	struct prop_node *n = N(u, x);
	uint32_t via = NL_NONE, count = 0;
	if (known(u, x) || n->has_lo || n->has_hi)
		return;
	if (n->state == PS_SHAPED && form_is_dc(n->f) && bridge(u, x))
		return;
	if (diode_to_unsettled(u, x))
		return; /* what the diode does is not known: do not guess */
	if (n->state == PS_SHAPED && only_capacitors(u, x)) {
		divider(u, x);
		return;
	}
	const struct form *s = resistive_mean(u, x, &via, &count);
	if (!s)
		return;
	if (n->has_slo || n->has_shi) {
		/* an ideal diode holds the node where the resistors would pull
		 * it past the diode's other end */
		double lo, hi;
		form_dc_range(s, &lo, &hi);
		if (n->has_slo)
			lo = fmax(lo, n->slo), hi = fmax(hi, n->slo);
		if (n->has_shi)
			lo = fmin(lo, n->shi), hi = fmin(hi, n->shi);
		s = form_with_const(u->r->fc.ar, s, lo, hi);
		if (!s) {
			u->oom = 1;
			return;
		}
	}
	if (n->state == PS_SHAPED) {
		/* no DC flows through the capacitors: resistors set the mean */
		settle(u, x, form_with_dc(u->r->fc.ar, n->f, s), PH_BLEED,
		       count == 1 ? via : NL_NONE);
	} else {
		settle(u, x, s, PH_SERIES, count == 1 ? via : NL_NONE);
		n->cls = form_is_dc(s) ? PC_FIXED : PC_DRIVEN;
	}
}

/* ---- the run ---- */

static int init_sigs(struct run *u)
{
	struct prop_result *r = u->r;
	size_t np = nl_part_count(u->c), ns = 0;
	r->sig_of_part = arena_alloc(u->ar, (np + 1) * sizeof *r->sig_of_part);
	if (!r->sig_of_part)
		return 0;
	for (size_t i = 0; i < np; i++)
		ns += nl_part_at(u->c, i)->kind == NL_V;
	r->sigs = arena_alloc(u->ar, (ns + 1) * sizeof *r->sigs);
	r->part_of_sig = arena_alloc(u->ar, (ns + 1) * sizeof *r->part_of_sig);
	if (!r->sigs || !r->part_of_sig)
		return 0;
	ns = 0;
	for (size_t i = 0; i < np; i++) {
		const struct nl_part *p = nl_part_at(u->c, i);
		r->sig_of_part[i] = NL_NONE;
		if (p->kind != NL_V)
			continue;
		if (!sig_from_source(p->ext->src, u->ar, &r->sigs[ns]))
			return 0;
		r->part_of_sig[ns] = (uint32_t)i;
		r->sig_of_part[i] = (uint32_t)ns++;
	}
	r->nsigs = ns;
	r->fc.sigs = r->sigs;
	r->fc.nsigs = ns;
	r->fc.ar = u->ar;
	return 1;
}

static int init_maps(struct run *u)
{
	size_t np = nl_part_count(u->c), nn = nl_node_count(u->c);
	u->k_of_l = arena_alloc(u->ar, (np + 1) * sizeof *u->k_of_l);
	u->capdiode = arena_zalloc(u->ar, nn + 1);
	u->in_pending = arena_zalloc(u->ar, nn + 1);
	if (!u->k_of_l || !u->capdiode || !u->in_pending)
		return 0;
	uint8_t *seen = arena_zalloc(u->ar, nn + 1);
	if (!seen)
		return 0;
	for (size_t i = 0; i < np; i++)
		u->k_of_l[i] = NL_NONE;
	for (size_t i = 0; i < np; i++) {
		const struct nl_part *p = nl_part_at(u->c, i);
		const uint32_t *q = pins(u, p);
		if (p->kind == NL_K && p->ext && p->ext->ctrl_part[1] != NL_NONE) {
			u->k_of_l[p->ext->ctrl_part[0]] = (uint32_t)i;
			u->k_of_l[p->ext->ctrl_part[1]] = (uint32_t)i;
		}
		for (uint16_t k = 0; k < p->npins && (p->kind == NL_C || p->kind == NL_D); k++)
			seen[q[k]] |= p->kind == NL_C ? 1 : 2;
	}
	for (size_t i = 0; i < nn; i++)
		u->capdiode[i] = seen[i] == 3;
	size_t total = 0;
	for (size_t i = 0; i < np; i++)
		total += nl_part_at(u->c, i)->npins;
	return q_init(u, &u->settled, nn) && q_init(u, &u->pending, nn) &&
	       q_init(u, &u->fallback, total + nn);
}

static void loop(struct run *u)
{
	uint32_t x;
	for (;;) {
		if (u->oom)
			return;
		if (q_pop(&u->settled, &x)) {
			around(u, x);
			diodes_at(u, x);
			to_fallback(u, x);
		} else if (q_pop(&u->pending, &x)) {
			u->in_pending[x] = 0;
			finalize(u, x);
		} else if (q_pop(&u->fallback, &x)) {
			fallback(u, x);
		} else {
			return;
		}
	}
}

int prop_run(const struct nl_circuit *c, const struct prop_range *ranges,
	     const struct prop_corner *corner, struct arena *ar,
	     struct prop_result *out)
{
	struct run u;
	memset(&u, 0, sizeof u);
	memset(out, 0, sizeof *out);
	u.c = c;
	u.ranges = ranges;
	u.corner = corner;
	u.ar = ar;
	u.r = out;
	out->nnodes = nl_node_count(c);
	out->nodes = arena_zalloc(ar, (out->nnodes + 1) * sizeof *out->nodes);
	if (!out->nodes || !init_sigs(&u) || !init_maps(&u))
		return 0;
	for (size_t i = 0; i < out->nnodes; i++) {
		out->nodes[i].by = out->nodes[i].anchor = NL_NONE;
		out->nodes[i].lo_by = out->nodes[i].hi_by = NL_NONE;
	}
	settle(&u, NL_GROUND, form_const(out->fc.ar, 0, 0), PH_GROUND, NL_NONE);
	out->nodes[NL_GROUND].cls = PC_GROUND;
	/* step 1 alone first: shapes need every source-held node */
	uint32_t x;
	while (!u.oom && q_pop(&u.settled, &x))
		around(&u, x);
	if (u.oom || !step_shapes(&u))
		return 0;
	for (uint32_t id = 0; id < out->nnodes; id++)
		if (out->nodes[id].state == PS_RESOLVED)
			q_push(&u.settled, id);
	loop(&u);
	return !u.oom;
}

const char *prop_class_name(enum prop_class k)
{
	static const char *const names[] = {"unknown", "ground", "fixed", "driven", "free"};
	_Static_assert(sizeof names / sizeof names[0] == PC_COUNT, "one name per class");
	assert(k < PC_COUNT);
	return names[k];
}

const char *prop_how_name(enum prop_how h)
{
	static const char *const names[] = {"", "ground", "source", "controlled source",
		"transformer", "series", "diode pin", "capacitive divider", "resistor"};
	_Static_assert(sizeof names / sizeof names[0] == PH_COUNT, "one name per way");
	assert(h < PH_COUNT);
	return names[h];
}
