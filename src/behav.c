/* behav.c: a behavioural part's expression made ready for the solver:
 * parameters become numbers in the part's scope, probes become indices
 * into a table of node pairs and source names. Evaluating the result with
 * its derivatives is the solver's job (simbehav.c). */
#include "behav.h"

#include <stdio.h>
#include <string.h>
#include <strings.h>

/* Nesting the solver's recursive evaluation may meet (common practice,
 * no source: far above any hand-written expression, far below the
 * stack). */
#define BEHAV_MAX_DEPTH 200

struct rs {
	const struct dev_scope *s;
	struct arena *ar;
	struct nl_probe pr[NL_MAX_PROBES];
	uint32_t np;
	enum dev_status st;
	const char *why; /* set when the expression is not taken */
};

/* Functions with their arity (0: one or more). Keep in step with the
 * evaluator in simbehav.c [behav-functions]. */
static const struct {
	const char *name;
	uint32_t nargs;
} known[] = {
	{"abs", 1},
	{"sqrt", 1},
	{"exp", 1},
	{"log", 1},
	{"ln", 1},
	{"log10", 1},
	{"sin", 1},
	{"cos", 1},
	{"tan", 1},
	{"atan", 1},
	{"tanh", 1},
	{"sinh", 1},
	{"cosh", 1},
	{"sgn", 1},
	{"sign", 1},
	{"floor", 1},
	{"ceil", 1},
	{"int", 1},
	{"u", 1},
	{"uramp", 1},
	{"sqr", 1},
	{"pow", 2},
	{"pwr", 2},
	{"min", 0},
	{"max", 0},
	{"if", 3},
	{"ternary_fcn", 3},
	{"limit", 3},
	{"table", 0}, /* table(x, x1, y1, x2, y2, ...): PSpice's TABLE */
};

int behav_function_known(const char *name, uint32_t nargs)
{
	for (size_t i = 0; i < sizeof known / sizeof known[0]; i++)
		if (strcasecmp(known[i].name, name) == 0)
			return known[i].nargs ? known[i].nargs == nargs : nargs >= 1;
	return 0;
}

static struct expr *refuse(struct rs *x, const char *why)
{
	if (!x->why)
		x->why = why;
	return NULL;
}

static struct expr *oom(struct rs *x)
{
	x->st = DEV_OOM;
	return NULL;
}

static void trim(const char **p, size_t *n)
{
	while (*n && (**p == ' ' || **p == '\t'))
		(*p)++, (*n)--;
	while (*n && ((*p)[*n - 1] == ' ' || (*p)[*n - 1] == '\t'))
		(*n)--;
}

/* Index of probe p in the table, adding it. */
static struct expr *probe_ref(struct rs *x, const struct nl_probe *p, const struct expr *at)
{
	uint32_t k = 0;
	while (k < x->np && !(x->pr[k].kind == p->kind && x->pr[k].a == p->a &&
			      x->pr[k].b == p->b &&
			      (p->kind == NL_PROBE_V || strcasecmp(x->pr[k].source, p->source) == 0)))
		k++;
	if (k == NL_MAX_PROBES)
		return refuse(x, "the expression reads more than 32 voltages and currents");
	if (k == x->np)
		x->pr[x->np++] = *p;
	struct expr *e = expr_var(x->ar, NL_PROBE_NAME, at->line, at->col);
	if (!e)
		return oom(x);
	e->num = k;
	return e;
}

/* v(a), v(a,b), i(vx) as the reader keeps them: one name with the text. */
static struct expr *probe(struct rs *x, const struct expr *e)
{
	const char *open = strchr(e->name, '('), *close = strrchr(e->name, ')');
	char kind = (char)(e->name[0] | 32);
	if (!open || !close || close < open || open != e->name + 1 || (kind != 'v' && kind != 'i'))
		return refuse(x, "a probe of a form the solver does not read");
	const char *in = open + 1, *comma = memchr(in, ',', (size_t)(close - in));
	size_t n1 = (size_t)((comma ? comma : close) - in);
	const char *s2 = comma ? comma + 1 : close;
	size_t n2 = (size_t)(close - s2);
	trim(&in, &n1);
	trim(&s2, &n2);
	struct nl_probe p = {NL_PROBE_V, NL_GROUND, NL_GROUND, NULL};
	if (n1 == 0 || (comma && (n2 == 0 || memchr(s2, ',', n2))))
		return refuse(x, "a probe of a form the solver does not read");
	if (kind == 'i') {
		if (comma)
			return refuse(x, "a current probe of a form the solver does not read");
		size_t pl = strlen(x->s->prefix);
		char *path = arena_alloc_aligned(x->ar, pl + n1 + 1, 1);
		if (!path)
			return oom(x);
		memcpy(path, x->s->prefix, pl);
		memcpy(path + pl, in, n1);
		path[pl + n1] = '\0';
		p.kind = NL_PROBE_I;
		p.source = path;
		return probe_ref(x, &p, e);
	}
	if ((p.a = x->s->node(x->s->ud, in, n1)) == NL_NONE ||
	    (comma && (p.b = x->s->node(x->s->ud, s2, n2)) == NL_NONE))
		return oom(x);
	return probe_ref(x, &p, e);
}

static struct expr *number(struct rs *x, double v, const struct expr *at)
{
	struct expr *e = expr_num(x->ar, v, at->line, at->col);
	return e ? e : oom(x);
}

/* A name, or a call the solver does not know: a constant of the scope. */
static struct expr *fold(struct rs *x, const struct expr *e)
{
	double v;
	struct expr_error err = {0};
	enum expr_status st = x->s->eval(x->s->ud, e, &v, &err);
	if (st == EXPR_OK)
		return number(x, v, e);
	if (st == EXPR_UNDEFINED && x->s->defer_undefined) {
		x->st = DEV_DEFER;
		return NULL;
	}
	if (st == EXPR_STATE)
		return refuse(x, e->op == EXPR_CALL
					 ? "a function the solver does not evaluate is applied to the circuit's state"
					 : "a name the solver does not follow (temper, hertz, or a parameter of the circuit's state)");
	return refuse(x, "a value in the expression does not evaluate");
}

static struct expr *walk(struct rs *x, const struct expr *e, unsigned depth);

static struct expr *walk_args(struct rs *x, const struct expr *e, unsigned depth)
{
	struct expr *few[16] = {0};
	uint32_t n = e->op == EXPR_CALL                       ? e->nargs
		     : e->op == EXPR_NEG || e->op == EXPR_NOT ? 1
		     : e->op == EXPR_COND                     ? 3
							      : 2;
	if (n > 256)
		return refuse(x, "a call with more than 256 arguments");
	struct expr **a = n <= 16 ? few : arena_zalloc(x->ar, n * sizeof *a); /* a long table() */
	if (!a)
		return oom(x);
	for (uint32_t i = 0; i < n; i++)
		if (!(a[i] = walk(x, e->args[i], depth + 1)))
			return NULL;
	const char *name = e->op == EXPR_CALL ? arena_strdup(x->ar, e->name) : NULL;
	if (e->op == EXPR_CALL && !name)
		return oom(x);
	struct expr *r = e->op == EXPR_CALL ? expr_call(x->ar, name, a, n, e->line, e->col)
					    : expr_op(x->ar, e->op, a[0], a[1], a[2]);
	if (!r)
		return oom(x);
	r->line = e->line;
	r->col = e->col;
	return r;
}

static struct expr *walk(struct rs *x, const struct expr *e, unsigned depth)
{
	if (depth > BEHAV_MAX_DEPTH)
		return refuse(x, "the expression nests deeper than 200 levels");
	switch (e->op) {
	case EXPR_NUM:
		return number(x, e->num, e);
	case EXPR_STR:
		return refuse(x, "a string in the expression");
	case EXPR_VAR:
		if (strcasecmp(e->name, "time") == 0) {
			struct expr *t = expr_var(x->ar, "time", e->line, e->col);
			return t ? t : oom(x);
		}
		if (strchr(e->name, '('))
			return probe(x, e);
		return fold(x, e);
	case EXPR_CALL:
		if (strcasecmp(e->name, "table") == 0 && (e->nargs < 3 || e->nargs % 2 == 0))
			return refuse(x, "table() needs its input and pairs of x and y");
		if (behav_function_known(e->name, e->nargs))
			return walk_args(x, e, depth);
		if (strcasecmp(e->name, "poly") == 0)
			return refuse(x, "poly() inside an expression is not simulated");
		return fold(x, e);
	default:
		return walk_args(x, e, depth);
	}
}

enum dev_status behav_build(const struct dev_scope *s, const struct expr *e, int current,
			    struct arena *ar, struct nl_behav **out, const char **why)
{
	struct rs x = {.s = s, .ar = ar, .st = DEV_OK};
	*out = NULL;
	*why = NULL;
	struct expr *r = walk(&x, e, 0);
	if (x.st != DEV_OK)
		return x.st;
	if (!r) {
		*why = x.why ? x.why : "the expression is not simulated";
		return DEV_OK;
	}
	struct nl_behav *b = arena_alloc(ar, sizeof *b);
	struct nl_probe *p = arena_alloc(ar, (x.np ? x.np : 1) * sizeof *p);
	if (!b || !p)
		return DEV_OOM;
	memcpy(p, x.pr, x.np * sizeof *p);
	*b = (struct nl_behav){r, x.np, p, current, 0};
	*out = b;
	return DEV_OK;
}

/* ---- unbraced values ---- */

static int is_op_char(char c)
{
	return c && strchr("+-*/^<>=!?:&|%", c) != NULL;
}

struct text {
	char *buf;
	size_t n, cap;
};

static int put(struct text *t, const char *s, size_t n)
{
	if (t->n + n + 1 > t->cap)
		return 0;
	memcpy(t->buf + t->n, s, n);
	t->n += n;
	t->buf[t->n] = '\0';
	return 1;
}

/* A braced expression inside a value ("(time<1m ? {R1} : {R1/2})"), the
 * reader's tree, back to text, fully parenthesised. */
static int put_expr(struct text *t, const struct expr *e, unsigned depth)
{
	static const char *const op[] = {[EXPR_ADD] = "+", [EXPR_SUB] = "-", [EXPR_MUL] = "*",
					 [EXPR_DIV] = "/", [EXPR_MOD] = "%",  [EXPR_POW] = "**",
					 [EXPR_LT] = "<",  [EXPR_GT] = ">",  [EXPR_LE] = "<=",
					 [EXPR_GE] = ">=", [EXPR_EQ] = "==", [EXPR_NE] = "!=",
					 [EXPR_AND] = "&&", [EXPR_OR] = "||"};
	char num[40];
	if (!e || depth > BEHAV_MAX_DEPTH)
		return 0;
	switch (e->op) {
	case EXPR_NUM:
		snprintf(num, sizeof num, "%.17g", e->num);
		return put(t, num, strlen(num));
	case EXPR_VAR:
		return put(t, e->name, strlen(e->name));
	case EXPR_CALL:
		if (!put(t, e->name, strlen(e->name)) || !put(t, "(", 1))
			return 0;
		for (uint32_t i = 0; i < e->nargs; i++)
			if ((i && !put(t, ",", 1)) || !put_expr(t, e->args[i], depth + 1))
				return 0;
		return put(t, ")", 1);
	case EXPR_NEG:
	case EXPR_NOT:
		return put(t, e->op == EXPR_NEG ? "(-" : "(!", 2) &&
		       put_expr(t, e->args[0], depth + 1) && put(t, ")", 1);
	case EXPR_COND:
		return put(t, "(", 1) && put_expr(t, e->args[0], depth + 1) && put(t, "?", 1) &&
		       put_expr(t, e->args[1], depth + 1) && put(t, ":", 1) &&
		       put_expr(t, e->args[2], depth + 1) && put(t, ")", 1);
	default:
		if (e->op >= sizeof op / sizeof op[0] || !op[e->op])
			return 0; /* strings, xor: not rendered */
		return put(t, "(", 1) && put_expr(t, e->args[0], depth + 1) &&
		       put(t, op[e->op], strlen(op[e->op])) && put_expr(t, e->args[1], depth + 1) &&
		       put(t, ")", 1);
	}
}

/* The reader splits "min(5,v(a)*2)" into 5, v(a) and "*2": arguments are
 * joined by commas where one was written, and otherwise except where an
 * operator already joins them ("max(a, -12)" is two arguments, "a -12"
 * one). */
static int render(struct text *t, const struct deck_field *f, unsigned depth)
{
	if (depth <= BEHAV_MAX_DEPTH && f->kind == FIELD_EXPR)
		return put(t, "(", 1) && put_expr(t, f->expr, depth + 1) && put(t, ")", 1);
	if (depth > BEHAV_MAX_DEPTH || (f->kind != FIELD_ATOM && f->kind != FIELD_CALL))
		return 0;
	if (!put(t, f->text, f->len))
		return 0;
	if (f->kind == FIELD_ATOM)
		return 1;
	if (!put(t, "(", 1))
		return 0;
	for (uint32_t i = 0; i < f->nargs; i++) {
		const struct deck_field *a = &f->args[i];
		char first = a->kind == FIELD_ATOM || a->kind == FIELD_CALL ? a->text[0]
			     : a->kind == FIELD_EXPR		       ? '('
								       : 0;
		int sep = a->comma || (!is_op_char(t->buf[t->n - 1]) && !is_op_char(first));
		if (i > 0 && sep && !put(t, ",", 1))
			return 0;
		if (!render(t, a, depth + 1))
			return 0;
	}
	return put(t, ")", 1);
}

/* Whether field f goes on the text so far: an operator at the seam. */
static int joins(const struct text *t, const struct deck_field *f)
{
	if (f->kind != FIELD_ATOM && f->kind != FIELD_CALL)
		return 0;
	return is_op_char(t->buf[t->n - 1]) || is_op_char(f->text[0]);
}

struct expr *behav_field_expr(const struct dev_scope *s, const struct deck_field *f,
			      const struct deck_field *rest, uint32_t nrest, struct arena *ar,
			      int *oom)
{
	struct text t = {arena_alloc_aligned(ar, 4096, 1), 0, 4096};
	if (!t.buf) {
		*oom = 1;
		return NULL;
	}
	t.buf[0] = '\0';
	if (!s->atom_expr || !render(&t, f, 0))
		return NULL;
	for (uint32_t i = 0; i < nrest && t.n && joins(&t, &rest[i]); i++)
		if (!render(&t, &rest[i], 0))
			return NULL;
	struct deck_field g = *f;
	g.kind = FIELD_ATOM;
	g.text = t.buf;
	g.len = (uint32_t)t.n;
	return s->atom_expr(s->ud, &g, oom);
}
