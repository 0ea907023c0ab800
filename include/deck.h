/* deck.h: one card of a netlist as the parser hands it over. A card lives in
 * scratch memory until the next card starts; a consumer that keeps it must
 * copy it (deck_card_clone). Interpreting fields is elaboration's job. */
#ifndef HEADROOM_DECK_H
#define HEADROOM_DECK_H

#include <stdint.h>

#include "arena.h"
#include "diag.h"
#include "expr.h"

enum deck_card_kind {
	CARD_TITLE,
	CARD_ELEMENT,  /* R1 a b 1k ... */
	CARD_ANNOT,    /* *@... : text is everything after "*@" */
	CARD_SUBCKT,
	CARD_ENDS,
	CARD_MODEL,
	CARD_PARAM,    /* fields are FIELD_ASSIGN with expression values */
	CARD_FUNC,     /* fields: FIELD_CALL name(params...), FIELD_EXPR body */
	CARD_INCLUDE,  /* fields: one FIELD_ATOM path */
	CARD_LIB,      /* one atom: section start; two: file and section */
	CARD_ENDL,
	CARD_GLOBAL,
	CARD_OPTION,
	CARD_TEMP,
	CARD_TRAN,
	CARD_IC,       /* .ic and .nodeset */
	CARD_COND,     /* .if/.elseif/.else/.endif (not supported) */
	CARD_IGNORED,  /* analysis and output cards, read for nothing */
	CARD_END
};

enum deck_field_kind {
	FIELD_ATOM,   /* a bare word or number: text */
	FIELD_EXPR,   /* {expr} or 'expr': expr */
	FIELD_ASSIGN, /* key=value: text is the key, value the value field */
	FIELD_CALL    /* name(args...): text is the name, args the fields */
};

struct deck_field {
	enum deck_field_kind kind;
	uint32_t line, col;
	const char *text;           /* ATOM text, ASSIGN key, CALL name */
	uint32_t len;
	struct expr *expr;          /* FIELD_EXPR */
	struct deck_field *value;   /* FIELD_ASSIGN */
	struct deck_field *args;    /* FIELD_CALL: array of nargs */
	uint32_t nargs;
	struct deck_field *next;    /* list link while parsing */
	uint8_t comma;              /* a comma stood before it ("max(a, -1)") */
};

struct deck_card {
	enum deck_card_kind kind;
	struct diag_loc loc;        /* of the card's first character */
	const char *head;           /* element name or dot keyword as written */
	uint32_t headlen;
	struct deck_field *fields;  /* array of nfields */
	uint32_t nfields;
};

/* Deep copy of a card into ar; NULL on out-of-memory. */
struct deck_card *deck_card_clone(struct arena *ar, const struct deck_card *c);

/* True if field f is an atom spelling word (any case). */
int deck_atom_is(const struct deck_field *f, const char *word);

/* Called once per well-formed card, in order. Return 0 to go on, non-zero
 * to stop reading (e.g. out of memory). */
typedef int (*deck_card_fn)(void *ud, const struct deck_card *card);

#endif
