/* cli_out.h: output files of the program (reports, baselines, sim CSV).
 * A regular file is written beside its final name and renamed into place
 * only when the run succeeds, so a failed run leaves an old report alone;
 * where the system allows (Linux O_TMPFILE), the new file has no name
 * until then, so a run that is killed leaves nothing behind either;
 * a symbolic link is followed and its target replaced the same way; a
 * target that is not a regular file (a device such as /dev/null, a FIFO)
 * is written directly and never replaced. */
#ifndef HEADROOM_CLI_OUT_H
#define HEADROOM_CLI_OUT_H

#include <stdio.h>

struct cli_out {
	FILE *f;             /* write here */
	const char *path;    /* as given */
	char *target;        /* the file replaced (link resolved), malloc'd */
	char *tmp;           /* temporary name, malloc'd; NULL when direct
				or (until closing) unnamed */
	int unnamed;         /* an O_TMPFILE, given a name only at close */
};

/* Opens path for writing. Returns 0 and prints why on failure. */
int cli_out_open(struct cli_out *o, const char *path);

/* Finishes: with ok, the new file replaces the old; without, the old one
 * stays and the temporary file is removed. Returns 0 (and prints why)
 * when writing failed. */
int cli_out_close(struct cli_out *o, int ok);

#endif
