/* bomval.h: the cells of a bill of materials as schematic tools write them:
 * designator lists ("C1, C2", "C1-C4"), voltages ("50V", "6V3", "1kV") and
 * part kinds from dielectric and technology words ("X7R", "electrolytic").
 * Plain functions with no state; reading the file is bom.c's job. */
#ifndef HEADROOM_BOMVAL_H
#define HEADROOM_BOMVAL_H

#include <stddef.h>

enum bomval_status { BOMVAL_OK,
		     BOMVAL_NONE,
		     BOMVAL_BAD };

/* Reads a voltage rating from s[0..n): "50V", "50 V", "1.5kV", "6V3"
 * (6.3 V), "63VDC", "35WV"; a bare number ("50") only when bare_ok. Empty
 * cells and placeholders ("-", "n/a", "na", "none") give BOMVAL_NONE. An
 * AC rating ("275VAC", "250Vrms") is BOMVAL_BAD: headroom's v_rated is a DC
 * rating. On BOMVAL_BAD *why (static text) says what is wrong. */
enum bomval_status bomval_voltage(const char *s, size_t n, int bare_ok, double *v,
				  const char **why);

/* The part kind (one of profile_cap_kinds or profile_diode_kinds, static)
 * that a word or hyphen-joined phrase s[0..n) names, without case: "X7R",
 * "C0G", "NP0", "electrolytic", "tantalum", "film", "MKP", "schottky",
 * "fast-recovery"...; NULL when it names none. */
const char *bomval_kind_word(const char *s, size_t n);

/* True when specific is a kind within general: ceramic-x7r within
 * ceramic, schottky within rectifier, polymer within tantalum. */
int bomval_refines(const char *general, const char *specific);

/* True when s[0..n) is a word a type or kind column carries that names no
 * kind and asks for none ("capacitor", "diode", "smd", "ceramic capacitor"
 * minus its kind word...). */
int bomval_neutral_word(const char *s, size_t n);

/* One finding in a value, kind or designator text: where (byte offset and
 * length in the text) and what. */
struct bomval_item {
	size_t off, len;
	const char *why; /* static; NULL for a value that was read */
};

/* What a value text ("100n/50V", "10uF 25V X7R", "4.7u 63V electrolytic")
 * yields: the first voltage and the first kind, each with its place; a
 * token that looks like a voltage but cannot be read, or a second voltage
 * or kind that disagrees with the first, is an issue (at most 4 kept). */
struct bomval_text {
	double v; /* NaN: none */
	struct bomval_item v_at;
	const char *kind; /* NULL: none */
	struct bomval_item kind_at;
	struct bomval_item issue[4];
	unsigned nissues;
};

/* Scans a value or description text, or with kind_column a kind column's
 * cell ("Ceramic X7R", "fast recovery"): there '-' separates words too, and
 * a cell that names no kind but has words other than neutral ones is an
 * issue. A general kind word followed or preceded by a specific one gives
 * the specific kind ("ceramic X5R": ceramic-x7r). */
void bomval_scan(const char *s, size_t n, int kind_column, struct bomval_text *out);

/* A designator list is read token by token. A token is a designator
 * ("C7", "XDRV.C1") or a range ("C1-C4", "C1-4", "C01-C04"). */
struct bomval_token {
	size_t off, len;      /* in the text */
	size_t plen;          /* a range: length of its prefix ("C") */
	unsigned long lo, hi; /* a range: its numbers; lo == hi for one name */
	int width;            /* digits written of lo (zero padding kept) */
	int range;            /* 1: a range to expand */
};

/* The next token of s[0..n) from *pos (separators: comma, semicolon,
 * space, tab; spaces around a range's '-' allowed). Returns BOMVAL_NONE at
 * the end, BOMVAL_BAD with *why for a token that is no designator or a
 * range that cannot be read (prefixes differ, runs backwards, more than
 * BOMVAL_RANGE_MAX names); *pos moves past the token either way. */
#define BOMVAL_RANGE_MAX 1000
enum bomval_status bomval_designator(const char *s, size_t n, size_t *pos,
				     struct bomval_token *t, const char **why);

/* The k-th name (0-based, lo + k) of a token into buf: the prefix, then
 * the number padded to the token's width. Returns 0 when buf is too small. */
int bomval_name(const char *s, const struct bomval_token *t, unsigned long k, char *buf,
		size_t size);

#endif
