/* diag.c: the diagnostic sink and its plain-text rendering. Quoting a
 * source line re-reads the file, so the front end never has to keep whole
 * files in memory. */
#include "diag.h"
#include "infile.h"

#include <errno.h>

#include <stdlib.h>
#include <string.h>

#define DIAG_QUOTE_MAX 240

struct diag_sink {
	struct arena *ar;
	const struct hr_alloc *hook;
	struct diag *items;
	size_t n, cap;
	const char **files;
	size_t nfiles, capfiles;
	uint32_t unit;
	unsigned max_errors;
	unsigned unit_errors;
	int full;
	int oom;
};

struct diag_sink *diag_create(struct arena *ar, unsigned max_errors)
{
	struct diag_sink *s = arena_zalloc(ar, sizeof *s);
	if (!s)
		return NULL;
	s->ar = ar;
	s->hook = arena_hook(ar);
	s->max_errors = max_errors;
	return s;
}

void diag_destroy(struct diag_sink *s)
{
	if (!s)
		return;
	hr_free(s->hook, s->items);
	hr_free(s->hook, s->files);
}

static int grow(const struct hr_alloc *h, void **p, size_t *cap, size_t need,
		size_t elem)
{
	if (need <= *cap)
		return 1;
	size_t ncap = *cap ? *cap * 2 : 16;
	while (ncap < need)
		ncap *= 2;
	void *q = hr_realloc(h, *p, ncap * elem);
	if (!q)
		return 0;
	*p = q;
	*cap = ncap;
	return 1;
}

uint32_t diag_add_file(struct diag_sink *s, const char *path)
{
	void *files = s->files;
	if (!grow(s->hook, &files, &s->capfiles, s->nfiles + 1, sizeof *s->files))
		return UINT32_MAX;
	s->files = files;
	const char *copy = arena_strdup(s->ar, path);
	if (!copy)
		return UINT32_MAX;
	s->files[s->nfiles] = copy;
	return (uint32_t)s->nfiles++;
}

const char *diag_file_name(const struct diag_sink *s, uint32_t id)
{
	return id < s->nfiles ? s->files[id] : "<unknown>";
}

void diag_set_unit(struct diag_sink *s, uint32_t file)
{
	s->unit = file;
	s->unit_errors = 0;
	s->full = 0;
}

static void push(struct diag_sink *s, struct diag d)
{
	void *items = s->items;
	if (!grow(s->hook, &items, &s->cap, s->n + 1, sizeof *s->items)) {
		s->oom = 1;
		return;
	}
	s->items = items;
	s->items[s->n++] = d;
}

void diag_vadd(struct diag_sink *s, enum diag_severity sev, const char *code,
	       struct diag_loc loc, const char *fmt, va_list ap)
{
	if (s->full)
		return;
	char buf[512];
	vsnprintf(buf, sizeof buf, fmt, ap);
	struct diag d = {sev, code, arena_strdup(s->ar, buf), loc, s->unit};
	if (!d.message) {
		s->oom = 1;
		return;
	}
	push(s, d);
	if (sev != DIAG_ERROR || s->max_errors == 0)
		return;
	if (++s->unit_errors < s->max_errors)
		return;
	s->full = 1;
	struct diag last = {DIAG_NOTE, "error-cap", NULL, loc, s->unit};
	snprintf(buf, sizeof buf, "stopped after %u errors in this file",
		 s->max_errors);
	last.message = arena_strdup(s->ar, buf);
	if (last.message)
		push(s, last);
}

void diag_add(struct diag_sink *s, enum diag_severity sev, const char *code,
	      struct diag_loc loc, const char *fmt, ...)
{
	va_list ap;
	va_start(ap, fmt);
	diag_vadd(s, sev, code, loc, fmt, ap);
	va_end(ap);
}

int diag_full(const struct diag_sink *s)
{
	return s->full;
}

int diag_oom(const struct diag_sink *s)
{
	return s->oom;
}

size_t diag_count(const struct diag_sink *s)
{
	return s->n;
}

const struct diag *diag_at(const struct diag_sink *s, size_t i)
{
	return i < s->n ? &s->items[i] : NULL;
}

size_t diag_errors(const struct diag_sink *s, uint32_t unit)
{
	size_t k = 0;
	for (size_t i = 0; i < s->n; i++)
		if (s->items[i].severity == DIAG_ERROR &&
		    (unit == UINT32_MAX || s->items[i].unit == unit))
			k++;
	return k;
}

const char *diag_severity_name(enum diag_severity sev)
{
	switch (sev) {
	case DIAG_ERROR:
		return "error";
	case DIAG_WARNING:
		return "warning";
	default:
		return "note";
	}
}

void diag_format(const struct diag_sink *s, const struct diag *d, char *buf,
		 size_t n)
{
	const char *file = diag_file_name(s, d->loc.file);
	const char *sev = diag_severity_name(d->severity);
	if (d->loc.line == 0)
		snprintf(buf, n, "%s: %s: %s [%s]", file, sev, d->message, d->code);
	else
		snprintf(buf, n, "%s:%u:%u: %s: %s [%s]", file, d->loc.line,
			 d->loc.col, sev, d->message, d->code);
}

/* Reads line `line` (1-based) of path into buf, without its line end.
 * Returns 0 when the file or the line cannot be read. */
static int read_line(const char *path, uint32_t line, char *buf, size_t n)
{
	FILE *f = infile_open(path);
	if (!f)
		return 0;
	uint32_t cur = 1;
	size_t k = 0;
	int c, ok = 0;
	while ((c = getc(f)) != EOF) {
		if (c == '\n') {
			if (cur == line) {
				ok = 1;
				break;
			}
			cur++;
			continue;
		}
		if (cur == line && k + 1 < n && c != '\r' && c != '\0')
			buf[k++] = (char)c;
	}
	if (c == EOF && cur == line)
		ok = 1;
	fclose(f);
	buf[k] = '\0';
	return ok;
}

static void render_quote(const struct diag_sink *s, const struct diag *d,
			 FILE *out)
{
	char text[DIAG_QUOTE_MAX + 1];
	if (d->loc.line == 0 ||
	    !read_line(diag_file_name(s, d->loc.file), d->loc.line, text,
		       sizeof text))
		return;
	fprintf(out, "    %s\n    ", text);
	/* Copy tabs so the caret lines up whatever the tab width. */
	size_t len = strlen(text);
	for (uint32_t i = 1; i < d->loc.col && i - 1 < len; i++)
		fputc(text[i - 1] == '\t' ? '\t' : ' ', out);
	fputs("^\n", out);
}

void diag_render(const struct diag_sink *s, uint32_t unit, FILE *out)
{
	char head[1024];
	for (size_t i = 0; i < s->n; i++) {
		const struct diag *d = &s->items[i];
		if (unit != UINT32_MAX && d->unit != unit)
			continue;
		diag_format(s, d, head, sizeof head);
		fprintf(out, "%s\n", head);
		if (d->severity != DIAG_NOTE || strcmp(d->code, "error-cap") != 0)
			render_quote(s, d, out);
	}
}
