/* rules.h: the rules of DESIGN §7 applied to the stresses, ratings and
 * profile limits; each finding carries its numbers, the computation that
 * led to them, the rating and limit with their sources, and a suggested
 * fix. A part whose stress could not be bounded gets a note, never a
 * rule's verdict. */
#ifndef HEADROOM_RULES_H
#define HEADROOM_RULES_H

#include <stddef.h>
#include <stdint.h>

#include "audit.h"
#include "diag.h"
#include "profile.h"
#include "rating.h"
#include "stress.h"

struct rule_info {
	const char *id;
	enum diag_severity severity;
	const char *summary;
};

/* Every rule, in the order reports list them [rules-list]. */
extern const struct rule_info rules_table[];
extern const size_t rules_count;
const struct rule_info *rules_find(const char *id);

struct finding {
	const struct rule_info *rule;
	uint32_t part;          /* NL_NONE for a node or structure finding */
	int32_t structure;      /* -1 when none */
	struct diag_loc loc;
	const char *subject;    /* part path or node name */
	const char *message;
	const char *computation;/* how the number was found */
	const char *limits;     /* rating, limit and where they come from */
	const char *fix;        /* suggested change, or NULL */
	double worst, limit, rating;
	const char *unit;
	int waived;
	const char *waiver;     /* reason, when waived */
};

struct rules_result {
	struct finding *f;
	size_t n, cap;
};

/* Appends an empty finding of rule id to rr (allocating in ar); NULL on
 * out-of-memory or an unknown id. */
struct finding *rules_add(struct rules_result *rr, struct arena *ar,
			  const char *id);

/* Applies every rule. Allocates in a->ar. Returns 0 on out-of-memory. */
int rules_run(struct audit *a, const struct rating *r, const struct profile *p,
	      const struct stress_result *s, struct rules_result *out);

/* The smallest standard voltage step at or above v (capacitor or diode
 * steps); NaN above the largest. */
double rules_standard_rating(double v, int diode);

#endif
