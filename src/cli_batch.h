/* cli_batch.h: the program's batch runner: the netlists under the folders
 * given (recursive, name order), and a pool of worker threads that check
 * them while their outputs are written in file order whatever the number
 * of threads. A single file is streamed straight to the output. */
#ifndef HEADROOM_CLI_BATCH_H
#define HEADROOM_CLI_BATCH_H

#include <stddef.h>
#include <stdio.h>

/* A list of paths (malloc'd strings). */
struct cli_files {
	char **v;
	size_t n, cap;
	size_t unreadable;       /* folders that could not be read */
};

/* Appends the files given and the netlists under the folders given.
 * Returns 0 on out-of-memory; an unreadable folder is reported, counted
 * in unreadable and skipped; a folder with no netlists gets a warning. */
int cli_files_expand(struct cli_files *l, const char *const *paths, size_t n);
void cli_files_free(struct cli_files *l);

/* One file's work and, in batch mode, its buffered outputs. */
struct cli_job {
	const char *path;
	size_t index;
	char *out, *err, *aux;   /* buffered outputs (batch mode) */
	size_t outn, errn, auxn;
	int rc;
	int done;
};

struct cli_batch {
	/* Does one file's work, writing to out, err and aux (aux NULL when
	 * not wanted); returns the file's exit-status contribution. Called
	 * from worker threads. */
	int (*run)(void *ud, const struct cli_job *j, FILE *out, FILE *err, FILE *aux);
	/* Called on the main thread, in file order, after a job: writes its
	 * buffered out and aux (NULL in single-file mode, already written). */
	void (*emit)(void *ud, const struct cli_job *j, FILE *out, FILE *aux);
	void *ud;
	size_t threads;          /* 0: one per processor */
	int want_aux;
	int progress;            /* a progress line on stderr */
};

/* Runs every file; returns the largest exit-status contribution, or 2 when
 * the batch itself cannot run. */
int cli_batch_run(const struct cli_batch *b, char *const *files, size_t n,
		  FILE *out, FILE *aux);

#endif
