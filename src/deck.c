/* deck.c: copying cards out of the parser's scratch memory. */
#include "deck.h"

#include <string.h>

#include "num.h"

static int clone_fields(struct arena *ar, struct deck_field **dst,
			const struct deck_field *src, uint32_t n);

static int clone_field(struct arena *ar, struct deck_field *d,
		       const struct deck_field *s)
{
	*d = *s;
	d->next = NULL;
	if (s->text && !(d->text = arena_strndup(ar, s->text, s->len)))
		return 0;
	if (s->expr && !(d->expr = expr_clone(ar, s->expr)))
		return 0;
	if (s->value) {
		d->value = arena_alloc(ar, sizeof *d->value);
		if (!d->value || !clone_field(ar, d->value, s->value))
			return 0;
	}
	return clone_fields(ar, &d->args, s->args, s->nargs);
}

static int clone_fields(struct arena *ar, struct deck_field **dst,
			const struct deck_field *src, uint32_t n)
{
	*dst = NULL;
	if (n == 0)
		return 1;
	*dst = arena_alloc(ar, n * sizeof **dst);
	if (!*dst)
		return 0;
	for (uint32_t i = 0; i < n; i++)
		if (!clone_field(ar, &(*dst)[i], &src[i]))
			return 0;
	return 1;
}

struct deck_card *deck_card_clone(struct arena *ar, const struct deck_card *c)
{
	struct deck_card *d = arena_alloc(ar, sizeof *d);
	if (!d)
		return NULL;
	*d = *c;
	if (c->head && !(d->head = arena_strndup(ar, c->head, c->headlen)))
		return NULL;
	if (!clone_fields(ar, &d->fields, c->fields, c->nfields))
		return NULL;
	return d;
}

int deck_atom_is(const struct deck_field *f, const char *word)
{
	return f->kind == FIELD_ATOM && num_ieq(f->text, f->len, word);
}
