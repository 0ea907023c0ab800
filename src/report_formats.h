/* report_formats.h: the machine formats of `headroom check`: CSV (one row
 * per stressed or rated part), JUnit XML (a testsuite per file, a testcase
 * per rule and part), SARIF 2.1.0 (one run per invocation), and the HTML
 * page. Each is streamed: begin, one call per file, end. report_check.c
 * dispatches to them; each lives in its own report_<format>.c. */
#ifndef HEADROOM_REPORT_FORMATS_H
#define HEADROOM_REPORT_FORMATS_H

#include <stdio.h>

#include "report_check.h"

void report_csv_file(FILE *out, const struct check_file *f,
		     const struct profile *p, int first);
void report_csv_end(FILE *out, const struct profile *p, const struct check_totals *t);

void report_junit_file(FILE *out, const struct check_file *f,
		       const struct profile *p, int first);
void report_junit_end(FILE *out, const struct profile *p, const struct check_totals *t);

void report_sarif_file(FILE *out, const struct check_file *f,
		       const struct profile *p, int first, struct check_totals *t);
void report_sarif_end(FILE *out, const struct profile *p,
		      const struct check_totals *t);

/* The page's header (version, date, inputs from t->inputs) comes with
 * the first file, or with the end when the run had none. */
void report_html_file(FILE *out, const struct check_file *f,
		      const struct profile *p, int first,
		      const struct check_totals *t);
void report_html_end(FILE *out, const struct profile *p,
		     const struct check_totals *t);

/* One sentence saying that p is a draft and why; "" when it is not. */
void report_draft_line(char *buf, size_t n, const struct profile *p);

/* ---- the files of a run (report_files.c) ---- */

/* Files seen = checked + not checked + skipped. */
struct report_counts {
	size_t seen, checked, not_checked, skipped;
};
struct report_counts report_counts_of(const struct check_totals *t);

/* f's diagnostics (reading and checking the netlist, apart from the
 * findings): how many, the i-th (NULL past the end or without a sink),
 * how many of one severity. */
size_t report_diag_n(const struct check_file *f);
const struct diag *report_diag_at(const struct check_file *f, size_t i);
size_t report_diag_count(const struct check_file *f, enum diag_severity sev);
/* The file a diagnostic points into. */
const char *report_diag_file(const struct check_file *f, const struct diag *g);
/* "file:line:col: severity: message [code]" into buf. */
void report_diag_line(const struct check_file *f, const struct diag *g, char *buf,
		      size_t n);
/* Why f was not checked, e.g. "2 netlist errors", into buf; returns buf. */
const char *report_not_checked(const struct check_file *f, char *buf, size_t n);

/* Text: one line per diagnostic; the skipped entries; the counts. */
void report_text_diags(FILE *out, const struct check_file *f);
void report_text_skipped(FILE *out, const struct check_totals *t);
void report_text_counts(FILE *out, const struct check_totals *t);
/* JSON: "status", "errors" and "warnings" (warnings and notes) of a file;
 * the run's "skipped" array; the summary's count fields. */
void report_json_diags(FILE *out, const struct check_file *f);
void report_json_skipped(FILE *out, const struct check_totals *t);
void report_json_counts(FILE *out, const struct check_totals *t);

/* Appends s[0..n) to t's deferred text; 0 on out-of-memory. */
int report_totals_defer(struct check_totals *t, const char *s, size_t n);

/* Writes s with &, <, >, " escaped for XML and HTML. */
void report_xml_text(FILE *out, const char *s);

/* The profile's limit for a stress (rating x factor), NaN when unknown. */
double report_limit(const struct check_file *f, const struct profile *p,
		    const struct stress *s);

/* The element letter a stressed part is listed with: 'C', 'D' or 'R'. */
char report_element(const struct nl_part *p);

/* The line on a file's currents (current.h): how they were simulated, or
 * why they were not; NULL when the file has no stress. In buf. */
const char *report_currents_line(const struct check_file *f, char *buf, size_t n);

#endif
