/* device.c: element cards to parts, one builder per family of letters.
 * Field positions follow the ngspice manual's element chapters; anything a
 * builder does not understand is an error at that field, never a guess. */
#include "device.h"

#include <math.h>
#include <stddef.h>
#include <stdio.h>
#include <string.h>

#include "behav.h"
#include "devval.h"
#include "dialect.h"
#include "num.h"
#include "suggest.h"
#include "wave.h"

#define DEV_MAX_PINS 64

struct build {
	const struct dev_scope *s;
	const struct deck_card *card;
	struct nl_circuit *c;
	struct diag_sink *d;
	struct nl_part part;
	struct nl_extra ext;
	int has_ext;
	uint32_t pins[DEV_MAX_PINS];
};

static struct diag_loc field_loc(const struct build *b,
				 const struct deck_field *f)
{
	struct diag_loc l = {b->card->loc.file, f->line, f->col};
	return l;
}

static enum dev_status err_at(struct build *b, const struct deck_field *f,
			      const char *fmt, const char *arg)
{
	struct diag_loc l = f ? field_loc(b, f) : b->card->loc;
	diag_add(b->d, DIAG_ERROR, "element", l, fmt, arg);
	return DEV_ERROR;
}

static int is_positional(const struct deck_field *f)
{
	return f->kind == FIELD_ATOM || f->kind == FIELD_EXPR;
}

static int is_numeric(const struct deck_field *f)
{
	return f->kind == FIELD_EXPR ||
	       (f->kind == FIELD_ATOM && num_looks_numeric(f->text, f->len));
}

static enum dev_status value_of(struct build *b, const struct deck_field *f,
				double *out)
{
	return devval_get(b->s, f, b->d, b->card->loc.file, out);
}

/* As value_of, where a value may not depend on the circuit's state. */
static enum dev_status const_value(struct build *b, const struct deck_field *f,
				   double *out)
{
	enum dev_status st = value_of(b, f, out);
	if (st != DEV_STATE)
		return st;
	struct diag_loc l = {b->card->loc.file, f->line, f->col};
	diag_add(b->d, DIAG_ERROR, "value", l,
		 "this value depends on circuit voltages, currents or time; a constant is needed here");
	return DEV_ERROR;
}

static enum dev_status take_node(struct build *b, const struct deck_field *f)
{
	if (b->part.npins >= DEV_MAX_PINS)
		return err_at(b, f, "more than 64 nodes on one element%s", "");
	if (f->kind != FIELD_ATOM)
		return err_at(b, f, "expected a node name here%s", "");
	uint32_t id = b->s->node(b->s->ud, f->text, f->len);
	if (id == NL_NONE)
		return DEV_OOM;
	b->pins[b->part.npins++] = id;
	return DEV_OK;
}

/* Takes the first n fields as nodes. */
static enum dev_status take_nodes(struct build *b, uint32_t n)
{
	const struct deck_card *c = b->card;
	if (c->nfields < n) {
		char what[64];
		snprintf(what, sizeof what, "%u nodes", n);
		const struct deck_field *last =
			c->nfields ? &c->fields[c->nfields - 1] : NULL;
		return err_at(b, last, "element needs %s, too few given", what);
	}
	for (uint32_t i = 0; i < n; i++) {
		enum dev_status st = take_node(b, &c->fields[i]);
		if (st != DEV_OK)
			return st;
	}
	return DEV_OK;
}

static const struct nl_model *need_model(struct build *b,
					 const struct deck_field *f,
					 enum dev_status *st)
{
	const struct nl_model *m = NULL;
	if (f->kind == FIELD_ATOM)
		m = b->s->model(b->s->ud, f);
	if (m)
		return m;
	char hint[SUGGEST_HINT_SIZE] = "";
	if (f->kind == FIELD_ATOM && b->s->model_hint)
		b->s->model_hint(b->s->ud, f, hint, sizeof hint);
	diag_add(b->d, DIAG_ERROR, "element", field_loc(b, f), "undefined model '%s'%s",
		 f->kind == FIELD_ATOM ? f->text : "?", hint);
	*st = DEV_ERROR;
	return NULL;
}

static void set_mult(struct build *b, double m)
{
	b->ext.mult = m;
	b->has_ext = 1;
}

/* key=value pairs shared by most elements: m= and ic=. Returns 1 if
 * consumed. */
/* A key the circuit's temperature reads (thermal.c): temp=, dtemp=,
 * tc1=, tc2=; NULL for another key. */
static double *temperature_key(struct build *b, const struct deck_field *f)
{
	if (num_ieq(f->text, f->len, "temp"))
		return &b->ext.temp;
	if (num_ieq(f->text, f->len, "dtemp"))
		return &b->ext.dtemp;
	if (num_ieq(f->text, f->len, "tc1"))
		return &b->ext.tc1;
	if (num_ieq(f->text, f->len, "tc2"))
		return &b->ext.tc2;
	return NULL;
}

static int common_assign(struct build *b, const struct deck_field *f,
			 enum dev_status *st)
{
	double v, *t = temperature_key(b, f);
	if (t) {
		if ((*st = const_value(b, f->value, &v)) == DEV_OK) {
			*t = v;
			b->has_ext = 1;
		}
		return 1;
	}
	if (num_ieq(f->text, f->len, "m")) {
		if ((*st = const_value(b, f->value, &v)) == DEV_OK)
			set_mult(b, v);
		return 1;
	}
	if (num_ieq(f->text, f->len, "ic")) {
		if ((*st = const_value(b, f->value, &v)) == DEV_OK) {
			b->ext.ic = v;
			b->has_ext = 1;
		}
		return 1;
	}
	return 0;
}

static int is_value_key(const struct deck_field *f, char letter)
{
	static const char *const keys[][3] = {
		{"r", "resistance", "value"},
		{"c", "capacitance", "value"},
		{"l", "inductance", "value"}};
	int k = letter == 'r' ? 0 : letter == 'c' ? 1 : 2;
	for (int i = 0; i < 3; i++)
		if (num_ieq(f->text, f->len, keys[k][i]))
			return 1;
	return 0;
}

static enum dev_status behavioural(struct build *b)
{
	b->ext.behavioural = 1;
	b->has_ext = 1;
	b->part.value = NAN;
	return DEV_OK;
}

/* A value that depends on the circuit's state makes the part behavioural. */
static enum dev_status rcl_value(struct build *b, const struct deck_field *f)
{
	enum dev_status st = value_of(b, f, &b->part.value);
	return st == DEV_STATE ? behavioural(b) : st;
}

static int is_word_char(char c)
{
	char l = (char)(c | 32);
	return c == '_' || c == '.' || (l >= 'a' && l <= 'z') || (c >= '0' && c <= '9');
}

/* A parameter name, or names and numbers joined by + - * / with no
 * blank (HSPICE's "VAL1+VAL2"): what parses as an expression without
 * a syntax error to report. */
static int plain_expr_word(const char *s, uint32_t n)
{
	int letters = 0;
	uint32_t i = 0;
	for (;;) {
		uint32_t start = i;
		if (i < n && s[i] == '.')
			return 0;
		while (i < n && is_word_char(s[i]))
			letters |= (s[i] | 32) >= 'a' && (s[i] | 32) <= 'z', i++;
		if (i == start)
			return 0;
		if (i == n)
			return letters;
		if (!strchr("+-*/", s[i]) || ++i == n)
			return 0;
	}
}

/* The value of a parameter (or a blank-free expression of parameters)
 * named by word f, read quietly: 0 when f is no such word or names no
 * parameter. */
static int param_value(struct build *b, const struct deck_field *f, double *v)
{
	if (num_looks_numeric(f->text, f->len) || !plain_expr_word(f->text, f->len))
		return 0;
	int oom = 0;
	struct expr_error err = {0};
	const struct expr *e = b->s->atom_expr ? b->s->atom_expr(b->s->ud, f, &oom) : NULL;
	return e && b->s->eval(b->s->ud, e, v, &err) == EXPR_OK;
}

/* A word where R, C or L take a value or a model (docs/netlist.md,
 * "Dialects"): a model of that name first; else, but in ngspice's
 * reading, a parameter of that name (T-SPICE and HSPICE decks write
 * "R1 a b rval"); else ngspice's letter code ("R47" = 0.47). Models may be
 * defined after their use, so the top-level first pass waits for the whole
 * file when the word could be read another way. */
static enum dev_status model_or_code(struct build *b, const struct deck_field *f, int *have)
{
	enum dev_status st = DEV_OK;
	double code = 0, pv = 0;
	int is_code = dialect_letter_first_codes(b->s->dialect) &&
		      num_letter_first(f->text, f->len, &code);
	int params = b->s->dialect != DIALECT_NGSPICE;
	if (b->s->defer_undefined && (is_code || params))
		return DEV_DEFER; /* a parameter may also be defined later */
	if (b->s->defer_undefined || (!is_code && !params)) {
		b->part.model = need_model(b, f, &st);
		return st;
	}
	if ((b->part.model = b->s->model(b->s->ud, f)) != NULL)
		return DEV_OK;
	if ((params && param_value(b, f, &pv)) || is_code) {
		b->part.value = params && param_value(b, f, &pv) ? pv : code;
		*have = 1;
		return DEV_OK;
	}
	b->part.model = need_model(b, f, &st);
	return st;
}

/* R, C, L: two nodes, then a value (positional or r=/c=/l=) and/or a model. */
static enum dev_status keep_value(struct build *b, uint32_t at, const struct deck_field *f,
				  int current, int resistance);

/* ngspice's tc=a[,b]: tc1 and, after a comma, tc2. Returns the fields
 * taken after f (0 or 1). */
static uint32_t tc_pair(struct build *b, const struct deck_field *f, const struct deck_field *next,
			enum dev_status *st)
{
	if ((*st = const_value(b, f->value, &b->ext.tc1)) != DEV_OK)
		return 0;
	b->has_ext = 1;
	if (!next || !next->comma || next->kind == FIELD_ASSIGN)
		return 0;
	*st = const_value(b, next, &b->ext.tc2);
	return 1;
}

static enum dev_status build_rcl(struct build *b, char letter)
{
	enum dev_status st = take_nodes(b, 2);
	int have = 0;
	for (uint32_t i = 2; st == DEV_OK && i < b->card->nfields; i++) {
		const struct deck_field *f = &b->card->fields[i];
		if (is_positional(f) && !have && is_numeric(f)) {
			st = rcl_value(b, f);
			if (st == DEV_OK && letter == 'r' && b->ext.behavioural)
				st = keep_value(b, i, f, 1, 1);
			have = 1;
		} else if (f->kind == FIELD_ATOM && !b->part.model && !have) {
			st = model_or_code(b, f, &have);
		} else if (f->kind == FIELD_ASSIGN && is_value_key(f, letter)) {
			st = f->value->kind == FIELD_CALL ? behavioural(b)
							  : rcl_value(b, f->value);
			if (st == DEV_OK && letter == 'r' && b->ext.behavioural)
				st = keep_value(b, i, f->value, 1, 1);
			have = 1;
		} else if (f->kind == FIELD_ASSIGN && num_ieq(f->text, f->len, "tc")) {
			i += tc_pair(b, f, f + 1 < b->card->fields + b->card->nfields ? f + 1 : NULL, &st);
		} else if (f->kind == FIELD_ASSIGN) {
			common_assign(b, f, &st); /* other keys: ignored */
		} else if (f->kind != FIELD_ATOM) {
			st = err_at(b, f, "unexpected field in a %s card", nl_kind_name(b->part.kind));
		}
	}
	if (st == DEV_OK && !have && !b->part.model)
		return err_at(b, NULL, "%s has no value", nl_kind_name(b->part.kind));
	return st;
}

static enum dev_status build_diode(struct build *b)
{
	enum dev_status st = take_nodes(b, 2);
	if (st != DEV_OK)
		return st;
	if (b->card->nfields < 3)
		return err_at(b, &b->card->fields[1], "diode needs a model name after its two nodes%s", "");
	uint32_t m = 2;
	for (uint32_t i = 3; i < b->card->nfields; i++)
		if (deck_atom_is(&b->card->fields[i], "thermal")) {
			/* a self-heating diode has a third, thermal node */
			if ((st = take_node(b, &b->card->fields[2])) != DEV_OK)
				return st;
			m = 3;
		}
	b->part.model = need_model(b, &b->card->fields[m], &st);
	b->part.value = 1.0; /* area */
	int have_area = 0;
	for (uint32_t i = m + 1; st == DEV_OK && i < b->card->nfields; i++) {
		const struct deck_field *f = &b->card->fields[i];
		if (deck_atom_is(f, "off") || deck_atom_is(f, "thermal")) {
			b->ext.off = 1;
			b->has_ext = 1;
		} else if (is_positional(f) && is_numeric(f) && !have_area) {
			st = const_value(b, f, &b->part.value);
			have_area = 1;
		} else if (f->kind == FIELD_ASSIGN && num_ieq(f->text, f->len, "area")) {
			st = const_value(b, f->value, &b->part.value);
		} else if (f->kind == FIELD_ASSIGN) {
			common_assign(b, f, &st);
		} else {
			st = err_at(b, f, "unexpected field in a diode card%s", "");
		}
	}
	return st;
}

static enum dev_status build_source(struct build *b);

/* The forms of a controlled source that this tool keeps as behavioural. */
static int is_behavioural_form(const struct deck_field *f)
{
	/* and/nand/or/nor(n): the digital gate forms (ngspice's E source,
	 * PSpice's); chebyshev: PSpice's filter form */
	static const char *const words[] = {"value", "vol", "cur", "poly", "table", "laplace",
					    "freq", "chebyshev", "and", "nand", "or", "nor", NULL};
	if (f->kind == FIELD_EXPR)
		return 1;
	for (int i = 0; words[i]; i++)
		if (num_ieq(f->text ? f->text : "", f->len, words[i]))
			return 1;
	return 0;
}

/* The nodes a behavioural expression reads become pins of the part too,
 * so that whatever groups parts by their connections (islands, the
 * solver's blocking) sees the control path. */
static enum dev_status probe_pins(struct build *b, const struct nl_behav *bh)
{
	for (uint32_t k = 0; k < bh->nprobes; k++) {
		uint32_t n[2] = {bh->probes[k].a, bh->probes[k].b};
		for (int j = 0; j < 2 && bh->probes[k].kind == NL_PROBE_V; j++) {
			uint32_t i = 0;
			while (i < b->part.npins && b->pins[i] != n[j])
				i++;
			if (n[j] == NL_GROUND || i < b->part.npins)
				continue;
			if (b->part.npins >= DEV_MAX_PINS)
				return DEV_OK; /* the solver still reads them */
			b->pins[b->part.npins++] = n[j];
		}
	}
	return DEV_OK;
}

/* An R valued by an expression: its own voltage becomes the last probe. */
static int self_probe(struct build *b, struct nl_behav *bh)
{
	struct nl_probe *p = arena_alloc(nl_arena(b->c), (bh->nprobes + 1) * sizeof *p);
	if (!p)
		return 0;
	if (bh->nprobes)
		memcpy(p, bh->probes, bh->nprobes * sizeof *p);
	p[bh->nprobes] = (struct nl_probe){NL_PROBE_V, b->pins[0], b->pins[1], NULL};
	bh->probes = p;
	bh->nprobes++;
	bh->resistance = 1;
	return 1;
}

/* Keeps the expression of the value of field at for the solver (behav.h); a form
 * it does not take leaves the part unsimulated, as before. resistance: the
 * value is an R's ohms (nl.h). */
static enum dev_status keep_value(struct build *b, uint32_t at, const struct deck_field *f,
				  int current, int resistance)
{
	int oom = 0;
	const struct deck_card *c = b->card;
	const struct expr *e = f->kind == FIELD_EXPR
				       ? f->expr
				       : behav_field_expr(b->s, f, c->fields + at + 1,
							  c->nfields - at - 1, nl_arena(b->c), &oom);
	if (oom)
		return DEV_OOM;
	if (!e)
		return DEV_OK;
	struct nl_behav *bh = NULL;
	const char *why = NULL;
	enum dev_status st = behav_build(b->s, e, current, nl_arena(b->c), &bh, &why);
	if (st == DEV_OK && !bh) {
		b->ext.behav_why = why;
		b->has_ext = 1;
	}
	if (st != DEV_OK || !bh)
		return st;
	if (resistance && !self_probe(b, bh))
		return DEV_OOM;
	b->ext.behav = bh;
	b->has_ext = 1;
	return probe_pins(b, bh);
}

static enum dev_status keep_expression(struct build *b, uint32_t at, int current)
{
	return keep_value(b, at, b->card->fields[at].value, current, 0);
}

/* B: two nodes and v= or i= with an expression (ngspice's B source). */
static enum dev_status build_b(struct build *b)
{
	b->part.kind = NL_OPAQUE;
	enum dev_status st = take_nodes(b, 2);
	for (uint32_t i = 2; st == DEV_OK && i < b->card->nfields; i++) {
		const struct deck_field *f = &b->card->fields[i];
		int v = f->kind == FIELD_ASSIGN && num_ieq(f->text, f->len, "v");
		int c = f->kind == FIELD_ASSIGN && num_ieq(f->text, f->len, "i");
		if ((v || c) && !b->ext.behav)
			st = keep_expression(b, i, c);
	}
	return st;
}

/* E, G: the index of the value=, vol= or cur= field of a behavioural
 * form, or 0 (never such a field: the nodes come first). */
static uint32_t value_field(const struct deck_card *c)
{
	static const char *const keys[] = {"value", "vol", "cur", NULL};
	for (uint32_t i = 2; i < c->nfields; i++)
		for (int k = 0; keys[k]; k++)
			if (c->fields[i].kind == FIELD_ASSIGN &&
			    num_ieq(c->fields[i].text, c->fields[i].len, keys[k]))
				return i;
	return 0;
}

/* The dimension n of a POLY(n) field, or 0. */
static uint32_t poly_dims(struct build *b, const struct deck_field *f)
{
	double n = 0;
	if (f->kind != FIELD_CALL || !num_ieq(f->text, f->len, "poly") || f->nargs != 1 ||
	    const_value(b, &f->args[0], &n) != DEV_OK)
		return 0;
	return n >= 1 && n <= 8 && n == floor(n) ? (uint32_t)n : 0;
}

/* The control k of a POLY: v(a,b) from fields 2k, 2k+1 after the POLY
 * field (E, G), or i(name) from field k (F, H), as the probe text that
 * behav_build reads. */
static struct expr *poly_control(struct build *b, const struct deck_field *ctl, uint32_t k,
				 int by_current)
{
	char buf[300];
	const struct deck_field *a = &ctl[by_current ? k : 2 * k], *z = a + 1;
	if (by_current)
		snprintf(buf, sizeof buf, "i(%.*s)", (int)a->len, a->text);
	else
		snprintf(buf, sizeof buf, "v(%.*s,%.*s)", (int)a->len, a->text, (int)z->len, z->text);
	char *name = arena_strdup(nl_arena(b->c), buf);
	return name ? expr_var(nl_arena(b->c), name, a->line, a->col) : NULL;
}

/* Advances t, a non-decreasing tuple of d indices below n, to the next in
 * lexicographic order; 0 after the last. */
static int next_tuple(uint32_t *t, uint32_t d, uint32_t n)
{
	for (uint32_t i = d; i-- > 0;)
		if (t[i] + 1 < n) {
			t[i]++;
			for (uint32_t j = i + 1; j < d; j++)
				t[j] = t[i];
			return 1;
		}
	return 0;
}

/* Fields list[0..n) as plain words appended to out (at *m), the groups in
 * parentheses that PSpice writes ("(3,0)" for a node pair,
 * "(0,2.4e-5,3.8e-5)" for coefficients, "(7.1,6.8e-4)" for a table's
 * point; read as a call when a name comes before them) unpacked; 0 when a
 * field is of another form or there are more than FLAT_MAX. */
#define FLAT_MAX 160
static int flat_fields(const struct deck_field *list, uint32_t n, struct deck_field *out,
		       uint32_t *m)
{
	for (uint32_t i = 0; i < n; i++) {
		const struct deck_field *f = &list[i];
		int group = f->kind == FIELD_CALL;
		uint32_t k = group ? f->nargs : 1;
		if (group && f->len > 0) { /* "VS2 (0,2,3)" reads as a call of VS2 */
			if (*m == FLAT_MAX)
				return 0;
			out[*m] = *f;
			out[*m].kind = FIELD_ATOM;
			out[*m].nargs = 0;
			out[(*m)++].args = NULL;
		}
		for (uint32_t j = 0; j < k; j++) {
			const struct deck_field *a = group ? &f->args[j] : f;
			if (a->kind != FIELD_ATOM || *m == FLAT_MAX)
				return 0;
			out[(*m)++] = *a;
		}
	}
	return 1;
}

/* Keeps expression e, built here, as the part's behaviour (behav.h). */
static enum dev_status keep_built(struct build *b, struct expr *e, int current)
{
	struct nl_behav *bh = NULL;
	const char *why = NULL;
	enum dev_status st = behav_build(b->s, e, current, nl_arena(b->c), &bh, &why);
	b->has_ext = 1;
	if (st != DEV_OK)
		return st;
	if (!bh)
		b->ext.behav_why = why;
	b->ext.behav = bh;
	st = bh ? probe_pins(b, bh) : DEV_OK;
	return st == DEV_OK ? behavioural(b) : st;
}

/* Field f, a constant, as a number expression in *out (its value in
 * *v): DEV_OK; DEV_DEFER or DEV_OOM as const_value gives them; DEV_STATE
 * for anything else (the part stays behavioural, without a model). */
static enum dev_status number_expr(struct build *b, const struct deck_field *f,
				   struct expr **out, double *v)
{
	enum dev_status cs = const_value(b, f, v);
	if (cs == DEV_DEFER || cs == DEV_OOM)
		return cs;
	if (cs != DEV_OK)
		return DEV_STATE;
	*out = expr_num(nl_arena(b->c), *v, f->line, f->col);
	return *out ? DEV_OK : DEV_OOM;
}

/* POLY(n) (E, G: n control node pairs; F, H: n control sources) and its
 * coefficients: SPICE's polynomial, the constant first, then the terms
 * of each degree in turn, each a product of controls with non-decreasing
 * indices in lexicographic order (x1, x2; x1^2, x1 x2, x2^2; ...). Kept
 * as an expression for the solver; a form it cannot read stays
 * behavioural without one. */
static enum dev_status keep_poly(struct build *b, uint32_t n, int by_current, int current)
{
	struct arena *ar = nl_arena(b->c);
	const struct deck_card *c = b->card;
	struct deck_field f[FLAT_MAX];
	uint32_t nf = 0, nctl = by_current ? n : 2 * n, deg = 0, t[16] = {0};
	struct expr *sum = NULL;
	if (c->nfields < 3 || !flat_fields(c->fields + 3, c->nfields - 3, f, &nf) || nf <= nctl)
		return behavioural(b);
	for (uint32_t k = nctl; k < nf; k++) {
		double coef;
		struct expr *term = NULL;
		enum dev_status cs = number_expr(b, &f[k], &term, &coef);
		if (cs != DEV_OK)
			return cs == DEV_STATE ? behavioural(b) : cs;
		for (uint32_t j = 0; j < deg; j++)
			term = expr_op(ar, EXPR_MUL, term, poly_control(b, f, t[j], by_current), NULL);
		if (coef != 0 || !sum)
			sum = sum ? expr_op(ar, EXPR_ADD, sum, term, NULL) : term;
		if (!sum)
			return DEV_OOM;
		if (deg == 0 || !next_tuple(t, deg, n)) {
			if (++deg > 16)
				return behavioural(b);
			memset(t, 0, sizeof t);
		}
	}
	return sum ? keep_built(b, sum, current) : behavioural(b);
}

/* E, G TABLE {x} = (x1,y1) (x2,y2) ...: PSpice's table, linear between its
 * points and held past its ends, kept as the expression table(x, x1, y1,
 * ...) that the solver evaluates (simbehav.c). */
static enum dev_status keep_table(struct build *b, int current)
{
	const struct deck_card *c = b->card;
	struct deck_field f[FLAT_MAX];
	struct expr *args[FLAT_MAX + 1];
	uint32_t n = 0;
	if (c->nfields < 4 || c->fields[3].kind != FIELD_EXPR ||
	    (c->fields[3].value && !flat_fields(c->fields[3].value, 1, f, &n)) ||
	    !flat_fields(c->fields + 4, c->nfields - 4, f, &n) || n < 2 || n % 2)
		return behavioural(b);
	args[0] = c->fields[3].expr;
	for (uint32_t k = 0; k < n; k++) {
		double v;
		enum dev_status cs = number_expr(b, &f[k], &args[k + 1], &v);
		if (cs != DEV_OK)
			return cs == DEV_STATE ? behavioural(b) : cs;
	}
	struct expr *e = expr_call(nl_arena(b->c), "table", args, n + 1, c->fields[2].line,
				   c->fields[2].col);
	return e ? keep_built(b, e, current) : DEV_OOM;
}

/* E, G: linear with two control nodes and a gain, or behavioural. */
static enum dev_status build_ctrl_v(struct build *b)
{
	enum dev_status st = take_nodes(b, 2);
	const struct deck_card *c = b->card;
	if (st != DEV_OK)
		return st;
	if (c->nfields >= 5 && c->fields[2].kind == FIELD_ATOM &&
	    c->fields[3].kind == FIELD_ATOM && is_numeric(&c->fields[4]) &&
	    !deck_atom_is(&c->fields[2], "poly")) {
		if ((st = take_node(b, &c->fields[2])) != DEV_OK ||
		    (st = take_node(b, &c->fields[3])) != DEV_OK)
			return st;
		st = value_of(b, &c->fields[4], &b->part.value);
		return st == DEV_STATE ? behavioural(b) : st;
	}
	if (c->nfields < 3 || !is_behavioural_form(&c->fields[2]))
		return err_at(b, c->nfields ? &c->fields[c->nfields - 1] : NULL,
			      "controlled source needs two control nodes and a gain, or value=, poly() or table%s", "");
	uint32_t vf = value_field(c), dims = poly_dims(b, &c->fields[2]);
	if (dims)
		return keep_poly(b, dims, 0, b->part.kind == NL_G);
	if (deck_atom_is(&c->fields[2], "table"))
		return keep_table(b, b->part.kind == NL_G);
	if (vf && (st = keep_expression(b, vf, b->part.kind == NL_G)) != DEV_OK)
		return st;
	return behavioural(b);
}

/* F, H: controlled by the current of a named voltage source. */
static enum dev_status build_ctrl_i(struct build *b)
{
	enum dev_status st = take_nodes(b, 2);
	const struct deck_card *c = b->card;
	if (st != DEV_OK)
		return st;
	b->has_ext = 1;
	if (c->nfields >= 4 && c->fields[2].kind == FIELD_ATOM &&
	    is_numeric(&c->fields[3]) && !deck_atom_is(&c->fields[2], "poly")) {
		b->ext.ctrl[0] = arena_strdup(nl_arena(b->c), c->fields[2].text);
		if (!b->ext.ctrl[0])
			return DEV_OOM;
		st = value_of(b, &c->fields[3], &b->part.value);
		return st == DEV_STATE ? behavioural(b) : st;
	}
	if (c->nfields < 3 || !is_behavioural_form(&c->fields[2]))
		return err_at(b, c->nfields ? &c->fields[c->nfields - 1] : NULL,
			      "current-controlled source needs a controlling source and a gain, or poly()%s", "");
	uint32_t dims = poly_dims(b, &c->fields[2]);
	return dims ? keep_poly(b, dims, 1, b->part.kind == NL_F) : behavioural(b);
}

static enum dev_status coupling_value(struct build *b, const struct deck_field *f)
{
	enum dev_status st = const_value(b, f, &b->part.value);
	if (st == DEV_OK && fabs(b->part.value) > 1)
		diag_add(b->d, DIAG_WARNING, "element",
			 (struct diag_loc){b->card->loc.file, f->line, f->col},
			 "coupling coefficient %g is above 1 in magnitude: not a physical transformer",
			 b->part.value);
	return st;
}

/* Where the coefficient of a K card over more than two inductors sits:
 * last, or before a core model (Xyce's nonlinear mutual inductor). The
 * first pass waits for the models of the whole file. */
static enum dev_status coupling_layout(struct build *b, uint32_t *coef)
{
	const struct deck_card *c = b->card;
	const struct deck_field *last = &c->fields[c->nfields - 1];
	*coef = c->nfields - 1;
	if (last->kind != FIELD_ATOM || num_looks_numeric(last->text, last->len))
		return DEV_OK;
	if (b->s->defer_undefined)
		return DEV_DEFER;
	if ((b->part.model = b->s->model(b->s->ud, last)) != NULL)
		*coef = c->nfields - 2;
	return DEV_OK;
}

/* K: inductor names, a coupling coefficient, and optionally a core model.
 * Two inductors and no model is the linear coupling the analysis and the
 * solver know; more inductors or a core is kept as a behavioural coupling
 * (its inductors are still checked by name). */
static enum dev_status build_coupling(struct build *b)
{
	const struct deck_card *c = b->card;
	uint32_t coef = 2;
	enum dev_status st = c->nfields > 3 ? coupling_layout(b, &coef) : DEV_OK;
	if (st != DEV_OK)
		return st;
	if (c->nfields < 3 || coef < 2)
		return err_at(b, NULL, "coupling needs two inductor names and a coefficient%s", "");
	const char **names = arena_alloc(nl_arena(b->c), coef * sizeof *names);
	if (!names)
		return DEV_OOM;
	for (uint32_t i = 0; i < coef; i++) {
		if (c->fields[i].kind != FIELD_ATOM)
			return err_at(b, &c->fields[i], "expected an inductor name here%s", "");
		if (!(names[i] = arena_strdup(nl_arena(b->c), c->fields[i].text)))
			return DEV_OOM;
	}
	b->has_ext = 1;
	b->ext.ctrl[0] = names[0];
	b->ext.ctrl[1] = names[1];
	b->ext.coupled = names;
	b->ext.ncoupled = coef;
	b->ext.behavioural = coef > 2 || b->part.model;
	return coupling_value(b, &c->fields[coef]);
}

/* Y: ngspice's lossy line (YL1 n1 n2 n3 n4 model) or a Xyce device
 * (YPDE name nodes... model params), read as plain words: nodes run to the
 * first word that names a model; in Xyce's reading the first word is the
 * device's name. Kept opaque. */
static enum dev_status build_y(struct build *b)
{
	const struct deck_card *c = b->card;
	uint32_t from = b->s->dialect == DIALECT_XYCE, k = from;
	while (k < c->nfields && !b->s->model(b->s->ud, &c->fields[k]))
		k++;
	if (k == c->nfields)
		return err_at(b, c->nfields ? &c->fields[c->nfields - 1] : NULL,
			      "element needs a model name after its nodes%s", "");
	for (uint32_t i = from; i < k; i++) {
		enum dev_status st = take_node(b, &c->fields[i]);
		if (st != DEV_OK)
			return st;
	}
	b->part.model = b->s->model(b->s->ud, &c->fields[k]);
	return DEV_OK;
}

/* Opaque parts whose node list ends where a model name starts. */
struct opaque_rule {
	char letter;
	uint8_t min_nodes, max_nodes;
	uint8_t usual;  /* node count assumed when no model name is found */
	uint8_t model;  /* 1: a model follows the nodes */
};

/* Node counts from the ngspice manual's device chapters (a power MOSFET
 * of the vdmos kind has three). */
static const struct opaque_rule opaque_rules[] = {
	{'q', 3, 5, 3, 1}, {'m', 3, 7, 4, 1}, {'j', 3, 3, 3, 1},
	{'z', 3, 3, 3, 1}, {'s', 4, 4, 4, 1}, {'o', 4, 4, 4, 1},
	{'u', 3, 3, 3, 1}, {'n', 2, 20, 2, 1}, {'p', 2, 40, 2, 1},
	{'t', 4, 4, 4, 0}, {'b', 2, 2, 2, 0}, {'w', 2, 2, 2, 0},
};

static const struct opaque_rule *opaque_rule(char letter)
{
	for (size_t i = 0; i < sizeof opaque_rules / sizeof opaque_rules[0]; i++)
		if (opaque_rules[i].letter == letter)
			return &opaque_rules[i];
	return NULL;
}

int dev_needs_models(char letter)
{
	switch (letter) {
	case 'r': case 'c': case 'l': case 'd': case 'v': case 'i':
		return 0; /* the common letters, answered without the table */
	case 'y':
		return 1; /* build_y: nodes run to a model, the reading to .options */
	default: {
		const struct opaque_rule *r = opaque_rule(letter);
		return r && r->model && r->min_nodes != r->max_nodes;
	}
	}
}

static enum dev_status build_modelled(struct build *b,
				      const struct opaque_rule *r)
{
	const struct deck_card *c = b->card;
	uint32_t k = r->usual;
	for (uint32_t i = r->min_nodes; i <= r->max_nodes && i < c->nfields; i++) {
		const struct deck_field *f = &c->fields[i];
		if (f->kind == FIELD_ATOM && b->s->model(b->s->ud, f)) {
			k = i;
			break;
		}
	}
	enum dev_status st = take_nodes(b, k);
	if (st != DEV_OK)
		return st;
	if (k >= c->nfields)
		return err_at(b, &c->fields[k - 1], "element needs a model name after its nodes%s", "");
	b->part.model = need_model(b, &c->fields[k], &st);
	return st;
}

/* A bipolar transistor or a JFET: its area (the first number after the model, or
 * area=) and m= are kept for the solver; the rest (off, ic=, temp=) is
 * not used. */
static enum dev_status build_bjt(struct build *b, const struct opaque_rule *r)
{
	enum dev_status st = build_modelled(b, r);
	const struct deck_card *c = b->card;
	uint32_t k = b->part.npins; /* the model's field */
	b->part.value = 1.0; /* area */
	int have_area = 0;
	for (uint32_t i = k + 1; st == DEV_OK && i < c->nfields; i++) {
		const struct deck_field *f = &c->fields[i];
		if (is_positional(f) && is_numeric(f) && !have_area) {
			st = const_value(b, f, &b->part.value);
			have_area = 1;
		} else if (f->kind == FIELD_ASSIGN && num_ieq(f->text, f->len, "area")) {
			st = const_value(b, f->value, &b->part.value);
		} else if (f->kind == FIELD_ASSIGN && num_ieq(f->text, f->len, "m")) {
			common_assign(b, f, &st);
		}
	}
	return st;
}

/* A MOSFET: w=, l= and m= are kept for the solver; the rest (ad=, as=,
 * pd=, ps=, nrd=, nrs=, off, ic=) is not used. */
static enum dev_status build_mos(struct build *b, const struct opaque_rule *r)
{
	enum dev_status st = build_modelled(b, r);
	const struct deck_card *c = b->card;
	for (uint32_t i = b->part.npins + 1; st == DEV_OK && i < c->nfields; i++) {
		const struct deck_field *f = &c->fields[i];
		if (f->kind != FIELD_ASSIGN)
			continue;
		if (num_ieq(f->text, f->len, "w") || num_ieq(f->text, f->len, "l")) {
			double *to = num_ieq(f->text, f->len, "w") ? &b->ext.w : &b->ext.l;
			st = const_value(b, f->value, to);
			b->has_ext = 1;
		} else if (num_ieq(f->text, f->len, "m")) {
			common_assign(b, f, &st);
		}
	}
	return st;
}

/* XSPICE 'a' devices: every word but the last is a node ([ ] ~ stripped). */
static enum dev_status build_xspice(struct build *b)
{
	const struct deck_card *c = b->card;
	uint32_t last = 0;
	for (uint32_t i = 0; i < c->nfields; i++)
		if (c->fields[i].kind == FIELD_ATOM)
			last = i;
	for (uint32_t i = 0; i < last; i++) {
		const struct deck_field *f = &c->fields[i];
		if (f->kind != FIELD_ATOM)
			continue;
		const char *s = f->text;
		size_t n = f->len;
		while (n && (*s == '[' || *s == '~'))
			s++, n--;
		while (n && (s[n - 1] == ']'))
			n--;
		if (n == 0 || *s == '%')
			continue;
		if (b->part.npins >= DEV_MAX_PINS)
			return err_at(b, f, "more than 64 nodes on one element%s", "");
		uint32_t id = b->s->node(b->s->ud, s, n);
		if (id == NL_NONE)
			return DEV_OOM;
		b->pins[b->part.npins++] = id;
	}
	return DEV_OK;
}

static enum dev_status build_opaque(struct build *b, char letter)
{
	b->part.kind = NL_OPAQUE;
	const struct opaque_rule *r = opaque_rule(letter);
	if (letter == 'a')
		return build_xspice(b);
	if (letter == 'y')
		return build_y(b);
	if (!r) {
		/* a control byte or half a UTF-8 sequence is named by its value:
		 * the message goes into XML and JSON reports too */
		unsigned char u = (unsigned char)letter;
		char shown[16];
		snprintf(shown, sizeof shown, u > 0x20 && u < 0x7f ? "'%c'" : "byte 0x%02X", u);
		diag_add(b->d, DIAG_WARNING, "unknown-element", b->card->loc,
			 "unknown element letter %s: kept as an opaque part whose words are all nodes",
			 shown);
		for (uint32_t i = 0; i < b->card->nfields; i++)
			if (b->card->fields[i].kind == FIELD_ATOM &&
			    !num_looks_numeric(b->card->fields[i].text, b->card->fields[i].len)) {
				enum dev_status st = take_node(b, &b->card->fields[i]);
				if (st != DEV_OK)
					return st;
			}
		return DEV_OK;
	}
	if (r->model && (letter == 'q' || letter == 'j'))
		return build_bjt(b, r);
	if (r->model && letter == 'm')
		return build_mos(b, r);
	if (r->model)
		return build_modelled(b, r);
	return take_nodes(b, r->min_nodes);
}

static enum dev_status dispatch(struct build *b, char letter)
{
	switch (letter) {
	case 'r': b->part.kind = NL_R; return build_rcl(b, letter);
	case 'c': b->part.kind = NL_C; return build_rcl(b, letter);
	case 'l': b->part.kind = NL_L; return build_rcl(b, letter);
	case 'd': b->part.kind = NL_D; return build_diode(b);
	case 'v': b->part.kind = NL_V; return build_source(b);
	case 'i': b->part.kind = NL_I; return build_source(b);
	case 'e': b->part.kind = NL_E; return build_ctrl_v(b);
	case 'g': b->part.kind = NL_G; return build_ctrl_v(b);
	case 'f': b->part.kind = NL_F; return build_ctrl_i(b);
	case 'h': b->part.kind = NL_H; return build_ctrl_i(b);
	case 'k': b->part.kind = NL_K; return build_coupling(b);
	case 'b': return build_b(b);
	default: return build_opaque(b, letter);
	}
}

static enum dev_status finish(struct build *b)
{
	struct arena *ar = nl_arena(b->c);
	const char *name = b->card->head;
	size_t plen = strlen(b->s->prefix), nlen = b->card->headlen;
	char *path = arena_alloc_aligned(ar, plen + nlen + 1, 1);
	if (!path)
		return DEV_OOM;
	memcpy(path, b->s->prefix, plen);
	memcpy(path + plen, name, nlen + 1);
	b->part.path = path;
	if (b->s->mult != 1.0)
		set_mult(b, b->ext.mult * b->s->mult);
	if (b->has_ext) {
		struct nl_extra *e = arena_alloc(ar, sizeof *e);
		if (!e)
			return DEV_OOM;
		*e = b->ext;
		b->part.ext = e;
	}
	return nl_add_part(b->c, &b->part, b->pins) == NL_NONE ? DEV_OOM : DEV_OK;
}

enum dev_status dev_build(const struct dev_scope *s,
			  const struct deck_card *card, struct nl_circuit *c,
			  struct diag_sink *d)
{
	struct build b; /* pins[] is filled as nodes are taken, not cleared */
	memset(&b, 0, offsetof(struct build, pins));
	b.s = s;
	b.card = card;
	b.c = c;
	b.d = d;
	b.part.loc = nl_loc_pack(card->loc);
	b.ext.mult = 1.0;
	b.ext.ic = NAN;
	b.ext.temp = b.ext.dtemp = b.ext.tc1 = b.ext.tc2 = NAN;
	b.ext.w = b.ext.l = NAN;
	b.ext.ctrl_part[0] = b.ext.ctrl_part[1] = NL_NONE;
	char letter = card->head[0];
	if (letter >= 'A' && letter <= 'Z')
		letter = (char)(letter - 'A' + 'a');
	b.part.letter = (uint8_t)letter;
	enum dev_status st = dispatch(&b, letter);
	if (st != DEV_OK)
		return st;
	return finish(&b);
}

/* V, I: two nodes, then the waveform description (wave.c). */
static enum dev_status build_source(struct build *b)
{
	enum dev_status st = take_nodes(b, 2);
	if (st != DEV_OK)
		return st;
	struct nl_source *src = NULL;
	st = wave_parse(b->s, b->card, 2, nl_arena(b->c), b->d, &src);
	if (st != DEV_OK)
		return st;
	b->ext.src = src;
	b->has_ext = 1;
	b->part.value = src->dc;
	return DEV_OK;
}
