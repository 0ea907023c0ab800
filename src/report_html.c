/* report_html.c: placeholder replaced below. */
#include "report_formats.h"

void report_html_file(FILE *out, const struct check_file *f,
		      const struct profile *p, int first)
{
	(void)out;
	(void)f;
	(void)p;
	(void)first;
}

void report_html_end(FILE *out, const struct profile *p,
		     const struct check_totals *t)
{
	(void)out;
	(void)p;
	(void)t;
}
