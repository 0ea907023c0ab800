/* test_life.c: the electrolytic life estimate against published worked
 * figures.
 * - The 10 degC doubling: a capacitor rated 1,000 h at 105 degC lasts
 *   64,000 h at 45 degC, 32,000 h at 55 degC and 16,000 h at 65 degC (worked
 *   example of the power-supply maker Cosel, technical Q&A "How to calculate
 *   electrolytic capacitor lifetime in case ambient temperature changing?",
 *   en.cosel.co.jp/technical/qanda/a0057.html).
 * - Ripple heating P = I_rms^2 * ESR (the capacitor maker BHC Aerovox's
 *   technical notes, "Ripple current", www.bhc.co.uk/electric03.htm), raising
 *   the core by P * R_th.
 * - The rule applies from 40 degC up to the rated temperature, and 15 years is
 *   the longest estimate it gives (Nichicon's estimated-life calculator for
 *   snap-in aluminium electrolytics, notes 2 and 4,
 *   www.nichicon.co.jp/english/products/lifetime/snap_in.html). */
#include "testutil.h"

#include <math.h>

#include "life.h"

static struct life_in cosel(double ambient)
{
	struct life_in in = {.rated_h = 1000, .rated_c = 105, .ambient_c = ambient,
			     .ripple_a = 0, .esr_ohm = NAN, .rth_c_w = NAN};
	return in;
}

static void doubling_rule(void **state)
{
	(void)state;
	static const double amb[] = {45, 55, 65}, want[] = {64000, 32000, 16000};
	for (int i = 0; i < 3; i++) {
		struct life_in in = cosel(amb[i]);
		struct life_out o;
		assert_true(life_estimate(&in, &o));
		assert_true(fabs(o.hours - want[i]) < 1e-6 * want[i]);
		assert_true(fabs(o.hotter_h - want[i] / 2) < 1e-6 * want[i]);
		assert_false(o.heating_known);
		assert_false(o.over_rated);
	}
}

/* 2 A rms through 50 mohm is 0.2 W; through 25 degC/W the core runs 5 degC
 * above a 50 degC ambient: 55 degC, the Cosel row of 32,000 h. */
static void ripple_heating(void **state)
{
	(void)state;
	struct life_in in = cosel(50);
	in.ripple_a = 2, in.esr_ohm = 0.05, in.rth_c_w = 25;
	struct life_out o;
	assert_true(life_estimate(&in, &o));
	assert_true(o.heating_known);
	assert_true(fabs(o.rise_c - 5.0) < 1e-9);
	assert_true(fabs(o.core_c - 55.0) < 1e-9);
	assert_true(fabs(o.hours - 32000) < 1e-6 * 32000);
	/* without R_th the rise is unknown: no heating, and the caller says so */
	in.rth_c_w = NAN;
	assert_true(life_estimate(&in, &o));
	assert_false(o.heating_known);
	assert_true(fabs(o.hours - 1000 * exp2(5.5)) < 1e-6 * o.hours);
}

static void floor_cap_and_over(void **state)
{
	(void)state;
	/* 25 degC earns no more than 40 degC: 1,000 * 2^6.5 */
	struct life_in in = cosel(25);
	struct life_out o;
	assert_true(life_estimate(&in, &o));
	assert_true(fabs(o.hours - 1000 * exp2(6.5)) < 1e-6 * o.hours);
	/* a 10,000 h part at 40 degC would reach 900,000 h: capped at 15 years */
	in.rated_h = 10000;
	assert_true(life_estimate(&in, &o));
	assert_true(o.capped);
	assert_true(fabs(o.hours - 15 * 8760.0) < 1e-9);
	/* a core above the rated temperature is flagged, and ages faster */
	in = cosel(100);
	in.ripple_a = 1, in.esr_ohm = 0.5, in.rth_c_w = 20;
	assert_true(life_estimate(&in, &o));
	assert_true(o.over_rated);
	assert_true(fabs(o.hours - 1000 * exp2(-0.5)) < 1e-6);
}

static void refused(void **state)
{
	(void)state;
	struct life_in in = cosel(50);
	struct life_out o;
	in.rated_h = 0;
	assert_false(life_estimate(&in, &o));
	in = cosel(NAN);
	assert_false(life_estimate(&in, &o));
	in = cosel(50);
	in.ripple_a = -1;
	assert_false(life_estimate(&in, &o));
}

int main(void)
{
	const struct CMUnitTest t[] = {
		cmocka_unit_test(doubling_rule),
		cmocka_unit_test(ripple_heating),
		cmocka_unit_test(floor_cap_and_over),
		cmocka_unit_test(refused),
	};
	return cmocka_run_group_tests(t, NULL, NULL);
}
