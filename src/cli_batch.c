/* cli_batch.c: folder walk and the ordered worker pool (cli_batch.h). */
#include "cli_batch.h"

#include <dirent.h>
#include <pthread.h>
#include <stdlib.h>
#include <string.h>
#include <sys/stat.h>
#include <unistd.h>

/* Also in the warning of cli_files_expand and docs/headroom.1 [netlist-ext]. */
static int netlist_name(const char *name)
{
	static const char *const ext[] = {".cir", ".sp", ".spice", ".net", ".ckt", ".cdl"};
	const char *dot = strrchr(name, '.');
	for (size_t i = 0; dot && i < sizeof ext / sizeof ext[0]; i++)
		if (strcmp(dot, ext[i]) == 0)
			return 1;
	return 0;
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

static int by_name(const void *a, const void *b)
{
	return strcmp(*(char *const *)a, *(char *const *)b);
}

/* The entries of one folder, in name order. */
static int list_dir(const char *dir, struct cli_files *here)
{
	DIR *d = opendir(dir);
	if (!d)
		return 0;
	struct dirent *e;
	size_t dl = strlen(dir);
	while ((e = readdir(d)))
		if (e->d_name[0] != '.') {
			char path[4096];
			snprintf(path, sizeof path, "%s%s%s", dir,
				 dl && dir[dl - 1] == '/' ? "" : "/", e->d_name);
			add(here, path);
		}
	closedir(d);
	if (here->n > 1)
		qsort(here->v, here->n, sizeof *here->v, by_name);
	return 1;
}

/* Netlists under dir, recursively, in name order. */
static int scan(const char *dir, struct cli_files *l, int depth)
{
	struct cli_files here = {0};
	if (depth > 32)
		return 1;
	if (!list_dir(dir, &here))
		return 0;
	for (size_t i = 0; i < here.n; i++) {
		struct stat st;
		if (stat(here.v[i], &st) == 0 && S_ISDIR(st.st_mode))
			scan(here.v[i], l, depth + 1);
		else if (netlist_name(here.v[i]))
			add(l, here.v[i]);
	}
	cli_files_free(&here);
	return 1;
}

int cli_files_expand(struct cli_files *l, const char *const *paths, size_t n)
{
	for (size_t i = 0; i < n; i++) {
		struct stat st;
		size_t before = l->n;
		if (stat(paths[i], &st) == 0 && S_ISDIR(st.st_mode)) {
			if (!scan(paths[i], l, 0)) {
				fprintf(stderr, "%s: error: cannot read the folder\n", paths[i]);
				l->unreadable++;
			} else if (l->n == before) {
				/* [netlist-ext] */
				fprintf(stderr, "%s: warning: no netlists in this folder (names ending "
						".cir, .sp, .spice, .net, .ckt or .cdl)\n",
					paths[i]);
			}
		} else if (!add(l, paths[i])) {
			return 0;
		}
	}
	return 1;
}

/* ---- the pool ---- */

struct pool {
	const struct cli_batch *b;
	struct cli_job *jobs;
	size_t n, next;
	pthread_mutex_t mu;
	pthread_cond_t cv;
};

static void run_job(const struct cli_batch *b, struct cli_job *j)
{
	FILE *out = open_memstream(&j->out, &j->outn);
	FILE *err = open_memstream(&j->err, &j->errn);
	FILE *aux = b->want_aux ? open_memstream(&j->aux, &j->auxn) : NULL;
	if (!out || !err || (b->want_aux && !aux))
		j->rc = 2;
	else
		j->rc = b->run(b->ud, j, out, err, aux);
	if (out)
		fclose(out);
	if (err)
		fclose(err);
	if (aux)
		fclose(aux);
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
static int drain(struct pool *pl, size_t i, FILE *out, FILE *aux)
{
	const struct cli_batch *b = pl->b;
	struct cli_job *j = &pl->jobs[i];
	pthread_mutex_lock(&pl->mu);
	while (!j->done)
		pthread_cond_wait(&pl->cv, &pl->mu);
	pthread_mutex_unlock(&pl->mu);
	b->emit(b->ud, j, out, aux);
	if (b->progress)
		fputs("\r\033[K", stderr);
	fwrite(j->err, 1, j->errn, stderr);
	if (b->progress)
		fprintf(stderr, "[%zu/%zu] %s", j->index + 1, pl->n, j->path);
	free(j->out);
	free(j->err);
	free(j->aux);
	return j->rc;
}

static size_t thread_count(const struct cli_batch *b, size_t n)
{
	size_t t = b->threads ? b->threads : (size_t)sysconf(_SC_NPROCESSORS_ONLN);
	if (t < 1)
		t = 1;
	return t > n ? n : t;
}

int cli_batch_run(const struct cli_batch *b, char *const *files, size_t n,
		  FILE *out, FILE *aux)
{
	if (n == 1) {
		struct cli_job j = {files[0], 0, NULL, NULL, NULL, 0, 0, 0, 0, 0};
		j.rc = b->run(b->ud, &j, out, stderr, aux);
		b->emit(b->ud, &j, out, aux);
		return j.rc;
	}
	struct pool pl = {b, calloc(n ? n : 1, sizeof *pl.jobs), n, 0,
			  PTHREAD_MUTEX_INITIALIZER, PTHREAD_COND_INITIALIZER};
	if (!pl.jobs)
		return 2;
	for (size_t i = 0; i < n; i++) {
		pl.jobs[i].path = files[i];
		pl.jobs[i].index = i;
	}
	size_t nthreads = n ? thread_count(b, n) : 0, started = 0;
	pthread_t *th = calloc(nthreads ? nthreads : 1, sizeof *th);
	for (size_t i = 0; th && i < nthreads; i++)
		started += pthread_create(&th[i], NULL, worker, &pl) == 0;
	if (started == 0)
		worker(&pl); /* no threads: do it here */
	int rc = 0;
	for (size_t i = 0; i < n; i++) {
		int r = drain(&pl, i, out, aux);
		rc = r > rc ? r : rc;
	}
	if (b->progress && n)
		fputs("\r\033[K", stderr);
	for (size_t i = 0; i < started; i++)
		pthread_join(th[i], NULL);
	free(th);
	free(pl.jobs);
	return rc;
}
