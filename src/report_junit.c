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
/* the current and power stresses, by quantity [stress-qty] */
static const char *const avg_rules[] = {"diode-avg-current", NULL};
static const char *const peak_rules[] = {"diode-peak-current", NULL};
static const char *const ripple_rules[] = {"cap-ripple-current", NULL};
static const char *const life_rules[] = {"cap-life-short", NULL};
static const char *const power_rules[] = {"zener-power", NULL};
static const char *const no_rules[] = {NULL};

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
	static const char *const *const lists[] = {cap_rules, diode_rules, surge_rules, avg_rules,
						    peak_rules, ripple_rules, power_rules};
	for (size_t i = 0; g->part != NL_NONE && i < sizeof lists / sizeof lists[0]; i++)
		if (listed(lists[i], g->rule->id))
			return 0;
	return 1;
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
		    strcmp(rule, "slow-recovery") == 0 || !isnan(stress_rating(r, s->qty)->value);
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
	switch (s->qty) {
	case SQ_SURGE: return surge_rules;
	case SQ_AVG_CURRENT: return avg_rules;
	case SQ_PEAK_CURRENT: return peak_rules;
	case SQ_RIPPLE_CURRENT: return ripple_rules;
	case SQ_POWER: /* a resistor's power has no rating and no rule */
		return nl_part_at(f->a->er.circuit, s->part)->kind == NL_D ? power_rules : no_rules;
	case SQ_RMS_CURRENT: return no_rules;
	case SQ_LIFE: return life_rules;
	default:
		return nl_part_at(f->a->er.circuit, s->part)->kind == NL_D ? diode_rules : cap_rules;
	}
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
				  isnan(stress_rating(&f->ratings[s->part], s->qty)->value)))
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

/* The diagnostics of f of one kind (errors, or warnings and notes), one
 * "file:line:col: severity: message [code]" per line. */
static void diag_lines(FILE *out, const struct check_file *f, int errors)
{
	char line[1200];
	for (size_t i = 0; i < report_diag_n(f); i++) {
		const struct diag *g = report_diag_at(f, i);
		if ((g->severity == DIAG_ERROR) != errors)
			continue;
		report_diag_line(f, g, line, sizeof line);
		report_xml_text(out, line);
		fputc('\n', out);
	}
}

/* The testcase "netlist" of every file: reading it. An <error> when it has
 * errors (the first in the message, all in the body), the reader's
 * warnings and notes in <system-out>. */
static void netlist_case(FILE *out, const struct check_file *f, size_t errors)
{
	size_t others = report_diag_n(f) - errors;
	fputs("    <testcase classname=\"", out);
	report_xml_text(out, f->path);
	fputs("\" name=\"netlist\" time=\"0\"", out);
	if (!errors && !others && f->a->analysed) {
		fputs("/>\n", out);
		return;
	}
	fputs(">\n", out);
	if (errors || !f->a->analysed) {
		char why[64], line[1200] = "";
		for (size_t i = 0; !line[0] && i < report_diag_n(f); i++)
			if (report_diag_at(f, i)->severity == DIAG_ERROR)
				report_diag_line(f, report_diag_at(f, i), line, sizeof line);
		if (f->a->analysed)
			fprintf(out, "      <error type=\"input\" message=\"%zu error%s", errors,
				errors == 1 ? "" : "s");
		else
			fprintf(out, "      <error type=\"netlist\" message=\"not checked: %s",
				report_not_checked(f, why, sizeof why));
		fputs(line[0] ? "; the first: " : "", out);
		report_xml_text(out, line);
		fputs("\">", out);
		diag_lines(out, f, 1);
		fputs("</error>\n", out);
	}
	if (others) {
		fputs("      <system-out>", out);
		diag_lines(out, f, 0);
		fputs("</system-out>\n", out);
	}
	fputs("    </testcase>\n", out);
}

void report_junit_file(FILE *out, const struct check_file *f,
		       const struct profile *p, int first)
{
	size_t errors = report_diag_count(f, DIAG_ERROR);
	size_t erred = errors || !f->a->analysed;
	if (first)
		fputs("<?xml version=\"1.0\" encoding=\"UTF-8\"?>\n<testsuites name=\"headroom\">\n", out);
	fputs("  <testsuite name=\"", out);
	report_xml_text(out, f->path);
	if (!f->a->analysed) {
		fputs("\" tests=\"1\" failures=\"0\" errors=\"1\" skipped=\"0\">\n", out);
		netlist_case(out, f, errors);
		fputs("  </testsuite>\n", out);
		return;
	}
	size_t tests, fails, skips;
	counts(f, &tests, &fails, &skips);
	fprintf(out, "\" tests=\"%zu\" failures=\"%zu\" errors=\"%zu\" skipped=\"%zu\">\n",
		tests + 1, fails, erred, skips);
	properties(out, p, NULL);
	netlist_case(out, f, errors);
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

/* The run's own testsuite: the counts of files as properties, a skipped
 * testcase per entry of a folder that was not checked. */
static void files_suite(FILE *out, const struct check_totals *t)
{
	struct report_counts c = report_counts_of(t);
	fprintf(out, "  <testsuite name=\"files\" tests=\"%zu\" failures=\"0\" errors=\"0\" skipped=\"%zu\">\n"
		     "    <properties>\n"
		     "      <property name=\"files_seen\" value=\"%zu\"/>\n"
		     "      <property name=\"files_checked\" value=\"%zu\"/>\n"
		     "      <property name=\"files_not_checked\" value=\"%zu\"/>\n"
		     "      <property name=\"files_skipped\" value=\"%zu\"/>\n"
		     "    </properties>\n",
		c.skipped, c.skipped, c.seen, c.checked, c.not_checked, c.skipped);
	for (size_t i = 0; i < t->nskipped; i++) {
		fputs("    <testcase classname=\"", out);
		report_xml_text(out, t->skipped[i].path);
		fputs("\" name=\"skipped\" time=\"0\">\n      <skipped message=\"", out);
		report_xml_text(out, t->skipped[i].why);
		fputs("\"/>\n    </testcase>\n", out);
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
	fputs("  </testsuite>\n", out);
	files_suite(out, t);
	fputs("</testsuites>\n", out);
}
