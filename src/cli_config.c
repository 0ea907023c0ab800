/* cli_config.c: the project configuration of check (cli_config.h). The
 * INI syntax is libinih's; this file finds the file, gives each line to
 * libinih through a reader that counts lines (so every error is located),
 * and turns each key into the option it stands for, checked by the
 * command line's own code (cli_set_option, cli_report_spec). */
#include "cli_config.h"

#include <errno.h>
#include <ini.h>
#include <limits.h>
#include <math.h>
#include <stdarg.h>
#include <stdint.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>
#include <sys/stat.h>
#include <unistd.h>

#include "arena.h"
#include "cli_batch.h"
#include "diag.h"
#include "profile.h"
#include "suggest.h"

enum key_kind { KEY_PATH,
		KEY_PROFILE,
		KEY_VALUE,
		KEY_EXT,
		KEY_REPORTS };

/* Each key and the option it stands for (docs/check.md, "Project
 * configuration"). */
static const struct key {
	const char *name, *option;
	enum key_kind kind;
} keys[] = {
	{"profile", "--profile", KEY_PROFILE},
	{"parts", "--parts", KEY_PATH},
	{"bom", "--bom", KEY_PATH},
	{"waivers", "--waivers", KEY_PATH},
	{"baseline", "--baseline", KEY_PATH},
	{"fail-on", "--fail-on", KEY_VALUE},
	{"netlist-ext", "--netlist-ext", KEY_EXT},
	{"dialect", "--dialect", KEY_VALUE},
	{"source-tol", "--source-tol", KEY_VALUE},
	{"ambient", "--ambient", KEY_VALUE},
	{"jobs", "-j", KEY_VALUE},
	{"reports", NULL, KEY_REPORTS},
};
#define NKEYS (sizeof keys / sizeof keys[0])

/* The state of one read. */
struct parse {
	FILE *f;
	struct cli_config *cfg;
	uint32_t file;          /* the file's id in cfg->d */
	const char *dir;        /* the file's folder with its '/', or "" */
	uint32_t line;          /* lines given to libinih so far */
	uint32_t section_line;  /* the last line opening a section */
	uint32_t section_col;   /* where its name starts */
	uint32_t bad_section;   /* the unknown section last reported */
	uint32_t seen[NKEYS];   /* the line that set each key */
	char raw[INI_MAX_LINE]; /* the current line as read, for columns */
};

/* ---- finding the file ---- */

static int is_file(const char *path)
{
	struct stat st;
	return stat(path, &st) == 0 && S_ISREG(st.st_mode);
}

/* A repository's root: a folder holding .git (a folder, or a file in a
 * linked worktree). */
static int is_repo_root(const char *dir)
{
	char probe[PATH_MAX + 8];
	struct stat st;
	snprintf(probe, sizeof probe, "%s/.git", strcmp(dir, "/") == 0 ? "" : dir);
	return lstat(probe, &st) == 0;
}

/* CLI_CONFIG_NAME in dir's chain of parents; rel ("", "../", ...) names
 * dir from the current folder. */
static char *walk_up(char *dir, char *rel, size_t reln, int *oom)
{
	char path[PATH_MAX + 16];
	for (;;) {
		snprintf(path, sizeof path, "%s%s", rel, CLI_CONFIG_NAME);
		if (is_file(path)) {
			char *found = strdup(path);
			*oom = !found;
			return found;
		}
		char *slash = strrchr(dir, '/');
		if (is_repo_root(dir) || !slash || strcmp(dir, "/") == 0 || strlen(rel) + 4 > reln)
			return NULL;
		slash[slash == dir] = '\0'; /* "/a" -> "/" */
		strcat(rel, "../");
	}
}

char *cli_config_find(const struct cli *c, int *oom)
{
	char dir[PATH_MAX], rel[PATH_MAX] = "";
	*oom = 0;
	if (c->no_config)
		return NULL;
	if (c->config) {
		char *p = strdup(c->config);
		*oom = !p;
		return p;
	}
	if (!getcwd(dir, sizeof dir))
		return NULL;
	return walk_up(dir, rel, sizeof rel, oom);
}

/* ---- reading ---- */

static void located(struct parse *p, uint32_t line, uint32_t col, const char *fmt, ...)
	DIAG_PRINTF(4, 5);
static void located(struct parse *p, uint32_t line, uint32_t col, const char *fmt, ...)
{
	va_list ap;
	va_start(ap, fmt);
	diag_vadd(p->cfg->d, DIAG_ERROR, "config", (struct diag_loc){p->file, line, col}, fmt, ap);
	va_end(ap);
}

/* 1-based column of what in the current line (first match after from), or
 * the first non-blank column. */
static uint32_t column_of(const struct parse *p, const char *what, size_t from)
{
	const char *at = *what && from < strlen(p->raw) ? strstr(p->raw + from, what) : NULL;
	if (!at)
		at = p->raw + strspn(p->raw, " \t");
	return (uint32_t)(at - p->raw) + 1;
}

/* The column of a key's value in the current line (after the first '='
 * or ':'; on a continuation line, its first non-blank). */
static uint32_t value_col(const struct parse *p, const char *val)
{
	return column_of(p, val, strcspn(p->raw, "=:") + 1);
}

/* libinih's line reader (fgets' contract): counts lines, keeps the raw
 * text and the last section header's line; a line longer than libinih's
 * buffer is an error and is given as an empty line. */
static char *read_line(char *str, int num, void *stream)
{
	struct parse *p = stream;
	if (!fgets(str, num, p->f))
		return NULL;
	p->line++;
	size_t n = strlen(str);
	if (n + 1 == (size_t)num && str[n - 1] != '\n' && !feof(p->f)) {
		int ch;
		while ((ch = fgetc(p->f)) != EOF && ch != '\n')
			;
		located(p, p->line, 1, "line longer than %d bytes", num - 1);
		str[0] = '\0';
	}
	snprintf(p->raw, sizeof p->raw, "%s", str);
	size_t lead = strspn(str, " \t");
	if (str[lead] == '[' && strchr(str + lead, ']')) { /* as libinih tells a header */
		p->section_line = p->line;
		p->section_col = (uint32_t)(lead + 2);
	}
	return str;
}

/* A path of the file, from the file's folder (absolute paths kept). */
static const char *resolve(struct parse *p, const char *val)
{
	if (val[0] == '/' || !p->dir[0])
		return arena_strdup(p->cfg->ar, val);
	size_t a = strlen(p->dir), b = strlen(val);
	char *s = arena_alloc(p->cfg->ar, a + b + 1);
	if (s) {
		memcpy(s, p->dir, a);
		memcpy(s + a, val, b + 1);
	}
	return s;
}

/* A path key's file must be there to be read. */
static const char *existing(struct parse *p, const struct key *k, const char *val)
{
	const char *path = resolve(p, val);
	if (path && access(path, R_OK) != 0) {
		located(p, p->line, value_col(p, val), "%s: cannot read '%s' (paths are from this "
						       "file's folder)",
			k->name, path);
		return NULL;
	}
	return path;
}

static int add_report(struct cli_config *cfg, const char *spec)
{
	if (cfg->nreports == cfg->cap) {
		size_t ncap = cfg->cap ? cfg->cap * 2 : 8;
		const char **v = realloc(cfg->reports, ncap * sizeof *v);
		if (!v)
			return 0;
		cfg->reports = v;
		cfg->cap = ncap;
	}
	cfg->reports[cfg->nreports++] = spec;
	return 1;
}

/* reports = FORMAT=FILE: the key again, or an indented line under it,
 * adds one more. */
static void set_report(struct parse *p, const char *val)
{
	char why[SUGGEST_HINT_SIZE + 160];
	const char *file;
	size_t fmt;
	if (cli_report_spec(val, &fmt, &file, why, sizeof why)) {
		located(p, p->line, value_col(p, val), "reports: %s", why);
		return;
	}
	const char *path = resolve(p, file);
	size_t n = strlen(cli_check_formats[fmt]) + strlen(path ? path : "") + 2;
	char *spec = path ? arena_alloc(p->cfg->ar, n) : NULL;
	if (spec)
		snprintf(spec, n, "%s=%s", cli_check_formats[fmt], path);
	if (!spec || !add_report(p->cfg, spec))
		located(p, p->line, 1, "out of memory");
}

/* A profile by name: one the program finds (shipped, or in
 * $HEADROOM_RULES). */
static int known_profile(struct parse *p, const char *name, uint32_t col)
{
	char path[1024], hint[SUGGEST_HINT_SIZE];
	size_t n = 0;
	if (profile_find(name, p->cfg->set.argv0, path, sizeof path))
		return 1;
	while (profile_shipped[n])
		n++;
	located(p, p->line, col, "no profile '%s' (basic, industrial, flight, or a file)%s", name,
		cli_hint(name, profile_shipped, n, hint, sizeof hint));
	return 0;
}

/* One key's value, checked as its option's would be. */
static void set_key(struct parse *p, const struct key *k, const char *val)
{
	char why[SUGGEST_HINT_SIZE + 160];
	const char *v = arena_strdup(p->cfg->ar, val), *bad; /* val is libinih's buffer */
	uint32_t col = value_col(p, val);
	switch (k->kind) {
	case KEY_REPORTS:
		set_report(p, val);
		return;
	case KEY_EXT:
		if ((bad = cli_netlist_ext_check(val))) {
			located(p, p->line, col, "netlist-ext takes endings such as .cir,.sp or +.nl: %s",
				bad);
			return;
		}
		break;
	case KEY_PROFILE:
		if (strchr(val, '/') || strstr(val, ".profile"))
			v = existing(p, k, val);
		else if (!known_profile(p, val, col))
			return;
		break;
	case KEY_PATH:
		v = existing(p, k, val);
		break;
	case KEY_VALUE:
		break;
	}
	if (!v && !diag_errors(p->cfg->d, UINT32_MAX))
		located(p, p->line, 1, "out of memory");
	if (v && cli_set_option(&p->cfg->set, k->option, k->name, v, why, sizeof why))
		located(p, p->line, col, "%s", why);
}

/* A key outside [check], or in a section of another name: located at
 * the section's header, once. */
static int in_section(struct parse *p, const char *section, const char *name)
{
	char hint[SUGGEST_HINT_SIZE];
	static const char *const known[] = {CLI_CONFIG_SECTION};
	if (strcmp(section, CLI_CONFIG_SECTION) == 0)
		return 1;
	if (!section[0])
		located(p, p->line, column_of(p, name, 0),
			"'%s' is outside a section: the settings go under [%s]", name,
			CLI_CONFIG_SECTION);
	else if (p->bad_section != p->section_line)
		located(p, p->section_line, p->section_col,
			"unknown section [%s] (the settings go under [" CLI_CONFIG_SECTION "])%s",
			section, cli_hint(section, known, 1, hint, sizeof hint));
	p->bad_section = p->section_line;
	return 0;
}

static const struct key *key_named(struct parse *p, const char *name)
{
	char hint[SUGGEST_HINT_SIZE];
	const char *names[NKEYS];
	for (size_t i = 0; i < NKEYS; i++) {
		names[i] = keys[i].name;
		if (strcmp(name, keys[i].name) == 0)
			return &keys[i];
	}
	located(p, p->line, column_of(p, name, 0), "unknown key '%s'%s", name,
		cli_hint(name, names, NKEYS, hint, sizeof hint));
	return NULL;
}

/* libinih's handler: one key = value of one section. Errors are recorded
 * here, located, so it always asks libinih to go on. */
static int on_key(void *user, const char *section, const char *name, const char *value)
{
	struct parse *p = user;
	const struct key *k = in_section(p, section, name) ? key_named(p, name) : NULL;
	if (!k)
		return 1;
	size_t i = (size_t)(k - keys);
	if (p->seen[i] && k->kind != KEY_REPORTS)
		located(p, p->line, column_of(p, name, 0), "'%s' is set again (first on line %u)",
			name, (unsigned)p->seen[i]);
	else if (!value[0])
		located(p, p->line, column_of(p, name, 0), "'%s' has no value", name);
	else
		set_key(p, k, value);
	if (!p->seen[i])
		p->seen[i] = p->line;
	return 1;
}

/* The folder of path with its '/', or "" (arena). */
static const char *folder_of(struct arena *ar, const char *path)
{
	const char *slash = strrchr(path, '/');
	return arena_strndup(ar, path, slash ? (size_t)(slash - path) + 1 : 0);
}

/* Reads cfg->path into cfg; 0 when it cannot be read or has errors
 * (recorded in cfg->d, or printed). */
static int read_file(struct cli_config *cfg)
{
	struct parse *p = arena_zalloc(cfg->ar, sizeof *p);
	if (!p || !(p->dir = folder_of(cfg->ar, cfg->path)) ||
	    (p->file = diag_add_file(cfg->d, cfg->path)) == UINT32_MAX) {
		fprintf(stderr, "headroom: out of memory\n");
		return 0;
	}
	p->cfg = cfg;
	struct stat st;
	int there = stat(cfg->path, &st) == 0;
	p->f = there && S_ISREG(st.st_mode) ? fopen(cfg->path, "r") : NULL;
	if (!p->f) {
		fprintf(stderr, "headroom: cannot read the configuration '%s': %s\n", cfg->path,
			!there ? "no such file" : !S_ISREG(st.st_mode) ? "not a file"
								       : strerror(errno));
		return 0;
	}
	int bad = ini_parse_stream(read_line, p, on_key, p);
	fclose(p->f);
	if (bad > 0) /* libinih's first line it could not read */
		located(p, (uint32_t)bad, 1, "expected '[section]' or 'key = value'");
	else if (bad < 0)
		fprintf(stderr, "headroom: out of memory\n");
	return bad == 0 && diag_errors(cfg->d, UINT32_MAX) == 0 && !diag_oom(cfg->d);
}

/* The file's settings where c leaves them unset. */
static void merge(const struct cli *c, const struct cli_config *cfg, struct cli *out)
{
	const struct cli *s = &cfg->set;
	*out = *c;
	out->profile = c->profile ? c->profile : s->profile;
	out->parts = c->parts ? c->parts : s->parts;
	out->bom = c->bom ? c->bom : s->bom;
	out->waivers = c->waivers ? c->waivers : s->waivers;
	out->baseline = c->baseline ? c->baseline : s->baseline;
	out->netlist_ext = c->netlist_ext ? c->netlist_ext : s->netlist_ext;
	out->jobs = c->jobs ? c->jobs : s->jobs;
	out->source_tol = isnan(c->source_tol) ? s->source_tol : c->source_tol;
	out->ambient = isnan(c->ambient) ? s->ambient : c->ambient;
	if (!c->fail_on_given && s->fail_on_given)
		out->fail_on = s->fail_on;
	if (!c->dialect_given && s->dialect_given)
		out->eo.dialect = s->eo.dialect;
	if (!c->nreports) {
		out->reports = cfg->reports;
		out->nreports = cfg->nreports;
	}
}

int cli_config_settle(const struct cli *c, struct cli *out, struct cli_config *cfg)
{
	struct hr_alloc hook = hr_alloc_default();
	int oom;
	memset(cfg, 0, sizeof *cfg);
	*out = *c;
	if (!(cfg->path = cli_config_find(c, &oom)))
		return oom ? (fprintf(stderr, "headroom: out of memory\n"), 0) : 1;
	cfg->ar = arena_create(&hook);
	cfg->d = cfg->ar ? diag_create(cfg->ar, 0) : NULL;
	if (!cfg->d) {
		fprintf(stderr, "headroom: out of memory\n");
		return 0;
	}
	cfg->set.source_tol = NAN;
	cfg->set.ambient = NAN;
	cfg->set.argv0 = c->argv0;
	int ok = read_file(cfg);
	diag_render(cfg->d, UINT32_MAX, stderr);
	if (!ok)
		return 0;
	fprintf(stderr, "headroom: settings from %s (the command line overrides them; "
			"--no-config ignores the file)\n",
		cfg->path);
	merge(c, cfg, out);
	return 1;
}

void cli_config_free(struct cli_config *cfg)
{
	free(cfg->path);
	free(cfg->reports);
	diag_destroy(cfg->d);
	arena_destroy(cfg->ar);
	memset(cfg, 0, sizeof *cfg);
}
