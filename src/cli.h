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

/* The --help text, written from the option table. */
void cli_usage(FILE *out);

/* headroom check: returns the exit status. */
int cli_check(const struct cli *c);

#endif
