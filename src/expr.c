/* expr.c: building, copying and evaluating expression trees. Built-in
 * functions follow the ngspice manual's expression section; log() is the
 * natural logarithm there, as it is here. */
#include "expr.h"

#include <math.h>
#include <stdio.h>
#include <string.h>
#include <strings.h>


static struct expr *node(struct arena *ar, enum expr_op op, uint32_t line,
			 uint32_t col)
{
	struct expr *e = arena_zalloc(ar, sizeof *e);
	if (!e)
		return NULL;
	e->op = op;
	e->line = line;
	e->col = col;
	return e;
}

struct expr *expr_num(struct arena *ar, double v, uint32_t line, uint32_t col)
{
	struct expr *e = node(ar, EXPR_NUM, line, col);
	if (e)
		e->num = v;
	return e;
}

struct expr *expr_var(struct arena *ar, const char *name, uint32_t line,
		      uint32_t col)
{
	if (!name)
		return NULL;
	struct expr *e = node(ar, EXPR_VAR, line, col);
	if (e)
		e->name = name;
	return e;
}

struct expr *expr_str(struct arena *ar, uint32_t line, uint32_t col)
{
	return node(ar, EXPR_STR, line, col);
}

static uint32_t arity(enum expr_op op)
{
	switch (op) {
	case EXPR_NEG:
	case EXPR_NOT:
		return 1;
	case EXPR_STR:
		return 0;
	case EXPR_COND:
		return 3;
	default:
		return 2;
	}
}

struct expr *expr_op(struct arena *ar, enum expr_op op, struct expr *a,
		     struct expr *b, struct expr *c)
{
	struct expr *ops[3] = {a, b, c};
	uint32_t n = arity(op);
	for (uint32_t i = 0; i < n; i++)
		if (!ops[i])
			return NULL;
	struct expr *e = node(ar, op, a->line, a->col);
	if (!e)
		return NULL;
	e->args = arena_alloc(ar, n * sizeof *e->args);
	if (!e->args)
		return NULL;
	memcpy(e->args, ops, n * sizeof *e->args);
	e->nargs = n;
	return e;
}

struct expr *expr_call(struct arena *ar, const char *name, struct expr **args,
		       uint32_t nargs, uint32_t line, uint32_t col)
{
	if (!name)
		return NULL;
	for (uint32_t i = 0; i < nargs; i++)
		if (!args[i])
			return NULL;
	struct expr *e = node(ar, EXPR_CALL, line, col);
	if (!e)
		return NULL;
	e->name = name;
	e->nargs = nargs;
	if (nargs) {
		e->args = arena_alloc(ar, nargs * sizeof *e->args);
		if (!e->args)
			return NULL;
		memcpy(e->args, args, nargs * sizeof *e->args);
	}
	return e;
}

struct expr *expr_clone(struct arena *ar, const struct expr *e)
{
	if (!e)
		return NULL;
	struct expr *c = node(ar, e->op, e->line, e->col);
	if (!c)
		return NULL;
	c->num = e->num;
	c->nargs = e->nargs;
	if (e->name && !(c->name = arena_strdup(ar, e->name)))
		return NULL;
	if (e->nargs) {
		c->args = arena_alloc(ar, e->nargs * sizeof *c->args);
		if (!c->args)
			return NULL;
		for (uint32_t i = 0; i < e->nargs; i++)
			if (!(c->args[i] = expr_clone(ar, e->args[i])))
				return NULL;
	}
	return c;
}

/* Built-in functions: name, argument count, implementation. */
struct builtin {
	const char *name;
	uint32_t nargs;
	double (*f1)(double);
	double (*f2)(double, double);
};

static double f_min(double a, double b) { return a < b ? a : b; }
static double f_max(double a, double b) { return a > b ? a : b; }
static double f_sgn(double a) { return (a > 0) - (a < 0); }
static double f_int(double a) { return trunc(a); }
static double f_nint(double a) { return nearbyint(a); }
static double f_sqr(double a) { return a * a; }

static const struct builtin builtins[] = {
	{"sqrt", 1, sqrt, NULL},   {"exp", 1, exp, NULL},
	{"log", 1, log, NULL},     {"ln", 1, log, NULL},
	{"log10", 1, log10, NULL}, {"abs", 1, fabs, NULL},
	{"sin", 1, sin, NULL},     {"cos", 1, cos, NULL},
	{"tan", 1, tan, NULL},     {"atan", 1, atan, NULL},
	{"asin", 1, asin, NULL},   {"acos", 1, acos, NULL},
	{"sinh", 1, sinh, NULL},   {"cosh", 1, cosh, NULL},
	{"tanh", 1, tanh, NULL},   {"floor", 1, floor, NULL},
	{"ceil", 1, ceil, NULL},   {"int", 1, f_int, NULL},
	{"sgn", 1, f_sgn, NULL},   {"nint", 1, f_nint, NULL},
	{"sqr", 1, f_sqr, NULL},
	{"round", 1, f_nint, NULL}, {"arctan", 1, atan, NULL},
	{"asinh", 1, asinh, NULL}, {"acosh", 1, acosh, NULL},
	{"atanh", 1, atanh, NULL}, {"sign", 1, f_sgn, NULL},
	{"min", 0, NULL, f_min},   {"max", 0, NULL, f_max},
	{"pow", 2, NULL, pow},
	{"pwr", 2, NULL, pow},     {"atan2", 2, NULL, atan2},
};

static const struct builtin *find_builtin(const char *name)
{
	for (size_t i = 0; i < sizeof builtins / sizeof builtins[0]; i++)
		if (strcasecmp(builtins[i].name, name) == 0)
			return &builtins[i];
	return NULL;
}

int expr_is_builtin(const char *name)
{
	return find_builtin(name) != NULL;
}

struct eval {
	const struct expr_env *env;
	struct expr_error *err;
	unsigned depth;
	/* Bound parameters of the user function being evaluated. */
	const struct expr_func *fn;
	const double *argv;
	const struct eval *outer;
};

static enum expr_status ev(struct eval *st, const struct expr *e, double *out);

static enum expr_status fail(struct eval *st, enum expr_status s,
			     const struct expr *e)
{
	st->err->status = s;
	st->err->name = e->name;
	st->err->line = e->line;
	st->err->col = e->col;
	return s;
}

int expr_is_state_name(const char *name)
{
	return strchr(name, '(') || strcasecmp(name, "time") == 0 ||
	       strcasecmp(name, "temper") == 0 || strcasecmp(name, "hertz") == 0;
}

static enum expr_status ev_var(struct eval *st, const struct expr *e,
			       double *out)
{
	for (const struct eval *s = st; s && s->fn; s = NULL)
		for (uint32_t i = 0; i < s->fn->nparams; i++)
			if (strcasecmp(s->fn->params[i], e->name) == 0) {
				*out = s->argv[i];
				return EXPR_OK;
			}
	int known = st->env->lookup_var ? st->env->lookup_var(st->env->ud, e->name, out) : 0;
	if (known == EXPR_VAR_STRING)
		return fail(st, EXPR_STRING, e);
	if (known == EXPR_VAR_STATE)
		return fail(st, EXPR_STATE, e);
	if (known)
		return EXPR_OK;
	if (strcasecmp(e->name, "pi") == 0) {
		*out = 3.14159265358979323846;
		return EXPR_OK;
	}
	return fail(st, expr_is_state_name(e->name) ? EXPR_STATE : EXPR_UNDEFINED, e);
}

static enum expr_status ev_args(struct eval *st, const struct expr *e,
				double *v)
{
	for (uint32_t i = 0; i < e->nargs; i++) {
		enum expr_status s = ev(st, e->args[i], &v[i]);
		if (s != EXPR_OK)
			return s;
	}
	return EXPR_OK;
}

static enum expr_status ev_user(struct eval *st, const struct expr *e,
				const struct expr_func *fn, const double *v,
				double *out)
{
	if (fn->nparams != e->nargs)
		return fail(st, EXPR_BAD_CALL, e);
	struct eval inner = {st->env, st->err, st->depth + 1, fn, v, st};
	return ev(&inner, fn->body, out);
}

/* HSPICE's statistical functions (agauss(nominal, variation, sigma) and
 * the like): a Monte Carlo draw around the first argument. */
static int is_statistical(const char *name)
{
	return strcasecmp(name, "agauss") == 0 || strcasecmp(name, "gauss") == 0 ||
	       strcasecmp(name, "aunif") == 0 || strcasecmp(name, "unif") == 0;
}

static enum expr_status ev_call(struct eval *st, const struct expr *e,
				double *out)
{
	double v[16];
	if (e->nargs > 16)
		return fail(st, EXPR_BAD_CALL, e);
	if (strcasecmp(e->name, "pi") == 0 && e->nargs == 0) {
		*out = 3.14159265358979323846;
		return EXPR_OK;
	}
	enum expr_status s = ev_args(st, e, v);
	if (s != EXPR_OK)
		return s;
	const struct expr_func *fn =
		st->env->lookup_func ? st->env->lookup_func(st->env->ud, e->name)
				     : NULL;
	if (fn)
		return ev_user(st, e, fn, v, out);
	if (e->nargs == 3 && (strcasecmp(e->name, "if") == 0 ||
			      strcasecmp(e->name, "ternary_fcn") == 0)) {
		*out = v[0] != 0 ? v[1] : v[2];
		return EXPR_OK;
	}
	if (e->nargs >= 2 && is_statistical(e->name)) {
		*out = v[0]; /* the nominal value: tolerances are the check's own */
		return EXPR_OK;
	}
	if (e->nargs == 3 && strcasecmp(e->name, "limit") == 0) {
		*out = v[0] < v[1] ? v[1] : v[0] > v[2] ? v[2] : v[0];
		return EXPR_OK;
	}
	const struct builtin *b = find_builtin(e->name);
	if (b && b->nargs == 0 && e->nargs >= 1) {
		/* min and max take any number of arguments */
		*out = v[0];
		for (uint32_t i = 1; i < e->nargs; i++)
			*out = b->f2(*out, v[i]);
		return EXPR_OK;
	}
	if (!b || b->nargs != e->nargs)
		return fail(st, EXPR_BAD_CALL, e);
	*out = b->nargs == 1 ? b->f1(v[0]) : b->f2(v[0], v[1]);
	return EXPR_OK;
}

static double binary(enum expr_op op, double a, double b)
{
	switch (op) {
	case EXPR_ADD: return a + b;
	case EXPR_SUB: return a - b;
	case EXPR_MUL: return a * b;
	case EXPR_DIV: return a / b;
	case EXPR_MOD: return fmod(a, b);
	case EXPR_POW: return pow(a, b);
	case EXPR_LT: return a < b;
	case EXPR_GT: return a > b;
	case EXPR_LE: return a <= b;
	case EXPR_GE: return a >= b;
	case EXPR_EQ: return a == b;
	case EXPR_NE: return a != b;
	case EXPR_AND: return (a != 0) && (b != 0);
	case EXPR_OR: return (a != 0) || (b != 0);
	case EXPR_XOR: return (a != 0) != (b != 0);
	default: return NAN;
	}
}

static enum expr_status ev_ops(struct eval *st, const struct expr *e,
			       double *out)
{
	double a, b;
	enum expr_status s = ev(st, e->args[0], &a);
	if (s != EXPR_OK)
		return s;
	if (e->op == EXPR_NEG || e->op == EXPR_NOT) {
		*out = e->op == EXPR_NEG ? -a : (a == 0);
		return EXPR_OK;
	}
	if (e->op == EXPR_COND)
		return ev(st, e->args[a != 0 ? 1 : 2], out);
	if ((s = ev(st, e->args[1], &b)) != EXPR_OK)
		return s;
	if ((e->op == EXPR_DIV || e->op == EXPR_MOD) && b == 0)
		return fail(st, EXPR_DOMAIN, e);
	*out = binary(e->op, a, b);
	return EXPR_OK;
}

static enum expr_status ev(struct eval *st, const struct expr *e, double *out)
{
	unsigned lim = st->env->max_depth ? st->env->max_depth : EXPR_DEFAULT_DEPTH;
	if (st->depth > lim) {
		st->err->depth = lim;
		return fail(st, EXPR_TOO_DEEP, e);
	}
	st->depth++;
	enum expr_status s;
	switch (e->op) {
	case EXPR_NUM:
		*out = e->num;
		s = EXPR_OK;
		break;
	case EXPR_VAR:
		s = ev_var(st, e, out);
		break;
	case EXPR_CALL:
		s = ev_call(st, e, out);
		break;
	case EXPR_STR:
		s = fail(st, EXPR_STRING, e);
		break;
	default:
		s = ev_ops(st, e, out);
		break;
	}
	st->depth--;
	return s;
}

enum expr_status expr_eval(const struct expr *e, const struct expr_env *env,
			   double *out, struct expr_error *err)
{
	struct eval st = {env, err, 0, NULL, NULL, NULL};
	double v;
	enum expr_status s = ev(&st, e, &v);
	if (s != EXPR_OK)
		return s;
	if (!isfinite(v))
		return fail(&st, EXPR_DOMAIN, e);
	*out = v;
	return EXPR_OK;
}

void expr_error_text(const struct expr_error *err, char *buf, unsigned n)
{
	const char *name = err->name ? err->name : "?";
	switch (err->status) {
	case EXPR_UNDEFINED:
		snprintf(buf, n, "undefined parameter '%s'", name);
		break;
	case EXPR_BAD_CALL:
		snprintf(buf, n, "unknown function '%s' or wrong number of arguments", name);
		break;
	case EXPR_DOMAIN:
		snprintf(buf, n, "expression has no finite value (division by zero or out of domain)");
		break;
	case EXPR_STRING:
		if (err->name)
			snprintf(buf, n, "parameter '%s' holds a string where a number is needed", name);
		else
			snprintf(buf, n, "a string where a number is needed");
		break;
	case EXPR_STATE:
		snprintf(buf, n, "'%s' depends on circuit voltages, currents or time; a constant is needed here",
			 name);
		break;
	case EXPR_TOO_DEEP:
		snprintf(buf, n, "expression nests deeper than %u levels (--max-expr-depth)",
			 err->depth);
		break;
	default:
		snprintf(buf, n, "expression error");
		break;
	}
}
