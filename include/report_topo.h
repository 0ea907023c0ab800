/* report_topo.h: `headroom topo`: each structure with its kind, stages,
 * polarity, drive and source, reference, output, parts and roles, then the
 * steady-state range of its nodes; as text or as the "structures" part of
 * the JSON report (docs/report.schema.json). */
#ifndef HEADROOM_REPORT_TOPO_H
#define HEADROOM_REPORT_TOPO_H

#include <stdio.h>

#include "audit.h"

enum report_topo_format { RT_TEXT, RT_JSON, RT_COUNT };

/* Writes one file's structures. first/last bracket the JSON file list.
 * With path NULL (and a, d NULL): a batch of no files, an empty JSON
 * file list (nothing in text). */
void report_topo(FILE *out, enum report_topo_format fmt, const char *path,
		 const struct audit *a, const struct diag_sink *d, int first,
		 int last);

/* Writes "structures": [...] for one file (the JSON report reuses it). */
void report_topo_json_structures(FILE *out, const struct audit *a,
				 const struct diag_sink *d);

#endif
