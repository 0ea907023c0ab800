/* rules.h: the rules of docs/design.md §7 applied to the stresses, ratings and
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

/* Every rule, in the order reports list them [rules-list]. */
enum rule_id {
	RULE_CAP_OVERVOLTAGE,
	RULE_CAP_DERATING,
	RULE_CAP_REVERSE_BIAS,
	RULE_DIODE_OVERVOLTAGE,
	RULE_DIODE_DERATING,
	RULE_SURGE_DERATING,
	RULE_SURGE_EXCESS,
	RULE_SURGE_UNBOUNDED,
	RULE_STORED_CHARGE,
	RULE_CLAMP_DROOP,
	RULE_SLOW_RECOVERY,
	RULE_DIODE_AVG_CURRENT,
	RULE_DIODE_PEAK_CURRENT,
	RULE_CAP_RIPPLE_CURRENT,
	RULE_ZENER_POWER,
	RULE_CAP_LIFE_SHORT,
	RULE_RATING_MISSING,
	RULE_INTENT_MISS,
	RULE_STRESS_UNSETTLED,
	RULE_ANALYSIS_GAP,
	RULE_BREAKDOWN_WORK,
	RULE_DIODE_LOOP,
	RULE_PART_TWIN,
	RULE_PARTS_UNMATCHED,
	RULE_WAIVER_EXPIRED,
	RULE_WAIVER_UNUSED,
	RULE_COUNT
};

struct rule_info {
	const char *id;      /* the rule's name in reports and waivers */
	enum diag_severity severity;
	const char *summary;
};

/* Indexed by enum rule_id [rules-list]. */
extern const struct rule_info rules_table[RULE_COUNT];
extern const size_t rules_count;
/* The rule named id (as a user writes it in a waiver), or NULL. */
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
	int waiver_external;    /* the waiver came from a --waivers file */
};

struct rules_result {
	struct finding *f;
	size_t n, cap;
};

/* Appends an empty finding of rule id to rr (allocating in ar); NULL on
 * out-of-memory. */
struct finding *rules_add(struct rules_result *rr, struct arena *ar,
			  enum rule_id id);

/* Applies every rule. Allocates in ar. Returns 0 on out-of-memory. */
int rules_run(const struct audit *a, const struct rating *r, const struct profile *p,
	      const struct stress_result *s, struct arena *ar, struct rules_result *out);

/* The smallest standard voltage step at or above v (capacitor or diode
 * steps); NaN above the largest. */
double rules_standard_rating(double v, int diode);

/* Decimals for a percentage of a rating shown beside its limit: 1 where
 * whole percent would read as the limit itself ("50% ... (limit 50%)"
 * for 50.4%), else 0. */
int rules_pct_digits(double pct, double limit);

#endif
