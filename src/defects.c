/* defects.c: circuit defects (defects.h). The forward voltage of a diode is
 * read from the nominal propagation (ideal diodes, nominal sources): where
 * both its nodes follow the sources through less than DEFECTS_LOOP_OHMS, a
 * forward voltage above its drop drives a current that only that
 * resistance limits, every cycle. */
#include "defects.h"

#include <math.h>
#include <stdint.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>

#include "dmodel.h"
#include "num.h"

/* The instance a part sits in: its path up to and including the last dot
 * (empty at the top level). */
struct inst {
	const char *s;
	size_t n;
};

struct dctx {
	const struct audit *a;
	const struct rating *r;
	const struct stress_result *s;
	struct arena *ar;
	struct rules_result *out;
	struct inst *macros; /* instances holding a controlled source, sorted */
	size_t nmacros;
};

/* Held by independent sources (ground, chains of V sources): a node a
 * controlled source drives is left out, since inside device models those
 * sit in feedback loops the propagation does not close. */
static int held(const struct prop_node *n, uint32_t id)
{
	return id == NL_GROUND || (n->state == PS_RESOLVED &&
				   (n->how == PH_GROUND || n->how == PH_SOURCE));
}

/* The source-held node that node id follows through a resistor below
 * DEFECTS_LOOP_OHMS (itself when held), with that resistance; NL_NONE when
 * none. */
static uint32_t stiff(const struct nl_circuit *c, const struct prop_result *nom, uint32_t id,
		      double *ohm)
{
	*ohm = 0;
	if (held(&nom->nodes[id], id))
		return id;
	uint32_t k, best = NL_NONE;
	const uint32_t *adj = nl_adjacency(c, id, &k);
	*ohm = INFINITY;
	for (uint32_t i = 0; i < k; i++) {
		const struct nl_part *r = nl_part_at(c, adj[i]);
		const uint32_t *q = nl_pins(c, r);
		uint32_t o = q[0] == id ? q[1] : q[0];
		double v = r->kind == NL_R ? r->value / (r->ext ? r->ext->mult : 1.0) : INFINITY;
		if (v < DEFECTS_LOOP_OHMS && v < *ohm && held(&nom->nodes[o], o)) {
			*ohm = v;
			best = o;
		}
	}
	return best;
}

/* The largest anode-minus-cathode voltage over a period, NaN if unknown. */
static double forward_max(const struct prop_result *nom, const struct prop_node *a,
			  const struct prop_node *k, struct arena *ar)
{
	const struct form *d = a->f && k->f ? form_lin(ar, 1, a->f, -1, k->f) : NULL;
	double lo, hi;
	int exact;
	if (!d)
		return NAN;
	form_range(&nom->fc, d, &lo, &hi, &exact);
	return hi;
}

static struct inst inst_of(const char *path)
{
	const char *dot = strrchr(path, '.');
	return (struct inst){path, dot ? (size_t)(dot - path) + 1 : 0};
}

static int inst_cmp(const void *va, const void *vb)
{
	const struct inst *a = va, *b = vb;
	int d = memcmp(a->s, b->s, a->n < b->n ? a->n : b->n);
	return d ? d : (a->n > b->n) - (a->n < b->n);
}

static int controlled(const struct nl_part *p)
{
	return p->kind == NL_E || p->kind == NL_F || p->kind == NL_G || p->kind == NL_H;
}

/* The sorted instances that hold a controlled source, built on first use:
 * one lookup per diode instead of a walk over every part. */
static int macro_index(struct dctx *x)
{
	const struct nl_circuit *c = x->a->er.circuit;
	size_t n = 0, np = nl_part_count(c);
	for (size_t i = 0; i < np; i++)
		n += controlled(nl_part_at(c, i)) ? 1u : 0u;
	x->macros = arena_alloc(x->ar, (n + 1) * sizeof *x->macros);
	if (!x->macros)
		return 0;
	for (size_t i = 0; i < np; i++)
		if (controlled(nl_part_at(c, i)))
			x->macros[x->nmacros++] = inst_of(nl_part_at(c, i)->path);
	qsort(x->macros, x->nmacros, sizeof *x->macros, inst_cmp);
	return 1;
}

/* A diode inside a subcircuit instance that also holds a controlled
 * source: a device macromodel's limiting diode, whose loop closes through
 * feedback the propagation does not see. -1 on out-of-memory. */
static int in_macromodel(struct dctx *x, const struct nl_part *d)
{
	struct inst key = inst_of(d->path);
	if (!key.n)
		return 0;
	if (!x->macros && !macro_index(x))
		return -1;
	return x->nmacros && bsearch(&key, x->macros, x->nmacros, sizeof key, inst_cmp) != NULL;
}

static int loop_diode(struct dctx *x, uint32_t i)
{
	const struct nl_circuit *c = x->a->er.circuit;
	const struct nl_part *p = nl_part_at(c, i);
	const struct prop_result *nom = &x->s->runs[0];
	const uint32_t *q = nl_pins(c, p);
	double r0, r1, rs = dmodel_value(p->model, DM_RS) / (p->value > 0 ? p->value : 1);
	uint32_t h0 = stiff(c, nom, q[0], &r0), h1 = stiff(c, nom, q[1], &r1);
	double rl = r0 + r1 + rs;
	if (h0 == NL_NONE || h1 == NL_NONE || !(rl < DEFECTS_LOOP_OHMS))
		return 1;
	const struct prop_node *an = &nom->nodes[h0], *ka = &nom->nodes[h1];
	double vf = rating_vf(p, x->r[i].kind), fwd = forward_max(nom, an, ka, x->ar);
	if (!(fwd > vf + 1))
		return 1;
	int macro = in_macromodel(x, p);
	if (macro != 0)
		return macro > 0;
	struct finding *f = rules_add(x->out, x->ar, RULE_DIODE_LOOP);
	if (!f)
		return 0;
	char v[32], ohm[32], amp[32], buf[600];
	num_format_eng(fwd, "V", v, sizeof v);
	num_format_eng(rl, "ohm", ohm, sizeof ohm);
	num_format_eng((fwd - vf) / rl, "A", amp, sizeof amp);
	f->part = i;
	f->loc = nl_part_loc(p);
	f->subject = p->path;
	f->worst = (fwd - vf) / rl;
	f->unit = "A";
	snprintf(buf, sizeof buf, "%s is driven forward by up to %s straight from the sources, "
		 "through only %s: nothing limits its current (about %s %s)",
		 p->path, v, ohm, amp, form_is_dc(an->f) && form_is_dc(ka->f) ? "all the time" : "every cycle");
	f->message = arena_strdup(x->ar, buf);
	snprintf(buf, sizeof buf, "forward = max v(%s) - v(%s) over a period at nominal sources; "
		 "I = (forward - Vf) / (series resistance + RS)",
		 nl_node_at(c, q[0])->name, nl_node_at(c, q[1])->name);
	f->computation = arena_strdup(x->ar, buf);
	f->fix = "put the missing series capacitor (the first pump capacitor of a clamp or "
		 "ladder) or a current-limiting resistor in the diode's loop";
	return f->message && f->computation;
}

/* Two capacitors, or two diodes the same way round, on the same two nodes
 * with the same value and model, in one diode-capacitor structure. */
static int same_part(const struct nl_circuit *c, const struct nl_part *p, const struct nl_part *o)
{
	const uint32_t *a = nl_pins(c, p), *b = nl_pins(c, o);
	if (p->kind != o->kind || p->model != o->model || p->value != o->value)
		return 0;
	if (p->kind == NL_D)
		return a[0] == b[0] && a[1] == b[1];
	return (a[0] == b[0] && a[1] == b[1]) || (a[0] == b[1] && a[1] == b[0]);
}

/* The sort key of a structure's part: twins (same_part) have equal keys,
 * so comparing every pair is not needed; a network of 64,000 parts would
 * otherwise cost two billion comparisons. */
struct twin_key {
	uintptr_t model;
	double value;
	uint32_t kind, lo, hi;
	uint32_t pos; /* index in the structure: ties keep the structure's order */
};

static int cmp_u(uintptr_t a, uintptr_t b)
{
	return (a > b) - (a < b);
}

/* NaN sorts first and equal to NaN; same_part still keeps NaNs apart. */
static int cmp_value(double a, double b)
{
	if (isnan(a) || isnan(b))
		return !!isnan(b) - !!isnan(a);
	return (a > b) - (a < b);
}

static int key_cmp(const struct twin_key *a, const struct twin_key *b)
{
	int d = cmp_u(a->kind, b->kind);
	d = d ? d : cmp_u(a->lo, b->lo);
	d = d ? d : cmp_u(a->hi, b->hi);
	d = d ? d : cmp_u(a->model, b->model);
	return d ? d : cmp_value(a->value, b->value);
}

static int by_key(const void *va, const void *vb)
{
	const struct twin_key *a = va, *b = vb;
	int d = key_cmp(a, b);
	return d ? d : cmp_u(a->pos, b->pos);
}

static struct twin_key *twin_keys(const struct nl_circuit *c, const struct topo_struct *t,
				  struct arena *ar)
{
	struct twin_key *k = arena_alloc(ar, ((size_t)t->nparts + 1) * sizeof *k);
	for (uint32_t i = 0; k && i < t->nparts; i++) {
		const struct nl_part *p = nl_part_at(c, t->parts[i].part);
		const uint32_t *q = nl_pins(c, p);
		int keep = p->kind == NL_D || q[0] <= q[1]; /* a diode's pins are ordered */
		k[i] = (struct twin_key){(uintptr_t)p->model, p->value, p->kind,
					 keep ? q[0] : q[1], keep ? q[1] : q[0], i};
	}
	if (k && t->nparts > 1)
		qsort(k, t->nparts, sizeof *k, by_key);
	return k;
}

static int twin(struct dctx *x, const struct nl_part *p, const struct nl_part *o, uint32_t part)
{
	const struct nl_circuit *c = x->a->er.circuit;
	struct finding *f = rules_add(x->out, x->ar, RULE_PART_TWIN);
	char buf[600];
	if (!f)
		return 0;
	const uint32_t *q = nl_pins(c, p);
	f->part = part;
	f->loc = nl_part_loc(p);
	f->subject = p->path;
	snprintf(buf, sizeof buf, "%s repeats %s: the same value on the same nodes (%s, %s) "
		 "inside a diode-capacitor network, where each position holds one part",
		 p->path, o->path, nl_node_at(c, q[0])->name, nl_node_at(c, q[1])->name);
	f->message = arena_strdup(x->ar, buf);
	f->fix = "check the netlist: a node name copied from the line above usually "
		 "leaves another position of the network without its part";
	return f->message != NULL;
}

/* Every pair (j < i) of twins, in the order of the structure's parts: part
 * i against each earlier part of its run of equal keys. */
static int duplicates(struct dctx *x, const struct topo_struct *t)
{
	const struct nl_circuit *c = x->a->er.circuit;
	struct twin_key *k = twin_keys(c, t, x->ar);
	uint32_t *first = arena_alloc(x->ar, ((size_t)t->nparts + 1) * sizeof *first);
	uint32_t *at = arena_alloc(x->ar, ((size_t)t->nparts + 1) * sizeof *at);
	if (!k || !first || !at)
		return 0;
	for (uint32_t s = 0; s < t->nparts; s++) {
		first[s] = s > 0 && key_cmp(&k[s - 1], &k[s]) == 0 ? first[s - 1] : s;
		at[k[s].pos] = s;
	}
	for (uint32_t i = 0; i < t->nparts; i++) {
		const struct nl_part *p = nl_part_at(c, t->parts[i].part);
		for (uint32_t s = first[at[i]]; s < at[i]; s++) {
			const struct nl_part *o = nl_part_at(c, t->parts[k[s].pos].part);
			if (same_part(c, p, o) && !twin(x, p, o, t->parts[i].part))
				return 0;
		}
	}
	return 1;
}

int defects_run(const struct audit *a, const struct rating *r,
		const struct stress_result *s, struct arena *ar,
		struct rules_result *out)
{
	struct dctx x = {a, r, s, ar, out, NULL, 0};
	const struct nl_circuit *c = a->er.circuit;
	if (!s->runs)
		return 1;
	for (uint32_t i = 0; i < nl_part_count(c); i++)
		if (nl_part_at(c, i)->kind == NL_D && nl_part_at(c, i)->npins == 2 && !loop_diode(&x, i))
			return 0;
	for (size_t k = 0; k < a->topo.n; k++)
		if (!duplicates(&x, &a->topo.s[k]))
			return 0;
	return 1;
}
