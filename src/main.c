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
#include "cli_sim.h"
#include "diag.h"
#include "elab.h"
#include "profile.h"
#include "report_parts.h"
#include "report_topo.h"
#include "rules.h"
#include "version.h"

/* parts: text, csv, json, count. */
static int parts_format(const struct cli *c, enum report_parts_format *fmt)
{
	static const struct {
		const char *name;
		enum report_parts_format fmt;
	} tab[] = {{"text", RP_TEXT}, {"csv", RP_CSV}, {"json", RP_JSON},
		   {"count", RP_COUNT}};
	*fmt = RP_TEXT;
	if (!c->fmt_name)
		return 1;
	for (size_t i = 0; i < sizeof tab / sizeof tab[0]; i++)
		if (strcmp(c->fmt_name, tab[i].name) == 0) {
			*fmt = tab[i].fmt;
			return 1;
		}
	fprintf(stderr, "headroom: unknown format '%s' (text, csv, json, count)\n", c->fmt_name);
	return 0;
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
	*fmt = RT_TEXT;
	if (c->fmt_name && strcmp(c->fmt_name, "json") == 0)
		*fmt = RT_JSON;
	else if (c->fmt_name && strcmp(c->fmt_name, "count") == 0)
		*fmt = RT_COUNT;
	else if (c->fmt_name && strcmp(c->fmt_name, "text") != 0) {
		fprintf(stderr, "headroom: topo writes text, json or count, not '%s'\n", c->fmt_name);
		return 0;
	}
	return 1;
}

/* headroom topo: the structures of each file. */
static int run_topo(const struct cli *c)
{
	struct hr_alloc hook = hr_alloc_default();
	enum report_topo_format fmt;
	int status = 0;
	if (!topo_format(c, &fmt))
		return EXIT_USAGE;
	for (int i = 0; i < c->nfiles; i++) {
		struct arena *ar = arena_create(&hook);
		struct diag_sink *d = ar ? diag_create(ar, c->max_errors) : NULL;
		struct audit a;
		struct audit_opts o = {c->eo, c->source_tol};
		enum audit_status st = d ? audit_file(c->files[i], &o, &hook, d, &a) : AUDIT_OOM;
		if (st == AUDIT_OOM)
			fprintf(stderr, "%s: error: out of memory\n", c->files[i]);
		else
			report_topo(stdout, fmt, c->files[i], &a, d, i == 0, i + 1 == c->nfiles);
		if (d)
			diag_render(d, UINT32_MAX, stderr);
		if (st != AUDIT_OK)
			status = EXIT_USAGE;
		if (d)
			audit_free(&a);
		diag_destroy(d);
		arena_destroy(ar);
	}
	return status;
}

/* headroom rules: every rule, then the profile's limits with sources. */
static int run_rules(const struct cli *c)
{
	struct hr_alloc hook = hr_alloc_default();
	struct arena *ar = arena_create(&hook);
	struct diag_sink *d = ar ? diag_create(ar, 50) : NULL;
	struct profile *p = malloc(sizeof *p);
	char path[1024];
	const char *name = c->profile ? c->profile : "industrial";
	int rc = EXIT_USAGE;
	if (!profile_find(name, c->argv0, path, sizeof path))
		fprintf(stderr, "headroom: no profile '%s' (basic, industrial, flight, or a file)\n", name);
	else if (d && p && profile_load(path, d, p)) {
		printf("rules:\n");
		for (size_t i = 0; i < rules_count; i++)
			printf("  %-18s %-8s %s\n", rules_table[i].id,
			       diag_severity_name(rules_table[i].severity), rules_table[i].summary);
		printf("\nprofile %s (%s): %s\n", p->name, p->path, p->description);
		struct profile_status st;
		if (profile_draft(p, &st))
			printf("  draft: of %zu values, %zu marked from memory, %zu citing no source (the first: %s, line %u)\n",
			       st.values, st.from_memory, st.unsourced, st.first, st.first_line);
		else
			printf("  sourced: each of its %zu values cites a source or says common practice\n", st.values);
		for (size_t i = 0; i < p->n; i++)
			printf("  %-32s %-10g %s\n", p->e[i].key, p->e[i].value, p->e[i].note);
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
			printf("headroom %s\n", HEADROOM_VERSION);
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
	c.fail_on = DIAG_ERROR;
	c.argv0 = argv[0];
	rc = cli_parse(&c, argc, argv) ? dispatch(&c) : EXIT_USAGE;
	free(c.files);
	return rc;
}
