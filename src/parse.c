/* parse.c: the one driver that owns a scanner and parser run. It sets up
 * the scanner state, runs the parser over a stream and tears both down;
 * flex's own allocations go through the library's allocation hook. */
#include "parse.h"

#include "lexctx.h"
#include "spice.tab.h"
#include "spice.lex.h"

#define PARSE_DEFAULT_MAX_LINE (1u << 20)

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
	ctx.scratch = scratch;
	ctx.mark = arena_mark(scratch);
	ctx.diags = diags;
	ctx.hook = arena_hook(scratch);
	ctx.fn = fn;
	ctx.ud = ud;

	yyscan_t scanner;
	if (yylex_init_extra(&ctx, &scanner) != 0)
		return PARSE_OOM;
	yyset_in(in, scanner);
	lex_start(scanner, opts->has_title);
	int rc = yyparse(scanner, &ctx);
	yylex_destroy(scanner);
	arena_reset(scratch, ctx.mark);
	if (ctx.oom || rc == 2)
		return PARSE_OOM;
	return ctx.stop ? PARSE_STOPPED : PARSE_OK;
}
