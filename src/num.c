/* num.c: numbers with SPICE scale suffixes. The suffix table is the one of
 * the SPICE3 user's guide and the ngspice manual (section "Syntax of
 * expressions"/"scale factors"): T G Meg K mil m u n p f. */
#include "num.h"

#include <ctype.h>
#include <errno.h>
#include <math.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>

static int is_digit(char c)
{
	return c >= '0' && c <= '9';
}

static int is_alpha(char c)
{
	return (c >= 'a' && c <= 'z') || (c >= 'A' && c <= 'Z');
}

static char lower(char c)
{
	return (c >= 'A' && c <= 'Z') ? (char)(c - 'A' + 'a') : c;
}

int num_looks_numeric(const char *s, size_t n)
{
	size_t i = 0;
	if (i < n && (s[i] == '+' || s[i] == '-'))
		i++;
	if (i < n && is_digit(s[i]))
		return 1;
	return i + 1 < n && s[i] == '.' && is_digit(s[i + 1]);
}

/* Scale factor of the letters at s[0..n) (already known alphabetic);
 * the letters past the suffix are unit letters and ignored. */
static double scale_of(const char *s, size_t n)
{
	char a = n > 0 ? lower(s[0]) : '\0';
	char b = n > 1 ? lower(s[1]) : '\0';
	char c = n > 2 ? lower(s[2]) : '\0';
	switch (a) {
	case 't':
		return 1e12;
	case 'g':
		return 1e9;
	case 'k':
		return 1e3;
	case 'u':
		return 1e-6;
	case 'n':
		return 1e-9;
	case 'p':
		return 1e-12;
	case 'f':
		return 1e-15;
	case 'm':
		if (b == 'e' && c == 'g')
			return 1e6;
		if (b == 'i' && c == 'l')
			return 25.4e-6;
		return 1e-3;
	default:
		return 1.0;
	}
}

/* Scans the mantissa and exponent; returns the index after them or 0 when
 * nothing numeric was found. *st is set for a malformed exponent. */
static size_t scan_mantissa(const char *s, size_t n, enum num_status *st)
{
	size_t i = 0, digits = 0;
	if (i < n && (s[i] == '+' || s[i] == '-'))
		i++;
	while (i < n && is_digit(s[i]))
		i++, digits++;
	if (i < n && s[i] == '.') {
		i++;
		while (i < n && is_digit(s[i]))
			i++, digits++;
	}
	if (digits == 0)
		return 0;
	if (i < n && (s[i] == 'e' || s[i] == 'E')) {
		size_t j = i + 1;
		if (j < n && (s[j] == '+' || s[j] == '-'))
			j++;
		if (j < n && is_digit(s[j])) {
			while (j < n && is_digit(s[j]))
				j++;
			return j;
		}
		/* "1e" followed by a sign but no digit is malformed; "1e" then
		 * letters or the end is a unit letter e, ignored as SPICE does. */
		if (j > i + 1) {
			*st = NUM_BAD_EXPONENT;
			return j;
		}
	}
	return i;
}

/* Exact powers of ten: every one up to 1e22 is a double. */
static const double pow10_exact[] = {
	1e0,  1e1,  1e2,  1e3,  1e4,  1e5,  1e6,  1e7,  1e8,  1e9,  1e10, 1e11,
	1e12, 1e13, 1e14, 1e15, 1e16, 1e17, 1e18, 1e19, 1e20, 1e21, 1e22};

/* The value of a scanned mantissa. Short decimals take the exact fast path
 * (at most 15 digits and an exponent of at most 22 in magnitude: one
 * rounding, the same result strtod gives); everything else is strtod's. */
static double mantissa_value(const char *t, size_t n)
{
	size_t i = 0;
	int neg = 0, exp10 = 0, digits = 0;
	unsigned long long m = 0;
	if (t[i] == '+' || t[i] == '-')
		neg = t[i++] == '-';
	for (; i < n && is_digit(t[i]); i++, digits++)
		m = m * 10 + (unsigned)(t[i] - '0');
	if (i < n && t[i] == '.')
		for (i++; i < n && is_digit(t[i]); i++, digits++, exp10--)
			m = m * 10 + (unsigned)(t[i] - '0');
	if (i < n || digits > 15 || exp10 < -22)
		return strtod(t, NULL); /* exponent part, or too long */
	double v = (double)m / pow10_exact[-exp10];
	return neg ? -v : v;
}

/* The letter of a letter code: R for units and L for milli (IEC 60062),
 * else the SPICE scale suffix. */
static double rkm_scale(const char *s, size_t n)
{
	char unit = lower(s[0]);
	return unit == 'r' ? 1.0 : unit == 'l' && n == 1 ? 1e-3 : scale_of(s, n);
}

int num_letter_first(const char *s, size_t n, double *out)
{
	if (n < 2 || n > 60 || !strchr("rltgkmunpf", lower(s[0])))
		return 0;
	for (size_t i = 1; i < n; i++)
		if (!is_digit(s[i]))
			return 0;
	char tmp[64] = "0.";
	memcpy(tmp + 2, s + 1, n - 1);
	tmp[n + 1] = '\0';
	*out = strtod(tmp, NULL) * rkm_scale(s, 1);
	return 1;
}

/* Letter code: whole digits, letters (scale, or R for units), digits
 * standing for the fraction, then optional unit letters. */
static enum num_status parse_rkm(const char *s, size_t n, size_t i,
				 size_t letters, double *out, size_t *bad)
{
	size_t j = letters;
	for (size_t k = 0; k < i; k++)
		if (!is_digit(s[k]) && !(k == 0 && (s[k] == '-' || s[k] == '+'))) {
			if (bad)
				*bad = letters;
			return NUM_DIGIT_AFTER_SUFFIX;
		}
	while (j < n && is_digit(s[j]))
		j++;
	size_t tail = j;
	while (tail < n && is_alpha(s[tail]))
		tail++;
	if (tail < n || j - letters + i + 2 > 120) {
		if (bad)
			*bad = tail < n ? tail : letters;
		return NUM_BAD_CHAR;
	}
	char tmp[128];
	memcpy(tmp, s, i);
	tmp[i] = '.';
	memcpy(tmp + i + 1, s + letters, j - letters);
	tmp[i + 1 + (j - letters)] = '\0';
	double scale = rkm_scale(s + i, letters - i);
	*out = strtod(tmp, NULL) * scale;
	return NUM_RKM;
}

int num_ok(enum num_status st)
{
	return st == NUM_OK || st == NUM_RKM;
}

enum num_status num_parse(const char *s, size_t n, double *out, size_t *bad)
{
	enum num_status st = NUM_OK;
	size_t i = scan_mantissa(s, n, &st);
	if (i == 0) {
		if (bad)
			*bad = 0;
		return NUM_NOT_A_NUMBER;
	}
	if (st != NUM_OK) {
		if (bad)
			*bad = i;
		return st;
	}
	char tmp[128];
	if (i >= sizeof tmp) {
		if (bad)
			*bad = 0;
		return NUM_OUT_OF_RANGE;
	}
	memcpy(tmp, s, i);
	tmp[i] = '\0';
	size_t letters = i;
	while (letters < n && (is_alpha(s[letters]) || s[letters] == '_'))
		letters++;
	if (letters < n && is_digit(s[letters]) && letters > i)
		return parse_rkm(s, n, i, letters, out, bad);
	if (letters < n) {
		if (bad)
			*bad = letters;
		return NUM_BAD_CHAR;
	}
	errno = 0;
	double v = mantissa_value(tmp, i) * scale_of(s + i, letters - i);
	if (!isfinite(v) || errno == ERANGE) {
		if (bad)
			*bad = 0;
		if (isfinite(v) && fabs(v) < 1.0)
			v = 0.0; /* underflow to zero is harmless */
		else
			return NUM_OUT_OF_RANGE;
	}
	*out = v;
	return NUM_OK;
}

const char *num_status_text(enum num_status st)
{
	switch (st) {
	case NUM_OK:
		return "a number";
	case NUM_NOT_A_NUMBER:
		return "not a number";
	case NUM_RKM:
		return "a letter code";
	case NUM_DIGIT_AFTER_SUFFIX:
		return "digits after the letters of a number with a decimal point or exponent";
	case NUM_BAD_EXPONENT:
		return "the exponent has no digits";
	case NUM_OUT_OF_RANGE:
		return "the number is out of range";
	default:
		return "unexpected character in a number";
	}
}

void num_fold(char *s, size_t n)
{
	for (size_t i = 0; i < n; i++)
		s[i] = lower(s[i]);
}

int num_ieq(const char *s, size_t n, const char *word)
{
	size_t i = 0;
	for (; i < n && word[i]; i++)
		if (lower(s[i]) != word[i])
			return 0;
	return i == n && word[i] == '\0';
}

int num_iequal(const char *a, size_t an, const char *b, size_t bn)
{
	if (an != bn)
		return 0;
	for (size_t i = 0; i < an; i++)
		if (lower(a[i]) != lower(b[i]))
			return 0;
	return 1;
}

void num_format_eng(double v, const char *unit, char *buf, size_t n)
{
	/* without a unit: SPICE spelling ("2.2Meg"); with one: SI ("2.2 MHz") */
	static const struct {
		double scale;
		const char *spice, *si;
	} tab[] = {{1e12, "T", "T"}, {1e9, "G", "G"}, {1e6, "Meg", "M"},
		   {1e3, "k", "k"},  {1.0, "", ""},   {1e-3, "m", "m"},
		   {1e-6, "u", "u"}, {1e-9, "n", "n"}, {1e-12, "p", "p"},
		   {1e-15, "f", "f"}};
	int si = unit[0] != '\0';
	double a = fabs(v);
	if (a == 0.0 || !isfinite(v)) {
		snprintf(buf, n, "%g%s%s", v, si ? " " : "", unit);
		return;
	}
	for (size_t i = 0; i < sizeof tab / sizeof tab[0]; i++) {
		if (a >= tab[i].scale * 0.9999999 || i + 1 == sizeof tab / sizeof tab[0]) {
			snprintf(buf, n, "%.4g%s%s%s", v / tab[i].scale, si ? " " : "",
				 si ? tab[i].si : tab[i].spice, unit);
			return;
		}
	}
}

int num_iso_date(const char *s)
{
	static const int days[12] = {31, 29, 31, 30, 31, 30, 31, 31, 30, 31, 30, 31};
	for (int i = 0; i < 10; i++)
		if ((i == 4 || i == 7) ? s[i] != '-' : (s[i] < '0' || s[i] > '9'))
			return 0;
	if (s[10] != '\0')
		return 0;
	int y = (s[0] - '0') * 1000 + (s[1] - '0') * 100 + (s[2] - '0') * 10 + (s[3] - '0');
	int m = (s[5] - '0') * 10 + (s[6] - '0'), d = (s[8] - '0') * 10 + (s[9] - '0');
	int leap = (y % 4 == 0 && y % 100 != 0) || y % 400 == 0;
	if (m < 1 || m > 12 || d < 1 || d > days[m - 1])
		return 0;
	return m != 2 || d <= 28 + leap;
}
