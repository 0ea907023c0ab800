/* profile.h: derating profiles, data files in rules/ (docs/design.md §8). A small
 * "key = value   # source" format: the reader checks every key and value
 * and reports problems with file:line:col. Lookups fall back from a part
 * kind to the "default" kind of its class. */
#ifndef HEADROOM_PROFILE_H
#define HEADROOM_PROFILE_H

#include <stddef.h>

#include "diag.h"

#define PROFILE_MAX_ENTRIES 160

struct profile_entry {
	char key[48];        /* e.g. "cap.tantalum.voltage" */
	double value;        /* fractions for factors, volts, seconds */
	char note[160];      /* the source the line cites, after '#' */
	unsigned line;
};

struct profile {
	char name[64];
	char path[512];
	char description[160];
	struct profile_entry e[PROFILE_MAX_ENTRIES];
	size_t n;
};

/* The profiles shipped in rules/, by name; NULL-terminated. */
extern const char *const profile_shipped[];

/* Capacitor and diode kinds of docs/design.md §4; NULL-terminated. */
extern const char *const profile_cap_kinds[];
extern const char *const profile_diode_kinds[];
/* True for the polarised capacitor kinds. */
int profile_polarised(const char *kind);

/* Reads a profile file into *p. Problems go to d (with a file id it
 * registers) and give 0. */
int profile_load(const char *path, struct diag_sink *d, struct profile *p);

/* Finds the file of a profile given as a name ("industrial") or a path:
 * HEADROOM_RULES, then rules/ next to the program (build/../rules,
 * ../share/headroom/rules). Returns 0 if not found. */
int profile_find(const char *name_or_path, const char *argv0, char *out,
		 size_t n);

/* Value of class.kind.field ("cap", "tantalum", "voltage"), falling back to
 * class.default.field; NaN when neither is set. *note gets the source. */
double profile_kind(const struct profile *p, const char *cls, const char *kind,
		    const char *field, const char **note);

/* As profile_kind, also giving the key the value came from. */
double profile_kind_key(const struct profile *p, const char *cls,
			const char *kind, const char *field, const char **note,
			const char **key_used);

/* A profile is a draft when any of its values is marked from memory or
 * cites nothing (docs/profiles.md, "Drafts"): reports then say so. */
struct profile_status {
	size_t values;        /* numeric entries */
	size_t from_memory;   /* notes marked from memory */
	size_t unsourced;     /* entries with no note */
	const char *first;    /* key of the first such entry, or NULL */
	unsigned first_line;
};

/* Fills *st; returns 1 when p is a draft. */
int profile_draft(const struct profile *p, struct profile_status *st);

/* True when a note marks its value as from memory: the words "from
 * memory" in any case, or the status mark M standing alone ("(M)",
 * "(M: ...", ", M: ..."). */
int profile_note_from_memory(const char *note);

/* The hazard voltage, 60 V when the profile does not set it (docs/design.md §7). */
double profile_hazard(const struct profile *p);

/* A top-level value ("hazard_voltage"); NaN when missing. */
double profile_value(const struct profile *p, const char *key,
		     const char **note);

/* The unit of a known key's value: "fraction" (a share: factors,
 * tolerances, limits), "V" or "s". */
const char *profile_key_unit(const char *key);

/* Sets key to value with its note, adding the entry when it is missing
 * (line 0: not from the file). Returns 0 when the profile is full. */
int profile_set(struct profile *p, const char *key, double value, const char *note);

/* The ambient temperature of a run, degC: override_c when finite, else the
 * profile's ambient, else PROFILE_AMBIENT_DEFAULT (docs/profiles.md). */
#define PROFILE_AMBIENT_DEFAULT 40.0
double profile_ambient(const struct profile *p, double override_c);

/* Applies the temperature derating of each capacitor kind at ambient_c:
 * where cap.<kind>.derate_from, derate_to and voltage_at_max are set and the
 * ambient is past derate_from, cap.<kind>.voltage becomes the factor times
 * the share of the rating left at that temperature, with a note saying so.
 * Returns 0 when the profile has no room for the entry. */
int profile_at_ambient(struct profile *p, double ambient_c);

#endif
