/* report_junit.c: JUnit XML. One testsuite per netlist, one testcase per
 * rule and part it applies to: a finding at error or warning is a
 * <failure>, a part that could not be checked (no rating, stress not
 * bounded) a <skipped>; a netlist that does not read is an <error>.
 * Element and attribute names follow the common JUnit schema (docs/sources.md
 * §10b). */
#include "report_formats.h"

#include <math.h>
#include <string.h>

static const char *const cap_rules[] = {"cap-overvoltage", "cap-derating",
					"cap-reverse-bias", "stored-charge", NULL};
static const char *const diode_rules[] = {"diode-overvoltage", "diode-derating",
					  "slow-recovery", NULL};
static const char *const surge_rules[] = {"surge-derating", "surge-excess", "surge-unbounded", NULL};

static int listed(const char *const *list, const char *id)
{
	for (; *list; list++)
		if (strcmp(*list, id) == 0)
			return 1;
	return 0;
}

/* A finding of a rule that no stress's testcase covers (a structure, a
 * node, a waiver, a defect, an unbounded part): it gets a testcase of its
 * own, so that no finding is missing from this format. */
static int own_case(const struct finding *g)
{
	return g->part == NL_NONE || (!listed(cap_rules, g->rule->id) &&
				      !listed(diode_rules, g->rule->id) &&
				      !listed(surge_rules, g->rule->id));
}

static void finding_case(FILE *out, const char *classname, const struct finding *g)
{
	fputs("    <testcase classname=\"", out);
	report_xml_text(out, classname);
	fprintf(out, "\" name=\"%s ", g->rule->id);
	report_xml_text(out, g->subject ? g->subject : "");
	fputs("\" time=\"0\"", out);
	if (g->rule->severity == DIAG_NOTE || g->waived) {
		fputs(">\n      <skipped message=\"", out);
		report_xml_text(out, g->waived ? "waived" : g->message);
		fputs("\"/>\n    </testcase>\n", out);
		return;
	}
	fprintf(out, ">\n      <failure type=\"%s\" message=\"", g->rule->id);
	report_xml_text(out, g->message);
	fputs("\">", out);
	report_xml_text(out, g->computation ? g->computation : "");
	if (g->fix) {
		fputs("\nfix: ", out);
		report_xml_text(out, g->fix);
	}
	fputs("</failure>\n    </testcase>\n", out);
}

static const struct finding *finding_for(const struct check_file *f,
					 const char *rule, uint32_t part)
{
	for (size_t i = 0; i < f->rules->n; i++)
		if (f->rules->f[i].part == part && strcmp(f->rules->f[i].rule->id, rule) == 0)
			return &f->rules->f[i];
	return NULL;
}

static void testcase(FILE *out, const struct check_file *f, const struct stress *s,
		     const char *rule)
{
	const struct nl_part *p = nl_part_at(f->a->er.circuit, s->part);
	const struct finding *g = finding_for(f, rule, s->part);
	const struct rating *r = &f->ratings[s->part];
	int rated = s->qty == SQ_SURGE || strcmp(rule, "stored-charge") == 0 ||
		    strcmp(rule, "slow-recovery") == 0 || !isnan(r->v_rated.value);
	fputs("    <testcase classname=\"", out);
	report_xml_text(out, f->path);
	fprintf(out, "\" name=\"%s ", rule);
	report_xml_text(out, p->path);
	fputs("\" time=\"0\"", out);
	if (g && g->rule->severity != DIAG_NOTE && !g->waived) {
		fputs(">\n      <failure type=\"", out);
		fprintf(out, "%s\" message=\"", rule);
		report_xml_text(out, g->message);
		fputs("\">", out);
		report_xml_text(out, g->computation);
		if (g->limits) {
			fputs("\n", out);
			report_xml_text(out, g->limits);
		}
		if (g->fix) {
			fputs("\nfix: ", out);
			report_xml_text(out, g->fix);
		}
		fputs("</failure>\n    </testcase>\n", out);
	} else if (!s->bounded || !rated || (g && g->waived)) {
		fputs(">\n      <skipped message=\"", out);
		report_xml_text(out, g && g->waived ? "waived" : !s->bounded ? "stress not bounded" : "no rating");
		fputs("\"/>\n    </testcase>\n", out);
	} else {
		fputs("/>\n", out);
	}
}

static const char *const *rules_for(const struct check_file *f, const struct stress *s)
{
	if (s->qty == SQ_SURGE)
		return surge_rules;
	return nl_part_at(f->a->er.circuit, s->part)->kind == NL_D ? diode_rules : cap_rules;
}

static void counts(const struct check_file *f, size_t *tests, size_t *fails,
		   size_t *skips)
{
	*tests = *fails = *skips = 0;
	for (size_t i = 0; i < f->stress->n; i++) {
		const struct stress *s = &f->stress->s[i];
		for (const char *const *r = rules_for(f, s); *r; r++) {
			const struct finding *g = finding_for(f, *r, s->part);
			(*tests)++;
			if (g && g->rule->severity != DIAG_NOTE && !g->waived)
				(*fails)++;
			else if (!s->bounded || (g && g->waived) ||
				 (s->qty != SQ_SURGE && strcmp(*r, "stored-charge") && strcmp(*r, "slow-recovery") &&
				  isnan(f->ratings[s->part].v_rated.value)))
				(*skips)++;
		}
	}
	for (size_t i = 0; i < f->rules->n; i++) {
		const struct finding *g = &f->rules->f[i];
		if (!own_case(g))
			continue;
		(*tests)++;
		if (g->rule->severity == DIAG_NOTE || g->waived)
			(*skips)++;
		else
			(*fails)++;
	}
}

/* The profile a suite was checked with, whether it is a draft, and (for
 * the run's own suite) how many known findings a baseline hid. */
static void properties(FILE *out, const struct profile *p, const struct check_totals *t)
{
	char draft[512];
	report_draft_line(draft, sizeof draft, p);
	fputs("    <properties>\n      <property name=\"profile\" value=\"", out);
	report_xml_text(out, p->name);
	fprintf(out, "\"/>\n      <property name=\"profile_draft\" value=\"%s\"/>\n",
		draft[0] ? "true" : "false");
	if (draft[0]) {
		fputs("      <property name=\"profile_status\" value=\"", out);
		report_xml_text(out, draft);
		fputs("\"/>\n", out);
	}
	if (t && t->has_baseline)
		fprintf(out, "      <property name=\"baseline_hidden\" value=\"%zu\"/>\n", t->baselined);
	fputs("    </properties>\n", out);
}

void report_junit_file(FILE *out, const struct check_file *f,
		       const struct profile *p, int first)
{
	if (first)
		fputs("<?xml version=\"1.0\" encoding=\"UTF-8\"?>\n<testsuites name=\"headroom\">\n", out);
	fputs("  <testsuite name=\"", out);
	report_xml_text(out, f->path);
	if (!f->a->analysed) {
		fputs("\" tests=\"1\" failures=\"0\" errors=\"1\" skipped=\"0\">\n", out);
		fputs("    <testcase classname=\"", out);
		report_xml_text(out, f->path);
		fputs("\" name=\"netlist\"><error type=\"netlist\" message=\"the netlist has errors\"/></testcase>\n  </testsuite>\n", out);
		return;
	}
	size_t tests, fails, skips;
	counts(f, &tests, &fails, &skips);
	fprintf(out, "\" tests=\"%zu\" failures=\"%zu\" errors=\"0\" skipped=\"%zu\">\n", tests, fails, skips);
	properties(out, p, NULL);
	for (size_t i = 0; i < f->stress->n; i++)
		for (const char *const *r = rules_for(f, &f->stress->s[i]); *r; r++)
			testcase(out, f, &f->stress->s[i], *r);
	for (size_t i = 0; i < f->rules->n; i++)
		if (own_case(&f->rules->f[i]))
			finding_case(out, f->path, &f->rules->f[i]);
	if (f->caution) {
		fputs("    <system-out>", out);
		report_xml_text(out, f->caution);
		fputs("</system-out>\n", out);
	}
	fputs("  </testsuite>\n", out);
}

/* The run's own suite: its findings (parts table, waiver file), the
 * profile and the baseline. */
void report_junit_end(FILE *out, const struct profile *p, const struct check_totals *t)
{
	if (t->files == 0)
		fputs("<?xml version=\"1.0\" encoding=\"UTF-8\"?>\n<testsuites name=\"headroom\">\n", out);
	size_t n = t->run ? t->run->n : 0, fails = 0;
	for (size_t i = 0; i < n; i++)
		fails += t->run->f[i].rule->severity != DIAG_NOTE && !t->run->f[i].waived;
	fprintf(out, "  <testsuite name=\"headroom run\" tests=\"%zu\" failures=\"%zu\" errors=\"0\" skipped=\"%zu\">\n",
		n, fails, n - fails);
	properties(out, p, t);
	for (size_t i = 0; i < n; i++)
		finding_case(out, diag_file_name(t->run_d, t->run->f[i].loc.file), &t->run->f[i]);
	fputs("  </testsuite>\n</testsuites>\n", out);
}
