/* cli.h: the program's own header (not the library's API): the parsed
 * command line shared by main.c, cli_opts.c and cli_check.c. */
#ifndef HEADROOM_CLI_H
#define HEADROOM_CLI_H

#include <stddef.h>
#include <stdio.h>

#include "elab.h"

#define EXIT_USAGE 2

struct cli {
	const char *cmd;
	const char *fmt_name;        /* --format, checked by the command */
	struct elab_opts eo;
	double source_tol;           /* fraction; NaN: not given */
	unsigned max_errors;
	const char **files;
	int nfiles;
	const char *profile;         /* name or path */
	const char *parts;           /* parts table */
	const char *netlist_ext;     /* --netlist-ext, or NULL */
	const char *docs_url;        /* --docs-url, or NULL */
	const char *waivers, *baseline, *write_baseline, *today, *out_path;
	size_t jobs;                 /* -j; 0: one per processor */
	int quiet;
	int verify;                  /* --verify: simulate each file too */
	int fail_on;                 /* DIAG_* level, or -1 for never */
	const char *argv0;
};

/* Fills c from argv (c->files allocated with malloc: free it). Prints the
 * problem and returns 0 on a usage error. */
int cli_parse(struct cli *c, int argc, char **argv);

/* "; did you mean 'X'?" when one of names[0..n) is close to word by the
 * rule of suggest.h, else ""; written into buf (SUGGEST_HINT_SIZE). */
const char *cli_hint(const char *word, const char *const *names, size_t n, char *buf,
		     size_t size);

/* The --format given, as an index into names[0..n) (0, the first, when
 * none is given). Prints "CMD writes ..., not 'x'" with a "did you mean"
 * and returns 0 for a name not in the list. */
int cli_format(const struct cli *c, const char *const *names, size_t n, size_t *index);

/* Finds and loads the profile --profile names (default industrial);
 * prints why and returns 0 when there is none or it has errors (left in
 * d). */
struct profile;
struct diag_sink;
int cli_load_profile(const struct cli *c, struct diag_sink *d, struct profile *p);

/* The --help text, written from the option table. */
void cli_usage(FILE *out);

/* headroom check: returns the exit status. */
int cli_check(const struct cli *c);

#endif
