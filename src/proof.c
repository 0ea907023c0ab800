/* proof.c: the analysis's assumptions checked island by island (proof.h).
 * Islands come from a union-find over the nodes that no ideal source
 * holds; each part that breaks an assumption writes its reason on the
 * islands it touches, the first reason found stands. */
#include "proof.h"

#include <assert.h>
#include <math.h>
#include <stdio.h>

#include "num.h"

struct pctx {
	const struct nl_circuit *c;
	const struct prop_result *nom;
	struct arena *ar;
	uint32_t *up;            /* union-find parent per node */
	const char **why;        /* per island root: the first broken assumption */
	unsigned char *taint;    /* per held node: depends on an unknown waveform */
	const char *taint_why;
	int taint_once;          /* taint_why's source happens once (nl_source_once) */
	int oom;
};

static int held(const struct pctx *x, uint32_t n)
{
	const struct prop_node *p = &x->nom->nodes[n];
	return n == NL_GROUND || (p->state == PS_RESOLVED &&
				  (p->how == PH_GROUND || p->how == PH_SOURCE || p->how == PH_VCVS));
}

static uint32_t root(struct pctx *x, uint32_t n)
{
	while (x->up[n] != n) {
		x->up[n] = x->up[x->up[n]];
		n = x->up[n];
	}
	return n;
}

static void join(struct pctx *x, const struct nl_part *p)
{
	const uint32_t *q = nl_pins(x->c, p);
	uint32_t first = NL_NONE;
	for (uint8_t k = 0; k < p->npins; k++) {
		if (held(x, q[k]))
			continue;
		if (first == NL_NONE)
			first = root(x, q[k]);
		else
			x->up[root(x, q[k])] = first;
	}
}

/* Writes reason (formatted with the part's path) on every island p touches. */
static void mark(struct pctx *x, const struct nl_part *p, const char *fmt, const char *arg)
{
	char buf[300];
	const char *why = NULL;
	const uint32_t *q = nl_pins(x->c, p);
	for (uint8_t k = 0; k < p->npins; k++) {
		if (held(x, q[k]) || x->why[root(x, q[k])])
			continue;
		if (!why) {
			snprintf(buf, sizeof buf, fmt, p->path, arg);
			why = arena_strdup(x->ar, buf);
			if (!why) {
				x->oom = 1;
				return;
			}
		}
		x->why[root(x, q[k])] = why;
	}
}

/* Held nodes whose value comes from a source with an unknown waveform:
 * spread from those sources along chains of sources between held nodes. */
static void spread_taint(struct pctx *x)
{
	size_t np = nl_part_count(x->c);
	int changed = 1;
	for (size_t i = 0; i < np; i++) {
		const struct nl_part *p = nl_part_at(x->c, i);
		const struct nl_source *src = p->kind == NL_V && p->ext ? p->ext->src : NULL;
		int once = src && src->wave != NL_WAVE_SIN && nl_source_once(src);
		if (src && (src->unknown || once)) {
			const uint32_t *q = nl_pins(x->c, p);
			x->taint[q[0]] = x->taint[q[1]] = 1;
			if (!x->taint_why) {
				x->taint_why = p->path;
				x->taint_once = once && !src->unknown;
			}
		}
	}
	x->taint[NL_GROUND] = 0;
	for (int pass = 0; changed && pass < 64; pass++) {
		changed = 0;
		for (size_t i = 0; i < np; i++) {
			const struct nl_part *p = nl_part_at(x->c, i);
			if (p->kind != NL_V && p->kind != NL_E)
				continue;
			const uint32_t *q = nl_pins(x->c, p);
			if (held(x, q[0]) && held(x, q[1]) && x->taint[q[0]] != x->taint[q[1]] &&
			    q[0] != NL_GROUND && q[1] != NL_GROUND) {
				x->taint[q[0]] = x->taint[q[1]] = 1;
				changed = 1;
			}
		}
	}
}

/* Capacitance from node n to anything, farads. */
static double node_cap(const struct pctx *x, uint32_t n)
{
	uint32_t k;
	const uint32_t *adj = nl_adjacency(x->c, n, &k);
	double c = 0;
	for (uint32_t i = 0; i < k; i++) {
		const struct nl_part *p = nl_part_at(x->c, adj[i]);
		if (p->kind == NL_C && p->value > 0)
			c += p->value * (p->ext ? p->ext->mult : 1.0);
	}
	return c;
}

/* A resistor with AC across it feeds a capacitive node faster than the
 * analysis may neglect (PROOF_RC_PERIODS). */
static void check_resistor(struct pctx *x, const struct nl_part *p)
{
	const uint32_t *q = nl_pins(x->c, p);
	const struct prop_node *a = &x->nom->nodes[q[0]], *b = &x->nom->nodes[q[1]];
	if (!(p->value > 0) || a->state == PS_UNKNOWN || b->state == PS_UNKNOWN || !a->f || !b->f)
		return;
	const struct form *d = form_lin(x->ar, 1, a->f, -1, b->f);
	if (!d) {
		x->oom = 1;
		return;
	}
	double lo, hi, T;
	int exact;
	form_ac_range(&x->nom->fc, d, &lo, &hi, &exact);
	T = form_period(&x->nom->fc, d, &exact);
	if (!(hi - lo > 1e-3) || !(T > 0))
		return;
	double r = p->value / (p->ext ? p->ext->mult : 1.0);
	for (int k = 0; k < 2; k++) {
		double cn = held(x, q[k]) ? 0 : node_cap(x, q[k]);
		if (cn > 0 && r * cn < PROOF_RC_PERIODS * T) {
			char arg[120], tau[32], per[32];
			num_format_eng(r * cn, "s", tau, sizeof tau);
			num_format_eng(T, "s", per, sizeof per);
			snprintf(arg, sizeof arg, "%s with a time constant of %s against a period of %s",
				 nl_node_at(x->c, q[k])->name, tau, per);
			mark(x, p, "%s feeds AC into the capacitance at node %s: the analysis neglects it", arg);
			return;
		}
	}
}

/* A node the analysis holds at its source's voltage through a series
 * resistor or inductor (no current through it) is not so held when
 * another resistor joins it to a node the analysis could not settle: that
 * one's current flows through the series resistor, and a part across the
 * series resistor (a bleeder's capacitor) sees its drop, not 0 V. */
static void check_series_load(struct pctx *x, uint32_t part, const struct nl_part *p)
{
	const uint32_t *q = nl_pins(x->c, p);
	for (int k = 0; k < 2; k++) {
		const struct prop_node *n = &x->nom->nodes[q[k]], *o = &x->nom->nodes[q[1 - k]];
		if (n->state == PS_RESOLVED && n->how == PH_SERIES && n->by != part &&
		    o->state != PS_RESOLVED) {
			mark(x, p, "%s joins node %s, held at its source's voltage through a series "
				   "resistance, to nodes the analysis could not settle: its current is "
				   "neglected", nl_node_at(x->c, q[k])->name);
			return;
		}
	}
}

/* The node a series node is held from (the far pin of its series part),
 * or NL_NONE. */
static uint32_t series_up(const struct pctx *x, uint32_t n)
{
	const struct prop_node *pn = &x->nom->nodes[n];
	if (pn->state != PS_RESOLVED || pn->how != PH_SERIES || pn->by == NL_NONE)
		return NL_NONE;
	const struct nl_part *s = nl_part_at(x->c, pn->by);
	const uint32_t *q = nl_pins(x->c, s);
	return q[0] == n ? q[1] : q[0];
}

/* 1 when b is reached from a up a chain of series nodes. */
static int series_chain(const struct pctx *x, uint32_t a, uint32_t b)
{
	for (int hops = 0; hops < PROOF_SERIES_HOPS && a != NL_NONE; hops++) {
		a = series_up(x, a);
		if (a == b)
			return 1;
	}
	return 0;
}

/* A capacitor across a chain of series resistors (a bleeder across a
 * pump capacitor) holds whatever charge the current through them leaves
 * on it, which the chain's no-current assumption sets to 0 V. */
static void check_cap_across_series(struct pctx *x, const struct nl_part *p)
{
	const uint32_t *q = nl_pins(x->c, p);
	if (q[0] == q[1] || !(series_chain(x, q[0], q[1]) || series_chain(x, q[1], q[0])))
		return;
	mark(x, p, "%s%s sits across a series resistance that the analysis takes to carry no "
		   "current", "");
}

/* A part from a held node (ground, a source) to a node held at its
 * source's voltage through a series resistor or inductor, where something
 * else also draws current from that node (a winding stacked on it, a
 * capacitor to a moving node): the current's drop across the series part
 * moves the node both ways, and the part sees it, which the analysis takes
 * to carry none. A diode there is no such load: it conducts only while the
 * node passes the diode's far end, and then pulls the node back between
 * that and the source. (A part in the path of that current, a
 * clamp's capacitor behind its source's resistance, keeps its bound: the
 * drop only ever lowers what charges it.) Resistors and capacitors to
 * ground or to a DC node only filter or divide the node, which the bound
 * covers. */
static int series_node_loaded(const struct pctx *x, uint32_t node)
{
	const struct prop_node *n = &x->nom->nodes[node];
	if (node == NL_GROUND || n->state != PS_RESOLVED || n->how != PH_SERIES)
		return 0;
	uint32_t k;
	const uint32_t *adj = nl_adjacency(x->c, node, &k);
	for (uint32_t j = 0; j < k; j++) {
		if (adj[j] == n->by)
			continue;
		const struct nl_part *o = nl_part_at(x->c, adj[j]);
		if (o->kind == NL_D)
			continue; /* it conducts only while the node passes its far
				     end, and pulls it back toward that */
		if (o->kind != NL_R && o->kind != NL_C)
			return 1;
		const uint32_t *q = nl_pins(x->c, o);
		uint32_t far = q[0] == node ? q[1] : q[0];
		const struct prop_node *fn = &x->nom->nodes[far];
		if (o->kind == NL_C && far != NL_GROUND &&
		    (fn->state != PS_RESOLVED || !fn->f || !form_is_dc(fn->f)))
			return 1;
	}
	return 0;
}

static void check_series_node(struct pctx *x, const struct nl_part *p)
{
	const uint32_t *q = nl_pins(x->c, p);
	for (int k = 0; k < 2; k++)
		if (held(x, q[1 - k]) && series_node_loaded(x, q[k])) {
			mark(x, p, "%s sits on node %s, held at its source's voltage through a series "
				   "resistance that also carries other parts' current: the drop across it "
				   "is neglected", nl_node_at(x->c, q[k])->name);
			return;
		}
}

static void check_part(struct pctx *x, size_t i, const unsigned char *breakdown)
{
	const struct nl_part *p = nl_part_at(x->c, i);
	switch (p->kind) {
	case NL_R:
		check_resistor(x, p);
		check_series_load(x, (uint32_t)i, p);
		return;
	case NL_C:
		check_cap_across_series(x, p);
		check_series_node(x, p);
		return;
	case NL_L:
	case NL_K:
		mark(x, p, "%s%s adds inductance: LC resonance is outside the analysis", "");
		return;
	case NL_D:
		if (breakdown && breakdown[i])
			mark(x, p, "%s%s is driven past its breakdown voltage and conducts in reverse", "");
		check_series_node(x, p);
		return;
	case NL_V:
	case NL_E:
		if (p->ext && p->ext->behavioural)
			mark(x, p, "%s%s is a behavioural source, outside the analysis", "");
		return;
	default:
		mark(x, p, "%s%s is a part the analysis does not model", "");
		return;
	}
}

/* Per part: its island's reason, or a held pin's unknown source; and its
 * island (the root of its first free pin). */
static void assign(struct pctx *x, const char **why, uint32_t *island)
{
	size_t np = nl_part_count(x->c);
	for (size_t i = 0; i < np; i++) {
		const struct nl_part *p = nl_part_at(x->c, i);
		const uint32_t *q = nl_pins(x->c, p);
		why[i] = NULL;
		island[i] = NL_NONE;
		for (uint8_t k = 0; k < p->npins; k++) {
			if (!held(x, q[k]) && island[i] == NL_NONE)
				island[i] = root(x, q[k]);
			if (!why[i])
				why[i] = held(x, q[k]) ? (x->taint[q[k]] ? x->taint_why : NULL)
						       : x->why[root(x, q[k])];
		}
	}
}

int proof_run(const struct nl_circuit *c, const struct prop_result *nom,
	      const unsigned char *breakdown, struct arena *ar,
	      const char ***why_out, uint32_t **island_out)
{
	size_t nn = nl_node_count(c), np = nl_part_count(c);
	struct pctx x = {c, nom, ar, arena_alloc(ar, (nn + 1) * sizeof *x.up),
			 arena_zalloc(ar, (nn + 1) * sizeof *x.why), arena_zalloc(ar, nn + 1), NULL, 0, 0};
	const char **why = arena_alloc(ar, (np + 1) * sizeof *why);
	uint32_t *island = arena_alloc(ar, (np + 1) * sizeof *island);
	if (!x.up || !x.why || !x.taint || !why || !island)
		return 0;
	assert(nom->nnodes == nn);
	for (uint32_t n = 0; n < nn; n++)
		x.up[n] = n;
	for (size_t i = 0; i < np; i++)
		join(&x, nl_part_at(c, i));
	spread_taint(&x);
	if (x.taint_why) {
		char buf[200];
		snprintf(buf, sizeof buf,
			 x.taint_once ? "source %s has a waveform that happens once (a single pulse, a "
					"PWL without repeat, an EXP): its events, not a steady state, "
					"are the worst case"
				      : "source %s has a waveform that is not understood",
			 x.taint_why);
		if (!(x.taint_why = arena_strdup(ar, buf)))
			return 0;
	}
	for (uint32_t n = 0; n < nn; n++)
		if (!held(&x, n) && !x.why[root(&x, n)] && x.taint_why) {
			/* an island next to a tainted held node inherits it */
			uint32_t k;
			const uint32_t *adj = nl_adjacency(c, n, &k);
			for (uint32_t j = 0; j < k; j++) {
				const struct nl_part *p = nl_part_at(c, adj[j]);
				const uint32_t *q = nl_pins(c, p);
				for (uint8_t m = 0; m < p->npins; m++)
					if (held(&x, q[m]) && x.taint[q[m]])
						x.why[root(&x, n)] = x.taint_why;
			}
		}
	for (size_t i = 0; i < np && !x.oom; i++)
		check_part(&x, i, breakdown);
	if (x.oom)
		return 0;
	assign(&x, why, island);
	*why_out = why;
	*island_out = island;
	return 1;
}
