/* cli_opts.c: the command line's one option table: each option's name,
 * what it sets and its help line live together, so parsing and --help
 * cannot drift apart. Values are checked here; meaning is left to the
 * commands. */
#include "cli.h"

#include <assert.h>
#include <errno.h>
#include <math.h>
#include <stdint.h>
#include <stdlib.h>
#include <string.h>

#include "cli_batch.h"
#include "diag.h"
#include "dialect.h"
#include "suggest.h"

enum opt_kind { OPT_FLAG, OPT_STR, OPT_COUNT, OPT_TOL, OPT_TEMP, OPT_FAIL, OPT_REPORT, OPT_DIALECT };

/* Options that take a positive whole number. */
enum count_id { CO_PARTS, CO_NODES, CO_LINE, CO_TOKEN, CO_INCLUDE, CO_DEPTH,
		CO_EXPR, CO_IF, CO_PWL, CO_ERRORS, CO_JOBS, CO_NONE };

struct opt_def {
	const char *name, *alias;
	enum opt_kind kind;
	size_t off;              /* OPT_STR, OPT_FLAG: field of struct cli */
	enum count_id count;     /* OPT_COUNT */
	size_t max;              /* OPT_COUNT: largest value */
	const char *help;        /* "ARG  text", continuation lines with \n */
};

#define STR(field) OPT_STR, offsetof(struct cli, field), CO_NONE, 0
#define FLAG(field) OPT_FLAG, offsetof(struct cli, field), CO_NONE, 0
#define COUNT(id, max) OPT_COUNT, 0, id, max

static const struct opt_def opts[] = {
	{"--format", NULL, STR(fmt_name),
	 "--format FMT         parts: text (default), csv, json, count\n"
	 "topo: text (default), json, count\n"
	 "check: text (default), json, csv, junit, sarif,\nhtml\n"
	 "rules: text (default), json"},
	{"--profile", NULL, STR(profile),
	 "--profile NAME|FILE  derating profile: basic, industrial (default),\n"
	 "flight, or a profile file"},
	{"--parts", NULL, STR(parts), "--parts FILE         parts table (CSV) with ratings"},
	{"--bom", NULL, STR(bom),
	 "--bom FILE           check: ratings from a bill of materials (CSV) as\n"
	 "a schematic tool exports it; --parts and *@part\nlines override it"},
	{"--fail-on", NULL, OPT_FAIL, 0, CO_NONE, 0,
	 "--fail-on LEVEL      exit 1 on findings at or above error (default),\n"
	 "warning, note; never: always 0"},
	{"-o", NULL, STR(out_path),
	 "-o FILE              write the report to FILE (replaced only when the\n"
	 "run succeeds)"},
	{"--report", NULL, OPT_REPORT, 0, CO_NONE, 0,
	 "--report FMT=FILE    check: also write the report as FMT to FILE\n"
	 "(text, json, csv, junit, sarif, html); give it\n"
	 "again for more: one analysis, every report"},
	{"--config", NULL, STR(config),
	 "--config FILE        check: settings from FILE instead of the\n"
	 "headroom.ini found from the current folder up"},
	{"--no-config", NULL, FLAG(no_config),
	 "--no-config          check: read no headroom.ini"},
	{"-j", NULL, COUNT(CO_JOBS, 1024),
	 "-j N                 check N files at once (default: one per processor)"},
	{"--netlist-ext", NULL, STR(netlist_ext),
	 "--netlist-ext LIST   check: the file-name endings of the netlists under\n"
	 "a folder (default " CLI_NETLIST_EXT ");\n"
	 "+LIST adds to them (+.txt,.nl); the other\n"
	 "files there are listed as skipped, with the reason"},
	{"--dialect", NULL, OPT_DIALECT, 0, CO_NONE, 0,
	 "--dialect NAME       whose reading to follow where simulators read the\n"
	 "same text differently: auto (default: from the\n"
	 "file's ending, then its contents), ngspice,\n"
	 "pspice, hspice, xyce, ltspice"},
	{"--waivers", NULL, STR(waivers), "--waivers FILE       *@waive lines that apply to every file"},
	{"--baseline", NULL, STR(baseline),
	 "--baseline FILE      report only findings not in this earlier JSON report"},
	{"--write-baseline", NULL, STR(write_baseline),
	 "--write-baseline FILE  also write the JSON report to FILE"},
	{"--today", NULL, STR(today), "--today YYYY-MM-DD   the date waiver expiry is judged against"},
	{"--docs-url", NULL, STR(docs_url),
	 "--docs-url URL       check: where the rule pages are published; SARIF\n"
	 "links each rule to URL/rules/RULE.md (default: the\n"
	 "installed docs, a file:// URL)"},
	{"--verify", NULL, FLAG(verify),
	 "--verify             check: also simulate each netlist to its periodic\n"
	 "steady state at the worst corner and set each\n"
	 "simulated stress beside its analytic bound"},
	{"--quiet", "-q", FLAG(quiet),
	 "-q, --quiet          findings only: no structures, tables, summary or\n"
	 "progress bar"},
	{"--max-parts", NULL, COUNT(CO_PARTS, SIZE_MAX / 2),
	 "--max-parts N        stop expanding a netlist past N parts\n(default 10000000)"},
	{"--source-tol", NULL, OPT_TOL, 0, CO_NONE, 0,
	 "--source-tol PCT     tolerance of every source's amplitude and offset\n"
	 "unless *@source gives one (e.g. 10 or 10%)"},
	{"--ambient", NULL, OPT_TEMP, 0, CO_NONE, 0,
	 "--ambient DEGC       air temperature around the parts (e.g. 55 or 55C):\n"
	 "capacitor life and temperature derating (default: the\nprofile's, else 40)"},
	{"--max-line", NULL, COUNT(CO_LINE, UINT32_MAX - 1),
	 "--max-line N         longest physical line read, in bytes\n(default 1048576)"},
	{"--max-token", NULL, COUNT(CO_TOKEN, UINT32_MAX - 1),
	 "--max-token N        longest word or value on a card, in bytes\n(default 65536)"},
	{"--max-include-depth", NULL, COUNT(CO_INCLUDE, 100000),
	 "--max-include-depth N  .include/.lib nesting (default 32)"},
	{"--max-depth", NULL, COUNT(CO_DEPTH, 100000),
	 "--max-depth N        subcircuit nesting (default 256)"},
	{"--max-expr-depth", NULL, COUNT(CO_EXPR, 100000),
	 "--max-expr-depth N   expression and .func call nesting (default 1000)"},
	{"--max-if-depth", NULL, COUNT(CO_IF, 1000000),
	 "--max-if-depth N     .if nesting (default 64)"},
	{"--max-nodes", NULL, COUNT(CO_NODES, UINT32_MAX - 2),
	 "--max-nodes N        stop expanding past N nodes (default 10000000)"},
	{"--max-pwl", NULL, COUNT(CO_PWL, UINT32_MAX / 2),
	 "--max-pwl N          time-value pairs in one PWL source (default 100000)"},
	{"--max-errors", NULL, COUNT(CO_ERRORS, UINT32_MAX),
	 "--max-errors N       errors reported per file before giving up\n(default 50)"},
};

void cli_usage(FILE *out)
{
	fputs("usage: headroom COMMAND [options] FILE...\n"
	      "\n"
	      "Reads SPICE netlists and checks that every capacitor and diode in\n"
	      "diode-capacitor networks is rated for its worst-case stress.\n"
	      "\n"
	      "commands:\n"
	      "  parts FILE...        list the flattened parts of each netlist\n"
	      "  topo FILE|DIR...     find clamps, detectors, doublers, ladders, pumps\n"
	      "                       and rectifiers; print parts, roles, node ranges\n"
	      "  check FILE|DIR...    worst-case stresses against ratings and the\n"
	      "                       derating profile; findings and a stress table\n"
	      "  rules                the rules and the profile's limits (text or JSON)\n"
	      "  sim FILE --node N... waveforms of nodes over one steady-state period\n"
	      "                       (or 0 to --until T) as CSV; see headroom(1)\n"
	      "\n"
	      "options:\n", out);
	for (size_t i = 0; i < sizeof opts / sizeof opts[0]; i++) {
		fputs("  ", out);
		for (const char *h = opts[i].help; *h; h++) {
			fputc(*h, out);
			if (*h == '\n')
				fputs("                       ", out);
		}
		fputc('\n', out);
	}
	fputs("  --help               this text\n"
	      "  --version            the version\n"
	      "\n"
	      "colour: on a terminal only, and never when NO_COLOR is set.\n"
	      "exit status: 0 success; 1 findings at or above --fail-on (check);\n"
	      "2 usage error or a netlist with errors; 3 the solver failed (sim)\n"
	      "\n"
	      "an unknown name (option, command, format, model, subcircuit, rule...)\n"
	      "is reported with the closest known one when it is within 2 edits\n"
	      "and a third of its length; see headroom(1), DIAGNOSTICS\n",
	      out);
}

const char *cli_hint(const char *word, const char *const *names, size_t n, char *buf,
		     size_t size)
{
	struct suggest s;
	suggest_init(&s, word, strlen(word));
	for (size_t i = 0; i < n; i++)
		suggest_offer(&s, names[i]);
	return suggest_hint(&s, buf, size);
}

int cli_format(const struct cli *c, const char *const *names, size_t n, size_t *index)
{
	char hint[SUGGEST_HINT_SIZE];
	*index = 0;
	for (size_t i = 0; c->fmt_name && i < n; i++)
		if (strcmp(c->fmt_name, names[i]) == 0)
			*index = i;
	if (!c->fmt_name || strcmp(c->fmt_name, names[*index]) == 0)
		return 1;
	fprintf(stderr, "headroom: %s writes ", c->cmd);
	for (size_t i = 0; i < n; i++)
		fprintf(stderr, "%s%s", names[i], i + 2 < n ? ", " : i + 2 == n ? " or " : "");
	fprintf(stderr, ", not '%s'%s\n", c->fmt_name, cli_hint(c->fmt_name, names, n, hint, sizeof hint));
	return 0;
}

/* The formats of check, in the order of enum report_check_format (the
 * order is asserted in cli_check.c). */
const char *const cli_check_formats[CLI_CHECK_NFORMATS] = {"text",  "json",  "csv",
							    "junit", "sarif", "html"};
#define FORMAT_LIST "text, json, csv, junit, sarif or html" /* as cli_check_formats */

const char *cli_report_spec(const char *spec, size_t *fmt, const char **file, char *why,
			    size_t n)
{
	const char *eq = strchr(spec, '=');
	char name[SUGGEST_MAX_LEN + 1], hint[SUGGEST_HINT_SIZE];
	if (!eq) {
		snprintf(why, n, "'%s' is not FORMAT=FILE (FORMAT: " FORMAT_LIST ")", spec);
		return why;
	}
	snprintf(name, sizeof name, "%.*s", (int)(eq - spec), spec);
	for (size_t i = 0; i < CLI_CHECK_NFORMATS; i++) {
		if (strcmp(name, cli_check_formats[i]) != 0)
			continue;
		*fmt = i;
		*file = eq + 1;
		if (!eq[1])
			snprintf(why, n, "'%s' names no file", spec);
		return eq[1] ? NULL : why;
	}
	for (size_t i = 0; i < CLI_CHECK_NFORMATS; i++)
		if (strcmp(eq + 1, cli_check_formats[i]) == 0) { /* FILE=FORMAT */
			snprintf(why, n, "no report format '%s'; did you mean '%s=%s'?", name,
				 eq + 1, name);
			return why;
		}
	snprintf(why, n, "no report format '%s' (" FORMAT_LIST ")%s", name,
		 cli_hint(name, cli_check_formats, CLI_CHECK_NFORMATS, hint, sizeof hint));
	return why;
}

/* An unknown option: says so, with the closest option's name when one is
 * close (the name part of --opt=value). */
static void unknown_option(const char *a)
{
	char name[SUGGEST_MAX_LEN + 1], hint[SUGGEST_HINT_SIZE];
	size_t n = a[0] == '-' && a[1] == '-' ? strcspn(a, "=") : strlen(a);
	struct suggest s;
	snprintf(name, sizeof name, "%.*s", (int)n, a);
	suggest_init(&s, name, strlen(name));
	for (size_t i = 0; i < sizeof opts / sizeof opts[0]; i++) {
		suggest_offer(&s, opts[i].name);
		if (opts[i].alias)
			suggest_offer(&s, opts[i].alias);
	}
	suggest_offer(&s, "--help");
	suggest_offer(&s, "--version");
	if (suggest_best(&s))
		fprintf(stderr, "headroom: unknown option '%s'%s\n", name, suggest_hint(&s, hint, sizeof hint));
	else
		fprintf(stderr, "headroom: unknown option '%s' (see --help)\n", name);
}

/* The option named by name[0..n). */
static const struct opt_def *opt_find_n(const char *name, size_t n)
{
	for (size_t i = 0; i < sizeof opts / sizeof opts[0]; i++)
		if ((strlen(opts[i].name) == n && strncmp(name, opts[i].name, n) == 0) ||
		    (opts[i].alias && strlen(opts[i].alias) == n && strncmp(name, opts[i].alias, n) == 0))
			return &opts[i];
	return NULL;
}

static const struct opt_def *opt_find(const char *name)
{
	return opt_find_n(name, strlen(name));
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

/* --source-tol 10 or 10%: a percentage from 0 to 100. */
static int set_tol(struct cli *c, const char *shown, const char *val, char *why, size_t n)
{
	char *end;
	errno = 0;
	double v = strtod(val, &end);
	if (*end == '%')
		end++;
	if (errno || *end || end == val || !(v >= 0 && v <= 100)) {
		snprintf(why, n, "%s takes a percentage from 0 to 100, not '%s'", shown, val);
		return 0;
	}
	c->source_tol = v / 100;
	return 1;
}

/* --ambient 55 or 55C: degrees Celsius from -100 to 300. */
static int set_temp(struct cli *c, const char *shown, const char *val, char *why, size_t n)
{
	char *end;
	errno = 0;
	double v = strtod(val, &end);
	if (*end == 'C' || *end == 'c')
		end++;
	if (errno || *end || end == val || !(v >= -100 && v <= 300)) {
		snprintf(why, n, "%s takes a temperature in degrees C from -100 to 300, not '%s'",
			 shown, val);
		return 0;
	}
	c->ambient = v;
	return 1;
}

static int set_fail_on(struct cli *c, const char *shown, const char *val, char *why, size_t n)
{
	static const struct {
		const char *name;
		int level;
	} tab[] = {{"error", DIAG_ERROR}, {"warning", DIAG_WARNING}, {"note", DIAG_NOTE}, {"never", -1}};
	for (size_t i = 0; i < sizeof tab / sizeof tab[0]; i++)
		if (strcmp(val, tab[i].name) == 0) {
			c->fail_on = tab[i].level;
			c->fail_on_given = 1;
			return 1;
		}
	struct suggest s;
	char hint[SUGGEST_HINT_SIZE];
	suggest_init(&s, val, strlen(val));
	for (size_t i = 0; i < sizeof tab / sizeof tab[0]; i++)
		suggest_offer(&s, tab[i].name);
	snprintf(why, n, "%s takes error, warning, note or never, not '%s'%s", shown, val,
		 suggest_hint(&s, hint, sizeof hint));
	return 0;
}

static int set_dialect(struct cli *c, const char *shown, const char *val, char *why, size_t n)
{
	enum dialect d;
	if (dialect_parse(val, &d)) {
		c->eo.dialect = d;
		c->dialect_given = 1;
		return 1;
	}
	const char *names[DIALECT_COUNT];
	char hint[SUGGEST_HINT_SIZE];
	for (int i = 0; i < DIALECT_COUNT; i++)
		names[i] = dialect_name((enum dialect)i);
	snprintf(why, n, "%s takes %s, not '%s'%s", shown, dialect_list(), val,
		 cli_hint(val, names, DIALECT_COUNT, hint, sizeof hint));
	return 0;
}

static void set_count(struct cli *c, enum count_id id, size_t n)
{
	struct elab_opts *e = &c->eo;
	switch (id) {
	case CO_PARTS: e->max_parts = n; break;
	case CO_NODES: e->max_nodes = n; break;
	case CO_LINE: e->max_line_len = (uint32_t)n; break;
	case CO_TOKEN: e->max_token_len = (uint32_t)n; break;
	case CO_INCLUDE: e->max_include_depth = (unsigned)n; break;
	case CO_DEPTH: e->max_inst_depth = (unsigned)n; break;
	case CO_EXPR: e->max_expr_depth = (unsigned)n; break;
	case CO_IF: e->max_cond_depth = (unsigned)n; break;
	case CO_PWL: e->max_pwl_points = (uint32_t)n; break;
	case CO_ERRORS: c->max_errors = (unsigned)n; break;
	case CO_JOBS: c->jobs = n; break;
	case CO_NONE: break;
	}
}

/* An option with a value; returns 0 on a bad value (why says so, naming
 * the option as shown). */
static int set_value(struct cli *c, const struct opt_def *o, const char *shown,
		     const char *val, char *why, size_t wn)
{
	size_t n;
	switch (o->kind) {
	case OPT_STR:
		*(const char **)(void *)((char *)c + o->off) = val;
		return 1;
	case OPT_REPORT:
		c->reports[c->nreports++] = val;
		return 1;
	case OPT_TOL:
		return set_tol(c, shown, val, why, wn);
	case OPT_TEMP:
		return set_temp(c, shown, val, why, wn);
	case OPT_FAIL:
		return set_fail_on(c, shown, val, why, wn);
	case OPT_DIALECT:
		return set_dialect(c, shown, val, why, wn);
	default:
		break;
	}
	if (!parse_count(val, &n)) {
		snprintf(why, wn, "%s takes a positive whole number, not '%s'", shown, val);
		return 0;
	}
	if (n > o->max) {
		snprintf(why, wn, "%s is at most %zu, not '%s'", shown, o->max, val);
		return 0;
	}
	set_count(c, o->count, n);
	return 1;
}

const char *cli_set_option(struct cli *c, const char *name, const char *shown,
			   const char *val, char *why, size_t n)
{
	const struct opt_def *o = opt_find(name);
	assert(o && o->kind != OPT_FLAG && o->kind != OPT_REPORT);
	return set_value(c, o, shown, val, why, n) ? NULL : why;
}

/* An option with a value on the command line; prints the problem and
 * returns 0 on a usage error. */
static int set_arg(struct cli *c, const struct opt_def *o, const char *val)
{
	char why[SUGGEST_HINT_SIZE + 160];
	if (!val) {
		fprintf(stderr, "headroom: %s needs a value\n", o->name);
		return 0;
	}
	if (set_value(c, o, o->name, val, why, sizeof why))
		return 1;
	fprintf(stderr, "headroom: %s\n", why);
	return 0;
}

int cli_parse(struct cli *c, int argc, char **argv)
{
	c->files = calloc((size_t)argc, sizeof *c->files);
	c->reports = calloc((size_t)argc, sizeof *c->reports);
	if (!c->files || !c->reports)
		return 0;
	for (int i = 1; i < argc; i++) {
		const char *a = argv[i];
		const char *eq = a[0] == '-' && a[1] == '-' ? strchr(a, '=') : NULL;
		const struct opt_def *o = eq ? opt_find_n(a, (size_t)(eq - a)) : opt_find(a);
		if (o && o->kind == OPT_FLAG && !eq) {
			*(int *)(void *)((char *)c + o->off) = 1;
		} else if (o && eq) {
			/* --opt=value, as --opt value */
			if (o->kind == OPT_FLAG || !set_arg(c, o, eq + 1)) {
				if (o->kind == OPT_FLAG)
					fprintf(stderr, "headroom: %s takes no value\n", o->name);
				return 0;
			}
		} else if (o) {
			if (!set_arg(c, o, i + 1 < argc ? argv[i + 1] : NULL))
				return 0;
			i++;
		} else if (a[0] == '-' && a[1] != '\0') {
			unknown_option(a);
			return 0;
		} else if (!c->cmd) {
			c->cmd = a;
		} else {
			c->files[c->nfiles++] = a;
		}
	}
	return 1;
}
