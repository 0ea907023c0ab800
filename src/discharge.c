/* discharge.c: how fast stored charge drains once the circuit is off. The
 * resistance a capacitor sees is solved exactly (nodal analysis of the
 * resistors, every source disconnected, capacitors, diodes and inductors
 * open); series stacks drain as one, t = R Ceq ln(V / Vhaz). Which of these
 * is a hazard is left to rules.c; the method is docs/rules/stored-charge.md. */
#include "discharge.h"

#include <math.h>
#include <stdlib.h>
#include <string.h>

#include "dense.h"

struct work {
	const struct audit *a;
	const struct nl_circuit *c;
	struct stress_result *sr;
	double hz;
	int32_t *index; /* per node: place in nodes[], -1 */
	uint32_t nodes[DISCHARGE_MAX_NODES];
	uint32_t n;
	double *g; /* (MAX-1)^2 conductances, then LU */
	double *rhs;
};

static double cap_f(const struct nl_part *p)
{
	return p->value * (p->ext ? p->ext->mult : 1.0);
}

/* Conductance of a part once the circuit is off: resistors only. A
 * disconnected source, a capacitor (it holds its own charge), a diode and
 * an inductor (its winding resistance is unknown) carry none: the safe
 * side, a path left out only makes the discharge look slower. */
static double conductance(const struct nl_part *p)
{
	if (p->kind != NL_R || !(p->value > 0) || !isfinite(p->value))
		return 0;
	return (p->ext ? p->ext->mult : 1.0) / p->value;
}

static uint32_t other_pin(const struct nl_circuit *c, const struct nl_part *p, uint32_t node)
{
	const uint32_t *q = nl_pins(c, p);
	return q[0] == node ? q[1] : q[0];
}

static void forget(struct work *w)
{
	for (uint32_t i = 0; i < w->n; i++)
		w->index[w->nodes[i]] = -1;
	w->n = 0;
}

/* The resistor network around node a, breadth first; 0 when it has more
 * than DISCHARGE_MAX_NODES nodes. */
static int collect(struct work *w, uint32_t a)
{
	w->nodes[0] = a;
	w->index[a] = 0;
	w->n = 1;
	for (uint32_t h = 0; h < w->n; h++) {
		uint32_t k;
		const uint32_t *adj = nl_adjacency(w->c, w->nodes[h], &k);
		for (uint32_t i = 0; i < k; i++) {
			const struct nl_part *r = nl_part_at(w->c, adj[i]);
			uint32_t o = other_pin(w->c, r, w->nodes[h]);
			if (!(conductance(r) > 0) || w->index[o] >= 0)
				continue;
			if (w->n == DISCHARGE_MAX_NODES)
				return 0;
			w->index[o] = (int32_t)w->n;
			w->nodes[w->n++] = o;
		}
	}
	return 1;
}

/* Row of node index i once node index b is taken out (b is the reference). */
static uint32_t row(uint32_t i, uint32_t b)
{
	return i < b ? i : i - 1;
}

/* The nodal matrix of the collected network with node b grounded. */
static void stamp(struct work *w, uint32_t b, uint32_t m)
{
	memset(w->g, 0, (size_t)m * m * sizeof *w->g);
	for (uint32_t h = 0; h < w->n; h++) {
		if (h == b)
			continue;
		uint32_t k;
		const uint32_t *adj = nl_adjacency(w->c, w->nodes[h], &k);
		for (uint32_t i = 0; i < k; i++) {
			const struct nl_part *r = nl_part_at(w->c, adj[i]);
			uint32_t o = other_pin(w->c, r, w->nodes[h]);
			double g = conductance(r);
			if (!(g > 0) || o == w->nodes[h])
				continue;
			uint32_t io = (uint32_t)w->index[o];
			w->g[row(h, b) * m + row(h, b)] += g;
			if (io != b)
				w->g[row(h, b) * m + row(io, b)] -= g;
		}
	}
}

/* The resistance between nodes a and b through resistors alone: 1 A into
 * a, out of b, and the voltage that takes. INFINITY when no resistor path
 * joins them or the network is past the bound. */
static double between(struct work *w, uint32_t a, uint32_t b)
{
	if (a == b)
		return 0;
	double r = INFINITY;
	if (collect(w, a) && w->index[b] >= 0) {
		uint32_t ib = (uint32_t)w->index[b], m = w->n - 1;
		stamp(w, ib, m);
		memset(w->rhs, 0, m * sizeof *w->rhs);
		w->rhs[row(0, ib)] = 1;
		if (dense_solve(w->g, w->rhs, m, 0) && w->rhs[row(0, ib)] > 0)
			r = w->rhs[row(0, ib)];
	}
	forget(w);
	return r;
}

double discharge_stack_time(double cap_f, double v, double ceq_f, double vstack,
			    double tau, double hz)
{
	if (!(v > hz))
		return 0;
	double x = (v - hz) * cap_f / (ceq_f * vstack);
	if (!isfinite(tau) || !(x < 1))
		return INFINITY;
	return -tau * log1p(-x);
}

/* Every capacitor above the hazard voltage: the resistance across it. */
static void own_paths(struct work *w)
{
	for (size_t i = 0; i < w->sr->n; i++) {
		struct stress *s = &w->sr->s[i];
		const struct nl_part *p = nl_part_at(w->c, s->part);
		s->stack = -1;
		s->drain = SD_NONE;
		s->discharge_r = INFINITY;
		s->discharge_s = NAN;
		if (p->kind != NL_C || !stress_qty_is_voltage(s->qty) || !s->bounded || !(s->worst > w->hz))
			continue;
		const uint32_t *q = nl_pins(w->c, p);
		s->discharge_r = between(w, q[0], q[1]);
		s->drain = isfinite(s->discharge_r) ? SD_OWN : SD_NONE;
		s->discharge_s = isfinite(s->discharge_r)
					 ? s->discharge_r * cap_f(p) * log(s->worst / w->hz)
					 : INFINITY;
	}
}

static struct stress *cap_stress(struct work *w, uint32_t part)
{
	for (size_t i = 0; i < w->sr->n; i++)
		if (w->sr->s[i].part == part && stress_qty_is_voltage(w->sr->s[i].qty))
			return &w->sr->s[i];
	return NULL;
}

/* ---- series stacks ---- */

struct chain {
	uint32_t *node; /* top ... bottom */
	uint32_t *prev; /* per visited node: the edge it was reached by */
	uint32_t len;   /* nodes on the path */
	uint32_t nvis;
};

/* Capacitor pins of part k of structure t, or 0 when it is no capacitor. */
static int cap_pins(const struct work *w, const struct topo_struct *t, uint32_t k,
		    uint32_t *a, uint32_t *b)
{
	const struct nl_part *p = nl_part_at(w->c, t->parts[k].part);
	if (p->kind != NL_C)
		return 0;
	const uint32_t *q = nl_pins(w->c, p);
	*a = q[0];
	*b = q[1];
	return 1;
}

/* Breadth first from top over the structure's capacitors; fills ch->node
 * with the shortest chain of nodes down to bottom (len 0: none). */
static void shortest(struct work *w, const struct topo_struct *t, uint32_t top,
		     uint32_t bottom, struct chain *ch)
{
	ch->node[0] = top;
	ch->prev[0] = UINT32_MAX;
	w->index[top] = 0;
	ch->nvis = 1;
	for (uint32_t h = 0; h < ch->nvis && w->index[bottom] < 0; h++)
		for (uint32_t k = 0; k < t->nparts; k++) {
			uint32_t a, b;
			if (!cap_pins(w, t, k, &a, &b) || (a != ch->node[h] && b != ch->node[h]))
				continue;
			uint32_t o = a == ch->node[h] ? b : a;
			if (w->index[o] >= 0)
				continue;
			w->index[o] = (int32_t)ch->nvis;
			ch->prev[ch->nvis] = h;
			ch->node[ch->nvis++] = o;
		}
	uint32_t len = 0;
	if (w->index[bottom] >= 0)
		for (uint32_t v = (uint32_t)w->index[bottom]; v != UINT32_MAX; v = ch->prev[v])
			len++;
	uint32_t *path = ch->node + ch->nvis, v = w->index[bottom] >= 0 ? (uint32_t)w->index[bottom] : 0;
	for (uint32_t i = len; i-- > 0; v = ch->prev[v])
		path[i] = ch->node[v];
	for (uint32_t i = 0; i < ch->nvis; i++)
		w->index[ch->node[i]] = -1;
	memmove(ch->node, path, len * sizeof *path);
	ch->len = len;
}

/* Position of node v on the chain, or -1. */
static int32_t on_chain(const struct chain *ch, uint32_t v)
{
	for (uint32_t i = 0; i < ch->len; i++)
		if (ch->node[i] == v)
			return (int32_t)i;
	return -1;
}

/* Position of the upper pin of capacitor k of t on the chain when the
 * capacitor joins two neighbouring positions; -1 when it joins one or none;
 * -2 when it bridges two positions that are not neighbours. */
static int32_t member(const struct work *w, const struct topo_struct *t,
		      const struct chain *ch, uint32_t k)
{
	uint32_t a, b;
	if (!cap_pins(w, t, k, &a, &b))
		return -1;
	int32_t pa = on_chain(ch, a), pb = on_chain(ch, b);
	if (pa < 0 || pb < 0 || pa == pb)
		return -1;
	return abs(pa - pb) == 1 ? (pa < pb ? pa : pb) : -2;
}

/* Ceq, the summed voltage and the top part of the chain; 0 when it is no
 * plain series stack (a capacitor bridges two positions that are not
 * neighbours, or a member has no bounded voltage). */
static int sum_chain(struct work *w, const struct topo_struct *t, const struct chain *ch,
		     struct stress_stack *st)
{
	double inv = 0, v = 0;
	for (uint32_t i = 0; i + 1 < ch->len; i++) {
		double c = 0, vs = 0;
		for (uint32_t k = 0; k < t->nparts; k++) {
			int32_t pos = member(w, t, ch, k);
			if (pos == -2)
				return 0;
			if (pos != (int32_t)i)
				continue;
			const struct stress *s = cap_stress(w, t->parts[k].part);
			if (!s || !s->bounded)
				return 0;
			c += cap_f(nl_part_at(w->c, t->parts[k].part));
			vs = fmax(vs, s->worst);
			if (i == 0)
				st->first = t->parts[k].part;
		}
		if (!(c > 0))
			return 0;
		inv += 1 / c;
		v += vs;
	}
	st->ceq_f = 1 / inv;
	st->v = v;
	return 1;
}

/* A member of stack st with no path of its own drains with the stack:
 * through its resistance, the stack's capacitance and what hangs parallel
 * to it (none for a pair). */
static void stack_drain(struct work *w, struct stress *s, const struct stress_stack *st)
{
	if (!(s->worst > w->hz) || !isfinite(st->r))
		return;
	double c = cap_f(nl_part_at(w->c, s->part));
	double tau = st->r * (st->ceq_f + st->cpar_f);
	s->drain = SD_STACK;
	s->discharge_r = tau / c;
	s->discharge_s = discharge_stack_time(c, s->worst, st->ceq_f, st->v, tau, w->hz);
}

/* Each member of a structure's stack is marked; one with no path of its own
 * drains with the stack. */
static void join_stack(struct work *w, const struct topo_struct *t, const struct chain *ch,
		       const struct stress_stack *st, int32_t idx)
{
	for (uint32_t k = 0; k < t->nparts; k++) {
		struct stress *s = member(w, t, ch, k) >= 0 ? cap_stress(w, t->parts[k].part) : NULL;
		if (!s)
			continue;
		s->stack = idx;
		if (s->drain == SD_NONE)
			stack_drain(w, s, st);
	}
}

/* A ladder's coupling column above stage 1, in series. Once the drive is
 * gone and the output falls, the first clamp diode holds its foot near
 * ground and the last detector diode joins its top to the output: it then
 * drains in parallel with the stack and slows it (seen in ngspice on
 * tests/data/charge/ladder3_stack.cir). Stage 1's capacitor hangs on the
 * drive and is left out: counting it would only lower the sum. */
static double coupling_column(const struct work *w, const struct topo_struct *t)
{
	double inv = 0;
	uint32_t top = 0;
	for (uint32_t k = 0; k < t->nparts; k++)
		if (t->parts[k].kind == TR_LADDER_COUPLING && t->parts[k].stage > top)
			top = t->parts[k].stage;
	for (uint32_t stage = 2; stage <= top; stage++) {
		double c = 0;
		for (uint32_t k = 0; k < t->nparts; k++)
			if (t->parts[k].kind == TR_LADDER_COUPLING && t->parts[k].stage == stage)
				c += cap_f(nl_part_at(w->c, t->parts[k].part));
		if (!(c > 0))
			return 0; /* a gap in the column: no chain to add */
		inv += 1 / c;
	}
	return inv > 0 ? 1 / inv : 0;
}

/* The stack of structure si, when its output sits on two or more
 * capacitors in series down to ground (or to its low output): appended to
 * the result. Returns 0 on out-of-memory. */
static int stack_of(struct work *w, struct arena *ar, size_t si, struct stress_stack *stacks)
{
	const struct topo_struct *t = &w->a->topo.s[si];
	uint32_t bottom = t->output2 != NL_NONE ? t->output2 : NL_GROUND;
	if (t->output == NL_NONE || t->output == bottom)
		return 1;
	struct chain ch = {arena_alloc(ar, (4 * (size_t)t->nparts + 2) * sizeof *ch.node),
			   arena_alloc(ar, (2 * (size_t)t->nparts + 1) * sizeof *ch.prev), 0, 0};
	if (!ch.node || !ch.prev)
		return 0;
	shortest(w, t, t->output, bottom, &ch);
	struct stress_stack *st = &stacks[w->sr->nstacks];
	memset(st, 0, sizeof *st);
	if (ch.len < 3 || !sum_chain(w, t, &ch, st))
		return 1;
	st->structure = (int32_t)si;
	st->top = t->output;
	st->bottom = bottom;
	st->nseg = ch.len - 1;
	st->cpar_f = t->kind == TK_LADDER ? coupling_column(w, t) : 0;
	st->r = between(w, st->top, st->bottom);
	st->t = !(st->v > w->hz)  ? 0
		: isfinite(st->r) ? st->r * (st->ceq_f + st->cpar_f) * log(st->v / w->hz)
				  : INFINITY;
	join_stack(w, t, &ch, st, (int32_t)w->sr->nstacks++);
	w->sr->max_voltage = fmax(w->sr->max_voltage, st->v);
	return 1;
}

/* A structure's capacitor with no resistor path and no stack empties
 * through the structure's diodes into its output: estimated with the
 * output's resistance to ground and its own capacitance (not proven). */
static void through_output(struct work *w)
{
	for (size_t i = 0; i < w->sr->n; i++) {
		struct stress *s = &w->sr->s[i];
		if (s->drain != SD_NONE || s->stack >= 0 || s->structure < 0 || !(s->worst > w->hz) ||
		    nl_part_at(w->c, s->part)->kind != NL_C || !stress_qty_is_voltage(s->qty))
			continue;
		const struct topo_struct *t = &w->a->topo.s[s->structure];
		double r = t->output != NL_NONE ? between(w, t->output, NL_GROUND) : INFINITY;
		if (!isfinite(r))
			continue;
		s->drain = SD_OUTPUT;
		s->discharge_r = r;
		s->discharge_s = r * cap_f(nl_part_at(w->c, s->part)) * log(s->worst / w->hz);
	}
}

/* Node m touches only capacitors and sources: once the sources are off,
 * only capacitors hold it (a diode or a winding there could carry charge
 * away or hold it back, so such a node is not taken). */
static int floating(const struct work *w, uint32_t m)
{
	uint32_t k;
	const uint32_t *adj = nl_adjacency(w->c, m, &k);
	if (m == NL_GROUND)
		return 0;
	for (uint32_t i = 0; i < k; i++) {
		uint8_t kind = nl_part_at(w->c, adj[i])->kind;
		if (kind != NL_C && kind != NL_V && kind != NL_I)
			return 0;
	}
	return 1;
}

/* Capacitor s (no path of its own, no structure's stack) in series with
 * another through a node that only capacitors hold (a full-wave
 * doubler's midpoint on a source that is gone): the pair drains as a
 * two-capacitor stack through the resistance across it. Appended to
 * stacks; 0 when there is no such pair. */
static int pair_stack(struct work *w, struct stress *s, struct stress_stack *st,
		      struct stress **partner, unsigned *tries)
{
	const struct nl_part *p = nl_part_at(w->c, s->part);
	const uint32_t *q = nl_pins(w->c, p);
	for (int e = 0; e < 2; e++) {
		uint32_t mid = q[e], top = q[!e], k;
		if (!floating(w, mid))
			continue;
		const uint32_t *adj = nl_adjacency(w->c, mid, &k);
		for (uint32_t i = 0; i < k && *tries < DISCHARGE_MAX_PAIR_TRIES; i++) {
			const struct nl_part *o = nl_part_at(w->c, adj[i]);
			struct stress *so = cap_stress(w, adj[i]);
			uint32_t bot = other_pin(w->c, o, mid);
			if (o == p || o->kind != NL_C || bot == top || bot == mid || !so || !so->bounded)
				continue;
			++*tries;
			double r = between(w, top, bot);
			if (!isfinite(r))
				continue;
			double c1 = cap_f(p), c2 = cap_f(o);
			memset(st, 0, sizeof *st);
			st->structure = -1;
			st->top = top;
			st->bottom = bot;
			st->nseg = 2;
			st->first = s->part;
			st->ceq_f = c1 * c2 / (c1 + c2);
			st->v = s->worst + so->worst;
			st->r = r;
			st->t = st->v > w->hz ? r * st->ceq_f * log(st->v / w->hz) : 0;
			*partner = so;
			return 1;
		}
	}
	return 0;
}

/* A member of stack idx that has no path of its own drains with it. */
static void join_pair(struct work *w, struct stress *s, const struct stress_stack *st, int32_t idx)
{
	if (s->stack >= 0 || s->drain != SD_NONE)
		return;
	s->stack = idx;
	stack_drain(w, s, st);
}

/* Every capacitor left with no path: its pair stack, where it has one. */
static void pair_stacks(struct work *w, struct stress_stack *stacks, size_t cap)
{
	unsigned tries = 0;
	for (size_t i = 0; i < w->sr->n && w->sr->nstacks < cap; i++) {
		struct stress *s = &w->sr->s[i], *partner = NULL;
		if (s->drain != SD_NONE || s->stack >= 0 || !(s->worst > w->hz) || !s->bounded ||
		    nl_part_at(w->c, s->part)->kind != NL_C || !stress_qty_is_voltage(s->qty))
			continue;
		struct stress_stack *st = &stacks[w->sr->nstacks];
		if (!pair_stack(w, s, st, &partner, &tries))
			continue;
		int32_t idx = (int32_t)w->sr->nstacks++;
		join_pair(w, s, st, idx);
		join_pair(w, partner, st, idx);
		w->sr->max_voltage = fmax(w->sr->max_voltage, st->v);
	}
}

int discharge_run(const struct audit *a, const struct profile *p, struct arena *ar,
		  struct stress_result *sr)
{
	struct work *w = arena_zalloc(ar, sizeof *w);
	size_t nn = nl_node_count(a->er.circuit), m = DISCHARGE_MAX_NODES - 1;
	if (!w)
		return 0;
	w->a = a;
	w->c = a->er.circuit;
	w->sr = sr;
	w->hz = profile_hazard(p);
	w->index = arena_alloc(ar, nn * sizeof *w->index);
	w->g = arena_alloc(ar, m * m * sizeof *w->g);
	w->rhs = arena_alloc(ar, m * sizeof *w->rhs);
	size_t cap = a->topo.n + 1 + DISCHARGE_MAX_PAIRS;
	struct stress_stack *stacks = arena_zalloc(ar, cap * sizeof *stacks);
	if (!w->index || !w->g || !w->rhs || !stacks)
		return 0;
	memset(w->index, 0xff, nn * sizeof *w->index);
	own_paths(w);
	sr->stacks = stacks;
	sr->nstacks = 0;
	for (size_t i = 0; i < a->topo.n; i++)
		if (!stack_of(w, ar, i, stacks))
			return 0;
	pair_stacks(w, stacks, cap);
	through_output(w);
	return 1;
}
