/* report_sarif.c: SARIF 2.1.0 (OASIS). One run per invocation: the tool's
 * rules with short and full descriptions and a help reference into
 * docs/rules/, then one result per finding with its level, message, the
 * physical location of the part's card (file URI relative to the working
 * directory), the hierarchical part path as logical location, and a
 * partial fingerprint from rule, file and part (not the line) so results
 * stay matched when lines move. Waived findings carry suppressions. */
#include "report_formats.h"

#include <math.h>
#include <stdint.h>
#include <stdlib.h>
#include <string.h>

#include "report_parts.h"
#include "rules.h"
#include "version.h"

static const char *level(enum diag_severity s)
{
	return s == DIAG_ERROR ? "error" : s == DIAG_WARNING ? "warning" : "note";
}

/* A relative path as a URI reference: unreserved characters and '/' as
 * they are, everything else percent-encoded (RFC 3986). */
static void uri(FILE *out, const char *path)
{
	fputc('"', out);
	if (path[0] == '/')
		fputs("file://", out); /* an absolute path: a file URI */
	while (path[0] == '.' && path[1] == '/')
		path += 2;
	for (const unsigned char *p = (const unsigned char *)path; *p; p++) {
		if ((*p >= 'a' && *p <= 'z') || (*p >= 'A' && *p <= 'Z') ||
		    (*p >= '0' && *p <= '9') || strchr("-._~/", *p))
			fputc(*p, out);
		else
			fprintf(out, "%%%02X", *p);
	}
	fputc('"', out);
}

static uint64_t fnv(const char *a, const char *b, const char *c)
{
	uint64_t h = 1469598103934665603ull;
	const char *parts[3] = {a, b, c};
	for (int i = 0; i < 3; i++) {
		for (const char *s = parts[i] ? parts[i] : ""; *s; s++)
			h = (h ^ (unsigned char)*s) * 1099511628211ull;
		h = (h ^ '|') * 1099511628211ull;
	}
	return h;
}

static void rules(FILE *out, const char *docs)
{
	fputs("\"rules\": [", out);
	for (size_t i = 0; i < rules_count; i++) {
		const struct rule_info *r = &rules_table[i];
		/* the name is the id in words' form: "cap-overvoltage" ->
		 * "CapOvervoltage" (SARIF wants the two to differ) */
		char name[64];
		size_t k = 0;
		for (const char *c = r->id; *c && k + 1 < sizeof name; c++)
			if (*c != '-')
				name[k++] = (c == r->id || c[-1] == '-') && *c >= 'a' && *c <= 'z'
						    ? (char)(*c - 'a' + 'A') : *c;
		name[k] = '\0';
		fprintf(out, "%s\n          {\"id\": \"%s\", \"name\": \"%s\", \"shortDescription\": {\"text\": ",
			i ? "," : "", r->id, name);
		report_json_string(out, r->summary);
		fputs("}, \"fullDescription\": {\"text\": ", out);
		char full[512];
		snprintf(full, sizeof full, "%s. The finding gives the worst-case stress, how it was "
			 "worked out, the rating and the derating limit with their sources, and a fix. "
			 "Reference: docs/rules/%s.md in the headroom sources.", r->summary, r->id);
		report_json_string(out, full);
		fputc('}', out);
		if (docs)
			fprintf(out, ", \"helpUri\": \"%srules/%s.md\"", docs, r->id);
		fprintf(out, ", \"defaultConfiguration\": {\"level\": \"%s\"}}", level(r->severity));
	}
	fputs("]", out);
}

static void head(FILE *out, const char *docs)
{
	fputs("{\"$schema\": \"https://raw.githubusercontent.com/oasis-tcs/sarif-spec/master/Schemata/sarif-schema-2.1.0.json\",\n"
	      "  \"version\": \"2.1.0\",\n  \"runs\": [{\n    \"tool\": {\"driver\": {\"name\": \"headroom\", "
	      "\"version\": \"" HEADROOM_BUILD_VERSION "\", \"semanticVersion\": \"" HEADROOM_VERSION "\",\n        ", out);
	if (docs)
		fprintf(out, "\"informationUri\": \"%scheck.md\",\n        ", docs);
	rules(out, docs);
	fputs("}},\n    \"columnKind\": \"unicodeCodePoints\",\n    \"results\": [", out);
}

static size_t rule_index(const struct rule_info *r)
{
	return (size_t)(r - rules_table);
}

static void result(FILE *out, const struct diag_sink *d, const struct finding *g,
		   int first)
{
	const char *file = diag_file_name(d, g->loc.file);
	fprintf(out, "%s\n      {\"ruleId\": \"%s\", \"ruleIndex\": %zu, \"level\": \"%s\", \"message\": {\"text\": ",
		first ? "" : ",", g->rule->id, rule_index(g->rule), level(g->rule->severity));
	report_json_string(out, g->message);
	fputs("},\n        \"locations\": [{\"physicalLocation\": {\"artifactLocation\": {\"uri\": ", out);
	uri(out, file);
	fprintf(out, "}, \"region\": {\"startLine\": %u, \"startColumn\": %u}}", g->loc.line ? g->loc.line : 1,
		g->loc.col ? g->loc.col : 1);
	if (g->subject) {
		fputs(", \"logicalLocations\": [{\"fullyQualifiedName\": ", out);
		report_json_string(out, g->subject);
		fputs(", \"kind\": \"member\"}]", out);
	}
	fprintf(out, "}],\n        \"partialFingerprints\": {\"headroomFinding/v1\": \"%016llx\"}",
		(unsigned long long)fnv(g->rule->id, file, g->subject));
	if (g->waived) {
		/* SARIF 2.1.0 suppression.kind: a *@waive line in the netlist is in
		 * source; a --waivers file is kept apart from it: external */
		fprintf(out, ", \"suppressions\": [{\"kind\": \"%s\", \"justification\": ",
			g->waiver_external ? "external" : "inSource");
		report_json_string(out, g->waiver ? g->waiver : "waived");
		fputs("}]", out);
	}
	fputc('}', out);
}

/* The file's safety caution: an informational result (kind
 * "informational", level "none": no verdict) under stored-charge, the rule
 * it belongs to, located at the file's first line. */
static void caution(FILE *out, const struct check_file *f, int first)
{
	const struct rule_info *r = rules_find("stored-charge");
	fprintf(out, "%s\n      {\"ruleId\": \"%s\", \"ruleIndex\": %zu, \"kind\": \"informational\", "
		     "\"level\": \"none\", \"message\": {\"text\": ",
		first ? "" : ",", r->id, rule_index(r));
	report_json_string(out, f->caution);
	fputs("},\n        \"locations\": [{\"physicalLocation\": {\"artifactLocation\": {\"uri\": ", out);
	uri(out, f->path);
	fprintf(out, "}, \"region\": {\"startLine\": 1, \"startColumn\": 1}}}],\n        "
		     "\"partialFingerprints\": {\"headroomFinding/v1\": \"%016llx\"}}",
		(unsigned long long)fnv("caution", f->path, NULL));
}

/* One notification: a diagnostic of a file (g), or a file as a whole
 * (g NULL, the message in text). Each starts with a comma; the end drops
 * the first. */
static void notification(FILE *out, const struct check_file *f, const struct diag *g,
			 const char *lvl, const char *text, const char *path)
{
	fprintf(out, ",\n        {\"level\": \"%s\", \"message\": {\"text\": ", lvl);
	report_json_string(out, g ? g->message : text);
	fputs("}", out);
	if (g) {
		fputs(", \"descriptor\": {\"id\": ", out);
		report_json_string(out, g->code);
		fputs("}", out);
	}
	fputs(",\n          \"locations\": [{\"physicalLocation\": {\"artifactLocation\": {\"uri\": ", out);
	uri(out, g ? report_diag_file(f, g) : path);
	fputc('}', out);
	if (g && g->loc.line)
		fprintf(out, ", \"region\": {\"startLine\": %u, \"startColumn\": %u}", g->loc.line,
			g->loc.col ? g->loc.col : 1);
	fputs("}}]}", out);
}

/* The file's diagnostics, and a not-checked file as a whole, as
 * notifications kept for the end (they belong to the invocation). */
static void defer_diags(const struct check_file *f, struct check_totals *t)
{
	char *buf = NULL;
	size_t n = 0;
	FILE *m = open_memstream(&buf, &n);
	if (!m)
		return;
	if (!f->a->analysed) {
		char why[64], text[96];
		snprintf(text, sizeof text, "not checked: %s", report_not_checked(f, why, sizeof why));
		notification(m, f, NULL, "error", text, f->path);
	}
	for (size_t i = 0; i < report_diag_n(f); i++) {
		const struct diag *g = report_diag_at(f, i);
		notification(m, f, g, level(g->severity), NULL, NULL);
	}
	if (fclose(m) == 0)
		report_totals_defer(t, buf, n);
	free(buf);
}

void report_sarif_file(FILE *out, const struct check_file *f,
		       const struct profile *p, int first, struct check_totals *t)
{
	(void)p;
	if (first)
		head(out, t->docs_uri);
	defer_diags(f, t);
	if (!f->a->analysed)
		return;
	/* every result but the very first is preceded by a comma; a later
	 * file cannot know whether earlier ones had any, so the batch writer
	 * drops a leading comma when nothing came before */
	for (size_t i = 0; i < f->rules->n; i++) {
		result(out, f->d, &f->rules->f[i], first && t->emitted == 0);
		t->emitted++;
	}
	if (f->caution) {
		caution(out, f, first && t->emitted == 0);
		t->emitted++;
	}
}

/* The invocation: successful unless a file has netlist errors or was not
 * checked (the exit status is 2 then), every file's diagnostics and each
 * skipped entry as notifications, and the counts of files. */
static void invocation(FILE *out, const struct check_totals *t, const char *draft)
{
	struct report_counts c = report_counts_of(t);
	int ok = c.not_checked == 0 && t->read_errors == 0;
	fprintf(out, "],\n    \"invocations\": [{\"executionSuccessful\": %s,\n", ok ? "true" : "false");
	if (draft[0]) {
		/* shown by viewers as a note about how the tool was set up */
		fputs("      \"toolConfigurationNotifications\": [{\"level\": \"warning\", \"message\": {\"text\": ", out);
		report_json_string(out, draft);
		fputs("}}],\n", out);
	}
	fputs("      \"toolExecutionNotifications\": [", out);
	if (t->deferred)
		fputs(t->deferred + 1, out); /* without the first comma */
	for (size_t i = 0; i < t->nskipped; i++) {
		char text[512];
		snprintf(text, sizeof text, "skipped: %s", t->skipped[i].why);
		fputs(i || t->deferred ? "," : "", out);
		fputs("\n        {\"level\": \"note\", \"message\": {\"text\": ", out);
		report_json_string(out, text);
		fputs("},\n          \"locations\": [{\"physicalLocation\": {\"artifactLocation\": {\"uri\": ", out);
		uri(out, t->skipped[i].path);
		fputs("}}}]}", out);
	}
	fprintf(out, "],\n      \"properties\": {\"filesSeen\": %zu, \"filesChecked\": %zu, "
		     "\"filesNotChecked\": %zu, \"filesSkipped\": %zu}}]", c.seen, c.checked,
		c.not_checked, c.skipped);
}

void report_sarif_end(FILE *out, const struct profile *p,
		      const struct check_totals *t)
{
	if (t->files == 0)
		head(out, t->docs_uri);
	for (size_t i = 0; t->run && i < t->run->n; i++)
		result(out, t->run_d, &t->run->f[i], t->emitted + i == 0);
	char draft[512];
	report_draft_line(draft, sizeof draft, p);
	invocation(out, t, draft);
	fputs(",\n    \"properties\": {\"profile\": ", out);
	report_json_string(out, p->name);
	fprintf(out, ", \"profileDraft\": %s, \"baselineHidden\": ",
		draft[0] ? "true" : "false");
	if (t->has_baseline)
		fprintf(out, "%zu}", t->baselined);
	else
		fputs("null}", out);
	fputs("\n  }]\n}\n", out);
}
