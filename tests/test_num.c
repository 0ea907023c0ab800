/* test_num.c: SPICE numbers and scale suffixes.
 * Source of the suffix table: ngspice user manual, section 2.1.1 "General
 * structure and conventions" (T G Meg K mil m u n p f; letters after a
 * number that are not a scale factor are ignored) -- from memory; the same
 * table and the same rule for trailing letters are printed in the gnucap
 * manual, section 1.4 "Command structure" (seen). Letter codes ("4k7") follow
 * IEC 60062's resistance code, from memory, and ngspice's own example deck
 * examples/various/RKM-C-1.cir in the third-party corpus (seen). */
#include "testutil.h"

#include <math.h>

#include "num.h"

struct num_row {
	const char *text;
	enum num_status st;
	double value;
};

static const struct num_row rows[] = {
	{"1", NUM_OK, 1},
	{"-2.5", NUM_OK, -2.5},
	{"+3", NUM_OK, 3},
	{"1e-6", NUM_OK, 1e-6},
	{"1E+3", NUM_OK, 1e3},
	{".5", NUM_OK, 0.5},
	{"5.", NUM_OK, 5},
	{"1T", NUM_OK, 1e12},
	{"1g", NUM_OK, 1e9},
	{"1Meg", NUM_OK, 1e6},
	{"2MEG", NUM_OK, 2e6},
	{"1k", NUM_OK, 1e3},
	{"1K", NUM_OK, 1e3},
	{"1m", NUM_OK, 1e-3},          /* M is milli, never mega */
	{"1M", NUM_OK, 1e-3},
	{"1mil", NUM_OK, 25.4e-6},
	{"1u", NUM_OK, 1e-6},
	{"1n", NUM_OK, 1e-9},
	{"1p", NUM_OK, 1e-12},
	{"1f", NUM_OK, 1e-15},
	{"10uF", NUM_OK, 10e-6},       /* unit letters after the scale are ignored */
	{"5V", NUM_OK, 5},
	{"1F", NUM_OK, 1e-15},         /* the classic trap: F is femto */
	{"100Hz", NUM_OK, 100},
	{"1kohm", NUM_OK, 1e3},
	{"1megohm", NUM_OK, 1e6},
	{"1e3k", NUM_OK, 1e6},
	{"2.5e-3m", NUM_OK, 2.5e-6},
	{"1e", NUM_OK, 1},             /* a lone e is a unit letter */
	{"4k7", NUM_RKM, 4.7e3},
	{"2R5", NUM_RKM, 2.5},
	{"27R56", NUM_RKM, 27.56},
	{"1u2", NUM_RKM, 1.2e-6},
	{"2meg5", NUM_RKM, 2.5e6},
	{"4p7", NUM_RKM, 4.7e-12},
	{"4L7", NUM_RKM, 4.7e-3},      /* L is milli (IEC 60062; ngspice's RKM-R-1.cir) */
	{"4.7k7", NUM_DIGIT_AFTER_SUFFIX, 0},
	{"1e+", NUM_BAD_EXPONENT, 0},
	{"abc", NUM_NOT_A_NUMBER, 0},
	{".", NUM_NOT_A_NUMBER, 0},
	{"1k/2", NUM_BAD_CHAR, 0},
	{"1e999", NUM_OUT_OF_RANGE, 0},
};

static void test_rows(void **state)
{
	(void)state;
	for (size_t i = 0; i < sizeof rows / sizeof rows[0]; i++) {
		double v = -12345;
		enum num_status st = num_parse(rows[i].text, strlen(rows[i].text), &v, NULL);
		if (st != rows[i].st)
			fail_msg("'%s': status %d, expected %d", rows[i].text, st, rows[i].st);
		if (num_ok(st) && fabs(v - rows[i].value) > 1e-12 * fabs(rows[i].value))
			fail_msg("'%s': %.17g, expected %.17g", rows[i].text, v, rows[i].value);
	}
}

/* Letter codes that start with their letter: R47 = 0.47 (ngspice). */
static void test_letter_first(void **state)
{
	(void)state;
	static const struct {
		const char *text;
		int ok;
		double value;
	} lf[] = {{"R47", 1, 0.47}, {"r5", 1, 0.5}, {"K22", 1, 220}, {"L5", 1, 5e-4},
		  {"M1", 1, 1e-4}, {"u47", 1, 0.47e-6}, {"R", 0, 0}, {"R4a", 0, 0},
		  {"X47", 0, 0}, {"RL", 0, 0}, {"47R", 0, 0}};
	for (size_t i = 0; i < sizeof lf / sizeof lf[0]; i++) {
		double v = -1;
		int ok = num_letter_first(lf[i].text, strlen(lf[i].text), &v);
		if (ok != lf[i].ok || (ok && fabs(v - lf[i].value) > 1e-12 * lf[i].value))
			fail_msg("'%s': %d %.17g, expected %d %.17g", lf[i].text, ok, v, lf[i].ok,
				 lf[i].value);
	}
}

static void test_bad_offset(void **state)
{
	(void)state;
	size_t bad = 99;
	double v;
	assert_int_equal(num_parse("1k/2", 4, &v, &bad), NUM_BAD_CHAR);
	assert_int_equal(bad, 2);
}

static void test_fold_and_compare(void **state)
{
	(void)state;
	char s[] = "MiXeD";
	num_fold(s, 5);
	assert_string_equal(s, "mixed");
	assert_true(num_ieq("PULSE", 5, "pulse"));
	assert_false(num_ieq("PULS", 4, "pulse"));
	assert_true(num_iequal("Abc", 3, "aBC", 3));
	assert_false(num_iequal("Abc", 3, "aBCd", 4));
	assert_true(num_looks_numeric("-.5", 3));
	assert_false(num_looks_numeric("n1", 2));
}

static void test_format(void **state)
{
	(void)state;
	char b[32];
	num_format_eng(4700, "", b, sizeof b);
	assert_string_equal(b, "4.7k");
	num_format_eng(1e-7, "F", b, sizeof b);
	assert_string_equal(b, "100 nF");
	num_format_eng(0, "V", b, sizeof b);
	assert_string_equal(b, "0 V");
	num_format_eng(2.2e6, "", b, sizeof b);
	assert_string_equal(b, "2.2Meg");
}

/* ISO 8601 calendar dates (YYYY-MM-DD), Gregorian leap years: a year
 * divisible by 4 but not by 100, or by 400. */
static void test_iso_date(void **state)
{
	(void)state;
	static const struct {
		const char *s;
		int ok;
	} dates[] = {
		{"2026-12-02", 1}, {"2024-02-29", 1}, {"2000-02-29", 1}, {"1900-02-29", 0},
		{"2027-02-29", 0}, {"2026-13-40", 0}, {"2026-00-10", 0}, {"2026-04-31", 0},
		{"2026-4-30", 0}, {"31/03/2027", 0}, {"next-year", 0}, {"2026-12-02x", 0}, {"", 0},
	};
	for (size_t i = 0; i < sizeof dates / sizeof dates[0]; i++)
		if (num_iso_date(dates[i].s) != dates[i].ok)
			fail_msg("'%s' read as %s", dates[i].s, dates[i].ok ? "not a date" : "a date");
}

int main(void)
{
	const struct CMUnitTest tests[] = {
		cmocka_unit_test(test_rows),
		cmocka_unit_test(test_letter_first),
		cmocka_unit_test(test_bad_offset),
		cmocka_unit_test(test_fold_and_compare),
		cmocka_unit_test(test_format),
		cmocka_unit_test(test_iso_date),
	};
	return cmocka_run_group_tests(tests, NULL, NULL);
}
