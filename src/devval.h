/* devval.h: the scope element cards are read in (struct dev_scope) and
 * the evaluation of one value field in it. Internal to the front end:
 * used by device.c, wave.c and their callers in elaboration. */
#ifndef HEADROOM_DEVVAL_H
#define HEADROOM_DEVVAL_H

#include <stddef.h>
#include <stdint.h>

#include "deck.h"
#include "diag.h"
#include "dialect.h"
#include "expr.h"
#include "nl.h"

struct dev_scope {
	void *ud;
	/* Evaluates expression e in this scope. */
	enum expr_status (*eval)(void *ud, const struct expr *e, double *out,
				 struct expr_error *err);
	/* Circuit node for local node name[0..n); NL_NONE on out-of-memory. */
	uint32_t (*node)(void *ud, const char *name, size_t n);
	/* Model visible here named by atom f, or NULL. */
	const struct nl_model *(*model)(void *ud, const struct deck_field *f);
	/* For an undefined model named by atom f: writes "; did you mean
	 * 'X'?" into buf[0..n) for a defined model visible here whose name is
	 * close (suggest.h), else "". May be NULL itself. */
	void (*model_hint)(void *ud, const struct deck_field *f, char *buf, size_t n);
	/* Parses an atom written without braces as an expression ("20e3/t");
	 * NULL on a syntax error (reported) or out-of-memory (*oom set). */
	struct expr *(*atom_expr)(void *ud, const struct deck_field *f, int *oom);
	const char *prefix;     /* instance path with trailing '.', or "" */
	int defer_undefined;    /* return DEV_DEFER instead of reporting an
				   undefined parameter (first pass at top level) */
	double mult;            /* instance m= product applied to every part */
	uint32_t max_wave_values; /* values in one waveform; 0 = 200,000 */
	enum dialect dialect;   /* the reading in force (never DIALECT_AUTO
				   once the file says which; dialect.h) */
	int strings_ok;         /* a string value gives DEV_STRING (subcircuit
				   parameters), not an error */
};

/* DEV_STATE: a value depends on the circuit's state (v(), i(), time); it
 * is not an error for parts that may be behavioural. DEV_STRING: the value
 * is a string, given only where strings_ok is set. */
enum dev_status { DEV_OK, DEV_ERROR, DEV_DEFER, DEV_OOM, DEV_STATE, DEV_STRING };

/* Evaluates a value field: a number with suffix, or an expression. Reports
 * problems to d unless the status is DEV_DEFER or DEV_STATE. */
enum dev_status devval_get(const struct dev_scope *s,
			   const struct deck_field *f, struct diag_sink *d,
			   uint32_t file, double *out);

#endif
