/* lexctx.h: state shared by the scanner (spice.l), the parser (spice.y) and
 * the driver (src/parse.c). Reached from the scanner through yyextra; there
 * are no file-scope variables. */
#ifndef HEADROOM_LEXCTX_H
#define HEADROOM_LEXCTX_H

#include <setjmp.h>
#include <stdint.h>

#include "arena.h"
#include "deck.h"
#include "diag.h"

struct lex_ctx {
	uint32_t file;
	uint32_t line, col;       /* position of the next byte */
	uint32_t max_line_len;
	uint32_t max_token_len;
	uint32_t raw_line;        /* physical line at the read position */
	uint64_t raw_len;         /* bytes read so far on that line */
	int title_pending;        /* next line is the title */
	int cont_state;           /* start condition a continuation resumes */
	int expr_closer;          /* '}' or '\'' for the open value expression */
	int brace_depth;
	int card_bad;             /* a lexical error spoiled the current card */
	int read_failed;
	uint32_t control_line;    /* where an open .control block began */
	uint32_t control_col;
	int pending_eol;          /* an EOL token is owed before the next one */
	uint32_t eol_line, eol_col; /* where the card's last line ended */
	int ended;                /* .end seen: the rest is ignored */
	int start_token;          /* returned once before anything else */
	int paren_depth;          /* of '(' in a card, to drop a stray ')' */
	int comma_pending;        /* the separators before the next word held a comma */
	int caret_xor;            /* '^' is exclusive or (dialect.h) */
	struct expr *expr_result; /* parse_expr_text's result */
	struct arena *scratch;
	struct arena_mark mark;   /* scratch is reset here at each card head */
	struct diag_sink *diags;
	const struct hr_alloc *hook; /* flex's buffers come from here */
	struct lex_block *blocks;    /* flex's live allocations, freed after a fatal error */
	jmp_buf fatal;               /* where flex's fatal errors return to */
	/* parser side */
	deck_card_fn fn;
	void *ud;
	int stop;
	int oom;
	int too_deep;                /* the parser's stack overflowed */
};

/* Header of each allocation flex makes, so a fatal error can free all. */
struct lex_block {
	struct lex_block *prev, *next;
	size_t pad; /* keeps the payload 16-byte aligned on 64-bit targets */
};

/* Frees every block flex still holds (after a fatal error). */
void lex_free_all(struct lex_ctx *ctx);

/* Token texts handed to the parser: arena copies in scratch. */
struct lex_text {
	const char *s;
	uint32_t n;
	int kind; /* enum deck_card_kind, for card heads */
	int comma; /* a word whose separators before it held a comma */
};

/* Fields of a card while it is being parsed: a linked list in scratch. */
struct field_list {
	struct deck_field *first, *last;
	uint32_t n;
};

/* A whole element line of plain words, scanned as one token: its head and
 * its words as atom fields. */
struct lex_simple {
	struct lex_text head;
	struct field_list *fields;
};

/* List and field builders shared by scanner and parser (spice.l). They set
 * ctx->oom and return NULL (or the list unchanged) on out-of-memory. */
struct field_list *lex_list_new(struct lex_ctx *ctx);
struct field_list *lex_list_add(struct lex_ctx *ctx, struct field_list *l,
				struct deck_field *f);
struct deck_field *lex_field_new(struct lex_ctx *ctx, enum deck_field_kind kind,
				 struct lex_text t, uint32_t line, uint32_t col);

/* Puts a fresh scanner in its first mode (title line or card start). */
void lex_start(void *scanner, int has_title);
/* Puts a fresh scanner in expression mode, for parse_expr_text. */
void lex_start_expr(void *scanner);

#endif
