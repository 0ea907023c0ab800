/* spice.y: the card grammar of a SPICE deck. A card is a head (element
 * name or dot keyword) and a list of fields; value expressions in {} or ''
 * and the right-hand sides of .param/.func are parsed into trees here.
 * What the fields mean per element letter is left to elaboration. */
%define api.pure full
%define parse.error detailed
%locations
%expect 0
%param {void *scanner} {struct lex_ctx *ctx}

%code requires {
#include "lexctx.h"
}

%code provides {
#define YY_DECL int yylex(YYSTYPE *yylval_param, YYLTYPE *yylloc_param, \
			  void *yyscanner, struct lex_ctx *ctx)
YY_DECL;
void yyerror(YYLTYPE *loc, void *scanner, struct lex_ctx *ctx, const char *msg);
}

%code {
#include <string.h>
#include "num.h"

static struct diag_loc at(const struct lex_ctx *ctx, const YYLTYPE *l)
{
	struct diag_loc d = {ctx->file, (uint32_t)l->first_line,
			     (uint32_t)l->first_column};
	return d;
}

static struct field_list *list_new(struct lex_ctx *ctx)
{
	return lex_list_new(ctx);
}

static struct field_list *list_add(struct lex_ctx *ctx, struct field_list *l,
				   struct deck_field *f)
{
	return lex_list_add(ctx, l, f);
}

static struct deck_field *field_new(struct lex_ctx *ctx,
				    enum deck_field_kind kind,
				    struct lex_text t, const YYLTYPE *loc)
{
	return lex_field_new(ctx, kind, t, (uint32_t)loc->first_line,
			     (uint32_t)loc->first_column);
}

/* The plain words of a one-token line followed by any continuation fields. */
static struct field_list *join(struct field_list *a, struct field_list *b)
{
	if (!a || !b || b->n == 0)
		return a;
	if (a->last)
		a->last->next = b->first;
	else
		a->first = b->first;
	a->last = b->last;
	a->n += b->n;
	return a;
}

/* Turns a linked field list into an array (the shape cards carry). */
static struct deck_field *list_array(struct lex_ctx *ctx,
				     const struct field_list *l, uint32_t *n)
{
	*n = 0;
	if (!l || l->n == 0)
		return NULL;
	struct deck_field *a = arena_alloc(ctx->scratch, l->n * sizeof *a);
	if (!a) {
		ctx->oom = 1;
		return NULL;
	}
	uint32_t i = 0;
	for (const struct deck_field *f = l->first; f; f = f->next)
		a[i++] = *f;
	*n = i;
	return a;
}

static struct deck_field *call_field(struct lex_ctx *ctx, struct lex_text name,
				     const YYLTYPE *loc,
				     const struct field_list *args)
{
	struct deck_field *f = field_new(ctx, FIELD_CALL, name, loc);
	if (f)
		f->args = list_array(ctx, args, &f->nargs);
	return f;
}

static struct deck_field *assign_field(struct lex_ctx *ctx,
				       struct lex_text key, const YYLTYPE *loc,
				       struct deck_field *value)
{
	struct deck_field *f = field_new(ctx, FIELD_ASSIGN, key, loc);
	if (f)
		f->value = value;
	return f;
}

static struct deck_field *expr_field(struct lex_ctx *ctx, struct expr *e,
				     const YYLTYPE *loc)
{
	struct lex_text none = {NULL, 0, 0};
	struct deck_field *f = field_new(ctx, FIELD_EXPR, none, loc);
	if (f)
		f->expr = e;
	if (!e)
		ctx->oom = 1;
	return f;
}

/* Hands a finished card to the consumer unless a lexical error spoiled it. */
static void emit(struct lex_ctx *ctx, enum deck_card_kind kind,
		 struct lex_text head, const YYLTYPE *loc,
		 const struct field_list *fields)
{
	if (ctx->card_bad || ctx->oom || ctx->stop)
		return;
	struct deck_card c = {kind, at(ctx, loc), head.s, head.n, NULL, 0};
	c.fields = list_array(ctx, fields, &c.nfields);
	if (ctx->oom)
		return;
	if (ctx->fn(ctx->ud, &c))
		ctx->stop = 1;
}

/* POLY(n) and its values as one call "poly" (no argument limit): it
 * names the circuit's state, so it is never evaluated to a number. */
static struct expr *poly_expr(struct lex_ctx *ctx, const YYLTYPE *loc,
			      const struct field_list *args)
{
	uint32_t n = args ? args->n : 0, i = 0;
	struct expr **v = arena_alloc(ctx->scratch, (n ? n : 1) * sizeof *v);
	if (!v) {
		ctx->oom = 1;
		return NULL;
	}
	for (const struct deck_field *f = args ? args->first : NULL; f; f = f->next)
		v[i++] = f->expr;
	struct expr *e = expr_call(ctx->scratch, "poly", v, i, (uint32_t)loc->first_line,
				   (uint32_t)loc->first_column);
	if (!e)
		ctx->oom = 1;
	return e;
}

static struct expr *call_expr(struct lex_ctx *ctx, struct lex_text name,
			      const YYLTYPE *loc, struct field_list *args)
{
	struct expr *buf[16];
	uint32_t n = 0;
	for (struct deck_field *f = args ? args->first : NULL; f; f = f->next) {
		if (n == 16)
			return NULL;
		buf[n++] = f->expr;
	}
	struct expr *e = expr_call(ctx->scratch, name.s, buf, n,
				   (uint32_t)loc->first_line,
				   (uint32_t)loc->first_column);
	if (!e)
		ctx->oom = 1;
	return e;
}
}

%union {
	struct lex_text text;
	struct lex_simple simple;
	double num;
	int kind;
	struct expr *expr;
	struct deck_field *field;
	struct field_list *list;
}

%token <text> TITLE "title line"
%token <text> ELEM "element name"
%token <simple> SIMPLE "element card"
%token <text> ANNOT "annotation"
%token <text> ATOM "word"
%token <text> IDENT "name"
%token <num> NUM "number"
%token <text> DOTCARD "control card"
%token <text> PARAMCARD ".param"
%token <text> FUNCCARD ".func"
%token <text> WORDCARD "dot card"
%token <text> ENDCARD ".end"
%token EOL "end of line"
%token LBRACE "{"
%token RBRACE "}"
%token QUOTE "'"
%token POW "**"
%token LE "<="
%token GE ">="
%token EQ "=="
%token NE "!="
%token ANDAND "&&"
%token OROR "||"
%token BADCHAR "invalid character"
%token START_EXPR "expression start"
%token <text> PROBE "probe"
%token STRING "string"
%token POLYHEAD "POLY(n)"
%token <text> POLYBARE "POLY"
%token XOR "^ (exclusive or)"

%type <list> fields args assigns idlist exprlist polyargs
%type <field> field value arg exprfield assign
%type <expr> expr primary polyarg

%precedence ATOM
%precedence '('
%right '?' ':'
%left OROR
%left XOR
%left ANDAND
%left EQ NE
%left '<' '>' LE GE
%left '+' '-'
%left '*' '/' '%'
%precedence UMINUS
%right POW

%%

deck
	: title cards
	| START_EXPR expr EOL { ctx->expr_result = $2; if (!$2) ctx->oom = 1; }
	;

title
	: %empty
	| TITLE EOL
	  { struct field_list none = {0}; emit(ctx, CARD_TITLE, $1, &@1, &none); }
	;

cards
	: %empty
	| cards card { if (ctx->stop || ctx->oom) YYACCEPT; }
	;

card
	: ELEM fields EOL { emit(ctx, CARD_ELEMENT, $1, &@1, $2); }
	| SIMPLE fields EOL { emit(ctx, CARD_ELEMENT, $1.head, &@1, join($1.fields, $2)); }
	| DOTCARD fields EOL { emit(ctx, (enum deck_card_kind)$1.kind, $1, &@1, $2); }
	| WORDCARD fields EOL { emit(ctx, (enum deck_card_kind)$1.kind, $1, &@1, $2); }
	| PARAMCARD assigns EOL { emit(ctx, CARD_PARAM, $1, &@1, $2); }
	| FUNCCARD IDENT '(' idlist ')' opt_eq expr EOL
	  {
		struct field_list *l = list_new(ctx);
		list_add(ctx, l, call_field(ctx, $2, &@2, $4));
		list_add(ctx, l, expr_field(ctx, $7, &@7));
		emit(ctx, CARD_FUNC, $1, &@1, l);
	  }
	| ENDCARD { struct field_list none = {0}; emit(ctx, CARD_END, $1, &@1, &none); }
	| ANNOT { struct field_list none = {0}; emit(ctx, CARD_ANNOT, $1, &@1, &none); }
	| error EOL { yyerrok; }
	;

fields
	: %empty { $$ = list_new(ctx); }
	| fields field { $$ = list_add(ctx, $1, $2); }
	;

field
	: ATOM %prec ATOM { $$ = field_new(ctx, FIELD_ATOM, $1, &@1); }
	| '(' args ')'
	  { struct lex_text none = {"", 0, 0}; $$ = call_field(ctx, none, &@1, $2); }
	| ATOM '=' value { $$ = assign_field(ctx, $1, &@1, $3); }
	| ATOM '(' args ')' { $$ = call_field(ctx, $1, &@1, $3); }
	| ATOM '(' args ')' '=' value
	  {
		struct deck_field *k = call_field(ctx, $1, &@1, $3);
		$$ = assign_field(ctx, $1, &@1, $6);
		if ($$ && k) {
			$$->args = k->args;
			$$->nargs = k->nargs;
		}
	  }
	| exprfield { $$ = $1; }
	| exprfield '=' value
	  { $$ = $1; if ($$) $$->value = $3; /* TABLE {x} = (x1,y1) ...: the first pair hangs on the expression */ }
	;

value
	: ATOM %prec ATOM { $$ = field_new(ctx, FIELD_ATOM, $1, &@1); }
	| exprfield { $$ = $1; }
	| ATOM '(' args ')' { $$ = call_field(ctx, $1, &@1, $3); }
	| '(' args ')'
	  { struct lex_text none = {"", 0, 0}; $$ = call_field(ctx, none, &@1, $2); }
	;

exprfield
	: LBRACE expr RBRACE { $$ = expr_field(ctx, $2, &@1); }
	| LBRACE POLYHEAD polyargs RBRACE { $$ = expr_field(ctx, poly_expr(ctx, &@2, $3), &@1); }
	| LBRACE POLYBARE polyargs RBRACE
	  {
		struct expr *p = expr_var(ctx->scratch, $2.s, (uint32_t)@2.first_line, (uint32_t)@2.first_column);
		struct field_list *l = list_add(ctx, list_new(ctx), expr_field(ctx, p, &@2));
		$$ = expr_field(ctx, poly_expr(ctx, &@2, join(l, $3)), &@1);
	  }
	| QUOTE expr QUOTE { $$ = expr_field(ctx, $2, &@1); }
	;

args
	: %empty { $$ = list_new(ctx); }
	| args arg { $$ = list_add(ctx, $1, $2); }
	;

arg
	: ATOM %prec ATOM { $$ = field_new(ctx, FIELD_ATOM, $1, &@1); }
	| '(' args ')'
	  { struct lex_text none = {"", 0, 0}; $$ = call_field(ctx, none, &@1, $2); }
	| ATOM '=' value { $$ = assign_field(ctx, $1, &@1, $3); }
	| ATOM '(' args ')' { $$ = call_field(ctx, $1, &@1, $3); }
	| exprfield { $$ = $1; }
	;

assigns
	: assign { $$ = list_add(ctx, list_new(ctx), $1); }
	| assigns assign { $$ = list_add(ctx, $1, $2); }
	| assigns ',' assign { $$ = list_add(ctx, $1, $3); }
	;

assign
	: IDENT '=' expr
	  { $$ = assign_field(ctx, $1, &@1, expr_field(ctx, $3, &@3)); }
	| IDENT '(' idlist ')' '=' expr
	  {
		/* HSPICE defines functions in .param: a .func */
		$$ = assign_field(ctx, $1, &@1, expr_field(ctx, $6, &@6));
		if ($$)
			$$->args = list_array(ctx, $3, &$$->nargs);
	  }
	;

idlist
	: %empty { $$ = list_new(ctx); }
	| IDENT { $$ = list_add(ctx, list_new(ctx), field_new(ctx, FIELD_ATOM, $1, &@1)); }
	| idlist ',' IDENT { $$ = list_add(ctx, $1, field_new(ctx, FIELD_ATOM, $3, &@3)); }
	;

opt_eq
	: %empty
	| '='
	;

expr
	: expr '?' expr ':' expr { $$ = expr_op(ctx->scratch, EXPR_COND, $1, $3, $5); }
	| expr OROR expr { $$ = expr_op(ctx->scratch, EXPR_OR, $1, $3, NULL); }
	| expr XOR expr { $$ = expr_op(ctx->scratch, EXPR_XOR, $1, $3, NULL); }
	| expr ANDAND expr { $$ = expr_op(ctx->scratch, EXPR_AND, $1, $3, NULL); }
	| expr EQ expr { $$ = expr_op(ctx->scratch, EXPR_EQ, $1, $3, NULL); }
	| expr NE expr { $$ = expr_op(ctx->scratch, EXPR_NE, $1, $3, NULL); }
	| expr '<' expr { $$ = expr_op(ctx->scratch, EXPR_LT, $1, $3, NULL); }
	| expr '>' expr { $$ = expr_op(ctx->scratch, EXPR_GT, $1, $3, NULL); }
	| expr LE expr { $$ = expr_op(ctx->scratch, EXPR_LE, $1, $3, NULL); }
	| expr GE expr { $$ = expr_op(ctx->scratch, EXPR_GE, $1, $3, NULL); }
	| expr '+' expr { $$ = expr_op(ctx->scratch, EXPR_ADD, $1, $3, NULL); }
	| expr '-' expr { $$ = expr_op(ctx->scratch, EXPR_SUB, $1, $3, NULL); }
	| expr '*' expr { $$ = expr_op(ctx->scratch, EXPR_MUL, $1, $3, NULL); }
	| expr '/' expr { $$ = expr_op(ctx->scratch, EXPR_DIV, $1, $3, NULL); }
	| expr '%' expr { $$ = expr_op(ctx->scratch, EXPR_MOD, $1, $3, NULL); }
	| expr POW expr { $$ = expr_op(ctx->scratch, EXPR_POW, $1, $3, NULL); }
	| '-' expr %prec UMINUS { $$ = expr_op(ctx->scratch, EXPR_NEG, $2, NULL, NULL); }
	| '+' expr %prec UMINUS { $$ = $2; }
	| '!' expr %prec UMINUS { $$ = expr_op(ctx->scratch, EXPR_NOT, $2, NULL, NULL); }
	| primary { $$ = $1; }
	;

primary
	: NUM { $$ = expr_num(ctx->scratch, $1, (uint32_t)@1.first_line, (uint32_t)@1.first_column); }
	| IDENT { $$ = expr_var(ctx->scratch, $1.s, (uint32_t)@1.first_line, (uint32_t)@1.first_column); }
	| PROBE { $$ = expr_var(ctx->scratch, $1.s, (uint32_t)@1.first_line, (uint32_t)@1.first_column); }
	| STRING { $$ = expr_str(ctx->scratch, (uint32_t)@1.first_line, (uint32_t)@1.first_column); }
	| IDENT LBRACE expr RBRACE
	  { /* ngspice joins strings this way (or{and}): a string */
		$$ = $3 ? expr_str(ctx->scratch, (uint32_t)@1.first_line, (uint32_t)@1.first_column) : NULL; }
	| IDENT '(' exprlist ')' { $$ = call_expr(ctx, $1, &@1, $3); }
	| '(' expr ')' { $$ = $2; }
	| LBRACE expr RBRACE { $$ = $2; }
	| QUOTE expr QUOTE { $$ = $2; }
	;

/* The controlling values and coefficients of POLY(n): probes, numbers
 * with their signs, parameter names, braced expressions. */
polyargs
	: polyarg { $$ = list_add(ctx, list_new(ctx), expr_field(ctx, $1, &@1)); }
	| polyargs polyarg { $$ = list_add(ctx, $1, expr_field(ctx, $2, &@2)); }
	;

polyarg
	: NUM { $$ = expr_num(ctx->scratch, $1, (uint32_t)@1.first_line, (uint32_t)@1.first_column); }
	| '-' NUM { $$ = expr_num(ctx->scratch, -$2, (uint32_t)@1.first_line, (uint32_t)@1.first_column); }
	| '+' NUM { $$ = expr_num(ctx->scratch, $2, (uint32_t)@1.first_line, (uint32_t)@1.first_column); }
	| PROBE { $$ = expr_var(ctx->scratch, $1.s, (uint32_t)@1.first_line, (uint32_t)@1.first_column); }
	| IDENT { $$ = expr_var(ctx->scratch, $1.s, (uint32_t)@1.first_line, (uint32_t)@1.first_column); }
	| LBRACE expr RBRACE { $$ = $2; }
	;

exprlist
	: %empty { $$ = list_new(ctx); }
	| expr { $$ = list_add(ctx, list_new(ctx), expr_field(ctx, $1, &@1)); }
	| exprlist ',' expr { $$ = list_add(ctx, $1, expr_field(ctx, $3, &@3)); }
	;

%%

void yyerror(YYLTYPE *loc, void *scanner, struct lex_ctx *ctx, const char *msg)
{
	(void)scanner;
	if (strcmp(msg, "memory exhausted") == 0) {
		/* the parser's stack (YYMAXDEPTH entries) is full */
		ctx->too_deep = 1;
		msg = "nesting too deep for the parser (over 10000 open levels): "
		      "the rest of this file is not read";
	}
	diag_add(ctx->diags, DIAG_ERROR, "syntax", at(ctx, loc), "%s", msg);
}
