/* num.h: SPICE numbers with scale suffixes, and case folding of names.
 * Plain functions with no state, so the scanner actions stay tiny and the
 * rules can be tested row by row. */
#ifndef HEADROOM_NUM_H
#define HEADROOM_NUM_H

#include <stddef.h>

enum num_status {
	NUM_OK,
	NUM_RKM,           /* success, read as a letter code: "4k7" = 4.7k */
	NUM_NOT_A_NUMBER,  /* does not start like a number */
	NUM_DIGIT_AFTER_SUFFIX, /* "4.7k7": digits after letters, not a code */
	NUM_BAD_EXPONENT,  /* "1e+" */
	NUM_OUT_OF_RANGE,  /* overflows a double */
	NUM_BAD_CHAR       /* a character that has no place in a number */
};

/* Parses s[0..n) as a SPICE number: optional sign, mantissa, optional
 * exponent, optional scale suffix (T G MEG K MIL M U N P F, any case; M is
 * milli), then optional unit letters which are ignored ("10uF", "5V").
 * Also reads the letter-and-digit code of IEC 60062 ("4k7" = 4.7k,
 * "2R5" = 2.5, "1u2" = 1.2u), returning NUM_RKM, because plain SPICE would
 * silently read "4k7" as 4k. On success stores the value in *out. On
 * failure *bad (if not NULL) gets the offset of the first offending
 * character. */
enum num_status num_parse(const char *s, size_t n, double *out, size_t *bad);

/* Reads s[0..n) as a letter code that starts with its letter ("R47" =
 * 0.47, "K22" = 220, "L5" = 5m): one letter of R L T G K M U N P F, then
 * digits only. Returns 1 and sets *out when it is one. */
int num_letter_first(const char *s, size_t n, double *out);

/* True if s[0..n) starts the way a number does (digit, '.', or a sign
 * followed by one of those). */
int num_looks_numeric(const char *s, size_t n);

/* True for NUM_OK and NUM_RKM. */
int num_ok(enum num_status st);

/* A short human explanation of a status, lower-case. */
const char *num_status_text(enum num_status st);

/* ASCII lower-case fold, in place over n bytes. */
void num_fold(char *s, size_t n);

/* Case-insensitive equality of s[0..n) and a NUL-terminated lower-case word. */
int num_ieq(const char *s, size_t n, const char *word);

/* Case-insensitive equality of a[0..an) and b[0..bn). */
int num_iequal(const char *a, size_t an, const char *b, size_t bn);

/* Formats v with at most 4 significant digits: without a unit in SPICE
 * spelling ("4.7k", "2.2Meg"), with one in SI spelling ("4.7 kV",
 * "2.2 MHz"). */
void num_format_eng(double v, const char *unit, char *buf, size_t n);

/* True when s is a calendar date written YYYY-MM-DD (ISO 8601), month and
 * day in range for that month and year (leap years by the Gregorian rule). */
int num_iso_date(const char *s);

#endif
