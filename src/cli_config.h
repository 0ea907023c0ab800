/* cli_config.h: the project configuration of `headroom check`: a file of
 * settings (CLI_CONFIG_NAME) found from the current folder up, or named by
 * --config, read with libinih. It fills what the command line leaves
 * unset; checking the values is left to the same code as the options'. */
#ifndef HEADROOM_CLI_CONFIG_H
#define HEADROOM_CLI_CONFIG_H

#include <stddef.h>

#include "cli.h"

#define CLI_CONFIG_NAME "headroom.ini"
/* The one section the file holds (others are left for other commands). */
#define CLI_CONFIG_SECTION "check"

struct arena;
struct diag_sink;

/* A configuration read: what the settled command line points into. */
struct cli_config {
	char *path;           /* the file read, as found (malloc'd); NULL: none */
	struct arena *ar;     /* its values, paths resolved */
	struct diag_sink *d;  /* its errors, located file:line:col */
	struct cli set;       /* the file's settings, unset fields as main leaves them */
	const char **reports; /* "FORMAT=FILE", FILE from the file's folder */
	size_t nreports, cap; /* (reports malloc'd) */
};

/* The file the run reads: c->config when given; none with c->no_config;
 * else CLI_CONFIG_NAME in the current folder or the nearest folder above
 * it, the walk ending at a folder holding .git (a repository's root) or
 * the filesystem's root. Returns it malloc'd ("../headroom.ini"), or NULL
 * (*oom set when memory ran out). */
char *cli_config_find(const struct cli *c, int *oom);

/* Settles check's settings: reads the configuration (cli_config_find)
 * into cfg and fills *out with c, each setting c leaves unset taken from
 * the file (paths in the file are relative to its folder; the file's
 * reports are used only when c has no --report). Names the file used in
 * one line on stderr. Returns 0 when the file cannot be read or has
 * errors (rendered on stderr, each located, unknown keys with a "did you
 * mean"). *out borrows from c and cfg: cli_config_free(cfg) after use. */
int cli_config_settle(const struct cli *c, struct cli *out, struct cli_config *cfg);

/* Frees what cfg holds; a zeroed cfg is fine. */
void cli_config_free(struct cli_config *cfg);

#endif
