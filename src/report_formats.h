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

/* Writes s with &, <, >, " escaped for XML and HTML. */
void report_xml_text(FILE *out, const char *s);

/* The profile's limit for a stress (rating x factor), NaN when unknown. */
double report_limit(const struct check_file *f, const struct profile *p,
		    const struct stress *s);

#endif
