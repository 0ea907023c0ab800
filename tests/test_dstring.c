/* test_dstring.c: ungraded series diode strings (src/dstring.c): which
 * diodes form one, and how a run's node extremes widen each member's
 * reverse voltage to the whole string's, capped at its own BV plus 1 %
 * (docs/check.md, "Ungraded diode strings"). The cases are drawn by hand. */
#include "testutil.h"

#include <math.h>

#include "dstring.h"

static uint32_t part_id(const struct nl_circuit *c, const char *path)
{
	for (uint32_t i = 0; i < nl_part_count(c); i++)
		if (strcmp(nl_part_at(c, i)->path, path) == 0)
			return i;
	fail_msg("no part %s", path);
	return NL_NONE;
}

static uint32_t node_id(const struct nl_circuit *c, const char *name)
{
	return nl_node_find(c, name, strlen(name));
}

static void test_three_in_series(void **state)
{
	(void)state;
	struct run r;
	run_text(&r, "string\nV1 in 0 SIN(0 1000 50)\nD1 in m1 dk\nD2 m1 m2 dk\n"
		     "D3 m2 out dhv\nC1 out 0 1u\nRL out 0 1meg\n"
		     ".model dk D(IS=1n)\n.model dhv D(IS=1n BV=1000)\n.end\n");
	const struct nl_circuit *c = r.r.circuit;
	struct dstring d;
	assert_true(dstring_find(c, r.ar, &d));
	assert_int_equal(d.n, 1);
	assert_int_equal(d.count[0], 3);
	assert_int_equal(d.anode[0], node_id(c, "in"));
	assert_int_equal(d.cathode[0], node_id(c, "out"));
	uint32_t d1 = part_id(c, "D1"), d2 = part_id(c, "D2"), d3 = part_id(c, "D3");
	assert_int_equal(d.of[d1], 0);
	assert_int_equal(d.of[d2], 0);
	assert_int_equal(d.of[d3], 0);
	assert_int_equal(d.of[part_id(c, "C1")], NL_NONE);

	/* in swings -1100..1100, out holds 1090..1100: the string blocks
	   1100 + 1100 = 2200 V; D3's BV of 1000 caps it at 1010 V */
	size_t nn = nl_node_count(c) + 1, np = nl_part_count(c) + 1;
	double *nmin = calloc(nn, sizeof *nmin), *nmax = calloc(nn, sizeof *nmax);
	double *vmin = calloc(np, sizeof *vmin);
	nmin[node_id(c, "in")] = -1100, nmax[node_id(c, "in")] = 1100;
	nmin[node_id(c, "out")] = 1090, nmax[node_id(c, "out")] = 1100;
	vmin[d1] = -750, vmin[d2] = -2500, vmin[d3] = -700;
	dstring_widen(c, &d, nmin, nmax, vmin);
	assert_float_equal(vmin[d1], -2200, 1e-9);
	assert_float_equal(vmin[d2], -2500, 1e-9); /* never raised */
	assert_float_equal(vmin[d3], -1010, 1e-9);
	/* a string that only conducts (an LED string from a rippling rail):
	   its ends' extremes, at different instants, say 0.5 V of reverse,
	   but each member stays forward (0.6 V and more) all the time */
	nmin[node_id(c, "in")] = 9.0, nmax[node_id(c, "in")] = 10;
	nmin[node_id(c, "out")] = 7.5, nmax[node_id(c, "out")] = 9.5;
	vmin[d1] = 0.6, vmin[d2] = 0.7, vmin[d3] = 0.6;
	dstring_widen(c, &d, nmin, nmax, vmin);
	assert_float_equal(vmin[d1], 0.6, 1e-12);
	assert_float_equal(vmin[d2], 0.7, 1e-12);
	free(nmin), free(nmax), free(vmin);
	run_free(&r);
}

static void test_not_strings(void **state)
{
	(void)state;
	struct run r;
	/* a grading resistor at the joint, back-to-back zeners, a diode
	   string through ground, a lone diode */
	run_text(&r, "not strings\nV1 in 0 SIN(0 100 50)\nD1 in m1 dk\nD2 m1 out dk\n"
		     "RG m1 out 10meg\nC1 out 0 1u\n"
		     "Z1 x a dz\nZ2 x b dz\nRA a 0 1k\nRB b in 1k\n"
		     "D5 in 0 dk\nD6 0 y dk\nRY y 0 1k\nD7 in q dk\nCQ q 0 1n\n"
		     ".model dk D(IS=1n)\n.model dz D(BV=5)\n.end\n");
	struct dstring d;
	assert_true(dstring_find(r.r.circuit, r.ar, &d));
	assert_int_equal(d.n, 0);
	run_free(&r);
}

int main(void)
{
	const struct CMUnitTest tests[] = {
		cmocka_unit_test(test_three_in_series),
		cmocka_unit_test(test_not_strings),
	};
	return cmocka_run_group_tests(tests, NULL, NULL);
}
