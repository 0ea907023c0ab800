/* test_expr.c: expression parsing and evaluation: precedence, functions
 * (the list of docs/design.md §3 and the ngspice manual's expression section, from
 * memory: log is the natural logarithm there), user functions, errors. */
#include "testutil.h"

#include <math.h>

#include "expr.h"
#include "parse.h"

struct expr_row {
	const char *text;
	double value;
};

static const struct expr_row rows[] = {
	{"1+2*3", 7},
	{"(1+2)*3", 9},
	{"2**3**2", 512},      /* right associative */
	{"2^3", 8},
	{"-2**2", -4},         /* power binds tighter than unary minus */
	{"10/4", 2.5},
	{"7%4", 3},
	{"1k*2", 2000},
	{"1<2", 1},
	{"2<=1", 0},
	{"1==1 && 2!=3", 1},
	{"0 || 0", 0},
	{"!0", 1},
	{"~1", 0},             /* PSpice's not */
	{"if(~(2 >= 0), 5, 6)", 6},
	{"1 ? 10 : 20", 10},
	{"0 ? 10 : 1 ? 30 : 40", 30},
	{"sqrt(16)", 4},
	{"exp(0)", 1},
	{"log(exp(2))", 2},
	{"ln(1)", 0},
	{"log10(1000)", 3},
	{"abs(-3)", 3},
	{"min(3,1,2)", 1},
	{"max(3,1,2)", 3},
	{"pow(2,10)", 1024},
	{"sin(0)", 0},
	{"cos(0)", 1},
	{"tan(0)", 0},
	{"atan(1)*4", 3.14159265358979323846},
	{"pi", 3.14159265358979323846},
	{"sqr(3)", 9},
	{"if(1, 2, 3)", 2},
	{"limit(5, 0, 3)", 3},
	{"nint(2.6)", 3},
	{"{1+1}*'2'", 4},
	{"twice(x0)", 6},
};

static int var(void *ud, const char *name, double *v)
{
	(void)ud;
	if (strcmp(name, "x0") == 0) {
		*v = 3;
		return 1;
	}
	return 0;
}

static const struct expr_func *func(void *ud, const char *name)
{
	return strcmp(name, "twice") == 0 ? ud : NULL;
}

static double eval_text(struct arena *ar, const char *text, enum expr_status *st,
			struct expr_error *err)
{
	static const char *params[] = {"a"};
	static struct expr_func twice = {"twice", 1, params, NULL};
	int oom = 0;
	struct diag_sink *d = diag_create(ar, 50);
	struct diag_loc at = {0, 1, 1};
	twice.body = parse_expr_text("a*2", 3, at, ar, d, &oom);
	struct expr *e = parse_expr_text(text, strlen(text), at, ar, d, &oom);
	diag_destroy(d);
	if (!e) {
		*st = EXPR_BAD_CALL;
		return NAN;
	}
	struct expr_env env = {var, func, &twice, 0};
	double v = NAN;
	*st = expr_eval(e, &env, &v, err);
	return v;
}

static void test_rows(void **state)
{
	(void)state;
	struct hr_alloc h = hr_alloc_default();
	struct arena *ar = arena_create(&h);
	for (size_t i = 0; i < sizeof rows / sizeof rows[0]; i++) {
		enum expr_status st;
		struct expr_error err;
		double v = eval_text(ar, rows[i].text, &st, &err);
		if (st != EXPR_OK || fabs(v - rows[i].value) > 1e-12 * fmax(1, fabs(v)))
			fail_msg("'%s' = %.17g (status %d), expected %.17g",
				 rows[i].text, v, st, rows[i].value);
	}
	arena_destroy(ar);
}

static void test_errors(void **state)
{
	(void)state;
	struct hr_alloc h = hr_alloc_default();
	struct arena *ar = arena_create(&h);
	enum expr_status st;
	struct expr_error err;
	char msg[128];
	eval_text(ar, "1 + nope", &st, &err);
	assert_int_equal(st, EXPR_UNDEFINED);
	assert_string_equal(err.name, "nope");
	assert_int_equal(err.col, 5);
	expr_error_text(&err, msg, sizeof msg);
	assert_string_equal(msg, "undefined parameter 'nope'");
	eval_text(ar, "1/0", &st, &err);
	assert_int_equal(st, EXPR_DOMAIN);
	eval_text(ar, "sqrt(-1)", &st, &err);
	assert_int_equal(st, EXPR_DOMAIN);
	eval_text(ar, "sqrt(1, 2)", &st, &err);
	assert_int_equal(st, EXPR_BAD_CALL);
	eval_text(ar, "twice(1, 2)", &st, &err);
	assert_int_equal(st, EXPR_BAD_CALL);
	/* the circuit's state and strings are no constants, but no
	 * undefined names either */
	eval_text(ar, "1 + v(3)", &st, &err);
	assert_int_equal(st, EXPR_STATE);
	assert_string_equal(err.name, "v(3)");
	eval_text(ar, "2*TIME", &st, &err);
	assert_int_equal(st, EXPR_STATE);
	expr_error_text(&err, msg, sizeof msg);
	assert_string_equal(msg, "'TIME' depends on circuit voltages, currents or time; a constant is needed here");
	eval_text(ar, "\"0101\"", &st, &err);
	assert_int_equal(st, EXPR_STRING);
	eval_text(ar, "a{b}", &st, &err);
	assert_int_equal(st, EXPR_STRING);
	eval_text(ar, "POLY(2) 1 2", &st, &err);
	assert_int_equal(st, EXPR_BAD_CALL); /* a syntax error but at the head of a braced value */
	arena_destroy(ar);
}

/* A function that calls itself stops at the depth limit, not the stack. */
static void test_recursion(void **state)
{
	(void)state;
	struct run r;
	run_text(&r, "t\n.func f(x) = f(x)+1\nR1 a 0 {f(1)}\n");
	assert_string_equal(r.diags, "top.cir:2:14: error: expression nests deeper than 1000 levels (--max-expr-depth) [expression]\n");
	run_free(&r);
}

int main(void)
{
	const struct CMUnitTest tests[] = {
		cmocka_unit_test(test_rows),
		cmocka_unit_test(test_errors),
		cmocka_unit_test(test_recursion),
	};
	return cmocka_run_group_tests(tests, NULL, NULL);
}
