/* topo.c: structures from pinned nodes. Each node that a diode pins
 * (prop.c) is an element: a clamp (its AC comes through capacitors, its
 * diode returns to a node without AC), a detector (no AC of its own, its
 * diode comes from a node with AC), or a pump stage (both have AC). Each
 * element points at the node its diode returns to; following those links
 * from an element whose reference is not an element gives a chain, and the
 * chain's length and kinds name the structure. */
#include "topo.h"

#include <assert.h>

#include <stdio.h>
#include <string.h>

enum el { EL_NONE, EL_CLAMP, EL_DET, EL_PUMP, EL_DC };

#define TOPO_SLOW_RAIL 20 /* periods: a reference this much slower is a rail */

struct ctx {
	const struct nl_circuit *c;
	const struct prop_result *p;
	struct arena *ar;
	struct topo_struct *s;
	size_t n, cap;
	uint8_t *el;          /* per node */
	uint32_t *child;      /* first element whose reference is this node */
	uint32_t *sibling;    /* next element with the same reference */
	uint8_t *used;        /* per part: already in a structure */
	uint8_t *done;        /* per node: element already in a chain */
	int oom;
};

static const char *const kind_names[] = {
	"clamp-floor", "clamp-ceiling", "detector-high", "detector-low",
	"doubler-half-wave", "doubler-full-wave", "ladder", "pump", "rectifier",
	"network"};
_Static_assert(sizeof kind_names / sizeof kind_names[0] == TK_COUNT, "one name per kind");

const char *topo_kind_name(enum topo_kind k)
{
	assert(k < TK_COUNT);
	return kind_names[k];
}

static const uint32_t *pins(const struct ctx *x, uint32_t part)
{
	return nl_pins(x->c, nl_part_at(x->c, part));
}

static uint32_t other_end(const struct ctx *x, uint32_t part, uint32_t node)
{
	const uint32_t *q = pins(x, part);
	return q[0] == node ? q[1] : q[0];
}

static const struct prop_node *P(const struct ctx *x, uint32_t node)
{
	return &x->p->nodes[node];
}

/* ---- building a structure ---- */

/* Structures may be long (a 1000-stage ladder): parts grow in the arena. */
struct plist {
	struct topo_part *v;
	uint32_t n, cap;
	uint32_t *nodes;
	uint32_t nn, capn;
};

const char *const topo_role_text[TR_COUNT] = {
	[TR_COUPLING_CAP] = "coupling cap",
	[TR_CLAMP_DIODE] = "clamp diode",
	[TR_RESERVOIR_CAP] = "reservoir cap",
	[TR_DETECTOR_DIODE] = "detector diode",
	[TR_LADDER_COUPLING] = "ladder stage %u, coupling column",
	[TR_LADDER_SMOOTHING] = "ladder stage %u, smoothing column",
	[TR_LADDER_CLAMP_DIODE] = "ladder stage %u, clamp diode",
	[TR_LADDER_DETECTOR_DIODE] = "ladder stage %u, detector diode",
	[TR_PUMP_CAP] = "pump stage %u, pump cap",
	[TR_PUMP_DIODE] = "pump stage %u, transfer diode",
	[TR_OUTPUT_CAP] = "output cap",
	[TR_OUTPUT_DIODE] = "output diode",
	[TR_HIGH_CAP] = "high-side cap",
	[TR_HIGH_DIODE] = "high-side diode",
	[TR_LOW_CAP] = "low-side cap",
	[TR_LOW_DIODE] = "low-side diode",
	[TR_BRIDGE_DIODE] = "bridge diode",
	[TR_NETWORK_CAP] = "network cap",
	[TR_NETWORK_DIODE] = "network diode",
};
_Static_assert(sizeof topo_role_text / sizeof topo_role_text[0] == TR_COUNT,
	       "one text per role");

static const char *role(struct ctx *x, enum topo_role r, uint32_t stage);

static int pl_add(struct ctx *x, struct plist *l, uint32_t part,
		  enum topo_role kind, uint32_t stage)
{
	if (x->used[part])
		return 1;
	if (l->n == l->cap) {
		uint32_t ncap = l->cap ? l->cap * 2 : 16;
		struct topo_part *v = arena_alloc(x->ar, ncap * sizeof *v);
		if (!v)
			return 0;
		if (l->n)
			memcpy(v, l->v, l->n * sizeof *v);
		l->v = v;
		l->cap = ncap;
	}
	l->v[l->n].part = part;
	l->v[l->n].kind = kind;
	l->v[l->n].role = role(x, kind, stage);
	l->v[l->n++].stage = stage;
	x->used[part] = 1;
	return 1;
}

static int pl_node(struct ctx *x, struct plist *l, uint32_t node)
{
	if (node == NL_NONE)
		return 1;
	for (uint32_t i = l->nn > 8 ? l->nn - 8 : 0; i < l->nn; i++)
		if (l->nodes[i] == node)
			return 1;
	if (l->nn == l->capn) {
		uint32_t ncap = l->capn ? l->capn * 2 : 16;
		uint32_t *v = arena_alloc(x->ar, ncap * sizeof *v);
		if (!v)
			return 0;
		if (l->nn)
			memcpy(v, l->nodes, l->nn * sizeof *v);
		l->nodes = v;
		l->capn = ncap;
	}
	l->nodes[l->nn++] = node;
	return 1;
}

/* The display text of role r at stage (arena copy when staged). */
static const char *role(struct ctx *x, enum topo_role r, uint32_t stage)
{
	char buf[96];
	assert(r < TR_COUNT);
	if (!strchr(topo_role_text[r], '%'))
		return topo_role_text[r];
	snprintf(buf, sizeof buf, topo_role_text[r], stage);
	const char *out = arena_strdup(x->ar, buf);
	if (!out)
		x->oom = 1;
	return out ? out : "";
}

/* The capacitors between node and the node whose AC it follows; through a
 * node between capacitors only (a capacitor split in series) as well.
 * Returns the far end (the coupling source). */
static uint32_t caps_of(struct ctx *x, struct plist *l, uint32_t node,
			enum topo_role r, uint32_t stage)
{
	uint32_t anchor = P(x, node)->anchor;
	for (int hop = 0; hop < 8 && anchor != NL_NONE; hop++) {
		uint32_t n;
		const uint32_t *adj = nl_adjacency(x->c, node, &n);
		for (uint32_t i = 0; i < n; i++) {
			const struct nl_part *p = nl_part_at(x->c, adj[i]);
			if (p->kind == NL_C && other_end(x, adj[i], node) == anchor &&
			    !pl_add(x, l, adj[i], r, stage))
				x->oom = 1;
		}
		if (P(x, anchor)->how != PH_DIVIDER)
			break;
		pl_node(x, l, anchor);
		node = anchor;
		anchor = P(x, anchor)->anchor;
	}
	return anchor;
}

static int push_struct(struct ctx *x, const struct topo_struct *t,
		       const struct plist *l)
{
	if (x->n == x->cap) {
		size_t ncap = x->cap ? x->cap * 2 : 16;
		struct topo_struct *v = arena_alloc(x->ar, ncap * sizeof *v);
		if (!v)
			return 0;
		if (x->n)
			memcpy(v, x->s, x->n * sizeof *v);
		x->s = v;
		x->cap = ncap;
	}
	x->s[x->n] = *t;
	x->s[x->n].parts = l->v;
	x->s[x->n].nparts = l->n;
	x->s[x->n].nodes = l->nodes;
	x->s[x->n].nnodes = l->nn;
	x->n++;
	return 1;
}

/* The voltage source behind a driven node: back through series parts,
 * transformers and sources. */
static uint32_t source_behind(const struct ctx *x, uint32_t node)
{
	for (int hop = 0; hop < 64 && node != NL_NONE; hop++) {
		const struct prop_node *n = P(x, node);
		if (n->by == NL_NONE)
			return NL_NONE;
		const struct nl_part *p = nl_part_at(x->c, n->by);
		if (n->how == PH_SOURCE)
			return n->by;
		if (n->how == PH_SERIES || n->how == PH_BLEED)
			node = other_end(x, n->by, node);
		else if (n->how == PH_XFMR && p->ext) {
			const uint32_t *q = pins(x, p->ext->ctrl_part[0]);
			node = q[0] == NL_GROUND ? q[1] : q[0];
		}
		else
			return NL_NONE;
	}
	return NL_NONE;
}

/* ---- elements and chains ---- */

static uint32_t ref_of(const struct ctx *x, uint32_t node)
{
	return other_end(x, P(x, node)->by, node);
}

/* A reference that moves TOPO_SLOW_RAIL times more slowly than the node
 * it holds is a rail that sags or wobbles (a supply under a fast signal),
 * not a clock: the element is a clamp to a moving rail. */
static int slow_rail(const struct ctx *x, const struct form *node, const struct form *ref)
{
	int e1, e2;
	double pn = form_period(&x->p->fc, node, &e1), pr = form_period(&x->p->fc, ref, &e2);
	return pn > 0 && pr >= TOPO_SLOW_RAIL * pn;
}

static void classify(struct ctx *x)
{
	for (uint32_t id = 0; id < x->p->nnodes; id++) {
		const struct prop_node *n = P(x, id);
		x->child[id] = x->sibling[id] = NL_NONE;
		if (n->how != PH_PIN || n->conflict || x->used[n->by])
			continue;
		uint32_t r = ref_of(x, id);
		if (P(x, r)->state != PS_RESOLVED)
			continue;
		int ac = !form_is_dc(n->f), rac = !form_is_dc(P(x, r)->f);
		if (ac && rac && slow_rail(x, n->f, P(x, r)->f))
			rac = 0; /* a clamp on a slowly moving rail, not a pump */
		x->el[id] = ac && rac ? EL_PUMP : ac ? EL_CLAMP : rac ? EL_DET : EL_DC;
	}
	for (uint32_t id = (uint32_t)x->p->nnodes; id-- > 0;) {
		if (x->el[id] == EL_NONE || x->el[id] == EL_DC)
			continue;
		uint32_t r = ref_of(x, id);
		x->sibling[id] = x->child[r];
		x->child[r] = id;
	}
}

/* The element after `cur` in a chain, or NL_NONE. */
static uint32_t next_of(const struct ctx *x, uint32_t cur)
{
	uint8_t want = x->el[cur];
	for (uint32_t k = x->child[cur]; k != NL_NONE; k = x->sibling[k]) {
		if (x->done[k])
			continue;
		if (want == EL_DET && x->el[k] == EL_CLAMP)
			return k;
		if (want != EL_DET && (x->el[k] == EL_DET || x->el[k] == EL_PUMP))
			return k;
	}
	return NL_NONE;
}

struct chain {
	uint32_t *v;
	uint32_t n, cap;
	int pump;
};

static int chain_walk(struct ctx *x, uint32_t start, struct chain *ch)
{
	ch->n = 0;
	ch->pump = 0;
	for (uint32_t cur = start; cur != NL_NONE; cur = next_of(x, cur)) {
		if (ch->n == ch->cap) {
			uint32_t ncap = ch->cap ? ch->cap * 2 : 64;
			uint32_t *v = arena_alloc(x->ar, ncap * sizeof *v);
			if (!v)
				return 0;
			if (ch->n)
				memcpy(v, ch->v, ch->n * sizeof *v);
			ch->v = v;
			ch->cap = ncap;
		}
		ch->v[ch->n++] = cur;
		ch->pump |= x->el[cur] == EL_PUMP;
		x->done[cur] = 1;
	}
	return 1;
}

/* Roles of one chain element; returns its coupling source node. */
static uint32_t element_parts(struct ctx *x, struct plist *l, enum topo_kind k,
			      uint32_t node, uint32_t i, uint32_t last)
{
	uint32_t st = i / 2 + 1, diode = P(x, node)->by;
	int det = x->el[node] == EL_DET;
	enum topo_role cr, dr;
	if (k == TK_LADDER) {
		cr = det ? TR_LADDER_SMOOTHING : TR_LADDER_COUPLING;
		dr = det ? TR_LADDER_DETECTOR_DIODE : TR_LADDER_CLAMP_DIODE;
	} else if (k == TK_PUMP) {
		st = i + 1;
		cr = i == last && det ? TR_OUTPUT_CAP : TR_PUMP_CAP;
		dr = i == last && det ? TR_OUTPUT_DIODE : TR_PUMP_DIODE;
	} else {
		cr = det ? TR_RESERVOIR_CAP : TR_COUPLING_CAP;
		dr = det ? TR_DETECTOR_DIODE : TR_CLAMP_DIODE;
		st = 0;
	}
	pl_node(x, l, node);
	if (!pl_add(x, l, diode, dr, st))
		x->oom = 1;
	return caps_of(x, l, node, cr, st);
}

static enum topo_kind chain_kind(const struct ctx *x, const struct chain *ch)
{
	uint32_t first = ch->v[0];
	if (ch->pump)
		return TK_PUMP;
	if (ch->n >= 3)
		return TK_LADDER;
	if (ch->n == 2)
		return TK_DOUBLER_HALF;
	if (x->el[first] == EL_DET)
		return P(x, first)->pin_upper ? TK_DETECTOR_LOW : TK_DETECTOR_HIGH;
	return P(x, first)->pin_upper ? TK_CLAMP_CEILING : TK_CLAMP_FLOOR;
}

static int emit_chain(struct ctx *x, const struct chain *ch)
{
	struct topo_struct t;
	struct plist l = {0};
	memset(&t, 0, sizeof t);
	uint32_t first = ch->v[0];
	t.kind = chain_kind(x, ch);
	t.stages = t.kind == TK_PUMP ? (double)(ch->n - (x->el[ch->v[ch->n - 1]] == EL_DET))
				      : ch->n / 2.0;
	t.negative = P(x, first)->pin_upper;
	t.output2 = NL_NONE;
	uint32_t src = NL_NONE;
	for (uint32_t i = 0; i < ch->n; i++) {
		uint32_t s = element_parts(x, &l, t.kind, ch->v[i], i, ch->n - 1);
		if (i == 0)
			src = s;
	}
	if (x->el[first] == EL_DET) {
		t.drive = ref_of(x, first);
		t.reference = src;
	} else {
		t.drive = src;
		t.reference = ref_of(x, first);
	}
	t.biased = t.reference != NL_GROUND && t.kind != TK_PUMP;
	t.output = ch->v[ch->n - 1];
	t.drive_source = source_behind(x, t.drive);
	pl_node(x, &l, t.drive);
	pl_node(x, &l, t.reference);
	if (t.kind == TK_PUMP) {
		t.negative = P(x, first)->pin_upper;
		t.note = "inner nodes follow the clock phases they are coupled to";
	}
	return !x->oom && push_struct(x, &t, &l);
}

static int chains(struct ctx *x)
{
	struct chain ch = {0};
	for (uint32_t id = 0; id < x->p->nnodes; id++) {
		uint8_t e = x->el[id];
		if (e == EL_NONE || e == EL_DC || x->done[id])
			continue;
		uint32_t r = ref_of(x, id);
		if (x->el[r] != EL_NONE && x->el[r] != EL_DC)
			continue; /* not a start: reached from its reference */
		if (!chain_walk(x, id, &ch) || !emit_chain(x, &ch))
			return 0;
	}
	return 1;
}

/* ---- full-wave doublers: a high and a low detector on one drive ---- */

static void full_wave(struct ctx *x)
{
	for (size_t i = 0; i < x->n; i++) {
		struct topo_struct *a = &x->s[i];
		if (a->kind != TK_DETECTOR_HIGH)
			continue;
		for (size_t j = 0; j < x->n; j++) {
			struct topo_struct *b = &x->s[j];
			if (b->kind != TK_DETECTOR_LOW || b->drive != a->drive ||
			    b->reference != a->reference)
				continue;
			struct topo_part *v = arena_alloc(x->ar, (a->nparts + b->nparts) * sizeof *v);
			uint32_t *nodes = arena_alloc(x->ar, (a->nnodes + b->nnodes) * sizeof *nodes);
			if (!v || !nodes) {
				x->oom = 1;
				return;
			}
			for (uint32_t k = 0; k < a->nparts; k++) {
				v[k] = a->parts[k];
				v[k].kind = nl_part_at(x->c, v[k].part)->kind == NL_D ? TR_HIGH_DIODE : TR_HIGH_CAP;
				v[k].role = topo_role_text[v[k].kind];
			}
			for (uint32_t k = 0; k < b->nparts; k++) {
				v[a->nparts + k] = b->parts[k];
				v[a->nparts + k].kind = nl_part_at(x->c, b->parts[k].part)->kind == NL_D ? TR_LOW_DIODE : TR_LOW_CAP;
				v[a->nparts + k].role = topo_role_text[v[a->nparts + k].kind];
			}
			memcpy(nodes, a->nodes, a->nnodes * sizeof *nodes);
			uint32_t nn = a->nnodes;
			for (uint32_t k = 0; k < b->nnodes; k++) {
				uint32_t m = 0;
				while (m < nn && nodes[m] != b->nodes[k])
					m++;
				if (m == nn)
					nodes[nn++] = b->nodes[k];
			}
			a->kind = TK_DOUBLER_FULL;
			a->stages = 1;
			a->output2 = b->output;
			a->parts = v;
			a->nparts += b->nparts;
			a->nodes = nodes;
			a->nnodes = nn;
			memmove(b, b + 1, (x->n - j - 1) * sizeof *b);
			x->n--;
			if (j < i)
				i--;
			break;
		}
	}
}

/* ---- bridge rectifiers ---- */

/* The diode from a into k, if there is one not yet used. */
static uint32_t diode_between(const struct ctx *x, uint32_t a, uint32_t k)
{
	uint32_t n;
	const uint32_t *adj = nl_adjacency(x->c, k, &n);
	for (uint32_t i = 0; i < n; i++) {
		const struct nl_part *p = nl_part_at(x->c, adj[i]);
		const uint32_t *q = pins(x, adj[i]);
		if (p->kind == NL_D && q[0] == a && q[1] == k && !x->used[adj[i]])
			return adj[i];
	}
	return NL_NONE;
}

static const char *bridge_note(struct ctx *x, uint32_t a, uint32_t b)
{
	const struct prop_node *na = P(x, a), *nb = P(x, b);
	if (na->state != PS_RESOLVED || nb->state != PS_RESOLVED)
		return "output across the reservoir is the peak of the AC between the bridge inputs; the inputs float, so it is not settled here";
	const struct form *d = form_lin(x->ar, 1, na->f, -1, nb->f);
	if (!d) {
		x->oom = 1;
		return NULL;
	}
	double lo, hi;
	int exact;
	form_range(&x->p->fc, d, &lo, &hi, &exact);
	char buf[160];
	snprintf(buf, sizeof buf, "output across the reservoir: peak of the input difference, %.4g V",
		 hi > -lo ? hi : -lo);
	return arena_strdup(x->ar, buf);
}

static void bridge_at(struct ctx *x, uint32_t pnode)
{
	uint32_t n, all, buf[64];
	const uint32_t *every = nl_adjacency(x->c, pnode, &all);
	/* only the diodes into pnode can form the top of a bridge */
	n = 0;
	for (uint32_t i = 0; i < all && n < 64; i++)
		if (nl_part_at(x->c, every[i])->kind == NL_D && pins(x, every[i])[1] == pnode)
			buf[n++] = every[i];
	const uint32_t *adj = buf;
	for (uint32_t i = 0; i < n; i++)
		for (uint32_t j = i + 1; j < n; j++) {
			const struct nl_part *d1 = nl_part_at(x->c, adj[i]), *d2 = nl_part_at(x->c, adj[j]);
			if (d1->kind != NL_D || d2->kind != NL_D || x->used[adj[i]] || x->used[adj[j]])
				continue;
			const uint32_t *q1 = pins(x, adj[i]), *q2 = pins(x, adj[j]);
			if (q1[1] != pnode || q2[1] != pnode || q1[0] == q2[0])
				continue;
			uint32_t a = q1[0], b = q2[0], m;
			const uint32_t *aa = nl_adjacency(x->c, a, &m);
			if (m > 64)
				continue; /* a bridge input is not a busy node */
			for (uint32_t k = 0; k < m; k++) {
				if (nl_part_at(x->c, aa[k])->kind != NL_D || pins(x, aa[k])[1] != a)
					continue;
				uint32_t nn = pins(x, aa[k])[0], d4 = diode_between(x, nn, b);
				if (nn == pnode || d4 == NL_NONE || x->used[aa[k]])
					continue;
				struct topo_struct t;
				struct plist l = {0};
				memset(&t, 0, sizeof t);
				t.kind = TK_RECTIFIER;
				t.drive = a;
				t.reference = nn;
				t.output = pnode;
				t.output2 = nn;
				t.drive_source = source_behind(x, a);
				t.note = bridge_note(x, a, b);
				pl_add(x, &l, adj[i], TR_BRIDGE_DIODE, 0);
				pl_add(x, &l, adj[j], TR_BRIDGE_DIODE, 0);
				pl_add(x, &l, aa[k], TR_BRIDGE_DIODE, 0);
				pl_add(x, &l, d4, TR_BRIDGE_DIODE, 0);
				uint32_t np;
				const uint32_t *pa = nl_adjacency(x->c, pnode, &np);
				for (uint32_t r = 0; r < np; r++)
					if (nl_part_at(x->c, pa[r])->kind == NL_C && other_end(x, pa[r], pnode) == nn)
						pl_add(x, &l, pa[r], TR_RESERVOIR_CAP, 0);
				pl_node(x, &l, a);
				pl_node(x, &l, b);
				pl_node(x, &l, pnode);
				pl_node(x, &l, nn);
				if (!l.v || !push_struct(x, &t, &l))
					x->oom = 1;
				return;
			}
		}
}

/* ---- what fits nothing: diode-capacitor networks left unsettled ---- */

static uint32_t dsu_find(uint32_t *up, uint32_t v)
{
	while (up[v] != v) {
		up[v] = up[up[v]];
		v = up[v];
	}
	return v;
}

static int unsettled(const struct ctx *x, uint32_t node)
{
	const struct prop_node *n = P(x, node);
	return n->state != PS_RESOLVED || n->conflict;
}

static void networks(struct ctx *x)
{
	size_t nn = x->p->nnodes, np = nl_part_count(x->c);
	uint32_t *up = arena_alloc(x->ar, (nn + 1) * sizeof *up);
	uint8_t *kinds = arena_zalloc(x->ar, nn + 1);
	if (!up || !kinds) {
		x->oom = 1;
		return;
	}
	for (uint32_t i = 0; i < nn; i++)
		up[i] = i;
	for (size_t i = 0; i < np; i++) {
		const struct nl_part *p = nl_part_at(x->c, i);
		const uint32_t *q = pins(x, (uint32_t)i);
		if ((p->kind != NL_C && p->kind != NL_D) || x->used[i] ||
		    (!unsettled(x, q[0]) && !unsettled(x, q[1])))
			continue;
		uint32_t a = dsu_find(up, q[0]), b = dsu_find(up, q[1]);
		up[a] = b;
	}
	for (size_t i = 0; i < np; i++) {
		const struct nl_part *p = nl_part_at(x->c, i);
		const uint32_t *q = pins(x, (uint32_t)i);
		if ((p->kind == NL_C || p->kind == NL_D) && !x->used[i] &&
		    (unsettled(x, q[0]) || unsettled(x, q[1])))
			kinds[dsu_find(up, q[0])] |= p->kind == NL_C ? 1 : 2;
	}
	for (uint32_t root = 0; root < nn && !x->oom; root++) {
		if (kinds[root] != 3 || dsu_find(up, root) != root)
			continue;
		struct topo_struct t;
		struct plist l = {0};
		memset(&t, 0, sizeof t);
		t.kind = TK_NETWORK;
		t.drive = t.reference = t.output = t.output2 = t.drive_source = NL_NONE;
		t.note = "the propagation cannot settle these nodes (diodes that clip, capacitor loops, or nothing to drive them); a transient check is needed";
		for (size_t i = 0; i < np; i++) {
			const struct nl_part *p = nl_part_at(x->c, i);
			const uint32_t *q = pins(x, (uint32_t)i);
			if ((p->kind != NL_C && p->kind != NL_D) || x->used[i] ||
			    (!unsettled(x, q[0]) && !unsettled(x, q[1])) || dsu_find(up, q[0]) != root)
				continue;
			pl_add(x, &l, (uint32_t)i, p->kind == NL_C ? TR_NETWORK_CAP : TR_NETWORK_DIODE, 0);
			pl_node(x, &l, q[0]);
			pl_node(x, &l, q[1]);
		}
		if (!push_struct(x, &t, &l))
			x->oom = 1;
	}
}

int topo_find(const struct nl_circuit *c, const struct prop_result *p,
	      struct arena *ar, struct topo_result *out)
{
	struct ctx x;
	memset(&x, 0, sizeof x);
	x.c = c;
	x.p = p;
	x.ar = ar;
	size_t nn = p->nnodes + 1, np = nl_part_count(c) + 1;
	x.el = arena_zalloc(ar, nn);
	x.child = arena_alloc(ar, nn * sizeof *x.child);
	x.sibling = arena_alloc(ar, nn * sizeof *x.sibling);
	x.used = arena_zalloc(ar, np);
	x.done = arena_zalloc(ar, nn);
	if (!x.el || !x.child || !x.sibling || !x.used || !x.done)
		return 0;
	for (uint32_t id = 0; id < p->nnodes && !x.oom; id++)
		bridge_at(&x, id);
	classify(&x);
	if (x.oom || !chains(&x))
		return 0;
	full_wave(&x);
	networks(&x);
	out->s = x.s;
	out->n = x.n;
	return !x.oom;
}
