/* report_files.c: what every report says about the files of a run apart
 * from findings (report_formats.h): the counts of files seen, checked, not
 * checked and skipped, why a file was not checked, and each file's own
 * diagnostics (netlist errors, reader warnings), with their text and JSON
 * forms. The other formats build theirs from the same functions. */
#include "report_formats.h"

#include <stdlib.h>
#include <string.h>

#include "report_parts.h"

struct report_counts report_counts_of(const struct check_totals *t)
{
	struct report_counts c;
	c.not_checked = t->netlist_errors;
	c.checked = t->files - t->netlist_errors;
	c.skipped = t->nskipped;
	c.seen = t->files + t->nskipped;
	return c;
}

size_t report_diag_n(const struct check_file *f)
{
	return f->d ? diag_count(f->d) : 0;
}

const struct diag *report_diag_at(const struct check_file *f, size_t i)
{
	return f->d ? diag_at(f->d, i) : NULL;
}

size_t report_diag_count(const struct check_file *f, enum diag_severity sev)
{
	size_t k = 0;
	for (size_t i = 0; i < report_diag_n(f); i++)
		k += report_diag_at(f, i)->severity == sev;
	return k;
}

const char *report_diag_file(const struct check_file *f, const struct diag *g)
{
	const char *name = diag_file_name(f->d, g->loc.file);
	return name ? name : f->path;
}

void report_diag_line(const struct check_file *f, const struct diag *g, char *buf,
		      size_t n)
{
	diag_format(f->d, g, buf, n);
}

const char *report_not_checked(const struct check_file *f, char *buf, size_t n)
{
	size_t e = report_diag_count(f, DIAG_ERROR);
	if (e == 0)
		snprintf(buf, n, "out of memory");
	else
		snprintf(buf, n, "%zu netlist error%s", e, e == 1 ? "" : "s");
	return buf;
}

static const char *plural(size_t n)
{
	return n == 1 ? "" : "s";
}

/* ---- text ---- */

void report_text_diags(FILE *out, const struct check_file *f)
{
	char line[1200];
	for (size_t i = 0; i < report_diag_n(f); i++) {
		report_diag_line(f, report_diag_at(f, i), line, sizeof line);
		fprintf(out, "%s\n", line);
	}
}

void report_text_skipped(FILE *out, const struct check_totals *t)
{
	for (size_t i = 0; i < t->nskipped; i++)
		fprintf(out, "%s: skipped: %s\n", t->skipped[i].path, t->skipped[i].why);
}

void report_text_counts(FILE *out, const struct check_totals *t)
{
	struct report_counts c = report_counts_of(t);
	fprintf(out, "%zu file%s seen: %zu checked, %zu not checked, %zu skipped\n", c.seen,
		plural(c.seen), c.checked, c.not_checked, c.skipped);
	fprintf(out, "findings: %zu error%s, %zu warning%s, %zu note%s", t->errors,
		plural(t->errors), t->warnings, plural(t->warnings), t->notes, plural(t->notes));
	fprintf(out, "; reading the netlists: %zu error%s, %zu warning%s, %zu note%s\n",
		t->read_errors, plural(t->read_errors), t->read_warnings,
		plural(t->read_warnings), t->read_notes, plural(t->read_notes));
}

/* ---- JSON ---- */

static void json_diag(FILE *out, const struct check_file *f, const struct diag *g)
{
	fputs("{\"file\": ", out);
	report_json_string(out, report_diag_file(f, g));
	fprintf(out, ", \"line\": %u, \"col\": %u, \"severity\": \"%s\", \"code\": ", g->loc.line,
		g->loc.col, diag_severity_name(g->severity));
	report_json_string(out, g->code);
	fputs(", \"message\": ", out);
	report_json_string(out, g->message);
	fputc('}', out);
}

/* The diagnostics of f that are errors (errors 1) or not (0). */
static void json_diag_list(FILE *out, const struct check_file *f, int errors)
{
	int first = 1;
	fputc('[', out);
	for (size_t i = 0; i < report_diag_n(f); i++) {
		const struct diag *g = report_diag_at(f, i);
		if ((g->severity == DIAG_ERROR) != errors)
			continue;
		fputs(first ? "" : ", ", out);
		json_diag(out, f, g);
		first = 0;
	}
	fputc(']', out);
}

void report_json_diags(FILE *out, const struct check_file *f)
{
	fprintf(out, "\"status\": \"%s\", ", f->a->analysed ? "checked" : "not_checked");
	if (!f->a->analysed) {
		char why[64];
		fputs("\"not_checked\": ", out);
		report_json_string(out, report_not_checked(f, why, sizeof why));
		fputs(", ", out);
	}
	fputs("\"errors\": ", out);
	json_diag_list(out, f, 1);
	fputs(", \"warnings\": ", out);
	json_diag_list(out, f, 0);
}

void report_json_skipped(FILE *out, const struct check_totals *t)
{
	fputs("  \"skipped\": [", out);
	for (size_t i = 0; i < t->nskipped; i++) {
		fputs(i ? ",\n    {\"path\": " : "\n    {\"path\": ", out);
		report_json_string(out, t->skipped[i].path);
		fputs(", \"reason\": ", out);
		report_json_string(out, t->skipped[i].why);
		fputc('}', out);
	}
	fputs(t->nskipped ? "\n  ],\n" : "],\n", out);
}

void report_json_counts(FILE *out, const struct check_totals *t)
{
	struct report_counts c = report_counts_of(t);
	fprintf(out, "\"seen\": %zu, \"checked\": %zu, \"not_checked\": %zu, \"skipped\": %zu, "
		     "\"diagnostics\": {\"errors\": %zu, \"warnings\": %zu, \"notes\": %zu}",
		c.seen, c.checked, c.not_checked, c.skipped, t->read_errors, t->read_warnings,
		t->read_notes);
}

/* ---- deferred text ---- */

int report_totals_defer(struct check_totals *t, const char *s, size_t n)
{
	if (n == 0)
		return 1;
	char *v = realloc(t->deferred, t->ndeferred + n + 1);
	if (!v)
		return 0;
	memcpy(v + t->ndeferred, s, n);
	t->ndeferred += n;
	v[t->ndeferred] = '\0';
	t->deferred = v;
	return 1;
}

void report_totals_free(struct check_totals *t)
{
	free(t->deferred);
	t->deferred = NULL;
	t->ndeferred = 0;
}
