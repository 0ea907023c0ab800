/* main.c: the command line. Parses options, runs the library per file,
 * and is the only place that picks output streams and exit codes:
 * 0 clean, 1 findings at or above --fail-on, 2 usage or netlist errors. */
#include <errno.h>
#include <math.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>

#include "arena.h"
#include "diag.h"
#include "elab.h"
#include "audit.h"
#include "report_parts.h"
#include "report_topo.h"

#define HEADROOM_VERSION "0.1.0"
#define EXIT_USAGE 2

struct cli {
	const char *cmd;
	enum report_parts_format fmt;
	const char *fmt_name;
	struct elab_opts eo;
	double source_tol;
	unsigned max_errors;
	const char **files;
	int nfiles;
};

static void usage(FILE *out)
{
	fputs("usage: headroom COMMAND [options] FILE...\n"
	      "\n"
	      "Reads SPICE netlists and checks that every capacitor and diode in\n"
	      "diode-capacitor networks is rated for its worst-case stress.\n"
	      "\n"
	      "commands:\n"
	      "  parts FILE...        list the flattened parts of each netlist\n"
	      "  topo FILE...         find clamps, detectors, doublers, ladders, pumps\n"
	      "                       and rectifiers; print parts, roles, node ranges\n"
	      "\n"
	      "options:\n"
	      "  --format FMT         parts: text (default), csv, json, count\n"
	      "                       topo: text (default), json, count\n"
	      "  --max-parts N        stop expanding a netlist past N parts\n"
	      "                       (default 10000000)\n"
	      "  --source-tol PCT     tolerance of every source's amplitude and offset\n"
	      "                       unless *@source gives one (e.g. 10 or 10%%)\n"
	      "  --max-errors N       errors reported per file before giving up\n"
	      "                       (default 50)\n"
	      "  --help               this text\n"
	      "  --version            the version\n"
	      "\n"
	      "exit status: 0 success, 2 usage error or a netlist with errors\n",
	      out);
}

static int parse_count(const char *s, size_t *out)
{
	char *end;
	errno = 0;
	unsigned long long v = strtoull(s, &end, 10);
	if (errno || *end || end == s || v == 0)
		return 0;
	*out = (size_t)v;
	return 1;
}

static int set_format(struct cli *c, const char *f)
{
	c->fmt_name = f;
	static const struct {
		const char *name;
		enum report_parts_format fmt;
	} tab[] = {{"text", RP_TEXT}, {"csv", RP_CSV}, {"json", RP_JSON},
		   {"count", RP_COUNT}};
	for (size_t i = 0; i < sizeof tab / sizeof tab[0]; i++)
		if (strcmp(f, tab[i].name) == 0) {
			c->fmt = tab[i].fmt;
			return 1;
		}
	fprintf(stderr, "headroom: unknown format '%s' (text, csv, json, count)\n", f);
	return 0;
}

/* --source-tol 10 or 10%: a percentage from 0 to 100. */
static int set_tol(struct cli *c, const char *val)
{
	char *end;
	errno = 0;
	double v = strtod(val, &end);
	if (*end == '%')
		end++;
	if (errno || *end || end == val || !(v >= 0 && v <= 100)) {
		fprintf(stderr, "headroom: --source-tol takes a percentage from 0 to 100, not '%s'\n", val);
		return 0;
	}
	c->source_tol = v / 100;
	return 1;
}

/* Options with a value; returns 0 on a usage error. */
static int option(struct cli *c, const char *opt, const char *val)
{
	size_t n;
	if (!val) {
		fprintf(stderr, "headroom: %s needs a value\n", opt);
		return 0;
	}
	if (strcmp(opt, "--format") == 0)
		return set_format(c, val);
	if (strcmp(opt, "--source-tol") == 0)
		return set_tol(c, val);
	if (!parse_count(val, &n)) {
		fprintf(stderr, "headroom: %s takes a positive whole number, not '%s'\n",
			opt, val);
		return 0;
	}
	if (strcmp(opt, "--max-parts") == 0)
		c->eo.max_parts = n;
	else
		c->max_errors = (unsigned)n;
	return 1;
}

static int parse_args(struct cli *c, int argc, char **argv)
{
	c->files = calloc((size_t)argc, sizeof *c->files);
	if (!c->files)
		return 0;
	for (int i = 1; i < argc; i++) {
		const char *a = argv[i];
		if (strcmp(a, "--format") == 0 || strcmp(a, "--max-parts") == 0 ||
		    strcmp(a, "--max-errors") == 0 || strcmp(a, "--source-tol") == 0) {
			if (!option(c, a, i + 1 < argc ? argv[i + 1] : NULL))
				return 0;
			i++;
		} else if (a[0] == '-' && a[1] != '\0') {
			fprintf(stderr, "headroom: unknown option '%s' (see --help)\n", a);
			return 0;
		} else if (!c->cmd) {
			c->cmd = a;
		} else {
			c->files[c->nfiles++] = a;
		}
	}
	return 1;
}

/* headroom parts: elaborate each file, print its parts, report errors. */
static int run_parts(const struct cli *c)
{
	struct hr_alloc hook = hr_alloc_default();
	int status = 0;
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
			report_parts(stdout, c->fmt, c->files[i], &r, d, 0,
				     i == 0, i + 1 == c->nfiles);
		diag_render(d, UINT32_MAX, stderr);
		if (st != ELAB_OK)
			status = EXIT_USAGE;
		nl_destroy(r.circuit);
		diag_destroy(d);
		arena_destroy(ar);
	}
	return status;
}

/* headroom topo: the structures of each file. */
static int run_topo(const struct cli *c)
{
	struct hr_alloc hook = hr_alloc_default();
	enum report_topo_format fmt = RT_TEXT;
	int status = 0;
	if (c->fmt_name && strcmp(c->fmt_name, "json") == 0)
		fmt = RT_JSON;
	else if (c->fmt_name && strcmp(c->fmt_name, "count") == 0)
		fmt = RT_COUNT;
	else if (c->fmt_name && strcmp(c->fmt_name, "text") != 0) {
		fprintf(stderr, "headroom: topo writes text, json or count, not '%s'\n", c->fmt_name);
		return EXIT_USAGE;
	}
	for (int i = 0; i < c->nfiles; i++) {
		struct arena *ar = arena_create(&hook);
		struct diag_sink *d = ar ? diag_create(ar, c->max_errors) : NULL;
		struct audit a;
		struct audit_opts o;
		memset(&o, 0, sizeof o);
		o.elab = c->eo;
		o.source_tol = c->source_tol;
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

int main(int argc, char **argv)
{
	struct cli c;
	memset(&c, 0, sizeof c);
	c.max_errors = 50;
	c.source_tol = NAN;
	for (int i = 1; i < argc; i++) {
		if (strcmp(argv[i], "--help") == 0 || strcmp(argv[i], "-h") == 0) {
			usage(stdout);
			return 0;
		}
		if (strcmp(argv[i], "--version") == 0) {
			printf("headroom %s\n", HEADROOM_VERSION);
			return 0;
		}
	}
	int ok = parse_args(&c, argc, argv);
	int rc = EXIT_USAGE;
	if (!ok) {
		/* message already printed */
	} else if (!c.cmd) {
		usage(stderr);
	} else if (strcmp(c.cmd, "parts") == 0 && c.nfiles > 0) {
		rc = run_parts(&c);
	} else if (strcmp(c.cmd, "topo") == 0 && c.nfiles > 0) {
		rc = run_topo(&c);
	} else if (strcmp(c.cmd, "parts") == 0 || strcmp(c.cmd, "topo") == 0) {
		fprintf(stderr, "headroom: %s needs at least one netlist file\n", c.cmd);
	} else {
		fprintf(stderr, "headroom: unknown command '%s' (see --help)\n", c.cmd);
	}
	free(c.files);
	return rc;
}
