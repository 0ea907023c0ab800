/* cli_check.c: `headroom check`: loads what the batch shares (profile,
 * waivers, baseline), runs each file through the library's check
 * (check.h) on the batch runner, writes the reports in file order and
 * picks the exit status. */
#include "cli.h"

#include <ctype.h>
#include <math.h>
#include <stdint.h>
#include <stdlib.h>
#include <string.h>
#include <sys/stat.h>
#include <time.h>
#include <unistd.h>

#include "check.h"
#include "cli_batch.h"
#include "cli_config.h"
#include "cli_out.h"
#include "num.h"
#include "report_check.h"
#include "suggest.h"

/* One report of the run: the standard output (or -o), a --report, or the
 * --write-baseline JSON. */
struct rep {
	enum report_check_format fmt;
	const char *path;              /* NULL: standard output */
	const char *label;             /* how it was asked for, for messages */
	struct cli_out out;
	int color;
	const char *paths_from;        /* --write-baseline: where its paths start */
	struct check_totals *t;        /* per job, by index (batch mode) */
	struct check_totals sum;       /* merged in file order */
};

/* What every file's check shares: read-only once the batch starts. */
struct batch {
	const struct cli *c;
	struct check_opts o;
	const char *docs;
	struct report_inputs in;       /* what the run reads, for the reports */
	int color, quiet;
	struct rep *rep;               /* every report, the primary one first */
	size_t nrep;
	FILE **f;                      /* their streams, by report */
	char paths_from[1024];         /* --write-baseline: where its paths start */
};

int cli_load_profile(const struct cli *c, struct diag_sink *d, struct profile *p)
{
	char path[1024], hint[SUGGEST_HINT_SIZE];
	const char *name = c->profile ? c->profile : "industrial";
	size_t n = 0;
	while (profile_shipped[n])
		n++;
	if (!profile_find(name, c->argv0, path, sizeof path)) {
		fprintf(stderr, "headroom: no profile '%s' (basic, industrial, flight, or a file)%s\n", name,
			cli_hint(name, profile_shipped, n, hint, sizeof hint));
		return 0;
	}
	return profile_load(path, d, p);
}

static void totals_init(const struct batch *b, const struct rep *r, struct check_totals *t)
{
	memset(t, 0, sizeof *t);
	t->color = r->color;
	t->quiet = b->quiet;
	t->docs_uri = b->docs;
	t->inputs = &b->in;
	t->paths_from = r->paths_from;
}

/* One file: checks it once, writes it into every report, returns its
 * exit-status part. */
static int check_job(void *ud, const struct cli_job *j, FILE *const *out, FILE *err)
{
	struct batch *b = ud;
	const struct cli *c = b->c;
	struct hr_alloc hook = hr_alloc_default();
	struct check_run r;
	int rc = 0;
	enum check_status st = check_file_run(j->path, &b->o, &hook, &r);
	if (st == CHECK_OK && c->fail_on >= 0 && check_worst_level(&r) >= c->fail_on)
		rc = 1;
	if (st != CHECK_OK || diag_errors(r.d, UINT32_MAX))
		rc = EXIT_USAGE;
	/* out of memory: reported as a file not checked, its own state
	 * half built and not read */
	struct audit none;
	struct check_file oom = {j->path, &none, r.d, NULL, NULL, NULL, NULL, 0, 0};
	const struct check_file *f = &r.f;
	if (st == CHECK_OOM) {
		fprintf(err, "%s: error: out of memory\n", j->path);
		memset(&none, 0, sizeof none);
		f = &oom;
	}
	for (size_t k = 0; k < b->nrep; k++) {
		struct check_totals *t = &b->rep[k].t[j->index];
		totals_init(b, &b->rep[k], t);
		report_check_file(out[k], b->rep[k].fmt, f, r.profile, j->index == 0, t);
	}
	if (r.d)
		diag_render(r.d, UINT32_MAX, err);
	check_free(&r);
	return rc;
}

/* Writes a job's buffered output of one report; SARIF results of a file
 * whose predecessors wrote none must not start with the separating comma. */
static void emit_one(struct rep *r, const struct cli_job *j, size_t k, FILE *out)
{
	const char *o = j->out ? j->out[k] : NULL;
	size_t on = j->out ? j->outn[k] : 0;
	if (r->fmt == RC_SARIF && j->index > 0 && r->sum.emitted == 0 && on && o[0] == ',') {
		o++;
		on--;
	}
	if (o)
		fwrite(o, 1, on, out);
	r->sum.emitted += r->t[j->index].emitted;
	if (!report_totals_merge(&r->sum, &r->t[j->index]))
		fprintf(stderr, "%s: error: out of memory while writing the report\n", j->path);
	report_totals_free(&r->t[j->index]);
}

/* Writes a job's buffered outputs in order. */
static void check_emit(void *ud, const struct cli_job *j, FILE *const *out)
{
	struct batch *b = ud;
	for (size_t k = 0; k < b->nrep; k++)
		emit_one(&b->rep[k], j, k, out[k]);
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
	static const char *const rel[] = {"/../docs/", "/../../docs/", "/../share/doc/headroom/"};
	for (size_t i = 0; i < sizeof rel / sizeof rel[0]; i++) {
		snprintf(dir, sizeof dir, "%s%s", exe, rel[i]);
		char *real = realpath(dir, NULL);
		char *out = real ? malloc(strlen(real) * 3 + 16) : NULL;
		if (out) {
			char *w = out + sprintf(out, "file://");
			for (const unsigned char *p = (const unsigned char *)real; *p; p++)
				w += (isalnum(*p) || strchr("-._~/", *p)) ? sprintf(w, "%c", *p)
									 : sprintf(w, "%%%02X", *p);
			strcpy(w, "/");
		}
		free(real);
		if (real)
			return out;
	}
	return NULL;
}

/* --docs-url URL as the base of the rule links (a slash added when it has
 * none); NULL, with the reason on standard error, unless it is an absolute
 * URI (scheme:...) of the characters RFC 3986 allows, less ? and # (the
 * page's path is appended) and quotes. Returned owned (free). */
static char *docs_base(const char *url)
{
	static const char scheme[] = "abcdefghijklmnopqrstuvwxyzABCDEFGHIJKLMNOPQRSTUVWXYZ0123456789+-.";
	static const char uri[] = "abcdefghijklmnopqrstuvwxyzABCDEFGHIJKLMNOPQRSTUVWXYZ0123456789"
				  "-._~:/[]@!$&()*+,;=%";
	size_t n = strlen(url), s = strspn(url, scheme);
	if (!isalpha((unsigned char)url[0]) || url[s] != ':' || !url[s + 1] || strspn(url, uri) != n) {
		fprintf(stderr, "headroom: --docs-url takes an absolute URL such as "
				"https://example.org/headroom/ (no spaces, quotes, ? or #), not '%s'\n",
			url);
		return NULL;
	}
	char *out = malloc(n + 2);
	if (out)
		snprintf(out, n + 2, "%s%s", url, url[n - 1] == '/' ? "" : "/");
	return out;
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

_Static_assert(RC_TEXT == 0 && RC_JSON == 1 && RC_CSV == 2 && RC_JUNIT == 3 && RC_SARIF == 4 &&
		       RC_HTML + 1 == CLI_CHECK_NFORMATS,
	       "cli_check_formats (cli_opts.c) follows enum report_check_format");

/* The same file by two names: the same inode when both exist (devices
 * such as /dev/null excepted: nothing is replaced there), else the same
 * real folder and name. */
static int same_file(const char *a, const char *b)
{
	struct stat sa, sb;
	int ea = stat(a, &sa) == 0, eb = stat(b, &sb) == 0;
	if (ea && eb)
		return S_ISREG(sa.st_mode) && sa.st_dev == sb.st_dev && sa.st_ino == sb.st_ino;
	if (ea || eb)
		return 0;
	const char *ba = strrchr(a, '/') ? strrchr(a, '/') + 1 : a;
	const char *bb = strrchr(b, '/') ? strrchr(b, '/') + 1 : b;
	char *da = strndup(a, (size_t)(ba - a)), *db = strndup(b, (size_t)(bb - b));
	char *ra = da ? realpath(*da ? da : ".", NULL) : NULL;
	char *rb = db ? realpath(*db ? db : ".", NULL) : NULL;
	int same = strcmp(ba, bb) == 0 && (ra && rb ? strcmp(ra, rb) == 0 : strcmp(a, b) == 0);
	free(da), free(db), free(ra), free(rb);
	return same;
}

/* Two reports into one file would overwrite each other: a usage error. */
static int no_clash(const struct batch *b)
{
	for (size_t i = 0; i < b->nrep; i++)
		for (size_t k = i + 1; k < b->nrep; k++)
			if (b->rep[i].path && b->rep[k].path &&
			    same_file(b->rep[i].path, b->rep[k].path)) {
				fprintf(stderr, "headroom: two reports would write the same file: "
						"'%s' and '%s'\n", b->rep[i].label, b->rep[k].label);
				return 0;
			}
	return 1;
}

/* The reports the run writes: the primary one (--format, to -o or the
 * standard output), each --report, the --write-baseline JSON; 0 on a
 * usage error (printed). */
static int plan_reports(const struct cli *c, struct batch *b)
{
	size_t i, n = 1 + c->nreports + (c->write_baseline != NULL);
	const char *file;
	char why[SUGGEST_HINT_SIZE + 160];
	b->rep = calloc(n, sizeof *b->rep);
	b->f = calloc(n, sizeof *b->f);
	if (!b->rep || !b->f) {
		fprintf(stderr, "headroom: out of memory\n");
		return 0;
	}
	if (!cli_format(c, cli_check_formats, CLI_CHECK_NFORMATS, &i))
		return 0;
	b->rep[b->nrep++] = (struct rep){.fmt = (enum report_check_format)i, .path = c->out_path,
					 .label = "-o", .color = b->color};
	for (size_t k = 0; k < c->nreports; k++) {
		if (cli_report_spec(c->reports[k], &i, &file, why, sizeof why)) {
			fprintf(stderr, "headroom: --report: %s\n", why);
			return 0;
		}
		b->rep[b->nrep++] = (struct rep){.fmt = (enum report_check_format)i,
						 .path = file, .label = c->reports[k]};
	}
	if (c->write_baseline)
		b->rep[b->nrep++] = (struct rep){.fmt = RC_JSON, .path = c->write_baseline,
						 .label = "--write-baseline", .paths_from = b->paths_from};
	return no_clash(b);
}

/* Opens every report's file (the primary one may be the standard output);
 * 0 when one cannot be opened (printed). */
static int open_reports(struct batch *b)
{
	for (size_t k = 0; k < b->nrep; k++) {
		struct rep *r = &b->rep[k];
		if (r->path && !cli_out_open(&r->out, r->path))
			return 0;
		b->f[k] = r->path ? r->out.f : stdout;
	}
	return 1;
}

/* Closes the report files: with ok and every one written, all replace
 * their old files; otherwise none does. Returns 0 when one failed. */
static int close_reports(struct batch *b, int ok)
{
	int good = 1;
	for (size_t k = 0; ok && k < b->nrep; k++)
		if (b->rep[k].out.f && (fflush(b->rep[k].out.f) != 0 || ferror(b->rep[k].out.f)))
			ok = 0, good = 0;
	for (size_t k = 0; k < b->nrep; k++)
		if (b->rep[k].out.f && !cli_out_close(&b->rep[k].out, ok))
			good = 0;
	return good;
}

/* Loads what the batch shares; 0 on a usage error (reported). */
static int prepare(const struct cli *c, struct batch *b, struct profile *p,
		   struct arena *ar, struct diag_sink *d)
{
	struct check_opts *o = &b->o;
	if (!cli_load_profile(c, d, p))
		return 0;
	if (c->waivers && !(o->waivers = waiver_load(c->waivers, ar, d)))
		return 0;
	if (c->parts && !(o->parts = rating_table_load(c->parts, ar, d)))
		return 0;
	if (c->bom && !(o->bom = bom_load(c->bom, ar, d)))
		return 0;
	if (o->bom && !c->quiet)
		fprintf(stderr, "headroom: %s\n", bom_columns(o->bom));
	if (c->write_baseline && !baseline_paths_from(c->write_baseline, b->paths_from,
						      sizeof b->paths_from)) {
		fprintf(stderr, "headroom: cannot resolve the folder of '%s'\n", c->write_baseline);
		return 0;
	}
	if (c->baseline && !(o->baseline = baseline_load(c->baseline, ar, d)))
		return 0;
	const char *bad = c->netlist_ext ? cli_netlist_ext_check(c->netlist_ext) : NULL;
	if (bad) {
		fprintf(stderr, "headroom: --netlist-ext takes endings such as .cir,.sp or +.nl, "
				"not '%s': %s\n", c->netlist_ext, bad);
		return 0;
	}
	if (c->today && !num_iso_date(c->today)) {
		fprintf(stderr, "headroom: --today takes YYYY-MM-DD, not '%s'\n", c->today);
		return 0;
	}
	o->audit.elab = c->eo;
	o->audit.source_tol = c->source_tol;
	o->max_errors = c->max_errors;
	o->profile = p;
	o->profile_fixed = c->profile != NULL;
	o->argv0 = c->argv0;
	o->verify = c->verify;
	o->ambient_set = !isnan(c->ambient);
	o->ambient_c = c->ambient;
	if (o->ambient_set && !profile_set(p, "ambient", c->ambient, "--ambient"))
		return 0;
	return 1;
}

/* The run's own findings (check_batch_end) go to every report; returns
 * their exit-status part (1 when one reaches --fail-on, 2 out of memory). */
static int run_findings(struct batch *b, struct arena *ar, struct diag_sink *d,
			struct rules_result *run)
{
	if (!check_batch_end(&b->o, ar, run)) {
		fprintf(stderr, "headroom: error: out of memory\n");
		return EXIT_USAGE;
	}
	for (size_t k = 0; k < b->nrep; k++) {
		b->rep[k].sum.run = run;
		b->rep[k].sum.run_d = d;
	}
	int worst = -1;
	for (size_t i = 0; i < run->n; i++)
		if (!run->f[i].waived && (int)run->f[i].rule->severity > worst)
			worst = (int)run->f[i].rule->severity;
	return b->c->fail_on >= 0 && worst >= b->c->fail_on;
}

/* The skipped entries as the reports take them (borrowing s's strings);
 * NULL when there are none or memory runs out. */
static struct check_skip *skips_view(const struct cli_skips *s)
{
	struct check_skip *v = s->n ? calloc(s->n, sizeof *v) : NULL;
	for (size_t i = 0; v && i < s->n; i++)
		v[i] = (struct check_skip){s->v[i].path, s->v[i].why};
	return v;
}

/* Closes every report after the files and the run's findings. */
static void end_reports(struct batch *b, const struct check_skip *sv, size_t nskipped)
{
	for (size_t k = 0; k < b->nrep; k++) {
		b->rep[k].sum.skipped = sv;
		b->rep[k].sum.nskipped = nskipped;
		report_check_end(b->f[k], b->rep[k].fmt, b->o.profile, &b->rep[k].sum);
	}
}

/* Runs the batch into the open reports and closes them; returns the exit
 * status. */
static int run_files(struct batch *b, const struct cli_files *files,
		     const struct cli_skips *skips, struct arena *ar, struct diag_sink *d)
{
	const struct cli *c = b->c;
	struct cli_batch cb = {check_job, check_emit, b, b->nrep, c->jobs,
			       !c->quiet && files->n > 1 && isatty(STDERR_FILENO)};
	int ok = 1, rc = EXIT_USAGE;
	b->in.files = (const char *const *)files->v;
	b->in.nfiles = files->n;
	for (size_t k = 0; k < b->nrep; k++) {
		ok &= (b->rep[k].t = calloc(files->n ? files->n : 1, sizeof *b->rep[k].t)) != NULL;
		totals_init(b, &b->rep[k], &b->rep[k].sum);
	}
	struct check_skip *sv = skips_view(skips);
	ok &= sv || !skips->n;
	if (ok) {
		struct rules_result run = {0};
		rc = cli_batch_run(&cb, files->v, files->n, b->f);
		int rr = run_findings(b, ar, d, &run);
		rc = rr > rc ? rr : rc;
		if (files->n == 0)
			fprintf(stderr, "headroom: no netlist found: %zu entr%s skipped (see --netlist-ext)\n",
				skips->n, skips->n == 1 ? "y" : "ies");
		end_reports(b, sv, skips->n);
	} else {
		fprintf(stderr, "headroom: out of memory\n");
	}
	if (!close_reports(b, ok))
		rc = EXIT_USAGE;
	for (size_t k = 0; k < b->nrep; k++) {
		report_totals_free(&b->rep[k].sum);
		free(b->rep[k].t);
	}
	free(sv);
	return rc;
}

/* headroom check with the settings final (command line over the project
 * configuration). */
static int check_with(const struct cli *c)
{
	struct hr_alloc hook = hr_alloc_default();
	struct arena *ar = arena_create(&hook);
	struct diag_sink *d = ar ? diag_create(ar, 50) : NULL;
	struct profile *p = malloc(sizeof *p);
	struct cli_files files = {0};
	struct cli_skips skips = {0};
	struct batch b;
	char today[32];
	int rc = EXIT_USAGE;
	memset(&b, 0, sizeof b);
	b.c = c;
	b.docs = c->docs_url ? docs_base(c->docs_url) : docs_uri();
	b.quiet = c->quiet;
	b.color = !c->out_path && isatty(STDOUT_FILENO) && !getenv("NO_COLOR");
	today_of(today, sizeof today, c->today);
	b.o.today = today;
	b.in = (struct report_inputs){today, c->today != NULL, c->parts, c->waivers, c->baseline,
				      NULL, 0};
	if (d && p && plan_reports(c, &b) && (b.docs || !c->docs_url) && prepare(c, &b, p, ar, d) &&
	    cli_files_walk(&files, &skips, c->netlist_ext, c->files, (size_t)c->nfiles) &&
	    open_reports(&b))
		rc = run_files(&b, &files, &skips, ar, d);
	else if (b.rep)
		close_reports(&b, 0);
	if (files.unreadable)
		rc = EXIT_USAGE; /* a folder given was not checked */
	if (d)
		diag_render(d, UINT32_MAX, stderr);
	cli_files_free(&files);
	cli_skips_free(&skips);
	free((char *)b.docs);
	free(b.rep);
	free(b.f);
	free(p);
	diag_destroy(d);
	arena_destroy(ar);
	return rc;
}

int cli_check(const struct cli *c)
{
	struct cli_config cfg;
	struct cli settled;
	int rc = cli_config_settle(c, &settled, &cfg) ? check_with(&settled) : EXIT_USAGE;
	cli_config_free(&cfg);
	return rc;
}
