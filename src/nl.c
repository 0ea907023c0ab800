/* nl.c: storage for the flattened circuit. Parts and nodes sit in chunked
 * arrays so that growing never moves them; node names are interned in an
 * open-addressing table of 32-bit ids, which is what keeps memory per part
 * small on decks of hundreds of thousands of parts. */
#include "nl.h"

#include <assert.h>
#include <string.h>

#include "smap.h"

#define CHUNK_BITS 10u
#define CHUNK (1u << CHUNK_BITS)

struct nl_circuit {
	struct hr_alloc hook;
	struct arena *ar;
	void **part_chunks;          /* blocks of CHUNK struct nl_part */
	size_t nparts, part_chunk_cap;
	void **node_chunks;          /* blocks of CHUNK struct nl_node */
	size_t nnodes, node_chunk_cap;
	uint32_t *table;     /* node ids + 1; 0 = empty slot */
	size_t table_cap;
	uint32_t *adj;       /* built by nl_finish */
	uint32_t *pins;      /* node ids of all parts, in part order */
	size_t npins, cap_pins;
};

static int push_chunk(struct nl_circuit *c, void ***chunks, size_t *cap,
		      size_t count, size_t elem)
{
	size_t need = (count >> CHUNK_BITS) + 1;
	if (need > *cap) {
		size_t ncap = *cap ? *cap * 2 : 16;
		void **n = hr_realloc(&c->hook, *chunks, ncap * sizeof *n);
		if (!n)
			return 0;
		*chunks = n;
		*cap = ncap;
	}
	if ((count & (CHUNK - 1)) == 0) {
		void *blk = arena_alloc(c->ar, CHUNK * elem);
		if (!blk)
			return 0;
		(*chunks)[count >> CHUNK_BITS] = blk;
	}
	return 1;
}

struct nl_circuit *nl_create(const struct hr_alloc *a)
{
	struct nl_circuit *c = hr_malloc(a, sizeof *c);
	if (!c)
		return NULL;
	memset(c, 0, sizeof *c);
	c->hook = *a;
	c->ar = arena_create(a);
	c->table_cap = 1024;
	c->table = hr_malloc(a, c->table_cap * sizeof *c->table);
	if (!c->ar || !c->table) {
		nl_destroy(c);
		return NULL;
	}
	memset(c->table, 0, c->table_cap * sizeof *c->table);
	if (nl_node_intern(c, "0", 1) != NL_GROUND) {
		nl_destroy(c);
		return NULL;
	}
	return c;
}

void nl_destroy(struct nl_circuit *c)
{
	if (!c)
		return;
	struct hr_alloc a = c->hook;
	hr_free(&a, c->part_chunks);
	hr_free(&a, c->node_chunks);
	hr_free(&a, c->table);
	hr_free(&a, c->adj);
	hr_free(&a, c->pins);
	arena_destroy(c->ar);
	hr_free(&a, c);
}

struct arena *nl_arena(struct nl_circuit *c)
{
	return c->ar;
}

static struct nl_node *node_ref(const struct nl_circuit *c, size_t i)
{
	struct nl_node *blk = c->node_chunks[i >> CHUNK_BITS];
	return &blk[i & (CHUNK - 1)];
}

static struct nl_part *part_ref(const struct nl_circuit *c, size_t i)
{
	struct nl_part *blk = c->part_chunks[i >> CHUNK_BITS];
	return &blk[i & (CHUNK - 1)];
}

static int is_ground(const char *s, size_t n)
{
	return (n == 1 && s[0] == '0') ||
	       (n == 3 && (s[0] | 32) == 'g' && (s[1] | 32) == 'n' &&
		(s[2] | 32) == 'd');
}

static int name_eq(const char *a, const char *b, size_t n)
{
	for (size_t i = 0; i < n; i++) {
		char x = a[i], y = b[i];
		if (x >= 'A' && x <= 'Z')
			x = (char)(x - 'A' + 'a');
		if (y >= 'A' && y <= 'Z')
			y = (char)(y - 'A' + 'a');
		if (x != y)
			return 0;
	}
	return a[n] == '\0';
}

/* Slot for name: either holding its id+1, or empty where it would go. */
static uint32_t *slot_for(const struct nl_circuit *c, const char *s, size_t n)
{
	size_t mask = c->table_cap - 1;
	size_t i = smap_hash(s, n) & mask;
	while (c->table[i]) {
		const struct nl_node *nd = node_ref(c, c->table[i] - 1);
		if (name_eq(nd->name, s, n))
			break;
		i = (i + 1) & mask;
	}
	return &c->table[i];
}

static int grow_table(struct nl_circuit *c)
{
	size_t ncap = c->table_cap * 2;
	uint32_t *nt = hr_malloc(&c->hook, ncap * sizeof *nt);
	if (!nt)
		return 0;
	memset(nt, 0, ncap * sizeof *nt);
	uint32_t *old = c->table;
	c->table = nt;
	c->table_cap = ncap;
	for (size_t id = 0; id < c->nnodes; id++) {
		const struct nl_node *nd = node_ref(c, id);
		*slot_for(c, nd->name, strlen(nd->name)) = (uint32_t)id + 1;
	}
	hr_free(&c->hook, old);
	return 1;
}

uint32_t nl_node_find(const struct nl_circuit *c, const char *name, size_t n)
{
	if (is_ground(name, n))
		return NL_GROUND;
	uint32_t v = *slot_for(c, name, n);
	return v ? v - 1 : NL_NONE;
}

uint32_t nl_node_intern(struct nl_circuit *c, const char *name, size_t n)
{
	if (c->nnodes > 0 && is_ground(name, n))
		return NL_GROUND;
	uint32_t *slot = slot_for(c, name, n);
	if (*slot)
		return *slot - 1;
	if (c->nnodes >= NL_NONE - 1)
		return NL_NONE;
	if ((c->nnodes + 1) * 2 > c->table_cap) {
		if (!grow_table(c))
			return NL_NONE;
		slot = slot_for(c, name, n);
	}
	if (!push_chunk(c, &c->node_chunks, &c->node_chunk_cap, c->nnodes,
			sizeof(struct nl_node)))
		return NL_NONE;
	struct nl_node *nd = node_ref(c, c->nnodes);
	nd->name = arena_strndup(c->ar, name, n);
	if (!nd->name)
		return NL_NONE;
	nd->adj_start = nd->adj_len = 0;
	*slot = (uint32_t)c->nnodes + 1;
	return (uint32_t)c->nnodes++;
}

static int reserve_pins(struct nl_circuit *c, size_t n)
{
	if (c->npins + n <= c->cap_pins)
		return 1;
	size_t ncap = c->cap_pins ? c->cap_pins * 2 : 4096;
	while (ncap < c->npins + n)
		ncap *= 2;
	if (ncap > NL_NONE)
		return 0;
	uint32_t *np = hr_realloc(&c->hook, c->pins, ncap * sizeof *np);
	if (!np)
		return 0;
	c->pins = np;
	c->cap_pins = ncap;
	return 1;
}

uint32_t nl_add_part(struct nl_circuit *c, const struct nl_part *p,
		     const uint32_t *pins)
{
	if (c->nparts >= NL_NONE - 1 || !reserve_pins(c, p->npins))
		return NL_NONE;
	if (!push_chunk(c, &c->part_chunks, &c->part_chunk_cap, c->nparts,
			sizeof(struct nl_part)))
		return NL_NONE;
	struct nl_part *d = part_ref(c, c->nparts);
	*d = *p;
	d->pin0 = (uint32_t)c->npins;
	if (p->npins)
		memcpy(c->pins + c->npins, pins, p->npins * sizeof *pins);
	c->npins += p->npins;
	return (uint32_t)c->nparts++;
}

const uint32_t *nl_pins(const struct nl_circuit *c, const struct nl_part *p)
{
	/* a circuit whose parts have no pins has no pin array at all */
	return c->pins ? c->pins + p->pin0 : NULL;
}

struct diag_loc nl_part_loc(const struct nl_part *p)
{
	struct diag_loc l = {p->loc.file, p->loc.line, p->loc.col};
	return l;
}

struct nl_loc nl_loc_pack(struct diag_loc l)
{
	struct nl_loc p = {l.line, (uint16_t)(l.col > 65535 ? 65535 : l.col),
			   (uint16_t)(l.file > 65535 ? 65535 : l.file)};
	return p;
}

size_t nl_part_count(const struct nl_circuit *c)
{
	return c->nparts;
}

size_t nl_node_count(const struct nl_circuit *c)
{
	return c->nnodes;
}

const struct nl_part *nl_part_at(const struct nl_circuit *c, size_t i)
{
	assert(i < c->nparts);
	return part_ref(c, i);
}

struct nl_part *nl_part_mut(struct nl_circuit *c, size_t i)
{
	assert(i < c->nparts);
	return part_ref(c, i);
}

const struct nl_node *nl_node_at(const struct nl_circuit *c, size_t i)
{
	return node_ref(c, i);
}

int nl_finish(struct nl_circuit *c)
{
	size_t total = 0;
	for (size_t i = 0; i < c->nparts; i++) {
		const struct nl_part *p = nl_part_at(c, i);
		for (uint16_t k = 0; k < p->npins; k++)
			node_ref(c, c->pins[p->pin0 + k])->adj_len++;
		total += p->npins;
	}
	hr_free(&c->hook, c->adj);
	c->adj = hr_malloc(&c->hook, (total ? total : 1) * sizeof *c->adj);
	if (!c->adj)
		return 0;
	uint32_t off = 0;
	for (size_t id = 0; id < c->nnodes; id++) {
		struct nl_node *nd = node_ref(c, id);
		nd->adj_start = off;
		off += nd->adj_len;
		nd->adj_len = 0;
	}
	for (size_t i = 0; i < c->nparts; i++) {
		const struct nl_part *p = nl_part_at(c, i);
		for (uint16_t k = 0; k < p->npins; k++) {
			struct nl_node *nd = node_ref(c, c->pins[p->pin0 + k]);
			c->adj[nd->adj_start + nd->adj_len++] = (uint32_t)i;
		}
	}
	return 1;
}

const uint32_t *nl_adjacency(const struct nl_circuit *c, uint32_t node,
			     uint32_t *n)
{
	const struct nl_node *nd = node_ref(c, node);
	*n = nd->adj_len;
	return c->adj + nd->adj_start;
}

size_t nl_footprint(const struct nl_circuit *c)
{
	return arena_footprint(c->ar) + c->table_cap * sizeof *c->table +
	       2 * c->npins * sizeof *c->adj;
}

const char *nl_kind_name(enum nl_kind k)
{
	static const char *const names[] = {
		"resistor", "capacitor", "inductor", "coupling", "diode",
		"vsource", "isource", "vcvs", "cccs", "vccs", "ccvs", "", "opaque"};
	return (unsigned)k < sizeof names / sizeof names[0] ? names[k] : "?";
}

const char *nl_value_unit(const struct nl_part *p)
{
	switch (p->kind) {
	case NL_R: return "ohm";
	case NL_C: return "F";
	case NL_L: return "H";
	case NL_V: return "V";
	case NL_I: return "A";
	default: return "";
	}
}

static double src_arg(const struct nl_source *s, uint32_t i, double dflt)
{
	return i < s->nargs ? s->args[i] : dflt;
}

int nl_source_once(const struct nl_source *src)
{
	size_t n = src->nargs / 2;
	switch (src->wave) {
	case NL_WAVE_PULSE:
		return src_arg(src, 6, 0) <= 0 && src_arg(src, 0, 0) != src_arg(src, 1, 0);
	case NL_WAVE_PWL:
		if (src->pwl_repeat >= 0 && n && src->args[2 * (n - 1)] - src->pwl_repeat > 0)
			return 0;
		for (size_t i = 1; i < n; i++)
			if (src->args[2 * i + 1] != src->args[1])
				return 1;
		return 0;
	case NL_WAVE_EXP:
		return src->nargs >= 2 && src_arg(src, 0, 0) != src_arg(src, 1, 0);
	case NL_WAVE_SIN:
		return src_arg(src, 4, 0) > 0 && src_arg(src, 1, 0) != 0 && src_arg(src, 2, 0) > 0;
	default:
		return 0;
	}
}
