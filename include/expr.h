/* expr.h: expression trees of {} and '' values, .param and .func, and their
 * evaluation. Names are looked up through a caller-supplied environment, so
 * this module knows nothing of scopes or subcircuits. */
#ifndef HEADROOM_EXPR_H
#define HEADROOM_EXPR_H

#include <stdint.h>

#include "arena.h"

enum expr_op {
	EXPR_NUM,
	EXPR_VAR,
	EXPR_CALL,
	EXPR_NEG,
	EXPR_NOT,
	EXPR_ADD,
	EXPR_SUB,
	EXPR_MUL,
	EXPR_DIV,
	EXPR_MOD,
	EXPR_POW,
	EXPR_LT,
	EXPR_GT,
	EXPR_LE,
	EXPR_GE,
	EXPR_EQ,
	EXPR_NE,
	EXPR_AND,
	EXPR_OR,
	EXPR_COND,
	EXPR_STR,   /* a string: "0001", or text joined to a name (or{and}) */
	EXPR_XOR    /* exclusive or ('^' in LTspice's reading) */
};

struct expr {
	enum expr_op op;
	uint32_t line, col;   /* where the operator or operand starts */
	double num;           /* EXPR_NUM */
	const char *name;     /* EXPR_VAR, EXPR_CALL: as written */
	uint32_t nargs;       /* EXPR_CALL */
	struct expr **args;   /* EXPR_CALL arguments; operands of the others */
};

/* Builders; every node lives in ar. NULL on out-of-memory (any NULL operand
 * makes the result NULL too, so a parser can build without checking). */
struct expr *expr_num(struct arena *ar, double v, uint32_t line, uint32_t col);
struct expr *expr_var(struct arena *ar, const char *name, uint32_t line,
		      uint32_t col);
struct expr *expr_op(struct arena *ar, enum expr_op op, struct expr *a,
		     struct expr *b, struct expr *c);
/* A call with an argument list; args is copied. */
struct expr *expr_call(struct arena *ar, const char *name, struct expr **args,
		       uint32_t nargs, uint32_t line, uint32_t col);

/* A string literal or a joined string: kept for its place in the tree,
 * never a number (evaluation gives EXPR_STRING). */
struct expr *expr_str(struct arena *ar, uint32_t line, uint32_t col);

/* Deep copy into ar. */
struct expr *expr_clone(struct arena *ar, const struct expr *e);

/* A user function made by .func. */
struct expr_func {
	const char *name;
	uint32_t nparams;
	const char **params;
	const struct expr *body;
};

/* Where names come from. lookup_var returns 1 and sets *v when the name is
 * a number, EXPR_VAR_STRING when it holds a string, EXPR_VAR_STATE when
 * its value depends on the circuit's state, 0 when it is not known;
 * lookup_func returns the function or NULL. */
#define EXPR_VAR_STRING 2
#define EXPR_VAR_STATE 3
struct expr_env {
	int (*lookup_var)(void *ud, const char *name, double *v);
	const struct expr_func *(*lookup_func)(void *ud, const char *name);
	void *ud;
	unsigned max_depth; /* nesting and call depth; 0 = EXPR_DEFAULT_DEPTH */
};

#define EXPR_DEFAULT_DEPTH 1000u

enum expr_status {
	EXPR_OK,
	EXPR_UNDEFINED,   /* unknown name: err->name says which */
	EXPR_BAD_CALL,    /* unknown function or wrong argument count */
	EXPR_DOMAIN,      /* division by zero, result not finite */
	EXPR_TOO_DEEP,    /* nesting or function recursion past the limit */
	EXPR_STRING,      /* a string where a number is needed */
	EXPR_STATE        /* the circuit's state (v(), i(), time, temper,
			     hertz, or a parameter made of them): known only
			     during a simulation */
};

struct expr_error {
	enum expr_status status;
	const char *name;  /* offending name, if any (borrowed from the tree) */
	uint32_t line, col;
	unsigned depth;    /* the limit, for EXPR_TOO_DEEP */
};

/* Evaluates e. On failure returns the status, fills *err, leaves *out. */
enum expr_status expr_eval(const struct expr *e, const struct expr_env *env,
			   double *out, struct expr_error *err);

/* A lower-case explanation of err, e.g. "undefined parameter 'vp'". */
void expr_error_text(const struct expr_error *err, char *buf, unsigned n);

/* True if name (any case) stands for the circuit's state rather than a
 * constant: time, temper, hertz, and probes such as v(3) or i(v1). */
int expr_is_state_name(const char *name);

/* True if name (any case) is a built-in function. */
int expr_is_builtin(const char *name);

#endif
