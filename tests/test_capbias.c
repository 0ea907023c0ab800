/* test_capbias.c: capacitance-against-bias curves: reading the points and
 * the share between them. The curves are made-up shapes of the kind class-2
 * ceramic datasheets plot; the test checks the arithmetic, not a part. */
#include "testutil.h"

#include <math.h>

#include "capbias.h"

static void reads_and_interpolates(void **state)
{
	(void)state;
	struct capbias c;
	size_t bad;
	const char *t = "0V=100% 16V=55%; 25V=0.40";
	assert_null(capbias_parse(t, strlen(t), &c, &bad));
	assert_int_equal(c.n, 3);
	int past;
	assert_true(fabs(capbias_share(&c, 8, &past) - 0.775) < 1e-12);
	assert_false(past);
	assert_true(fabs(capbias_share(&c, -20.5, &past) - (0.55 - 0.15 * 4.5 / 9)) < 1e-12);
	assert_true(fabs(capbias_share(&c, 25, &past) - 0.40) < 1e-12);
	assert_false(past);
	assert_true(fabs(capbias_share(&c, 40, &past) - 0.40) < 1e-12);
	assert_true(past);
	/* one point: a straight line from 100 % at 0 V */
	t = "50V=30%";
	assert_null(capbias_parse(t, strlen(t), &c, &bad));
	assert_true(fabs(capbias_share(&c, 25, NULL) - 0.65) < 1e-12);
	assert_true(capbias_share(NULL, 25, NULL) == 1);
}

static void refuses(void **state)
{
	(void)state;
	static const struct {
		const char *text, *msg;
		size_t at;
	} rows[] = {
		{"16V", "a bias point is written V=share", 0},
		{"0V=100% x=50%", "the voltage of a bias point", 8},
		{"16V=fifty", "the share of a bias point must be a percentage", 4},
		{"16V=0%", "above 0 and at most 100%", 4},
		{"16V=120%", "above 0 and at most 100%", 4},
		{"16V=50% 10V=40%", "must rise in voltage", 8},
		{"10V=50% 16V=60%", "must not grow", 8},
		{" ; ", "at least one", 0},
		{"-5V=50%", "the voltage of a bias point", 0},
	};
	for (size_t i = 0; i < sizeof rows / sizeof rows[0]; i++) {
		struct capbias c;
		size_t bad = 99;
		const char *m = capbias_parse(rows[i].text, strlen(rows[i].text), &c, &bad);
		assert_non_null(m);
		assert_non_null(strstr(m, rows[i].msg));
		assert_int_equal(bad, rows[i].at);
	}
}

int main(void)
{
	const struct CMUnitTest t[] = {
		cmocka_unit_test(reads_and_interpolates),
		cmocka_unit_test(refuses),
	};
	return cmocka_run_group_tests(t, NULL, NULL);
}
