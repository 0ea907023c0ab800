/* annot.h: the *@ design annotations of docs/design.md §4 (part ratings, source
 * tolerances and ranges, waivers, intent, profile), parsed from the lines
 * elaboration kept. A malformed directive is an error with its location,
 * never ignored. Applying them is for the modules that use them. */
#ifndef HEADROOM_ANNOT_H
#define HEADROOM_ANNOT_H

#include <stdint.h>

#include "arena.h"
#include "diag.h"
#include "elab.h"

enum annot_kind { AN_PART, AN_SOURCE, AN_WAIVE, AN_EXPECT, AN_PROFILE };

struct annot_kv {
	const char *key;      /* lower-case */
	const char *text;     /* as written (quotes removed) */
	double num;           /* value with units and suffix, NaN if not a number */
	int percent;          /* written with %: num is the fraction */
};

struct annot {
	enum annot_kind kind;
	const char *target;   /* part path or glob, with the instance prefix;
				 profile: its name */
	const char *rule;     /* waive: the rule id */
	uint32_t rule_col;    /* waive: its column (loc.line is its line) */
	struct annot_kv *kv;
	uint32_t nkv;
	struct diag_loc loc;
};

/* Parses every annotation of r into a new array in ar (*out, *n). Bad
 * lines are reported to d and left out. Returns 0 on out-of-memory. */
int annot_parse_all(const struct elab_result *r, struct arena *ar,
		    struct diag_sink *d, struct annot **out, uint32_t *n);

/* The value of key in a, or NULL. */
const struct annot_kv *annot_get(const struct annot *a, const char *key);

/* Glob match of a hierarchical path: '*' and '?' (any case). */
int annot_glob(const char *pattern, const char *path);

#endif
