/* main.c: the program's entry: dispatches to a command and is, with the
 * other cli_*.c files, the only place that picks output streams and exit
 * codes: 0 clean, 1 findings at or above --fail-on, 2 usage or netlist
 * errors (3: the solver failed, sim). Options live in cli_opts.c, check
 * in cli_check.c, the batch runner in cli_batch.c. */
#include <math.h>
#include <stdint.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>

#include "arena.h"
#include "audit.h"
#include "cli.h"
#include "cli_batch.h"
#include "cli_sim.h"
#include "diag.h"
#include "elab.h"
#include "profile.h"
#include "report_parts.h"
#include "report_rules.h"
#include "report_topo.h"
#include "suggest.h"
#include "version.h"

/* parts: text, csv, json, count. */
static int parts_format(const struct cli *c, enum report_parts_format *fmt)
{
	static const char *const names[] = {"text", "csv", "json", "count"};
	static const enum report_parts_format fmts[] = {RP_TEXT, RP_CSV, RP_JSON, RP_COUNT};
	_Static_assert(sizeof names / sizeof names[0] == sizeof fmts / sizeof fmts[0], "one per format");
	size_t i;
	if (!cli_format(c, names, sizeof names / sizeof names[0], &i))
		return 0;
	*fmt = fmts[i];
	return 1;
}

/* headroom parts: elaborate each file, print its parts, report errors. */
static int run_parts(const struct cli *c)
{
	struct hr_alloc hook = hr_alloc_default();
	enum report_parts_format fmt;
	int status = 0;
	if (!parts_format(c, &fmt))
		return EXIT_USAGE;
	for (int i = 0; i < c->nfiles; i++) {
		struct arena *ar = arena_create(&hook);
		struct diag_sink *d = ar ? diag_create(ar, c->max_errors) : NULL;
		struct elab_result r;
		if (!d) {
			fprintf(stderr, "headroom: out of memory\n");
			arena_destroy(ar);
			return EXIT_USAGE;
		}
		enum elab_status st = elab_file(c->files[i], &c->eo, &hook, d, &r);
		if (st == ELAB_OOM)
			fprintf(stderr, "%s: error: out of memory\n", c->files[i]);
		else
			report_parts(stdout, fmt, c->files[i], &r, d, 0, i == 0, i + 1 == c->nfiles);
		diag_render(d, UINT32_MAX, stderr);
		if (st != ELAB_OK)
			status = EXIT_USAGE;
		nl_destroy(r.circuit);
		diag_destroy(d);
		arena_destroy(ar);
	}
	return status;
}

static int topo_format(const struct cli *c, enum report_topo_format *fmt)
{
	static const char *const names[] = {"text", "json", "count"};
	static const enum report_topo_format fmts[] = {RT_TEXT, RT_JSON, RT_COUNT};
	_Static_assert(sizeof names / sizeof names[0] == sizeof fmts / sizeof fmts[0], "one per format");
	size_t i;
	if (!cli_format(c, names, sizeof names / sizeof names[0], &i))
		return 0;
	*fmt = fmts[i];
	return 1;
}

/* One file of headroom topo; returns its exit-status part. */
static int topo_one(const struct cli *c, enum report_topo_format fmt, const char *path,
		    int first, int last)
{
	struct hr_alloc hook = hr_alloc_default();
	struct arena *ar = arena_create(&hook);
	struct diag_sink *d = ar ? diag_create(ar, c->max_errors) : NULL;
	struct audit a;
	struct audit_opts o = {c->eo, c->source_tol};
	enum audit_status st = d ? audit_file(path, &o, &hook, d, &a) : AUDIT_OOM;
	if (st == AUDIT_OOM)
		fprintf(stderr, "%s: error: out of memory\n", path);
	else
		report_topo(stdout, fmt, path, &a, d, first, last);
	if (d)
		diag_render(d, UINT32_MAX, stderr);
	if (d)
		audit_free(&a);
	diag_destroy(d);
	arena_destroy(ar);
	return st == AUDIT_OK ? 0 : EXIT_USAGE;
}

/* headroom topo: the structures of each file; a folder stands for the
 * netlists under it, in name order (as for check). */
static int run_topo(const struct cli *c)
{
	enum report_topo_format fmt;
	struct cli_files files = {0};
	int status = 0;
	if (!topo_format(c, &fmt))
		return EXIT_USAGE;
	if (!cli_files_expand(&files, c->files, (size_t)c->nfiles)) {
		fprintf(stderr, "headroom: out of memory\n");
		cli_files_free(&files);
		return EXIT_USAGE;
	}
	if (files.unreadable)
		status = EXIT_USAGE;
	for (size_t i = 0; i < files.n; i++)
		if (topo_one(c, fmt, files.v[i], i == 0, i + 1 == files.n))
			status = EXIT_USAGE;
	if (files.n == 0)
		report_topo(stdout, fmt, NULL, NULL, NULL, 1, 1);
	cli_files_free(&files);
	return status;
}

/* headroom rules: every rule, then the profile's limits with sources. */
static int run_rules(const struct cli *c)
{
	static const char *const names[] = {"text", "json"};
	static const enum report_rules_format fmts[] = {RR_TEXT, RR_JSON};
	_Static_assert(sizeof names / sizeof names[0] == sizeof fmts / sizeof fmts[0], "one per format");
	struct hr_alloc hook = hr_alloc_default();
	struct arena *ar = arena_create(&hook);
	struct diag_sink *d = ar ? diag_create(ar, 50) : NULL;
	struct profile *p = malloc(sizeof *p);
	size_t f;
	int rc = EXIT_USAGE;
	if (!d || !p)
		fprintf(stderr, "headroom: out of memory\n");
	else if (cli_format(c, names, sizeof names / sizeof names[0], &f) && cli_load_profile(c, d, p)) {
		report_rules(stdout, fmts[f], p);
		rc = 0;
	}
	if (d)
		diag_render(d, UINT32_MAX, stderr);
	free(p);
	diag_destroy(d);
	arena_destroy(ar);
	return rc;
}

/* --help and --version anywhere win over everything else; -1 otherwise. */
static int info_option(int argc, char **argv)
{
	for (int i = 1; i < argc; i++) {
		if (strcmp(argv[i], "--help") == 0 || strcmp(argv[i], "-h") == 0) {
			cli_usage(stdout);
			return 0;
		}
		if (strcmp(argv[i], "--version") == 0) {
			printf("headroom %s\n", HEADROOM_BUILD_VERSION);
			return 0;
		}
	}
	return -1;
}

static int dispatch(const struct cli *c)
{
	static const char *const with_files[] = {"parts", "topo", "check"};
	if (!c->cmd) {
		cli_usage(stderr);
		return EXIT_USAGE;
	}
	if (strcmp(c->cmd, "rules") == 0)
		return run_rules(c);
	for (size_t i = 0; i < sizeof with_files / sizeof with_files[0]; i++)
		if (strcmp(c->cmd, with_files[i]) == 0 && c->nfiles == 0) {
			fprintf(stderr, "headroom: %s needs at least one netlist file\n", c->cmd);
			return EXIT_USAGE;
		}
	if (strcmp(c->cmd, "parts") == 0)
		return run_parts(c);
	if (strcmp(c->cmd, "topo") == 0)
		return run_topo(c);
	if (strcmp(c->cmd, "check") == 0)
		return cli_check(c);
	static const char *const cmds[] = {"parts", "topo", "check", "rules", "sim"};
	char hint[SUGGEST_HINT_SIZE];
	if (*cli_hint(c->cmd, cmds, sizeof cmds / sizeof cmds[0], hint, sizeof hint))
		fprintf(stderr, "headroom: unknown command '%s'%s\n", c->cmd, hint);
	else
		fprintf(stderr, "headroom: unknown command '%s' (see --help)\n", c->cmd);
	return EXIT_USAGE;
}

int main(int argc, char **argv)
{
	struct cli c;
	int rc = info_option(argc, argv);
	if (rc >= 0)
		return rc;
	if (argc > 1 && strcmp(argv[1], "sim") == 0)
		return cli_sim(argc - 1, argv + 1);
	memset(&c, 0, sizeof c);
	c.max_errors = 50;
	c.source_tol = NAN;
	c.ambient = NAN;
	c.fail_on = DIAG_ERROR;
	c.argv0 = argv[0];
	rc = cli_parse(&c, argc, argv) ? dispatch(&c) : EXIT_USAGE;
	free(c.files);
	free(c.reports);
	return rc;
}
