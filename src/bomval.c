/* bomval.c: reading the cells of a bill of materials (bomval.h): designator
 * lists and ranges, voltages, and dielectric and technology words mapped to
 * headroom's part kinds. No file handling and no diagnostics: bom.c places
 * what these functions find. */
#include "bomval.h"

#include <ctype.h>
#include <math.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>

#include "num.h"

/* Words and phrases (lower-case, words joined by '-') that name a kind.
 * The kind names also appear in profile.c and docs/profiles.md
 * [kinds-list]; tests/test_bomval.c checks each is one of them. Class II
 * ceramics (X5R, X6S, X7S, X7T, X8R) are mapped to ceramic-x7r, the class II
 * kind of the profiles; Y5V and Z5U, class III, to plain ceramic (common
 * practice, no source). */
static const struct {
	const char *word, *kind;
} kind_words[] = {
	{"c0g", "ceramic-c0g"},
	{"cog", "ceramic-c0g"},
	{"np0", "ceramic-c0g"},
	{"npo", "ceramic-c0g"},
	{"ceramic-c0g", "ceramic-c0g"},
	{"class-1", "ceramic-c0g"},
	{"x7r", "ceramic-x7r"},
	{"x5r", "ceramic-x7r"},
	{"x6s", "ceramic-x7r"},
	{"x7s", "ceramic-x7r"},
	{"x7t", "ceramic-x7r"},
	{"x8r", "ceramic-x7r"},
	{"ceramic-x7r", "ceramic-x7r"},
	{"class-2", "ceramic-x7r"},
	{"y5v", "ceramic"},
	{"z5u", "ceramic"},
	{"ceramic", "ceramic"},
	{"mlcc", "ceramic"},
	{"cer", "ceramic"},
	{"film", "film"},
	{"polyester", "film"},
	{"polypropylene", "film"},
	{"pet", "film"},
	{"pp", "film"},
	{"pps", "film"},
	{"pen", "film"},
	{"mkt", "film"},
	{"mkp", "film"},
	{"mks", "film"},
	{"metallized-film", "film"},
	{"mica", "mica"},
	{"silver-mica", "mica"},
	{"glass", "glass"},
	{"electrolytic", "alu-electrolytic"},
	{"alu-electrolytic", "alu-electrolytic"},
	{"aluminium-electrolytic", "alu-electrolytic"},
	{"aluminum-electrolytic", "alu-electrolytic"},
	{"aluminium", "alu-electrolytic"},
	{"aluminum", "alu-electrolytic"},
	{"elko", "alu-electrolytic"},
	{"elco", "alu-electrolytic"},
	{"alu", "alu-electrolytic"},
	{"e-cap", "alu-electrolytic"},
	{"ecap", "alu-electrolytic"},
	{"tantalum", "tantalum"},
	{"tant", "tantalum"},
	{"polymer", "polymer"},
	{"polymer-tantalum", "polymer"},
	{"polymer-aluminium", "polymer"},
	{"polymer-aluminum", "polymer"},
	{"supercap", "supercap"},
	{"supercapacitor", "supercap"},
	{"ultracap", "supercap"},
	{"edlc", "supercap"},
	{"double-layer", "supercap"},
	{"rectifier", "rectifier"},
	{"fast-recovery", "fast-recovery"},
	{"ultrafast", "fast-recovery"},
	{"ultra-fast", "fast-recovery"},
	{"frd", "fast-recovery"},
	{"schottky", "schottky"},
	{"zener", "zener"},
	{"hv-stack", "hv-stack"},
	{"high-voltage-stack", "hv-stack"},
	{"signal", "signal"},
	{"small-signal", "signal"},
	{"switching", "signal"},
};

static const char *const neutral_words[] = {
	"capacitor", "capacitors", "cap", "caps", "diode", "diodes", "smd", "smt", "tht",
	"through-hole", "chip", "radial", "axial", "general-purpose", "standard", "multilayer",
	"dielectric", "type", "part", NULL};

/* s[0..n) folded, spaces and underscores made '-', into buf; 0 if too long. */
static int fold_phrase(const char *s, size_t n, char *buf, size_t size)
{
	size_t k = 0;
	while (n && isspace((unsigned char)*s)) {
		s++;
		n--;
	}
	while (n && isspace((unsigned char)s[n - 1]))
		n--;
	if (n == 0 || n >= size)
		return 0;
	for (size_t i = 0; i < n; i++) {
		char c = (char)tolower((unsigned char)s[i]);
		if (c == ' ' || c == '_' || c == '\t')
			c = '-';
		if (c == '-' && k && buf[k - 1] == '-')
			continue;
		buf[k++] = c;
	}
	buf[k] = '\0';
	return 1;
}

const char *bomval_kind_word(const char *s, size_t n)
{
	char w[48];
	if (!fold_phrase(s, n, w, sizeof w))
		return NULL;
	for (size_t i = 0; i < sizeof kind_words / sizeof kind_words[0]; i++)
		if (strcmp(w, kind_words[i].word) == 0)
			return kind_words[i].kind;
	return NULL;
}

int bomval_neutral_word(const char *s, size_t n)
{
	char w[48];
	if (!fold_phrase(s, n, w, sizeof w))
		return 0;
	for (size_t i = 0; neutral_words[i]; i++)
		if (strcmp(w, neutral_words[i]) == 0)
			return 1;
	return 0;
}

/* ---- voltages ---- */

static int is_placeholder(const char *s, size_t n)
{
	static const char *const ph[] = {"-", "--", "n/a", "na", "none", "tbd", "?", NULL};
	for (size_t i = 0; ph[i]; i++)
		if (num_ieq(s, n, ph[i]))
			return 1;
	return 0;
}

/* Length of the unsigned decimal number at s (digits, one '.'), 0 if none. */
static size_t decimal_len(const char *s, size_t n)
{
	size_t i = 0, digits = 0;
	int dot = 0;
	for (; i < n; i++) {
		if (isdigit((unsigned char)s[i]))
			digits++;
		else if (s[i] == '.' && !dot)
			dot = 1;
		else
			break;
	}
	return digits ? i : 0;
}

static double decimal_value(const char *s, size_t n)
{
	char buf[32];
	if (n >= sizeof buf)
		return NAN;
	memcpy(buf, s, n);
	buf[n] = '\0';
	return strtod(buf, NULL);
}

/* The unit after a number: "v", "vdc", "v-dc", "wv", "wvdc"; 2 for an AC
 * unit ("vac", "vrms"); 0 for none or something else. */
static int volt_unit(const char *s, size_t n)
{
	static const char *const dc[] = {"v", "vdc", "v dc", "wv", "wvdc", "v-dc", "vdcw", NULL};
	static const char *const ac[] = {"vac", "v ac", "vrms", "v rms", "vac rms", NULL};
	for (size_t i = 0; dc[i]; i++)
		if (num_ieq(s, n, dc[i]))
			return 1;
	for (size_t i = 0; ac[i]; i++)
		if (num_ieq(s, n, ac[i]))
			return 2;
	return 0;
}

enum bomval_status bomval_voltage(const char *s, size_t n, int bare_ok, double *v,
				  const char **why)
{
	while (n && isspace((unsigned char)*s)) {
		s++;
		n--;
	}
	while (n && isspace((unsigned char)s[n - 1]))
		n--;
	if (n == 0 || is_placeholder(s, n))
		return BOMVAL_NONE;
	*why = "it is not a voltage (write 50V, 50, 6V3 or 1.5kV)";
	size_t d = decimal_len(s, n);
	if (!d)
		return BOMVAL_BAD;
	double x = decimal_value(s, d);
	size_t i = d;
	while (i < n && s[i] == ' ')
		i++;
	/* 6V3: the unit letter stands for the decimal point (IEC 60062 style) */
	if (i < n && (s[i] == 'v' || s[i] == 'V') && i + 1 < n && isdigit((unsigned char)s[i + 1]) &&
	    s[d - 1] != '.' && !memchr(s, '.', d)) {
		size_t f = decimal_len(s + i + 1, n - i - 1);
		if (f && i + 1 + f == n && !memchr(s + i + 1, '.', f)) {
			*v = x + decimal_value(s + i + 1, f) / pow(10, (double)f);
			return BOMVAL_OK;
		}
		return BOMVAL_BAD;
	}
	if (i < n && (s[i] == 'k' || s[i] == 'K')) {
		x *= 1e3;
		i++;
	}
	int u = volt_unit(s + i, n - i);
	if (u == 2) {
		*why = "it is an AC rating; v_rated is the DC rating: give the DC voltage";
		return BOMVAL_BAD;
	}
	if (u == 0 && !(i == n && bare_ok && i == d))
		return BOMVAL_BAD;
	if (!(x >= 0) || isinf(x))
		return BOMVAL_BAD;
	*v = x;
	return BOMVAL_OK;
}

/* ---- value text ---- */

static void add_issue(struct bomval_text *t, size_t off, size_t len, const char *why)
{
	if (t->nissues < sizeof t->issue / sizeof t->issue[0])
		t->issue[t->nissues++] = (struct bomval_item){off, len, why};
}

static int is_sep(char c, int kind_column)
{
	return c == ' ' || c == '\t' || c == '/' || c == ',' || c == ';' || c == '_' ||
	       c == '|' || c == '(' || c == ')' || (kind_column && c == '-');
}

/* A token that starts with a digit and ends in a voltage unit but is not
 * a voltage ("2OOV"), or a voltage, or nothing of interest. */
static void scan_voltage(const char *s, size_t off, size_t len, struct bomval_text *t)
{
	const char *tok = s + off, *why = NULL;
	double v;
	if (!isdigit((unsigned char)tok[0]))
		return;
	enum bomval_status st = bomval_voltage(tok, len, 0, &v, &why);
	if (st == BOMVAL_NONE)
		return;
	char last = (char)tolower((unsigned char)tok[len - 1]);
	int ends_volt = last == 'v' || num_ieq(tok + (len > 2 ? len - 2 : 0), len > 2 ? 2 : 0, "dc") ||
			num_ieq(tok + (len > 2 ? len - 2 : 0), len > 2 ? 2 : 0, "ac") ||
			num_ieq(tok + (len > 3 ? len - 3 : 0), len > 3 ? 3 : 0, "rms");
	if (st == BOMVAL_BAD) {
		if (ends_volt)
			add_issue(t, off, len, why);
		return;
	}
	if (isnan(t->v)) {
		t->v = v;
		t->v_at = (struct bomval_item){off, len, NULL};
	} else if (v != t->v) {
		add_issue(t, off, len, "a second voltage that differs from the first: the first is used");
	}
}

/* A general kind that a more specific word refines: "ceramic X7R" is
 * ceramic-x7r, "Schottky rectifier" schottky, "polymer tantalum" polymer. */
int bomval_refines(const char *general, const char *specific)
{
	static const char *const pairs[][2] = {
		{"ceramic", "ceramic-c0g"}, {"ceramic", "ceramic-x7r"}, {"alu-electrolytic", "polymer"}, {"tantalum", "polymer"}, {"rectifier", "fast-recovery"}, {"rectifier", "schottky"}, {"rectifier", "hv-stack"}, {"signal", "schottky"}};
	for (size_t i = 0; i < sizeof pairs / sizeof pairs[0]; i++)
		if (strcmp(general, pairs[i][0]) == 0 && strcmp(specific, pairs[i][1]) == 0)
			return 1;
	return 0;
}

static void take_kind(const char *kind, size_t off, size_t len, struct bomval_text *t)
{
	if (t->kind && bomval_refines(t->kind, kind))
		t->kind = NULL;
	if (t->kind && bomval_refines(kind, t->kind))
		return;
	if (!t->kind) {
		t->kind = kind;
		t->kind_at = (struct bomval_item){off, len, NULL};
	} else if (strcmp(kind, t->kind) != 0) {
		add_issue(t, off, len, "a second part kind that differs from the first: the first is used");
	}
}

/* Token at off: a kind word, or with the next token a two-word phrase
 * ("fast recovery", "silver mica"); returns how many tokens it used. */
static int scan_kind(const char *s, size_t n, size_t off, size_t len, int kind_column,
		     struct bomval_text *t)
{
	size_t j = off + len, k;
	while (j < n && is_sep(s[j], kind_column) && s[j] != ',' && s[j] != ';')
		j++;
	for (k = j; k < n && !is_sep(s[k], kind_column); k++)
		;
	const char *kind = k > j ? bomval_kind_word(s + off, k - off) : NULL;
	if (kind) {
		take_kind(kind, off, k - off, t);
		return 2;
	}
	kind = bomval_kind_word(s + off, len);
	if (kind) {
		take_kind(kind, off, len, t);
		return 1;
	}
	return 0;
}

void bomval_scan(const char *s, size_t n, int kind_column, struct bomval_text *out)
{
	memset(out, 0, sizeof *out);
	out->v = NAN;
	size_t i = 0, unknown = 0, unknown_off = 0, unknown_len = 0;
	int skip = 0;
	while (i < n) {
		while (i < n && is_sep(s[i], kind_column))
			i++;
		size_t start = i;
		while (i < n && !is_sep(s[i], kind_column))
			i++;
		if (i == start)
			break;
		if (skip) {
			skip--;
			continue;
		}
		int used = scan_kind(s, n, start, i - start, kind_column, out);
		if (used) {
			skip = used - 1;
			continue;
		}
		scan_voltage(s, start, i - start, out);
		if (kind_column && !bomval_neutral_word(s + start, i - start) && !unknown++) {
			unknown_off = start;
			unknown_len = i - start;
		}
	}
	if (kind_column && unknown && !out->kind)
		add_issue(out, unknown_off, unknown_len,
			  "it names no part kind headroom knows (docs/check.md lists the words read)");
}

/* ---- designators ---- */

static int des_char(char c)
{
	return isalnum((unsigned char)c) || c == '_' || c == '.' || c == '+' || c == '#' ||
	       c == '/' || c == '$';
}

static int des_sep(char c)
{
	return c == ',' || c == ';' || c == ' ' || c == '\t' || c == '\r' || c == '\n';
}

/* Splits a name into letters-and-all prefix and trailing decimal number. */
static int split_number(const char *s, size_t n, size_t *plen, unsigned long *num, int *width)
{
	size_t k = n;
	while (k && isdigit((unsigned char)s[k - 1]))
		k--;
	if (k == n || n - k > 9)
		return 0;
	*plen = k;
	*width = (int)(n - k);
	*num = 0;
	for (size_t i = k; i < n; i++)
		*num = *num * 10 + (unsigned long)(s[i] - '0');
	return 1;
}

static enum bomval_status read_range(const char *s, size_t a, size_t alen, size_t b,
				     size_t blen, struct bomval_token *t, const char **why)
{
	size_t pb;
	unsigned long hi;
	int wb;
	*why = "a range is written C1-C4 or C1-4, the same letters on both sides";
	if (!split_number(s + a, alen, &t->plen, &t->lo, &t->width) || t->plen == 0 ||
	    !split_number(s + b, blen, &pb, &hi, &wb))
		return BOMVAL_BAD;
	if (pb && (pb != t->plen || !num_iequal(s + a, pb, s + b, pb)))
		return BOMVAL_BAD;
	t->hi = hi;
	t->range = 1;
	if (hi < t->lo) {
		*why = "the range runs backwards";
		return BOMVAL_BAD;
	}
	if (hi - t->lo >= BOMVAL_RANGE_MAX) {
		*why = "the range names more than 1000 designators";
		return BOMVAL_BAD;
	}
	return BOMVAL_OK;
}

enum bomval_status bomval_designator(const char *s, size_t n, size_t *pos,
				     struct bomval_token *t, const char **why)
{
	size_t i = *pos;
	memset(t, 0, sizeof *t);
	while (i < n && des_sep(s[i]))
		i++;
	if (i == n) {
		*pos = i;
		return BOMVAL_NONE;
	}
	size_t a = i;
	while (i < n && !des_sep(s[i]) && s[i] != '-')
		i++;
	size_t alen = i, j = i;
	while (j < n && (s[j] == ' ' || s[j] == '\t'))
		j++;
	t->off = a;
	if (j < n && s[j] == '-') {
		for (j++; j < n && (s[j] == ' ' || s[j] == '\t'); j++)
			;
		size_t b = j;
		while (j < n && !des_sep(s[j]))
			j++;
		*pos = j;
		t->len = j - a;
		for (size_t k = a; k < alen; k++)
			if (!des_char(s[k]))
				return *why = "a designator has letters, digits and . _ only", BOMVAL_BAD;
		return read_range(s, a, alen - a, b, j - b, t, why);
	}
	while (i < n && !des_sep(s[i]))
		i++;
	*pos = i;
	t->len = i - a;
	for (size_t k = a; k < i; k++)
		if (!des_char(s[k]))
			return *why = "a designator has letters, digits and . _ only", BOMVAL_BAD;
	if (!isalpha((unsigned char)s[a]))
		return *why = "a designator starts with a letter", BOMVAL_BAD;
	return BOMVAL_OK;
}

int bomval_name(const char *s, const struct bomval_token *t, unsigned long k, char *buf,
		size_t size)
{
	int w;
	if (!t->range)
		w = snprintf(buf, size, "%.*s", (int)t->len, s + t->off);
	else
		w = snprintf(buf, size, "%.*s%0*lu", (int)t->plen, s + t->off, t->width, t->lo + k);
	return w >= 0 && (size_t)w < size;
}
