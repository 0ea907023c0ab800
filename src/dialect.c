/* dialect.c: the simulator dialects (dialect.h). What each answer rests on
 * is written beside it; the choices are documented in docs/netlist.md. */
#include "dialect.h"

#include <string.h>
#include <strings.h>

static const char *const names[DIALECT_COUNT] = {
	[DIALECT_AUTO] = "auto",
	[DIALECT_NGSPICE] = "ngspice",
	[DIALECT_PSPICE] = "pspice",
	[DIALECT_HSPICE] = "hspice",
	[DIALECT_XYCE] = "xyce",
	[DIALECT_LTSPICE] = "ltspice",
};
_Static_assert(sizeof names / sizeof names[0] == DIALECT_COUNT, "one name per dialect");

const char *dialect_name(enum dialect d)
{
	return d < DIALECT_COUNT ? names[d] : "?";
}

int dialect_parse(const char *name, enum dialect *out)
{
	for (int i = 0; i < DIALECT_COUNT; i++)
		if (strcasecmp(name, names[i]) == 0) {
			*out = (enum dialect)i;
			return 1;
		}
	return 0;
}

const char *dialect_list(void)
{
	return "auto, ngspice, pspice, hspice, xyce, ltspice";
}

static int ends_with(const char *s, const char *end)
{
	size_t n = strlen(s), k = strlen(end);
	return n > k && strcasecmp(s + n - k, end) == 0;
}

/* Endings a converter or an exporter writes: the Xyce netlist translator
 * names its input by the simulator (".cir.pspice"), eSim's converter writes
 * ngspice decks as ".cir.out", and the XSPICE examples ship as ".deck". */
enum dialect dialect_of_path(const char *path)
{
	static const struct {
		const char *end;
		enum dialect d;
	} tab[] = {
		{".pspice", DIALECT_PSPICE},
		{".hspice", DIALECT_HSPICE},
		{".xyce", DIALECT_XYCE},
		{".asc.net", DIALECT_LTSPICE},
		{".cir.out", DIALECT_NGSPICE},
		{".deck", DIALECT_NGSPICE},
	};
	for (size_t i = 0; i < sizeof tab / sizeof tab[0]; i++)
		if (ends_with(path, tab[i].end))
			return tab[i].d;
	return DIALECT_AUTO;
}

const char *dialect_foreign_language(const char *path)
{
	if (ends_with(path, ".scs") || ends_with(path, ".spectre"))
		return "Spectre";
	return NULL;
}

static int line_is(const char *s, size_t n, const char *word)
{
	while (n && (s[n - 1] == ' ' || s[n - 1] == '\t' || s[n - 1] == '\r'))
		n--;
	while (n && (*s == ' ' || *s == '\t'))
		s++, n--;
	size_t w = strlen(word);
	if (n != w)
		return 0;
	for (size_t i = 0; i < n; i++)
		if ((s[i] | 0x20) != word[i])
			return 0;
	return 1;
}

const char *dialect_foreign_text(const char *path, const char *head, size_t n,
				 unsigned *line)
{
	if (!ends_with(path, ".sim"))
		return NULL;
	unsigned ln = 0;
	int first = 1;
	for (size_t i = 0; i < n;) {
		const char *nl = memchr(head + i, '\n', n - i);
		size_t len = nl ? (size_t)(nl - head) - i : n - i;
		const char *s = head + i;
		ln++;
		int blank = strspn(s, " \t\r") >= len;
		if (first && !blank) {
			first = 0;
			if (line_is(s, len, "spice") || line_is(s, len, "verilog") ||
			    line_is(s, len, "spectre")) {
				*line = ln;
				return "gnucap's command language (its first line switches the language)";
			}
		}
		if (len >= 6 && strncmp(s, "load \"", 6) == 0) {
			*line = ln;
			return "VACASK's own language";
		}
		i += len + 1;
	}
	return NULL;
}

/* ngspice reads "4k7" as 4.7k (its example deck RKM-R-1.cir), and so does
 * LTspice (from memory); for the others the letter code is not documented
 * and the warning stays. */
int dialect_reads_letter_codes(enum dialect d)
{
	return d == DIALECT_NGSPICE || d == DIALECT_LTSPICE;
}

/* "R47" for 0.47 ohm: only ngspice's example deck shows it; elsewhere a
 * word in that place names a model. Undetected files get ngspice's
 * reading, and only when no model of that name exists. */
int dialect_letter_first_codes(enum dialect d)
{
	return d == DIALECT_NGSPICE || d == DIALECT_AUTO;
}

/* LTspice's behavioural expressions read '^' as exclusive or and '**' as
 * the power (from memory); ngspice, HSPICE and Xyce read '^' as the power
 * (ngspice manual, expression operators). */
int dialect_caret_is_xor(enum dialect d)
{
	return d == DIALECT_LTSPICE;
}

/* Thermal voltage kT/q at 27 degC: k = 1.380649e-23 J/K and q =
 * 1.602176634e-19 C are exact in the SI since 2019 (BIPM SI brochure, 9th
 * edition); 300.15 K. PSpice macro-models use VT undeclared (the TLC555
 * model in ngspice's examples, written for PSpice), ngspice rejects it. */
int dialect_constant(enum dialect d, const char *name, double *v)
{
	if (strcasecmp(name, "vt") == 0 && d != DIALECT_NGSPICE) {
		*v = 1.380649e-23 * 300.15 / 1.602176634e-19;
		return 1;
	}
	return 0;
}
