/* subsize.c: the size of a subcircuit instance from the definitions alone
 * (subsize.h). A body's cards are fixed once it is read (.if blocks are
 * decided with global parameters as the file is read), an element card
 * that builds makes exactly one part and an instance card names one
 * definition (lexically), so the count is exact for a netlist without
 * errors and an upper bound otherwise. Expanding is scope.c's job. */
#include "subsize.h"

#include <stdint.h>

/* subdef.size_state */
enum { SIZE_NEW,
       SIZE_OPEN,
       SIZE_DONE };

/* A definition being counted and the next card of its body to look at. */
struct frame {
	struct subdef *d;
	size_t next;
};

struct walk {
	struct elab *el;
	struct frame *f;
	size_t n, cap;
};

static size_t add_sat(size_t a, size_t b)
{
	return a > SIZE_MAX - b ? SIZE_MAX : a + b;
}

/* Definitions can nest instances of one another as deep as there are
 * definitions, so the walk keeps its own stack in the arena, not the call
 * stack. */
static int push(struct walk *w, struct subdef *d)
{
	if (w->n == w->cap) {
		size_t ncap = w->cap ? w->cap * 2 : 16;
		struct frame *f = arena_alloc(w->el->ar, ncap * sizeof *f);
		if (!f) {
			w->el->oom = 1;
			return 0;
		}
		for (size_t i = 0; i < w->n; i++)
			f[i] = w->f[i];
		w->f = f;
		w->cap = ncap;
	}
	d->size_state = SIZE_OPEN;
	d->size_parts = 0;
	d->size_levels = 1;
	d->size_unknown = 0;
	w->f[w->n++] = (struct frame){d, 0};
	return 1;
}

/* Adds a counted child instance to its parent's totals. */
static void take(struct subdef *parent, const struct subdef *child)
{
	parent->size_unknown |= child->size_unknown;
	parent->size_parts = add_sat(parent->size_parts, child->size_parts);
	if (child->size_levels + 1u > parent->size_levels)
		parent->size_levels = child->size_levels == UINT32_MAX ? UINT32_MAX
								       : child->size_levels + 1u;
}

/* The definition an instance card names, or NULL when the card is an
 * error (no such definition, ports that do not match): no parts then. */
static struct subdef *instance_def(const struct elab *el, const struct subdef *from,
				   const struct deck_card *c)
{
	uint32_t k = elab_name_index(c);
	if (k == 0)
		return NULL;
	const struct subdef *def =
		elab_find_subckt(el, from, c->fields[k - 1].text, c->fields[k - 1].len);
	return def && def->nports == k - 1 ? (struct subdef *)def : NULL;
}

/* One card of the body of d: a part, or an instance counted already,
 * being counted (a cycle), or still to count (returned to be pushed). */
static struct subdef *card(struct walk *w, struct subdef *d, const struct deck_card *c)
{
	if (c->kind != CARD_ELEMENT)
		return NULL;
	if ((c->head[0] | 32) != 'x') {
		d->size_parts = add_sat(d->size_parts, 1);
		return NULL;
	}
	struct subdef *child = instance_def(w->el, d, c);
	if (!child)
		return NULL;
	if (child->size_state == SIZE_NEW)
		return child;
	if (child->size_state == SIZE_OPEN)
		d->size_unknown = 1;
	else
		take(d, child);
	return NULL;
}

int subsize_of(struct elab *el, struct subdef *def, struct subsize *out)
{
	struct walk w = {el, NULL, 0, 0};
	if (def->size_state == SIZE_NEW && !push(&w, def))
		return 0;
	while (w.n > 0) {
		struct frame *f = &w.f[w.n - 1];
		struct subdef *d = f->d;
		if (f->next == d->nbody) {
			d->size_state = SIZE_DONE;
			if (--w.n > 0)
				take(w.f[w.n - 1].d, d);
			continue;
		}
		struct subdef *child = card(&w, d, (const struct deck_card *)d->body[f->next++]);
		if (child && !push(&w, child))
			return 0;
	}
	out->parts = def->size_parts;
	out->levels = def->size_levels;
	out->known = !def->size_unknown;
	return 1;
}
