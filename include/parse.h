/* parse.h: the driver that owns one scanner+parser run over one stream and
 * hands every card, in order, to a consumer. It knows nothing of .include or
 * subcircuits: elaboration decides what a card means. */
#ifndef HEADROOM_PARSE_H
#define HEADROOM_PARSE_H

#include <stdint.h>
#include <stdio.h>

#include "arena.h"
#include "deck.h"
#include "diag.h"

/* The consumer of cards (deck_card_fn, deck.h). The card and everything it
 * points to live in scratch memory that is reused when the next card
 * starts. */
typedef deck_card_fn parse_card_fn;

struct parse_opts {
	uint32_t file;          /* diag file id of this stream */
	int has_title;          /* first line is the title (top-level file) */
	uint32_t max_line_len;  /* longest physical line accepted, bytes */
	uint32_t max_token_len; /* longest word or value, bytes; 0 = 64 KiB */
	int caret_xor;          /* '^' is exclusive or, not the power */
};

enum parse_status {
	PARSE_OK,       /* read to the end (or to .end); diagnostics may exist */
	PARSE_STOPPED,  /* the consumer asked to stop */
	PARSE_OOM       /* out of memory */
};

/* Parses stream in (borrowed, read to EOF or .end). Syntax errors become
 * diagnostics in diags and the parse goes on at the next card. scratch is
 * used for cards and is reset to the mark it had on entry before returning. */
enum parse_status parse_stream(FILE *in, const struct parse_opts *opts,
			       struct arena *scratch, struct diag_sink *diags,
			       parse_card_fn fn, void *ud);

/* Parses text[0..n) (one line, no newline) as an expression, as it would
 * be read inside {}: used for values written without braces, like a
 * subcircuit default "beta=20e3/stime". Locations start at `at`. Syntax
 * errors go to diags. The tree is allocated in ar and left there (ar is not
 * reset). Returns NULL on a syntax error or out-of-memory (*oom set). */
struct expr *parse_expr_text(const char *text, size_t n, struct diag_loc at,
			     struct arena *ar, struct diag_sink *diags,
			     int *oom);

#endif
