/* main.c: the command line. Parses options, runs the library per file,
 * and is the only place that picks output streams and exit codes:
 * 0 clean, 1 findings at or above --fail-on, 2 usage or netlist errors. */
#include <ctype.h>
#include <errno.h>
#include <pthread.h>
#include <time.h>
#include <unistd.h>
#include <math.h>
#include <stdint.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>

#include "arena.h"
#include "diag.h"
#include "elab.h"
#include "audit.h"
#include "cli_sim.h"
#include "report_parts.h"
#include "report_check.h"
#include "report_topo.h"
#include "rules.h"
#include "stress.h"
#include "verify.h"
#include "waiver.h"
#include <dirent.h>
#include <sys/stat.h>

#include "version.h"
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
	const char *profile;   /* name or path */
	const char *waivers, *baseline, *write_baseline, *today, *out_path;
	size_t jobs;           /* -j; 0: one per processor */
	int quiet;
	int verify;            /* --verify: simulate each file too */
	const char *parts;     /* parts table */
	int fail_on;           /* DIAG_* level, or -1 for never */
	const char *argv0;
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
	      "  check FILE|DIR...    worst-case stresses against ratings and the\n"
	      "                       derating profile; findings and a stress table\n"
	      "  rules                the rules and the profile's limits\n"
	      "  sim FILE --node N... waveforms of nodes over one steady-state period\n"
	      "                       (or 0 to --until T) as CSV; see headroom(1)\n"
	      "\n"
	      "options:\n"
	      "  --format FMT         parts: text (default), csv, json, count\n"
	      "                       topo: text (default), json, count\n"
	      "                       check: text (default), json, csv, junit, sarif,\n"
	      "                       html\n"
	      "  --profile NAME|FILE  derating profile: basic, industrial (default),\n"
	      "                       flight, or a profile file\n"
	      "  --parts FILE         parts table (CSV) with ratings\n"
	      "  --fail-on LEVEL      exit 1 on findings at or above error (default),\n"
	      "                       warning, note; never: always 0\n"
	      "  -o FILE              write the report to FILE (replaced only when the\n"
	      "                       run succeeds)\n"
	      "  -j N                 check N files at once (default: one per processor)\n"
	      "  --waivers FILE       *@waive lines that apply to every file\n"
	      "  --baseline FILE      report only findings not in this earlier JSON report\n"
	      "  --write-baseline FILE  also write the JSON report to FILE\n"
	      "  --today YYYY-MM-DD   the date waiver expiry is judged against\n"
	      "  --verify             check: also simulate each netlist to its periodic\n"
	      "                       steady state at the worst corner and set each\n"
	      "                       simulated stress beside its analytic bound\n"
	      "  -q, --quiet          findings only: no structures, tables, summary or\n"
	      "                       progress bar\n"
	      "  --max-parts N        stop expanding a netlist past N parts\n"
	      "                       (default 10000000)\n"
	      "  --source-tol PCT     tolerance of every source's amplitude and offset\n"
	      "                       unless *@source gives one (e.g. 10 or 10%)\n"
	      "  --max-line N         longest physical line read, in bytes\n"
	      "                       (default 1048576)\n"
	      "  --max-token N        longest word or value on a card, in bytes\n"
	      "                       (default 65536)\n"
	      "  --max-include-depth N  .include/.lib nesting (default 32)\n"
	      "  --max-depth N        subcircuit nesting (default 256)\n"
	      "  --max-expr-depth N   expression and .func call nesting (default 1000)\n"
	      "  --max-if-depth N     .if nesting (default 64)\n"
	      "  --max-nodes N        stop expanding past N nodes (default 10000000)\n"
	      "  --max-pwl N          time-value pairs in one PWL source (default 100000)\n"
	      "  --max-errors N       errors reported per file before giving up\n"
	      "                       (default 50)\n"
	      "  --help               this text\n"
	      "  --version            the version\n"
	      "\n"
	      "colour: on a terminal only, and never when NO_COLOR is set.\n"
	      "exit status: 0 success; 1 findings at or above --fail-on (check);\n"
	      "2 usage error or a netlist with errors\n",
	      out);
}

/* Options that take a positive whole number, and their largest value. */
enum count_id { CO_PARTS, CO_NODES, CO_LINE, CO_TOKEN, CO_INCLUDE, CO_DEPTH,
		CO_EXPR, CO_IF, CO_PWL, CO_ERRORS, CO_JOBS };
struct count_opt {
	const char *name;
	enum count_id id;
	size_t max;
};

static const struct count_opt *count_opt_find(const char *name)
{
	static const struct count_opt tab[] = {
		{"--max-parts", CO_PARTS, SIZE_MAX / 2},
		{"--max-nodes", CO_NODES, UINT32_MAX - 2},
		{"--max-line", CO_LINE, UINT32_MAX - 1},
		{"--max-token", CO_TOKEN, UINT32_MAX - 1},
		{"--max-include-depth", CO_INCLUDE, 100000},
		{"--max-depth", CO_DEPTH, 100000},
		{"--max-expr-depth", CO_EXPR, 100000},
		{"--max-if-depth", CO_IF, 1000000},
		{"--max-pwl", CO_PWL, UINT32_MAX / 2},
		{"--max-errors", CO_ERRORS, UINT32_MAX},
		{"-j", CO_JOBS, 1024},
	};
	for (size_t i = 0; i < sizeof tab / sizeof tab[0]; i++)
		if (strcmp(name, tab[i].name) == 0)
			return &tab[i];
	return NULL;
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

/* The format is checked by the command that uses it. */
static int set_format(struct cli *c, const char *f)
{
	c->fmt_name = f;
	return 1;
}

/* parts: text, csv, json, count. */
static int parts_format(struct cli *c)
{
	static const struct {
		const char *name;
		enum report_parts_format fmt;
	} tab[] = {{"text", RP_TEXT}, {"csv", RP_CSV}, {"json", RP_JSON},
		   {"count", RP_COUNT}};
	if (!c->fmt_name)
		return 1;
	for (size_t i = 0; i < sizeof tab / sizeof tab[0]; i++)
		if (strcmp(c->fmt_name, tab[i].name) == 0) {
			c->fmt = tab[i].fmt;
			return 1;
		}
	fprintf(stderr, "headroom: unknown format '%s' (text, csv, json, count)\n", c->fmt_name);
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

static int set_fail_on(struct cli *c, const char *val)
{
	static const struct {
		const char *name;
		int level;
	} tab[] = {{"error", DIAG_ERROR}, {"warning", DIAG_WARNING}, {"note", DIAG_NOTE}, {"never", -1}};
	for (size_t i = 0; i < sizeof tab / sizeof tab[0]; i++)
		if (strcmp(val, tab[i].name) == 0) {
			c->fail_on = tab[i].level;
			return 1;
		}
	fprintf(stderr, "headroom: --fail-on takes error, warning, note or never, not '%s'\n", val);
	return 0;
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
	if (strcmp(opt, "--profile") == 0) {
		c->profile = val;
		return 1;
	}
	if (strcmp(opt, "--parts") == 0) {
		c->parts = val;
		return 1;
	}
	if (strcmp(opt, "--fail-on") == 0)
		return set_fail_on(c, val);
	const char **str = strcmp(opt, "--waivers") == 0 ? &c->waivers
			 : strcmp(opt, "--baseline") == 0 ? &c->baseline
			 : strcmp(opt, "--write-baseline") == 0 ? &c->write_baseline
			 : strcmp(opt, "--today") == 0 ? &c->today
			 : strcmp(opt, "-o") == 0 ? &c->out_path : NULL;
	if (str) {
		*str = val;
		return 1;
	}
	if (!parse_count(val, &n)) {
		fprintf(stderr, "headroom: %s takes a positive whole number, not '%s'\n",
			opt, val);
		return 0;
	}
	const struct count_opt *o = count_opt_find(opt);
	if (n > o->max) {
		fprintf(stderr, "headroom: %s is at most %zu, not '%s'\n", opt, o->max, val);
		return 0;
	}
	struct elab_opts *e = &c->eo;
	switch (o->id) {
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
	}
	return 1;
}

static int parse_args(struct cli *c, int argc, char **argv)
{
	c->files = calloc((size_t)argc, sizeof *c->files);
	if (!c->files)
		return 0;
	for (int i = 1; i < argc; i++) {
		const char *a = argv[i];
		if (strcmp(a, "--format") == 0 || count_opt_find(a) ||
		    strcmp(a, "--source-tol") == 0 ||
		    strcmp(a, "--profile") == 0 || strcmp(a, "--parts") == 0 ||
		    strcmp(a, "--fail-on") == 0 || strcmp(a, "--waivers") == 0 ||
		    strcmp(a, "--baseline") == 0 || strcmp(a, "--write-baseline") == 0 ||
		    strcmp(a, "--today") == 0 || strcmp(a, "-o") == 0 || strcmp(a, "-j") == 0) {
			if (!option(c, a, i + 1 < argc ? argv[i + 1] : NULL))
				return 0;
			i++;
		} else if (strcmp(a, "--quiet") == 0 || strcmp(a, "-q") == 0) {
			c->quiet = 1;
		} else if (strcmp(a, "--verify") == 0) {
			c->verify = 1;
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

/* ---- check ---- */

static int netlist_name(const char *name)
{
	static const char *const ext[] = {".cir", ".sp", ".spice", ".net", ".ckt", ".cdl"};
	const char *dot = strrchr(name, '.');
	for (size_t i = 0; dot && i < sizeof ext / sizeof ext[0]; i++)
		if (strcmp(dot, ext[i]) == 0)
			return 1;
	return 0;
}

struct flist {
	char **v;
	size_t n, cap;
};

static int flist_add(struct flist *l, const char *path)
{
	if (l->n == l->cap) {
		size_t ncap = l->cap ? l->cap * 2 : 32;
		char **v = realloc(l->v, ncap * sizeof *v);
		if (!v)
			return 0;
		l->v = v;
		l->cap = ncap;
	}
	return (l->v[l->n++] = strdup(path)) != NULL;
}

static int by_name(const void *a, const void *b)
{
	return strcmp(*(char *const *)a, *(char *const *)b);
}

/* Netlists under dir, recursively, in name order. */
static int scan(const char *dir, struct flist *l, int depth)
{
	DIR *d = opendir(dir);
	if (!d || depth > 32)
		return d ? (closedir(d), 1) : 0;
	struct flist here = {0};
	struct dirent *e;
	while ((e = readdir(d)))
		if (e->d_name[0] != '.') {
			char path[4096];
			size_t dl = strlen(dir);
			snprintf(path, sizeof path, "%s%s%s", dir,
				 dl && dir[dl - 1] == '/' ? "" : "/", e->d_name);
			flist_add(&here, path);
		}
	closedir(d);
	qsort(here.v, here.n, sizeof *here.v, by_name);
	for (size_t i = 0; i < here.n; i++) {
		struct stat st;
		if (stat(here.v[i], &st) == 0 && S_ISDIR(st.st_mode))
			scan(here.v[i], l, depth + 1);
		else if (netlist_name(here.v[i]))
			flist_add(l, here.v[i]);
		free(here.v[i]);
	}
	free(here.v);
	return 1;
}

static int expand(const struct cli *c, struct flist *l)
{
	for (int i = 0; i < c->nfiles; i++) {
		struct stat st;
		if (stat(c->files[i], &st) == 0 && S_ISDIR(st.st_mode)) {
			if (!scan(c->files[i], l, 0))
				fprintf(stderr, "%s: error: cannot read the folder\n", c->files[i]);
		} else if (!flist_add(l, c->files[i])) {
			return 0;
		}
	}
	return 1;
}

static int load_profile(const struct cli *c, struct diag_sink *d, struct profile *p)
{
	char path[1024];
	const char *name = c->profile ? c->profile : "industrial";
	if (!profile_find(name, c->argv0, path, sizeof path)) {
		fprintf(stderr, "headroom: no profile '%s' (basic, industrial, flight, or a file)\n", name);
		return 0;
	}
	return profile_load(path, d, p);
}

static int worst_level(const struct rules_result *r)
{
	int level = -2;
	for (size_t i = 0; i < r->n; i++)
		if (!r->f[i].waived && (int)r->f[i].rule->severity > level)
			level = (int)r->f[i].rule->severity;
	return level;
}

/* Checks one file; returns its exit-status contribution. */
/* What every file's check shares: read-only once the batch starts. */
struct batch {
	const struct cli *c;
	const struct profile *p;
	enum report_check_format fmt;
	const struct waiver_file *waivers;
	const struct baseline *baseline;
	const char *today;
	const char *docs;
	int color, quiet, json_too;
};

/* One file's check and its outputs, kept until they are written in order. */
struct job {
	const char *path;
	size_t index;
	char *out, *err, *json;
	size_t outn, errn, jsonn;
	struct check_totals t, tj;
	int rc;
	int done;
};

static int check_one(const struct batch *b, const char *path, int first,
		     FILE *out, FILE *err, FILE *json, struct check_totals *t,
		     struct check_totals *tj)
{
	const struct cli *c = b->c;
	const struct profile *p = b->p;
	struct hr_alloc hook = hr_alloc_default();
	struct arena *ar = arena_create(&hook);
	struct diag_sink *d = ar ? diag_create(ar, c->max_errors) : NULL;
	struct audit a;
	struct audit_opts o;
	struct stress_result sr;
	struct rules_result rr;
	int rc = 0;
	memset(&o, 0, sizeof o);
	o.elab = c->eo;
	o.source_tol = c->source_tol;
	enum audit_status st = d ? audit_file(path, &o, &hook, d, &a) : AUDIT_OOM;
	struct check_file f = {path, &a, d, NULL, &sr, &rr};
	struct profile *own = NULL; /* a *@profile line's choice, for this file */
	if (st == AUDIT_OK && !c->profile) {
		for (uint32_t i = 0; i < a.nannots; i++)
			if (a.annots[i].kind == AN_PROFILE) {
				char pp[1024];
				if (!own)
					own = malloc(sizeof *own);
				if (!own || !profile_find(a.annots[i].target, c->argv0, pp, sizeof pp) ||
				    !profile_load(pp, d, own)) {
					diag_add(d, DIAG_ERROR, "annotation", a.annots[i].loc,
						 "*@profile names '%s', which cannot be loaded", a.annots[i].target);
					st = AUDIT_ERRORS;
				} else {
					p = own;
				}
			}
	}
	if (st == AUDIT_OK) {
		const struct rating_table *tab = c->parts ? rating_table_load(c->parts, a.ar, d) : NULL;
		f.ratings = rating_resolve(a.er.circuit, tab, a.annots, a.nannots, a.ar, d);
		if (!f.ratings || !stress_run(&a, f.ratings, p, &sr) ||
		    (c->verify && !verify_run(&a, p, NULL, &sr)) || !rules_run(&a, f.ratings, p, &sr, &rr) ||
		    !waiver_apply(&a, b->waivers, b->today, &rr))
			st = AUDIT_OOM;
		else {
			if (b->baseline)
				baseline_filter(b->baseline, path, &rr);
			if (c->fail_on >= 0 && worst_level(&rr) >= c->fail_on)
				rc = 1;
		}
		if (diag_errors(d, UINT32_MAX))
			rc = EXIT_USAGE;
	}
	if (st == AUDIT_OOM) {
		fprintf(err, "%s: error: out of memory\n", path);
		rc = EXIT_USAGE;
	} else {
		if (st != AUDIT_OK) {
			a.analysed = 0;
			rc = EXIT_USAGE;
		}
		report_check_file(out, b->fmt, &f, p, first, t);
		if (json)
			report_check_file(json, RC_JSON, &f, p, first, tj);
	}
	if (d)
		diag_render(d, UINT32_MAX, err);
	if (d)
		audit_free(&a);
	free(own);
	diag_destroy(d);
	arena_destroy(ar);
	return rc;
}

/* The start of the trailing "/rules" of a path, or NULL. */
static char *strrstr_rules(char *s)
{
	size_t n = strlen(s);
	return n >= 6 && strcmp(s + n - 6, "/rules") == 0 ? s + n - 6 : NULL;
}

/* file:// URI of the documentation folder next to the program (the build
 * tree's docs/, also from a sanitizer build one level deeper, or an
 * installed share/doc/headroom/), percent-encoded. */
static char *docs_uri(void)
{
	char exe[2048], dir[2100];
	ssize_t k = readlink("/proc/self/exe", exe, sizeof exe - 1);
	if (k <= 0)
		return NULL;
	exe[k] = '\0';
	char *slash = strrchr(exe, '/');
	if (slash)
		*slash = '\0';
	/* build/headroom, build/asan/headroom, PREFIX/bin/headroom */
	static const char *const rel[] = {"/../docs/", "/../../docs/", "/../share/doc/headroom/"};
	for (size_t i = 0; i < sizeof rel / sizeof rel[0]; i++) {
		snprintf(dir, sizeof dir, "%s%srules", exe, rel[i]);
		char *real = realpath(dir, NULL);
		if (!real)
			continue;
		char *out = malloc(strlen(real) * 3 + 16);
		if (out) {
			char *o = out + sprintf(out, "file://");
			for (const unsigned char *p = (const unsigned char *)real; *p; p++)
				o += (isalnum(*p) || strchr("-._~/", *p)) ? sprintf(o, "%c", *p) : sprintf(o, "%%%02X", *p);
			/* up from .../rules to the docs folder */
			char *last = strrstr_rules(out);
			if (last)
				strcpy(last, "/");
		}
		free(real);
		return out;
	}
	return NULL;
}

/* ---- the batch: worker threads, output in file order ---- */

struct pool {
	const struct batch *b;
	struct job *jobs;
	size_t n, next;
	pthread_mutex_t mu;
	pthread_cond_t cv;
};

static void run_job(const struct batch *b, struct job *j)
{
	FILE *out = open_memstream(&j->out, &j->outn);
	FILE *err = open_memstream(&j->err, &j->errn);
	FILE *json = b->json_too ? open_memstream(&j->json, &j->jsonn) : NULL;
	j->t.color = j->tj.color = b->color;
	j->t.quiet = b->quiet;
	j->t.docs_uri = j->tj.docs_uri = b->docs;
	if (!out || !err || (b->json_too && !json))
		j->rc = EXIT_USAGE;
	else
		j->rc = check_one(b, j->path, j->index == 0, out, err, json, &j->t, &j->tj);
	if (out)
		fclose(out);
	if (err)
		fclose(err);
	if (json)
		fclose(json);
}

static void *worker(void *arg)
{
	struct pool *pl = arg;
	for (;;) {
		pthread_mutex_lock(&pl->mu);
		size_t i = pl->next < pl->n ? pl->next++ : pl->n;
		pthread_mutex_unlock(&pl->mu);
		if (i == pl->n)
			return NULL;
		run_job(pl->b, &pl->jobs[i]);
		pthread_mutex_lock(&pl->mu);
		pl->jobs[i].done = 1;
		pthread_cond_broadcast(&pl->cv);
		pthread_mutex_unlock(&pl->mu);
	}
}


/* Writes a job's outputs; SARIF results of a file whose predecessors
 * wrote none must not start with the separating comma. */
static void emit(struct check_totals *t, struct check_totals *tj, struct job *j,
		 FILE *out, FILE *json, int progress, size_t n, int sarif)
{
	const char *o = j->out;
	size_t on = j->outn;
	if (sarif && j->index > 0 && t->emitted == 0 && on && o[0] == ',') {
		o++;
		on--;
	}
	fwrite(o, 1, on, out);
	if (json && j->json)
		fwrite(j->json, 1, j->jsonn, json);
	if (progress)
		fputs("\r\033[K", stderr);
	fwrite(j->err, 1, j->errn, stderr);
	if (progress)
		fprintf(stderr, "[%zu/%zu] %s", j->index + 1, n, j->path);
	t->emitted += j->t.emitted;
	report_totals_merge(t, &j->t);
	report_totals_merge(tj, &j->tj);
}

/* One file: its report is streamed to out, not held in memory first (the
 * JSON report of a 600k-part deck is half a gigabyte). */
static int run_single(const struct batch *b, const char *path, FILE *out, FILE *json,
		      struct check_totals *t, struct check_totals *tj)
{
	struct job j;
	memset(&j, 0, sizeof j);
	j.t.color = j.tj.color = b->color;
	j.t.quiet = b->quiet;
	j.t.docs_uri = j.tj.docs_uri = b->docs;
	int rc = check_one(b, path, 1, out, stderr, json, &j.t, &j.tj);
	t->emitted += j.t.emitted;
	report_totals_merge(t, &j.t);
	report_totals_merge(tj, &j.tj);
	return rc;
}

static int run_batch(const struct batch *b, char **files, size_t n, FILE *out,
		     FILE *json, struct check_totals *t, struct check_totals *tj)
{
	if (n == 1)
		return run_single(b, files[0], out, json, t, tj);
	struct pool pl = {b, calloc(n ? n : 1, sizeof *pl.jobs), n, 0,
			  PTHREAD_MUTEX_INITIALIZER, PTHREAD_COND_INITIALIZER};
	if (!pl.jobs)
		return EXIT_USAGE;
	for (size_t i = 0; i < n; i++) {
		pl.jobs[i].path = files[i];
		pl.jobs[i].index = i;
	}
	size_t nthreads = b->c->jobs ? b->c->jobs : (size_t)sysconf(_SC_NPROCESSORS_ONLN);
	if (nthreads < 1)
		nthreads = 1;
	if (nthreads > n)
		nthreads = n ? n : 1;
	pthread_t *th = calloc(nthreads, sizeof *th);
	size_t started = 0;
	for (size_t i = 0; th && i < nthreads; i++)
		started += pthread_create(&th[i], NULL, worker, &pl) == 0;
	if (started == 0)
		worker(&pl); /* no threads: do it here */
	int progress = !b->quiet && n > 1 && isatty(STDERR_FILENO);
	int rc = 0;
	for (size_t i = 0; i < n; i++) {
		pthread_mutex_lock(&pl.mu);
		while (!pl.jobs[i].done)
			pthread_cond_wait(&pl.cv, &pl.mu);
		pthread_mutex_unlock(&pl.mu);
		emit(t, tj, &pl.jobs[i], out, json, progress, n, b->fmt == RC_SARIF);
		rc = pl.jobs[i].rc > rc ? pl.jobs[i].rc : rc;
		free(pl.jobs[i].out);
		free(pl.jobs[i].err);
		free(pl.jobs[i].json);
	}
	if (progress)
		fputs("\r\033[K", stderr);
	for (size_t i = 0; i < started; i++)
		pthread_join(th[i], NULL);
	free(th);
	free(pl.jobs);
	return rc;
}

/* Output files are written beside their final name and renamed into place
 * only when the run succeeds: a failed run leaves an old report alone. */
static FILE *open_temp(const char *path, char *tmp, size_t n)
{
	snprintf(tmp, n, "%s.tmp-XXXXXX", path);
	int fd = mkstemp(tmp);
	if (fd < 0)
		return NULL;
	/* mkstemp makes the file private; give it the mode a plain create
	 * would, or keep the mode of the report it replaces */
	struct stat st;
	mode_t mode;
	if (stat(path, &st) == 0) {
		mode = st.st_mode & 07777;
	} else {
		mode_t mask = umask(0);
		umask(mask);
		mode = 0666 & ~mask;
	}
	fchmod(fd, mode);
	return fdopen(fd, "w");
}

static int finish_temp(FILE *f, const char *tmp, const char *path, int ok)
{
	int bad = ferror(f) | fclose(f);
	if (!ok || bad) {
		remove(tmp);
		if (bad)
			fprintf(stderr, "headroom: cannot write '%s'\n", path);
		return !bad;
	}
	if (rename(tmp, path) != 0) {
		fprintf(stderr, "headroom: cannot write '%s': %s\n", path, strerror(errno));
		remove(tmp);
		return 0;
	}
	return 1;
}

static void today_of(char *buf, size_t n, const char *given)
{
	if (given) {
		snprintf(buf, n, "%s", given);
		return;
	}
	time_t now = time(NULL);
	struct tm tm;
	gmtime_r(&now, &tm);
	strftime(buf, n, "%Y-%m-%d", &tm);
}

static int choose_format(const struct cli *c, enum report_check_format *fmt)
{
	static const struct {
		const char *name;
		enum report_check_format fmt;
	} fmts[] = {{"text", RC_TEXT}, {"json", RC_JSON}, {"csv", RC_CSV},
		    {"junit", RC_JUNIT}, {"sarif", RC_SARIF}, {"html", RC_HTML}};
	*fmt = RC_TEXT;
	for (size_t i = 0; c->fmt_name && i < sizeof fmts / sizeof fmts[0]; i++)
		if (strcmp(c->fmt_name, fmts[i].name) == 0) {
			*fmt = fmts[i].fmt;
			return 1;
		}
	if (!c->fmt_name)
		return 1;
	fprintf(stderr, "headroom: check writes text, json, csv, junit, sarif or html, not '%s'\n", c->fmt_name);
	return 0;
}

/* Loads what the batch shares; 0 on a usage error (reported). */
static int prepare(const struct cli *c, struct batch *b, struct profile *p,
		   struct arena *ar, struct diag_sink *d)
{
	if (!choose_format(c, &b->fmt) || !load_profile(c, d, p))
		return 0;
	if (c->waivers && !(b->waivers = waiver_load(c->waivers, ar, d)))
		return 0;
	if (c->baseline && !(b->baseline = baseline_load(c->baseline, ar, d)))
		return 0;
	if (c->today && (strlen(c->today) != 10 || c->today[4] != '-' || c->today[7] != '-')) {
		fprintf(stderr, "headroom: --today takes YYYY-MM-DD, not '%s'\n", c->today);
		return 0;
	}
	return 1;
}

static int run_check(const struct cli *c)
{
	struct hr_alloc hook = hr_alloc_default();
	struct arena *ar = arena_create(&hook);
	struct diag_sink *d = ar ? diag_create(ar, 50) : NULL;
	struct profile *p = malloc(sizeof *p);
	struct flist files = {0};
	struct batch b;
	char today[32], tmp[4200], jtmp[4200];
	int rc = EXIT_USAGE;
	memset(&b, 0, sizeof b);
	b.c = c;
	b.p = p;
	b.docs = docs_uri();
	b.quiet = c->quiet;
	b.json_too = c->write_baseline != NULL;
	b.color = !c->out_path && isatty(STDOUT_FILENO) && !getenv("NO_COLOR");
	today_of(today, sizeof today, c->today);
	b.today = today;
	if (d && p && prepare(c, &b, p, ar, d) && expand(c, &files)) {
		FILE *out = c->out_path ? open_temp(c->out_path, tmp, sizeof tmp) : stdout;
		FILE *json = c->write_baseline ? open_temp(c->write_baseline, jtmp, sizeof jtmp) : NULL;
		if (!out || (c->write_baseline && !json)) {
			fprintf(stderr, "headroom: cannot create the output file next to '%s'\n",
				!out ? c->out_path : c->write_baseline);
		} else {
			struct check_totals t, tj;
			memset(&t, 0, sizeof t);
			memset(&tj, 0, sizeof tj);
			t.color = b.color;
			t.quiet = b.quiet;
			rc = run_batch(&b, files.v, files.n, out, json, &t, &tj);
			report_check_end(out, b.fmt, p, &t);
			if (json)
				report_check_end(json, RC_JSON, p, &tj);
			waiver_unused(b.waivers, d);
			if (c->out_path && !finish_temp(out, tmp, c->out_path, 1))
				rc = EXIT_USAGE;
			if (json && !finish_temp(json, jtmp, c->write_baseline, 1))
				rc = EXIT_USAGE;
		}
	}
	if (d)
		diag_render(d, UINT32_MAX, stderr);
	for (size_t i = 0; i < files.n; i++)
		free(files.v[i]);
	free(files.v);
	free((char *)b.docs);
	free(p);
	diag_destroy(d);
	arena_destroy(ar);
	return rc;
}

/* headroom rules: every rule, then the profile's limits with sources. */
static int run_rules(const struct cli *c)
{
	struct hr_alloc hook = hr_alloc_default();
	struct arena *ar = arena_create(&hook);
	struct diag_sink *d = ar ? diag_create(ar, 50) : NULL;
	struct profile *p = malloc(sizeof *p);
	int rc = EXIT_USAGE;
	if (d && p && load_profile(c, d, p)) {
		printf("rules:\n");
		for (size_t i = 0; i < rules_count; i++)
			printf("  %-18s %-8s %s\n", rules_table[i].id,
			       diag_severity_name(rules_table[i].severity), rules_table[i].summary);
		printf("\nprofile %s (%s): %s\n", p->name, p->path, p->description);
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

int main(int argc, char **argv)
{
	struct cli c;
	memset(&c, 0, sizeof c);
	c.max_errors = 50;
	c.source_tol = NAN;
	c.fail_on = DIAG_ERROR;
	c.argv0 = argv[0];
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
	if (argc > 1 && strcmp(argv[1], "sim") == 0)
		return cli_sim(argc - 1, argv + 1);
	int ok = parse_args(&c, argc, argv);
	int rc = EXIT_USAGE;
	if (!ok) {
		/* message already printed */
	} else if (!c.cmd) {
		usage(stderr);
	} else if (strcmp(c.cmd, "parts") == 0 && c.nfiles > 0) {
		rc = parts_format(&c) ? run_parts(&c) : EXIT_USAGE;
	} else if (strcmp(c.cmd, "topo") == 0 && c.nfiles > 0) {
		rc = run_topo(&c);
	} else if (strcmp(c.cmd, "check") == 0 && c.nfiles > 0) {
		rc = run_check(&c);
	} else if (strcmp(c.cmd, "rules") == 0) {
		rc = run_rules(&c);
	} else if (strcmp(c.cmd, "parts") == 0 || strcmp(c.cmd, "topo") == 0 ||
		   strcmp(c.cmd, "check") == 0) {
		fprintf(stderr, "headroom: %s needs at least one netlist file\n", c.cmd);
	} else {
		fprintf(stderr, "headroom: unknown command '%s' (see --help)\n", c.cmd);
	}
	free(c.files);
	return rc;
}
