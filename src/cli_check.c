/* cli_check.c: `headroom check`: loads what the batch shares (profile,
 * waivers, baseline), runs each file through the library's check
 * (check.h) on the batch runner, writes the reports in file order and
 * picks the exit status. */
#include "cli.h"

#include <ctype.h>
#include <stdint.h>
#include <stdlib.h>
#include <string.h>
#include <time.h>
#include <unistd.h>

#include "check.h"
#include "cli_batch.h"
#include "cli_out.h"
#include "num.h"
#include "report_check.h"
#include "suggest.h"

/* What every file's check shares: read-only once the batch starts. */
struct batch {
	const struct cli *c;
	struct check_opts o;
	enum report_check_format fmt;
	const char *docs;
	struct report_inputs in; /* what the run reads, for the reports */
	int color, quiet;
	struct check_totals *t, *tj;   /* per job, by index (batch mode) */
	struct check_totals sum, sumj; /* merged in file order */
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

static void totals_init(const struct batch *b, struct check_totals *t, struct check_totals *tj)
{
	memset(t, 0, sizeof *t);
	memset(tj, 0, sizeof *tj);
	t->color = tj->color = b->color;
	t->quiet = b->quiet;
	t->docs_uri = tj->docs_uri = b->docs;
	t->inputs = tj->inputs = &b->in;
	tj->paths_from = b->paths_from[0] ? b->paths_from : NULL;
}

/* One file: checks it, writes its reports, returns its exit-status part. */
static int check_job(void *ud, const struct cli_job *j, FILE *out, FILE *err, FILE *json)
{
	struct batch *b = ud;
	const struct cli *c = b->c;
	struct check_totals *t = &b->t[j->index], *tj = &b->tj[j->index];
	struct hr_alloc hook = hr_alloc_default();
	struct check_run r;
	int rc = 0;
	totals_init(b, t, tj);
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
	report_check_file(out, b->fmt, f, r.profile, j->index == 0, t);
	if (json)
		report_check_file(json, RC_JSON, f, r.profile, j->index == 0, tj);
	if (r.d)
		diag_render(r.d, UINT32_MAX, err);
	check_free(&r);
	return rc;
}

/* Writes a job's buffered outputs in order; SARIF results of a file whose
 * predecessors wrote none must not start with the separating comma. */
static void check_emit(void *ud, const struct cli_job *j, FILE *out, FILE *json)
{
	struct batch *b = ud;
	const struct check_totals *t = &b->t[j->index], *tj = &b->tj[j->index];
	const char *o = j->out;
	size_t on = j->outn;
	if (b->fmt == RC_SARIF && j->index > 0 && b->sum.emitted == 0 && on && o[0] == ',') {
		o++;
		on--;
	}
	if (o)
		fwrite(o, 1, on, out);
	if (json && j->aux)
		fwrite(j->aux, 1, j->auxn, json);
	b->sum.emitted += t->emitted;
	if (!report_totals_merge(&b->sum, t) || !report_totals_merge(&b->sumj, tj))
		fprintf(stderr, "%s: error: out of memory while writing the report\n", j->path);
	report_totals_free(&b->t[j->index]);
	report_totals_free(&b->tj[j->index]);
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

static int choose_format(const struct cli *c, enum report_check_format *fmt)
{
	static const char *const names[] = {"text", "json", "csv", "junit", "sarif", "html"};
	static const enum report_check_format fmts[] = {RC_TEXT, RC_JSON, RC_CSV,
							RC_JUNIT, RC_SARIF, RC_HTML};
	_Static_assert(sizeof names / sizeof names[0] == sizeof fmts / sizeof fmts[0], "one per format");
	size_t i;
	if (!cli_format(c, names, sizeof names / sizeof names[0], &i))
		return 0;
	*fmt = fmts[i];
	return 1;
}

/* Loads what the batch shares; 0 on a usage error (reported). */
static int prepare(const struct cli *c, struct batch *b, struct profile *p,
		   struct arena *ar, struct diag_sink *d)
{
	struct check_opts *o = &b->o;
	if (!choose_format(c, &b->fmt) || !cli_load_profile(c, d, p))
		return 0;
	if (c->waivers && !(o->waivers = waiver_load(c->waivers, ar, d)))
		return 0;
	if (c->parts && !(o->parts = rating_table_load(c->parts, ar, d)))
		return 0;
	if (c->write_baseline && !baseline_paths_from(c->write_baseline, b->paths_from,
						      sizeof b->paths_from)) {
		fprintf(stderr, "headroom: cannot resolve the folder of '%s'\n", c->write_baseline);
		return 0;
	}
	if (c->baseline && !(o->baseline = baseline_load(c->baseline, ar, d)))
		return 0;
	const char *bad = c->netlist_ext ? cli_netlist_ext_check(c->netlist_ext) : NULL;
	if (bad) {
		fprintf(stderr, "headroom: --netlist-ext takes endings such as .cir,.sp or +.sim, "
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
	return 1;
}

/* The run's own findings (check_batch_end) go to both reports; returns
 * their exit-status part (1 when one reaches --fail-on, 2 out of memory). */
static int run_findings(struct batch *b, struct arena *ar, struct diag_sink *d,
			struct rules_result *run)
{
	if (!check_batch_end(&b->o, ar, run)) {
		fprintf(stderr, "headroom: error: out of memory\n");
		return EXIT_USAGE;
	}
	b->sum.run = b->sumj.run = run;
	b->sum.run_d = b->sumj.run_d = d;
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

/* Runs the batch into the open outputs; returns the exit status. */
static int run_files(struct batch *b, const struct cli_files *files,
		     const struct cli_skips *skips, struct cli_out *out,
		     struct cli_out *json, struct arena *ar, struct diag_sink *d)
{
	const struct cli *c = b->c;
	struct cli_batch cb = {check_job, check_emit, b, c->jobs, json->f != NULL,
			       !c->quiet && files->n > 1 && isatty(STDERR_FILENO)};
	FILE *o = out->f ? out->f : stdout;
	b->in.files = (const char *const *)files->v;
	b->in.nfiles = files->n;
	b->t = calloc(files->n ? files->n : 1, sizeof *b->t);
	b->tj = calloc(files->n ? files->n : 1, sizeof *b->tj);
	struct check_skip *sv = skips_view(skips);
	int rc = EXIT_USAGE;
	if (b->t && b->tj && (sv || !skips->n)) {
		totals_init(b, &b->sum, &b->sumj);
		struct rules_result run = {0};
		rc = cli_batch_run(&cb, files->v, files->n, o, json->f);
		int rr = run_findings(b, ar, d, &run);
		rc = rr > rc ? rr : rc;
		if (files->n == 0)
			fprintf(stderr, "headroom: no netlist found: %zu entr%s skipped (see --netlist-ext)\n",
				skips->n, skips->n == 1 ? "y" : "ies");
		b->sum.skipped = b->sumj.skipped = sv;
		b->sum.nskipped = b->sumj.nskipped = skips->n;
		report_check_end(o, b->fmt, b->o.profile, &b->sum);
		if (json->f)
			report_check_end(json->f, RC_JSON, b->o.profile, &b->sumj);
	}
	if (out->f && !cli_out_close(out, 1))
		rc = EXIT_USAGE;
	if (json->f && !cli_out_close(json, 1))
		rc = EXIT_USAGE;
	report_totals_free(&b->sum);
	report_totals_free(&b->sumj);
	free(sv);
	free(b->t);
	free(b->tj);
	return rc;
}

int cli_check(const struct cli *c)
{
	struct hr_alloc hook = hr_alloc_default();
	struct arena *ar = arena_create(&hook);
	struct diag_sink *d = ar ? diag_create(ar, 50) : NULL;
	struct profile *p = malloc(sizeof *p);
	struct cli_files files = {0};
	struct cli_skips skips = {0};
	struct cli_out out = {0}, json = {0};
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
	if (d && p && (b.docs || !c->docs_url) && prepare(c, &b, p, ar, d) &&
	    cli_files_walk(&files, &skips, c->netlist_ext, c->files, (size_t)c->nfiles) &&
	    (!c->out_path || cli_out_open(&out, c->out_path)) &&
	    (!c->write_baseline || cli_out_open(&json, c->write_baseline)))
		rc = run_files(&b, &files, &skips, &out, &json, ar, d);
	else if (out.f)
		cli_out_close(&out, 0);
	if (files.unreadable)
		rc = EXIT_USAGE; /* a folder given was not checked */
	if (d)
		diag_render(d, UINT32_MAX, stderr);
	cli_files_free(&files);
	cli_skips_free(&skips);
	free((char *)b.docs);
	free(p);
	diag_destroy(d);
	arena_destroy(ar);
	return rc;
}
