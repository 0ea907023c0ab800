/* test_bomval.c: the cells of a bill of materials, row by row: voltages,
 * kind words, value texts and designator lists. Spellings are the ones
 * schematic tools and designers write (6V3 for 6.3 V is the IEC 60062 style
 * of a letter for the decimal point, from memory). */
#include "testutil.h"

#include <math.h>

#include "bomval.h"
#include "profile.h"

struct volt_row {
	const char *text;
	int bare_ok;
	enum bomval_status st;
	double v;
};

static const struct volt_row volts[] = {
	{"50V", 0, BOMVAL_OK, 50},
	{"50 V", 0, BOMVAL_OK, 50},
	{" 50v ", 0, BOMVAL_OK, 50},
	{"50", 1, BOMVAL_OK, 50},
	{"50", 0, BOMVAL_BAD, 0},
	{"1.5kV", 0, BOMVAL_OK, 1500},
	{"1KV", 0, BOMVAL_OK, 1000},
	{"6V3", 0, BOMVAL_OK, 6.3},
	{"6v3", 1, BOMVAL_OK, 6.3},
	{"63VDC", 0, BOMVAL_OK, 63},
	{"35WV", 0, BOMVAL_OK, 35},
	{"275VAC", 0, BOMVAL_BAD, 0},
	{"250 Vrms", 1, BOMVAL_BAD, 0},
	{"2O V", 1, BOMVAL_BAD, 0},
	{"fifty", 1, BOMVAL_BAD, 0},
	{"1,5kV", 1, BOMVAL_BAD, 0},
	{"100n", 0, BOMVAL_BAD, 0},
	{"", 1, BOMVAL_NONE, 0},
	{"-", 1, BOMVAL_NONE, 0},
	{"N/A", 1, BOMVAL_NONE, 0},
};

static void test_voltages(void **state)
{
	(void)state;
	for (size_t i = 0; i < sizeof volts / sizeof volts[0]; i++) {
		double v = NAN;
		const char *why = NULL;
		const struct volt_row *r = &volts[i];
		enum bomval_status st = bomval_voltage(r->text, strlen(r->text), r->bare_ok, &v, &why);
		if (st != r->st || (st == BOMVAL_OK && fabs(v - r->v) > 1e-9))
			fail_msg("'%s': status %d value %g, want %d %g", r->text, st, v, r->st, r->v);
		if (st == BOMVAL_BAD && !why)
			fail_msg("'%s': no reason", r->text);
	}
}

struct text_row {
	const char *text;
	int kind_column;
	double v;         /* NaN: none */
	const char *kind; /* NULL: none */
	unsigned nissues;
};

static const struct text_row texts[] = {
	{"100n/50V", 0, 50, NULL, 0},
	{"10uF 25V X7R", 0, 25, "ceramic-x7r", 0},
	{"4.7u 63V electrolytic", 0, 63, "alu-electrolytic", 0},
	{"1N4148", 0, NAN, NULL, 0},
	{"100nF_50V_C0G_0603", 0, 50, "ceramic-c0g", 0},
	{"CAP CER 100NF 50V X7R 0603", 0, 50, "ceramic-x7r", 0},
	{"Schottky 40V", 0, 40, "schottky", 0},
	{"fast recovery 100V", 0, 100, "fast-recovery", 0},
	{"100n 5OV", 0, NAN, NULL, 1},
	{"100n 50V 25V", 0, 50, NULL, 1},
	{"Ceramic X5R", 1, NAN, "ceramic-x7r", 0},
	{"X5R ceramic", 1, NAN, "ceramic-x7r", 0},
	{"Aluminium Electrolytic", 1, NAN, "alu-electrolytic", 0},
	{"polymer tantalum", 1, NAN, "polymer", 0},
	{"Schottky rectifier", 1, NAN, "schottky", 0},
	{"Capacitor", 1, NAN, NULL, 0},
	{"unobtainium", 1, NAN, NULL, 1},
	{"film X7R", 1, NAN, "film", 1},
};

static void test_texts(void **state)
{
	(void)state;
	for (size_t i = 0; i < sizeof texts / sizeof texts[0]; i++) {
		const struct text_row *r = &texts[i];
		struct bomval_text t;
		bomval_scan(r->text, strlen(r->text), r->kind_column, &t);
		int v_ok = isnan(r->v) ? isnan(t.v) : t.v == r->v;
		int k_ok = r->kind ? t.kind && strcmp(t.kind, r->kind) == 0 : !t.kind;
		if (!v_ok || !k_ok || t.nissues != r->nissues)
			fail_msg("'%s': %g %s %u issues, want %g %s %u", r->text, t.v,
				 t.kind ? t.kind : "-", t.nissues, r->v, r->kind ? r->kind : "-",
				 r->nissues);
	}
}

/* Every kind a word maps to is a kind of the profiles. */
static void test_kinds_are_profile_kinds(void **state)
{
	(void)state;
	static const char *const words[] = {"c0g", "x7r", "y5v", "film", "mica", "glass", "elko",
					    "tantalum", "polymer", "edlc", "rectifier", "ultrafast",
					    "schottky", "zener", "hv-stack", "switching", NULL};
	for (size_t i = 0; words[i]; i++) {
		const char *k = bomval_kind_word(words[i], strlen(words[i]));
		int found = 0;
		for (size_t j = 0; k && profile_cap_kinds[j]; j++)
			found |= strcmp(k, profile_cap_kinds[j]) == 0;
		for (size_t j = 0; k && profile_diode_kinds[j]; j++)
			found |= strcmp(k, profile_diode_kinds[j]) == 0;
		if (!found || strcmp(k, "default") == 0)
			fail_msg("'%s' maps to '%s', not a profile kind", words[i], k ? k : "(none)");
	}
}

struct des_row {
	const char *text;
	const char *names; /* expanded, space-separated; '!' marks a bad token */
};

static const struct des_row des[] = {
	{"C1, C2, C7", "C1 C2 C7"},
	{"C1 C2", "C1 C2"},
	{"C1;C2", "C1 C2"},
	{"C1-C4", "C1 C2 C3 C4"},
	{"C1 - C3", "C1 C2 C3"},
	{"D1-3", "D1 D2 D3"},
	{"C08-C10", "C08 C09 C10"},
	{"X1.C3", "X1.C3"},
	{"C4-C1", "!"},
	{"C1-R4", "!"},
	{"C1-C2000", "!"},
	{"C1, C2-, C5", "C1 ! C5"},
	{"1C", "!"},
	{"", ""},
};

static void test_designators(void **state)
{
	(void)state;
	for (size_t i = 0; i < sizeof des / sizeof des[0]; i++) {
		const char *s = des[i].text;
		char got[256] = "", name[64];
		size_t pos = 0, n = strlen(s);
		struct bomval_token t;
		const char *why;
		enum bomval_status st;
		while ((st = bomval_designator(s, n, &pos, &t, &why)) != BOMVAL_NONE) {
			if (st == BOMVAL_BAD) {
				strcat(got, got[0] ? " !" : "!");
				continue;
			}
			for (unsigned long k = 0; k <= t.hi - t.lo; k++) {
				assert_true(bomval_name(s, &t, k, name, sizeof name));
				if (got[0])
					strcat(got, " ");
				strcat(got, name);
			}
		}
		if (strcmp(got, des[i].names) != 0)
			fail_msg("'%s': got '%s', want '%s'", s, got, des[i].names);
	}
}

int main(void)
{
	const struct CMUnitTest tests[] = {
		cmocka_unit_test(test_voltages),
		cmocka_unit_test(test_texts),
		cmocka_unit_test(test_kinds_are_profile_kinds),
		cmocka_unit_test(test_designators),
	};
	return cmocka_run_group_tests(tests, NULL, NULL);
}
