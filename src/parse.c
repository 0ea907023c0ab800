/* parse.c: the one driver that owns a scanner and parser run. It sets up
 * the scanner state, runs the parser over a stream and tears both down;
 * flex's own allocations go through the library's allocation hook. */
#include "parse.h"

#include "lexctx.h"
#include "spice.tab.h"
#include "spice.lex.h"

#define PARSE_DEFAULT_MAX_LINE (1u << 20)
#define PARSE_DEFAULT_MAX_TOKEN (1u << 16)

enum parse_status parse_stream(FILE *in, const struct parse_opts *opts,
			       struct arena *scratch, struct diag_sink *diags,
			       parse_card_fn fn, void *ud)
{
	struct lex_ctx ctx = {0};
	ctx.file = opts->file;
	ctx.line = 1;
	ctx.col = 1;
	ctx.max_line_len = opts->max_line_len ? opts->max_line_len
					      : PARSE_DEFAULT_MAX_LINE;
	ctx.max_token_len = opts->max_token_len ? opts->max_token_len
						: PARSE_DEFAULT_MAX_TOKEN;
	ctx.raw_line = 1;
	ctx.caret_xor = opts->caret_xor;
	ctx.scratch = scratch;
	ctx.mark = arena_mark(scratch);
	ctx.diags = diags;
	ctx.hook = arena_hook(scratch);
	ctx.fn = fn;
	ctx.ud = ud;

	yyscan_t scanner = NULL;
	if (yylex_init_extra(&ctx, &scanner) != 0)
		return PARSE_OOM;
	volatile int rc = 2;
	if (setjmp(ctx.fatal) == 0) {
		yyset_in(in, scanner);
		lex_start(scanner, opts->has_title);
		rc = yyparse(scanner, &ctx);
		yylex_destroy(scanner);
	}
	lex_free_all(&ctx);
	arena_reset(scratch, ctx.mark);
	if (ctx.oom || (rc == 2 && !ctx.too_deep))
		return PARSE_OOM;
	return ctx.stop ? PARSE_STOPPED : PARSE_OK;
}

struct expr *parse_expr_text(const char *text, size_t n, struct diag_loc at,
			     struct arena *ar, struct diag_sink *diags,
			     int *oom)
{
	struct lex_ctx ctx = {0};
	ctx.file = at.file;
	ctx.line = at.line;
	ctx.col = at.col;
	ctx.max_line_len = PARSE_DEFAULT_MAX_LINE;
	ctx.max_token_len = PARSE_DEFAULT_MAX_LINE;
	ctx.scratch = ar;
	ctx.mark = arena_mark(ar);
	ctx.diags = diags;
	ctx.hook = arena_hook(ar);
	*oom = 0;
	yyscan_t scanner = NULL;
	if (yylex_init_extra(&ctx, &scanner) != 0) {
		*oom = 1;
		return NULL;
	}
	volatile int rc = 2;
	if (setjmp(ctx.fatal) == 0) {
		YY_BUFFER_STATE buf = yy_scan_bytes(text, (int)n, scanner);
		lex_start_expr(scanner);
		rc = yyparse(scanner, &ctx);
		yy_delete_buffer(buf, scanner);
		yylex_destroy(scanner);
	}
	lex_free_all(&ctx);
	if (ctx.oom || (rc == 2 && !ctx.too_deep))
		*oom = 1;
	return rc == 0 && !ctx.card_bad ? ctx.expr_result : NULL;
}
