/* devval.c: the value fields of element cards: a number with its suffix,
 * an expression in braces, or a bare expression, evaluated in the scope
 * the caller supplies. Shared by the element builders (device.c) and the
 * source waveform reader (wave.c). */
#include "devval.h"

#include <string.h>

#include "num.h"

static enum dev_status eval_expr(const struct dev_scope *s,
				 const struct expr *e, struct diag_sink *d,
				 struct diag_loc l, double *out)
{
	struct expr_error err = {0};
	enum expr_status st = s->eval(s->ud, e, out, &err);
	if (st == EXPR_OK)
		return DEV_OK;
	if (st == EXPR_STATE)
		return DEV_STATE;
	if (st == EXPR_STRING && s->strings_ok)
		return DEV_STRING;
	if (st == EXPR_UNDEFINED && s->defer_undefined)
		return DEV_DEFER;
	char msg[200];
	expr_error_text(&err, msg, sizeof msg);
	if (err.line) {
		l.line = err.line;
		l.col = err.col;
	}
	diag_add(d, DIAG_ERROR, "expression", l, "%s", msg);
	return DEV_ERROR;
}

/* An atom that is not a number: read it as an expression written without
 * braces, as SPICE readers do for parameter values. */
static enum dev_status atom_as_expr(const struct dev_scope *s,
				    const struct deck_field *f,
				    struct diag_sink *d, struct diag_loc l,
				    double *out)
{
	int oom = 0;
	const struct expr *e = s->atom_expr ? s->atom_expr(s->ud, f, &oom) : NULL;
	if (oom)
		return DEV_OOM;
	if (!e)
		return DEV_ERROR;
	return eval_expr(s, e, d, l, out);
}

enum dev_status devval_get(const struct dev_scope *s,
			  const struct deck_field *f, struct diag_sink *d,
			  uint32_t file, double *out)
{
	struct diag_loc l = {file, f->line, f->col};
	if (f->kind == FIELD_EXPR)
		return eval_expr(s, f->expr, d, l, out);
	if (f->kind != FIELD_ATOM) {
		diag_add(d, DIAG_ERROR, "value", l, "expected a value here");
		return DEV_ERROR;
	}
	size_t bad = 0;
	enum num_status st = num_parse(f->text, f->len, out, &bad);
	if (st == NUM_OK)
		return DEV_OK;
	if (st == NUM_RKM && dialect_reads_letter_codes(s->dialect))
		return DEV_OK;
	if (st == NUM_RKM) {
		diag_add(d, DIAG_WARNING, "letter-code", l,
			 "'%s' is read as the letter code for %g; plain SPICE readers take only the digits before the letter",
			 f->text, *out);
		return DEV_OK;
	}
	if (st == NUM_NOT_A_NUMBER || st == NUM_BAD_CHAR)
		return atom_as_expr(s, f, d, l, out);
	l.col += (uint32_t)bad;
	diag_add(d, DIAG_ERROR, "value", l, "bad number '%s': %s", f->text,
		 num_status_text(st));
	return DEV_ERROR;
}
