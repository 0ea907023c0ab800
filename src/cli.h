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
	double ambient;              /* degC; NaN: not given */
	unsigned max_errors;
	const char **files;
	int nfiles;
	const char **reports;        /* --report FORMAT=FILE, in order (malloc'd) */
	size_t nreports;
	const char *config;          /* --config FILE, or NULL: looked for */
	int no_config;               /* --no-config */
	int fail_on_given;           /* --fail-on was given */
	int dialect_given;           /* --dialect was given (eo.dialect) */
	const char *profile;         /* name or path */
	const char *parts;           /* parts table */
	const char *bom;             /* --bom: a bill of materials (CSV) */
	const char *netlist_ext;     /* --netlist-ext, or NULL */
	const char *docs_url;        /* --docs-url, or NULL */
	const char *waivers, *baseline, *write_baseline, *today, *out_path;
	size_t jobs;                 /* -j; 0: one per processor */
	int quiet;
	int verify;                  /* --verify: simulate each file too */
	int fail_on;                 /* DIAG_* level, or -1 for never */
	const char *argv0;
};

/* Fills c from argv (c->files and c->reports allocated with malloc: free
 * them). Prints the
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

/* The formats of check's reports, in the order of enum
 * report_check_format (report_check.h). */
#define CLI_CHECK_NFORMATS 6
extern const char *const cli_check_formats[CLI_CHECK_NFORMATS];

/* Reads a report wish FORMAT=FILE (--report, the configuration's
 * reports): *fmt the index of FORMAT in cli_check_formats, *file points
 * into spec. Returns NULL, or what is wrong (written into why: a name
 * that is no format, with a "did you mean"; no '='; an empty FILE). */
const char *cli_report_spec(const char *spec, size_t *fmt, const char **file, char *why,
			    size_t n);

/* Sets the value of the option named name (as on the command line:
 * "--parts", "-j") from val, with the command line's checks. Returns NULL,
 * or what is wrong with val (written into why, naming the option as
 * shown: "fail-on takes error, ..."), for callers that locate it. */
const char *cli_set_option(struct cli *c, const char *name, const char *shown,
			   const char *val, char *why, size_t n);

/* headroom check: returns the exit status. */
int cli_check(const struct cli *c);

#endif
