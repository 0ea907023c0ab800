/* report_parts.h: the flattened part list of `headroom parts`, as aligned
 * text, CSV or JSON. Writes to a caller-supplied stream; never decides
 * where output goes. */
#ifndef HEADROOM_REPORT_PARTS_H
#define HEADROOM_REPORT_PARTS_H

#include <stdio.h>

#include "diag.h"
#include "elab.h"

enum report_parts_format { RP_TEXT, RP_CSV, RP_JSON, RP_COUNT };

/* Writes the parts of one elaborated file. `first` and `last` let the JSON
 * form open and close its file list across several calls. */
void report_parts(FILE *out, enum report_parts_format fmt, const char *path,
		  const struct elab_result *r, const struct diag_sink *d,
		  uint32_t unit, int first, int last);

/* Formats a part's resolved value into buf ("4.7k ohm", "dc 5 V sin(...)"). */
void report_part_value(const struct nl_part *p, char *buf, size_t n);

/* Writes s as a JSON string literal (quotes included). */
void report_json_string(FILE *out, const char *s);
/* Writes s as one CSV field (RFC 4180 quoting when needed). */
void report_csv_field(FILE *out, const char *s);

#endif
