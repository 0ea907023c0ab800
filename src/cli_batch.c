/* cli_batch.c: folder walk and the ordered worker pool (cli_batch.h). */
#include "cli_batch.h"

#include <ctype.h>
#include <dirent.h>
#include <errno.h>
#include <pthread.h>
#include <stdlib.h>
#include <string.h>
#include <strings.h>
#include <sys/stat.h>
#include <unistd.h>

/* One ending of a comma-separated list: ".cir" in ".sp,.cir". */
static int ends_with(const char *name, const char *end, size_t n)
{
	size_t l = strlen(name);
	return n && l > n && strncasecmp(name + l - n, end, n) == 0;
}

static int in_list(const char *name, const char *list)
{
	for (const char *p = list; *p;) {
		size_t n = strcspn(p, ",");
		if (ends_with(name, p, n))
			return 1;
		p += n + (p[n] == ',');
	}
	return 0;
}

/* A netlist by its name: exts replaces the default list, "+..." adds to it. */
static int netlist_name(const char *name, const char *exts)
{
	if (!exts || exts[0] == '+')
		if (in_list(name, CLI_NETLIST_EXT))
			return 1;
	return exts && in_list(name, exts + (exts[0] == '+'));
}

const char *cli_netlist_ext_check(const char *exts)
{
	const char *p = exts + (exts[0] == '+');
	if (!*p)
		return "an empty list";
	for (;;) {
		size_t n = strcspn(p, ",");
		if (n < 2 || p[0] != '.')
			return "each ending starts with '.' and has a character after it";
		if (memchr(p, '/', n))
			return "an ending cannot hold '/'";
		if (!p[n])
			return NULL;
		p += n + 1;
	}
}

/* Why a file under a folder is not checked, by its ending (docs/check.md,
 * "Files seen"). */
static const char *skip_reason(const char *name)
{
	if (in_list(name, CLI_LIBRARY_EXT))
		return "a library by its name: read through the .include and .lib cards of the "
		       "netlists that use it (see --netlist-ext)";
	if (in_list(name, CLI_FOREIGN_EXT))
		return "a Spectre netlist by its name: headroom reads SPICE netlists only";
	return "name does not end in a netlist extension (see --netlist-ext)";
}

static int add(struct cli_files *l, const char *path)
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

void cli_files_free(struct cli_files *l)
{
	for (size_t i = 0; i < l->n; i++)
		free(l->v[i]);
	free(l->v);
	memset(l, 0, sizeof *l);
}

static int skip(struct cli_skips *s, const char *path, const char *why)
{
	if (!s)
		return 1;
	if (s->n == s->cap) {
		size_t ncap = s->cap ? s->cap * 2 : 32;
		struct cli_skip *v = realloc(s->v, ncap * sizeof *v);
		if (!v)
			return 0;
		s->v = v;
		s->cap = ncap;
	}
	struct cli_skip *k = &s->v[s->n];
	k->path = strdup(path);
	k->why = strdup(why);
	if (!k->path || !k->why) {
		free(k->path);
		free(k->why);
		return 0;
	}
	s->n++;
	return 1;
}

void cli_skips_free(struct cli_skips *s)
{
	for (size_t i = 0; i < s->n; i++) {
		free(s->v[i].path);
		free(s->v[i].why);
	}
	free(s->v);
	memset(s, 0, sizeof *s);
}

static int by_name(const void *a, const void *b)
{
	return strcmp(*(char *const *)a, *(char *const *)b);
}

/* The entries of one folder but "." and "..", in name order; errno set
 * when the folder cannot be opened. */
static int list_dir(const char *dir, struct cli_files *here)
{
	DIR *d = opendir(dir);
	if (!d)
		return 0;
	struct dirent *e;
	size_t dl = strlen(dir);
	int ok = 1;
	while (ok && (e = readdir(d)))
		if (strcmp(e->d_name, ".") != 0 && strcmp(e->d_name, "..") != 0) {
			char path[4096];
			snprintf(path, sizeof path, "%s%s%s", dir,
				 dl && dir[dl - 1] == '/' ? "" : "/", e->d_name);
			ok = add(here, path);
		}
	closedir(d);
	if (here->n > 1)
		qsort(here->v, here->n, sizeof *here->v, by_name);
	return ok ? 1 : -1;
}

struct walk {
	struct cli_files *files;
	struct cli_skips *skips;
	const char *exts;
};

static int scan(const struct walk *w, const char *dir, int depth);

/* One entry of a folder: a folder to walk, a netlist to check, or a
 * skipped entry with its reason. Returns 0 on out-of-memory. */
static int visit(const struct walk *w, const char *path, int depth)
{
	const char *base = strrchr(path, '/') ? strrchr(path, '/') + 1 : path;
	struct stat st;
	int dir = stat(path, &st) == 0 && S_ISDIR(st.st_mode);
	if (base[0] == '.')
		return skip(w->skips, path, dir ? "hidden folder: not walked" : "hidden file");
	if (dir && depth >= CLI_WALK_DEPTH)
		return skip(w->skips, path, "folder nested too deep: not walked");
	if (dir)
		return scan(w, path, depth + 1);
	if (netlist_name(base, w->exts))
		return add(w->files, path);
	return skip(w->skips, path, skip_reason(base));
}

/* Netlists under dir, recursively, in name order. Returns 0 on
 * out-of-memory; a folder that cannot be read is a skipped entry. */
static int scan(const struct walk *w, const char *dir, int depth)
{
	struct cli_files here = {0};
	int r = list_dir(dir, &here);
	if (r == 0) {
		char why[160];
		int n = snprintf(why, sizeof why, "folder cannot be read: %s", strerror(errno));
		size_t k = strlen("folder cannot be read: ");
		if (n > (int)k)
			why[k] = (char)tolower((unsigned char)why[k]);
		if (depth == 0) {
			fprintf(stderr, "%s: error: %s\n", dir, why);
			w->files->unreadable++;
		}
		r = skip(w->skips, dir, why) ? 1 : -1;
	}
	for (size_t i = 0; r > 0 && i < here.n; i++)
		r = visit(w, here.v[i], depth);
	cli_files_free(&here);
	return r > 0;
}

int cli_files_walk(struct cli_files *l, struct cli_skips *s, const char *exts,
		   const char *const *paths, size_t n)
{
	const struct walk w = {l, s, exts};
	for (size_t i = 0; i < n; i++) {
		struct stat st;
		size_t before = l->n;
		if (stat(paths[i], &st) == 0 && S_ISDIR(st.st_mode)) {
			if (!scan(&w, paths[i], 0))
				return 0;
			if (l->n == before) /* [netlist-ext] */
				fprintf(stderr, "%s: warning: no netlists in this folder (names ending "
						"%s; see --netlist-ext)\n",
					paths[i], exts && exts[0] != '+' ? exts : CLI_NETLIST_EXT);
		} else if (!add(l, paths[i])) {
			return 0;
		}
	}
	return 1;
}

int cli_files_expand(struct cli_files *l, const char *const *paths, size_t n)
{
	return cli_files_walk(l, NULL, NULL, paths, n);
}

/* ---- the pool ---- */

struct pool {
	const struct cli_batch *b;
	struct cli_job *jobs;
	char **bufs;             /* n * nout buffers, job by job */
	size_t *lens;
	size_t n, next;
	pthread_mutex_t mu;
	pthread_cond_t cv;
};

/* Runs job j into memory: one stream per output and one for stderr. */
static void run_job(const struct cli_batch *b, struct cli_job *j)
{
	FILE **out = calloc(b->nout, sizeof *out);
	FILE *err = open_memstream(&j->err, &j->errn);
	int ok = out && err;
	for (size_t k = 0; ok && k < b->nout; k++)
		ok = (out[k] = open_memstream(&j->out[k], &j->outn[k])) != NULL;
	j->rc = ok ? b->run(b->ud, j, out, err) : 2;
	for (size_t k = 0; out && k < b->nout; k++)
		if (out[k])
			fclose(out[k]);
	if (err)
		fclose(err);
	free(out);
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

/* Waits for job i, writes it out in order and frees its buffers. */
static int drain(struct pool *pl, size_t i, FILE *const *out)
{
	const struct cli_batch *b = pl->b;
	struct cli_job *j = &pl->jobs[i];
	pthread_mutex_lock(&pl->mu);
	while (!j->done)
		pthread_cond_wait(&pl->cv, &pl->mu);
	pthread_mutex_unlock(&pl->mu);
	b->emit(b->ud, j, out);
	if (b->progress)
		fputs("\r\033[K", stderr);
	if (j->err)
		fwrite(j->err, 1, j->errn, stderr);
	if (b->progress)
		fprintf(stderr, "[%zu/%zu] %s", j->index + 1, pl->n, j->path);
	for (size_t k = 0; k < b->nout; k++)
		free(j->out[k]);
	free(j->err);
	return j->rc;
}

static size_t thread_count(const struct cli_batch *b, size_t n)
{
	size_t t = b->threads ? b->threads : (size_t)sysconf(_SC_NPROCESSORS_ONLN);
	if (t < 1)
		t = 1;
	return t > n ? n : t;
}

/* The pool's jobs and their output buffers; 0 on out-of-memory. */
static int pool_init(struct pool *pl, const struct cli_batch *b, char *const *files, size_t n)
{
	size_t m = n ? n : 1;
	pl->b = b;
	pl->n = n;
	pl->jobs = calloc(m, sizeof *pl->jobs);
	pl->bufs = calloc(m * b->nout, sizeof *pl->bufs);
	pl->lens = calloc(m * b->nout, sizeof *pl->lens);
	if (!pl->jobs || !pl->bufs || !pl->lens)
		return 0;
	for (size_t i = 0; i < n; i++) {
		pl->jobs[i].path = files[i];
		pl->jobs[i].index = i;
		pl->jobs[i].out = pl->bufs + i * b->nout;
		pl->jobs[i].outn = pl->lens + i * b->nout;
	}
	return 1;
}

static void pool_free(struct pool *pl)
{
	free(pl->jobs);
	free(pl->bufs);
	free(pl->lens);
}

int cli_batch_run(const struct cli_batch *b, char *const *files, size_t n,
		  FILE *const *out)
{
	if (n == 1) {
		struct cli_job j = {files[0], 0, NULL, 0, NULL, NULL, 0, 0};
		j.rc = b->run(b->ud, &j, out, stderr);
		b->emit(b->ud, &j, out);
		return j.rc;
	}
	struct pool pl = {0};
	pl.mu = (pthread_mutex_t)PTHREAD_MUTEX_INITIALIZER;
	pl.cv = (pthread_cond_t)PTHREAD_COND_INITIALIZER;
	if (!pool_init(&pl, b, files, n)) {
		pool_free(&pl);
		return 2;
	}
	size_t nthreads = n ? thread_count(b, n) : 0, started = 0;
	pthread_t *th = calloc(nthreads ? nthreads : 1, sizeof *th);
	for (size_t i = 0; th && i < nthreads; i++)
		started += pthread_create(&th[i], NULL, worker, &pl) == 0;
	if (started == 0)
		worker(&pl); /* no threads: do it here */
	int rc = 0;
	for (size_t i = 0; i < n; i++) {
		int r = drain(&pl, i, out);
		rc = r > rc ? r : rc;
	}
	if (b->progress && n)
		fputs("\r\033[K", stderr);
	for (size_t i = 0; i < started; i++)
		pthread_join(th[i], NULL);
	free(th);
	pool_free(&pl);
	return rc;
}
