/* report_rules.c: the rule table and a profile's limits (report_rules.h).
 * Text is for reading; JSON carries the same content for tools, with each
 * limit's unit so a value is never read without knowing what it is. */
#include "report_rules.h"

#include <math.h>

#include "report_parts.h"
#include "rules.h"
#include "version.h"

static void text(FILE *out, const struct profile *p)
{
	fprintf(out, "rules:\n");
	for (size_t i = 0; i < rules_count; i++)
		fprintf(out, "  %-18s %-8s %s\n", rules_table[i].id,
			diag_severity_name(rules_table[i].severity), rules_table[i].summary);
	fprintf(out, "\nprofile %s (%s): %s\n", p->name, p->path, p->description);
	struct profile_status st;
	if (profile_draft(p, &st))
		fprintf(out, "  draft: of %zu values, %zu marked from memory, %zu citing no source "
			     "(the first: %s, line %u)\n",
			st.values, st.from_memory, st.unsourced, st.first, st.first_line);
	else
		fprintf(out, "  sourced: each of its %zu values cites a source or says common practice\n",
			st.values);
	for (size_t i = 0; i < p->n; i++)
		fprintf(out, "  %-32s %-10g %s\n", p->e[i].key, p->e[i].value, p->e[i].note);
}

static void json_rules(FILE *out)
{
	fputs("  \"rules\": [", out);
	for (size_t i = 0; i < rules_count; i++) {
		const struct rule_info *r = &rules_table[i];
		fprintf(out, "%s\n    {\"id\": \"%s\", \"severity\": \"%s\", \"summary\": ", i ? "," : "",
			r->id, diag_severity_name(r->severity));
		report_json_string(out, r->summary);
		fprintf(out, ", \"page\": \"docs/rules/%s.md\"}", r->id);
	}
	fputs("\n  ],\n", out);
}

static void json_limits(FILE *out, const struct profile *p)
{
	fputs("    \"limits\": [", out);
	for (size_t i = 0; i < p->n; i++) {
		const struct profile_entry *e = &p->e[i];
		fprintf(out, "%s\n      {\"key\": ", i ? "," : "");
		report_json_string(out, e->key);
		if (isfinite(e->value))
			fprintf(out, ", \"value\": %.10g", e->value);
		else
			fputs(", \"value\": null", out);
		fprintf(out, ", \"unit\": \"%s\", \"line\": %u, \"note\": ", profile_key_unit(e->key),
			e->line);
		report_json_string(out, e->note);
		fputc('}', out);
	}
	fputs(p->n ? "\n    ]\n" : "]\n", out);
}

static void json(FILE *out, const struct profile *p)
{
	fputs("{\n  \"schema\": 1,\n  \"tool\": {\"name\": \"headroom\", \"version\": \"" HEADROOM_BUILD_VERSION
	      "\"},\n",
	      out);
	json_rules(out);
	fputs("  \"profile\": {\n    \"name\": ", out);
	report_json_string(out, p->name);
	fputs(", \"path\": ", out);
	report_json_string(out, p->path);
	fputs(", \"description\": ", out);
	report_json_string(out, p->description);
	fprintf(out, ", \"draft\": %s,\n", profile_draft(p, &(struct profile_status){0}) ? "true" : "false");
	json_limits(out, p);
	fputs("  }\n}\n", out);
}

void report_rules(FILE *out, enum report_rules_format fmt, const struct profile *p)
{
	if (fmt == RR_JSON)
		json(out, p);
	else
		text(out, p);
}
