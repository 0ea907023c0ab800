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

/* An entry met under a folder and not checked, with the reason. */
struct cli_skip {
	char *path, *why; /* malloc'd */
};
struct cli_skips {
	struct cli_skip *v;
	size_t n, cap;
};

/* The file-name endings of netlists under a folder, by default; matched
 * without regard to case. Then what schematic tools and converters write
 * (eSim's ".cir.out", XSPICE's ".deck" and ".spi"), then other simulators'
 * endings, read in the dialect the ending names (a ".sim" file in gnucap's
 * or VACASK's own language is a located error, docs/netlist.md). */
#define CLI_NETLIST_EXT ".cir,.sp,.spice,.net,.ckt,.cdl,.cir.out,.spi,.deck,.sim,.pspice,.hspice,.tspice,.xyce"
/* Endings skipped by default with a reason of their own (cli_batch.c):
 * libraries, languages that are not SPICE. */
#define CLI_LIBRARY_EXT ".lib,.mod,.inc,.sub,.model"
#define CLI_FOREIGN_EXT ".scs,.spectre"
/* Folders nested deeper than this under a folder given are not walked. */
#define CLI_WALK_DEPTH 32

/* NULL when exts is a valid --netlist-ext value: endings such as
 * ".cir,.cir.out", each "." and at least one more character, no '/';
 * a leading '+' adds them to CLI_NETLIST_EXT. Otherwise what is wrong
 * (a static string). */
const char *cli_netlist_ext_check(const char *exts);

/* Appends the files given (whatever their names) and the netlists under
 * the folders given: the files whose names end in one of exts (NULL:
 * CLI_NETLIST_EXT; "+..." adds to it), walked recursively in name order.
 * Every other entry met under a folder goes to s (when not NULL) with the
 * reason: a name with another ending, a hidden file or folder (a name
 * starting with '.'; a hidden folder is one entry, not walked), a folder
 * nested deeper than CLI_WALK_DEPTH or one that cannot be read (a folder
 * given that cannot be read is also reported on stderr). Returns 0 on
 * out-of-memory. */
int cli_files_walk(struct cli_files *l, struct cli_skips *s, const char *exts,
		   const char *const *paths, size_t n);
/* cli_files_walk with the default endings, the skipped entries left out. */
int cli_files_expand(struct cli_files *l, const char *const *paths, size_t n);
void cli_files_free(struct cli_files *l);
void cli_skips_free(struct cli_skips *s);

/* One file's work and, in batch mode, its buffered outputs. */
struct cli_job {
	const char *path;
	size_t index;
	char *err;               /* buffered standard error (batch mode) */
	size_t errn;
	char **out;              /* buffered output streams, nout of each */
	size_t *outn;            /* (batch mode; NULL otherwise) */
	int rc;
	int done;
};

struct cli_batch {
	/* Does one file's work, writing to out[0..nout) and err; returns the
	 * file's exit-status contribution. Called from worker threads. */
	int (*run)(void *ud, const struct cli_job *j, FILE *const *out, FILE *err);
	/* Called on the main thread, in file order, after a job: writes its
	 * buffered outputs j->out[k] to out[k] (j->out NULL in single-file
	 * mode: already written). */
	void (*emit)(void *ud, const struct cli_job *j, FILE *const *out);
	void *ud;
	size_t nout;             /* output streams per job, at least 1 */
	size_t threads;          /* 0: one per processor */
	int progress;            /* a progress line on stderr */
};

/* Runs every file; returns the largest exit-status contribution, or 2 when
 * the batch itself cannot run. */
int cli_batch_run(const struct cli_batch *b, char *const *files, size_t n,
		  FILE *const *out);

#endif
