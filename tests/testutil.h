/* testutil.h: helpers shared by the unit tests: netlists served from memory
 * (through the elaboration open hook), diagnostics rendered to a string,
 * and an allocation hook that fails the Nth call. */
#ifndef HEADROOM_TESTUTIL_H
#define HEADROOM_TESTUTIL_H

#include <stdarg.h>
#include <stddef.h>
#include <setjmp.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>
#include <cmocka.h>

#include "arena.h"
#include "diag.h"
#include "elab.h"
#include "nl.h"

#define MEMFS_MAX 8

/* In-memory files: name -> text. */
struct memfs {
	const char *name[MEMFS_MAX];
	const char *text[MEMFS_MAX];
	int n;
};

static inline FILE *memfs_open(void *ud, const char *path)
{
	struct memfs *fs = ud;
	for (int i = 0; i < fs->n; i++)
		if (strcmp(fs->name[i], path) == 0)
			return fmemopen((void *)fs->text[i], strlen(fs->text[i]), "r");
	return fopen("/nonexistent/headroom-test", "r"); /* sets errno */
}

/* Fails allocation number `fail_at` (1-based) and every later one when
 * `sticky`; counts calls. */
struct failing {
	long calls;
	long fail_at;
	int sticky;
};

static inline void *failing_resize(void *ud, void *p, size_t n)
{
	struct failing *f = ud;
	if (n == 0) {
		free(p);
		return NULL;
	}
	f->calls++;
	if (f->fail_at > 0 && (f->calls == f->fail_at ||
			       (f->sticky && f->calls > f->fail_at)))
		return NULL;
	return realloc(p, n);
}

/* One elaboration run with everything it owns. */
struct run {
	struct hr_alloc hook;
	struct arena *ar;
	struct diag_sink *d;
	struct elab_result r;
	enum elab_status st;
	char *diags; /* rendered diagnostics, without source quotes */
};

static inline char *render_headers(const struct diag_sink *d)
{
	char *buf = NULL;
	size_t len = 0;
	FILE *f = open_memstream(&buf, &len);
	char line[1024];
	for (size_t i = 0; i < diag_count(d); i++) {
		diag_format(d, diag_at(d, i), line, sizeof line);
		fprintf(f, "%s\n", line);
	}
	fclose(f);
	return buf;
}

static inline void run_va(struct run *run, enum dialect dialect, const char *top, va_list ap)
{
	static struct memfs fs;
	memset(&fs, 0, sizeof fs);
	fs.name[0] = "top.cir";
	fs.text[0] = top;
	fs.n = 1;
	const char *name;
	while ((name = va_arg(ap, const char *)) && fs.n < MEMFS_MAX) {
		fs.name[fs.n] = name;
		fs.text[fs.n++] = va_arg(ap, const char *);
	}
	memset(run, 0, sizeof *run);
	run->hook = hr_alloc_default();
	run->ar = arena_create(&run->hook);
	run->d = diag_create(run->ar, 50);
	struct elab_opts o = {0};
	o.open = memfs_open;
	o.open_ud = &fs;
	o.dialect = dialect;
	run->st = elab_file("top.cir", &o, &run->hook, run->d, &run->r);
	run->diags = render_headers(run->d);
}

/* Elaborates `top` (named "top.cir") plus extra files given as name, text
 * pairs ending with NULL. */
static inline void run_files(struct run *run, const char *top, ...)
{
	va_list ap;
	va_start(ap, top);
	run_va(run, DIALECT_AUTO, top, ap);
	va_end(ap);
}

/* As run_files, read in the given dialect. */
static inline void run_dialect(struct run *run, enum dialect dialect, const char *top, ...)
{
	va_list ap;
	va_start(ap, top);
	run_va(run, dialect, top, ap);
	va_end(ap);
}

static inline void run_text(struct run *run, const char *top)
{
	run_files(run, top, (const char *)NULL);
}

static inline void run_free(struct run *run)
{
	nl_destroy(run->r.circuit);
	diag_destroy(run->d);
	arena_destroy(run->ar);
	free(run->diags);
}

/* Finds a part by path (exact case); NULL if absent. */
static inline const struct nl_part *find_part(const struct run *run, const char *path)
{
	const struct nl_circuit *c = run->r.circuit;
	for (size_t i = 0; c && i < nl_part_count(c); i++)
		if (strcmp(nl_part_at(c, i)->path, path) == 0)
			return nl_part_at(c, i);
	return NULL;
}

static inline const char *pin_name(const struct run *run, const struct nl_part *p,
			    int k)
{
	return nl_node_at(run->r.circuit, nl_pins(run->r.circuit, p)[k])->name;
}

#endif
