/* report_rules.h: `headroom rules`: every rule (id, severity, summary) and
 * the limits of one derating profile with the source each line cites, as
 * aligned text or as a JSON document (docs/rules.schema.json). Writes to
 * a caller-supplied stream; never decides where output goes. */
#ifndef HEADROOM_REPORT_RULES_H
#define HEADROOM_REPORT_RULES_H

#include <stdio.h>

#include "profile.h"

enum report_rules_format { RR_TEXT,
			   RR_JSON };

/* Writes the rule table and the limits of p. */
void report_rules(FILE *out, enum report_rules_format fmt, const struct profile *p);

#endif
