/* test_parse.c: the scanner, parser and elaboration on malformed input.
 * Each row is a netlist and the exact first diagnostic it must produce,
 * file:line:col included (the file is served from memory as top.cir; a.inc
 * holds "helper\nR9 p q 1k\n", whose first line is a card since included
 * files have no title). An empty expectation means the deck is clean.
 * Rows are this project's own cases; each bug fix adds one. */
#include "testutil.h"

struct bad_row {
	const char *netlist;
	const char *first;
};

static const struct bad_row rows[] = {
	{"t\nR1 a b 4.7k7\n",
	 "top.cir:2:12: error: bad number '4.7k7': digits after the letters of a number with a decimal point or exponent [value]"},
	{"t\nR1 a\n",
	 "top.cir:2:4: error: element needs 2 nodes, too few given [element]"},
	{"t\nR1 a b\n",
	 "top.cir:2:1: error: resistor has no value [element]"},
	{"t\nC1 a b {1+}\n",
	 "top.cir:2:11: error: syntax error, unexpected } [syntax]"},
	{"t\nC1 a b {2*x}\n",
	 "top.cir:2:11: error: undefined parameter 'x' [expression]"},
	{"t\nR1 a b {1/0}\n",
	 "top.cir:2:9: error: expression has no finite value (division by zero or out of domain) [expression]"},
	{"t\nD1 a b\n",
	 "top.cir:2:6: error: diode needs a model name after its two nodes [element]"},
	{"t\nD1 a b nomodel\n",
	 "top.cir:2:8: error: undefined model 'nomodel' [model]"},
	{"t\nX1 a b nosub\n",
	 "top.cir:2:8: error: undefined subcircuit 'nosub' [instance]"},
	/* did you mean (suggest.h): the closest defined name, within reach */
	{"t\nD1 a b d1n4184\n.model D1N4148 d\n.model dx d\n",
	 "top.cir:2:8: error: undefined model 'd1n4184'; did you mean 'D1N4148'? [model]"},
	{"t\nD1 a b dz\n.model dx d\n",
	 "top.cir:2:8: error: undefined model 'dz' [model]"},
	{"t\n.model rect d\n.subckt s p\nD1 p 0 rectt\n.ends\nX1 a s\n",
	 "top.cir:4:8: error: undefined model 'rectt'; did you mean 'rect'? [element]"},
	{"t\n.subckt stage p q\nR1 p q 1k\n.ends\nX1 a b stgae\n",
	 "top.cir:5:8: error: undefined subcircuit 'stgae'; did you mean 'stage'? [instance]"},
	{"t\n.subckt outer p\n.subckt inner p\nR1 p 0 1\n.ends\nX1 p innr\n.ends\nX9 a outer\n",
	 "top.cir:6:6: error: undefined subcircuit 'innr'; did you mean 'inner'? [instance]"},
	{"t\n.subckt s p q\nR1 p q 1k\n.ends\nX1 a s\n",
	 "top.cir:5:6: error: subcircuit 's' has 2 ports but the instance connects 1 nodes [instance]"},
	{"t\n.subckt s p q\nX1 p q s\n.ends\nX1 a b s\n",
	 "top.cir:3:1: error: subcircuit 's' instantiates itself [instance]"},
	{"t\n.include missing.lib\n",
	 "top.cir:2:1: error: cannot read 'missing.lib': no such file [include]"},
	{"t\n.include a.inc\n",
	 "a.inc:1:1: error: element needs 2 nodes, too few given [element]"},
	{"t\n*@note\n+ R1 a b 1k\n",
	 "top.cir:3:1: error: continuation line '+' with no card before it to continue [syntax]"},
	{"t\n.ends\n",
	 "top.cir:2:1: error: .ends with no open .subckt [subckt]"},
	{"t\n.subckt s p\nR1 p 0 1\n",
	 "top.cir:2:1: error: .subckt 's' has no .ends [subckt]"},
	{"t\n.endl\n",
	 "top.cir:2:1: error: .endl with no open .lib section [lib]"},
	{"t\n.lib only.lib sec\n",
	 "top.cir:2:1: error: cannot read 'only.lib': no such file [include]"},
	{"t\n.param a = 1 +\n",
	 "top.cir:2:15: error: syntax error, unexpected end of line [syntax]"},
	{"t\n.param = 3\n",
	 "top.cir:2:8: error: syntax error, unexpected '=', expecting name [syntax]"},
	{"t\nV1 a 0 sin(0 1 1k) pulse(0 1)\n",
	 "top.cir:2:20: error: a source takes one transient waveform, this is a second one [source]"},
	{"t\nV1 a 0 pwl(0 1 2)\n",
	 "top.cir:2:8: error: pwl needs time-value pairs: an odd number of values was given [source]"},
	{"t\nV1 a 0 dc 1 bogus\n",
	 "top.cir:2:13: error: unexpected word in a source card [source]"},
	{"t\nR1 a b (1k\n",
	 "top.cir:2:11: error: syntax error, unexpected end of line [syntax]"},
	{"t\nR1 a b 1k }\n",
	 "top.cir:2:11: error: syntax error, unexpected invalid character [syntax]"},
	{"t\n(R1 a b 1k\n",
	 "top.cir:2:1: error: a card must start with an element name, a dot keyword or '*' [syntax]"},
	{"t\n.control\nrun\n",
	 "top.cir:2:1: error: .control block has no .endc before the end of the file [syntax]"},
	{"t\nK1 L1 L2 0.9\n",
	 "top.cir:2:1: error: 'K1' names 'L1', which is not an inductor in the same circuit [element]"},
	{"t\nL1 a b 1m\nK1 L1 L2 0.9\n",
	 "top.cir:3:1: error: 'K1' names 'L2', which is not an inductor in the same circuit [element]"},
	{"t\nF1 a b Vx 2\n",
	 "top.cir:2:1: error: 'F1' names 'Vx', which is not a voltage source in the same circuit [element]"},
	{"t\nE1 a b c\n",
	 "top.cir:2:8: error: controlled source needs two control nodes and a gain, or value=, poly() or table [element]"},
	{"t\nR1 a b {sqrt(1,2)}\n",
	 "top.cir:2:9: error: unknown function 'sqrt' or wrong number of arguments [expression]"},
	{"t\nR1 a b {foo(1)}\n",
	 "top.cir:2:9: error: unknown function 'foo' or wrong number of arguments [expression]"},
	{"t\n.func f(x) = x*2\nR1 a b {f(1,2)}\n",
	 "top.cir:3:9: error: unknown function 'f' or wrong number of arguments [expression]"},
	{"t\n.if (1\n.endif\n",
	 "top.cir:2:6: error: syntax error, unexpected end of line [syntax]"},
	{"t\n.else\n",
	 "top.cir:2:1: error: .else with no open .if [condition]"},
	{"t\n.if (1)\nR1 a b 1\n",
	 "top.cir:2:1: error: .if has no .endif [condition]"},
	{"t\n.if (1)\n.else\n.elseif (2)\n.endif\n",
	 "top.cir:4:1: error: .elseif after .else [condition]"},
	{"t\n.model d1\n",
	 "top.cir:2:1: error: .model needs a name and a type [model]"},
	{"t\n.subckt\n",
	 "top.cir:2:1: error: .subckt needs a name and its port nodes [subckt]"},
	{"t\nR1 a b 1k m={1/0}\n",
	 "top.cir:2:14: error: expression has no finite value (division by zero or out of domain) [expression]"},
	{"t\nC1 a b 1u ic=v(a)\n",
	 "top.cir:2:14: error: expected a value here [value]"},
	{"t\nV1 a 0 sin(0 {v(b)} 1k)\n",
	 "top.cir:2:14: error: a source value may not depend on circuit voltages, currents or time [source]"},
	{"t\nR1 a b 1k\n.lib x.lib\n.endl\n.lib x.lib\n",
	 "top.cir:5:1: error: .lib section has no .endl before the end of the file [lib]"},
	{"t\nM1 d g s b\n",
	 "top.cir:2:10: error: element needs a model name after its nodes [element]"},
	{"t\nQ1 c b e\n",
	 "top.cir:2:8: error: element needs a model name after its nodes [element]"},
	{"t\nX1 a b\n",
	 "top.cir:2:6: error: undefined subcircuit 'b' [instance]"},
	{"t\n.param x={y}\n",
	 "top.cir:2:11: error: undefined parameter 'y' [expression]"},
	{"t\nR1 a b 1e+\n",
	 "top.cir:2:11: error: bad number '1e+': the exponent has no digits [value]"},
	{"t\nB1 a\n",
	 "top.cir:2:4: error: element needs 2 nodes, too few given [element]"},
	{"t\nR1 a b 1k\n.end\nthis is ignored (\n",
	 ""},
	{"t\nV1 a 0 sin\n",
	 "top.cir:2:8: error: a waveform needs at least two values [source]"},
	{"t\nR1 a b 1k m=\n",
	 "top.cir:2:13: error: syntax error, unexpected end of line, expecting word or { or ' or '(' [syntax]"},
	{"t\n.subckt s p q w=\nR1 p q 1\n.ends\n",
	 "top.cir:2:17: error: syntax error, unexpected end of line, expecting word or { or ' or '(' [syntax]"},
	{"t\n.subckt s p q\nR1 p q {w}\n.ends\nX1 a b s\n",
	 "top.cir:3:9: error: undefined parameter 'w' [expression]"},
	{"t\nR1 a b 1k\nR2 b c {1k\n",
	 "top.cir:3:11: error: syntax error, unexpected end of line [syntax]"},
	{"t\nI1 a b ac\nR1 a b 1k\n.tran 1u 1m\n.print tran v(a)\n.option reltol=1e-3\nR2 c d 'x\n",
	 "top.cir:7:10: error: syntax error, unexpected end of line [syntax]"},
};

static void test_malformed(void **state)
{
	(void)state;
	size_t nerr = 0;
	for (size_t i = 0; i < sizeof rows / sizeof rows[0]; i++) {
		struct run r;
		run_files(&r, rows[i].netlist, "a.inc", "helper\nR9 p q 1k\n",
			  (const char *)NULL);
		size_t len = strcspn(r.diags, "\n");
		if (strlen(rows[i].first) != len ||
		    strncmp(r.diags, rows[i].first, len) != 0) {
			print_error("row %zu: %s\n  got:      %.*s\n  expected: %s\n",
				    i, rows[i].netlist, (int)len, r.diags, rows[i].first);
			nerr++;
		}
		if (rows[i].first[0] && r.st != ELAB_ERRORS && strstr(rows[i].first, "error:")) {
			print_error("row %zu: status %d, expected errors\n", i, r.st);
			nerr++;
		}
		run_free(&r);
	}
	assert_int_equal(nerr, 0);
	assert_true(sizeof rows / sizeof rows[0] >= 40);
}

/* One bad card does not hide the next: every error is reported. */
static void test_recovery(void **state)
{
	(void)state;
	struct run r;
	run_text(&r, "t\nR1 a b (1k\nR2 a b 1k\nC1 a b {2*}\nC2 a b 1u\nD1 a b\n");
	assert_string_equal(r.diags,
		"top.cir:2:11: error: syntax error, unexpected end of line [syntax]\n"
		"top.cir:4:11: error: syntax error, unexpected } [syntax]\n"
		"top.cir:6:6: error: diode needs a model name after its two nodes [element]\n");
	assert_non_null(find_part(&r, "R2"));
	assert_non_null(find_part(&r, "C2"));
	assert_int_equal(nl_part_count(r.r.circuit), 2);
	run_free(&r);
}

/* The error cap stops a file after 50 errors with one closing note. */
static void test_error_cap(void **state)
{
	(void)state;
	char text[8192] = "t\n";
	for (int i = 0; i < 80; i++)
		strcat(text, "R1 a\n");
	struct run r;
	run_text(&r, text);
	assert_int_equal(diag_errors(r.d, UINT32_MAX), 50);
	assert_non_null(strstr(r.diags, "stopped after 50 errors in this file [error-cap]"));
	run_free(&r);
}

/* Continuation lines, comments of every kind, CRLF and tabs keep line and
 * column numbers true. */
static void test_locations(void **state)
{
	(void)state;
	struct run r;
	run_text(&r, "title line\r\n* comment\r\nR1 a\r\n+ b ; trailing\r\n"
		     "* between\r\n\r\n+ 1k $ dollar comment\r\n\tC1\tx\ty\t1u\r\n"
		     "D1 x y dmod\n.model dmod d(is=1e-14\n+ n=1.5)\nR2 q r {1+}\n");
	assert_string_equal(r.diags, "top.cir:12:11: error: syntax error, unexpected } [syntax]\n");
	const struct nl_part *p = find_part(&r, "R1");
	assert_non_null(p);
	assert_int_equal(p->loc.line, 3);
	assert_int_equal(p->loc.col, 1);
	assert_true(p->value == 1e3);
	assert_string_equal(pin_name(&r, p, 1), "b");
	p = find_part(&r, "C1");
	assert_non_null(p);
	assert_int_equal(p->loc.line, 8);
	assert_int_equal(p->loc.col, 2);
	assert_true(p->value == 1e-6);
	p = find_part(&r, "D1");
	assert_non_null(p->model);
	assert_int_equal(p->model->nparams, 2);
	assert_string_equal(p->model->keys[1], "n");
	assert_true(p->model->values[1] == 1.5);
	assert_string_equal(r.r.title, "title line");
	run_free(&r);
}

/* .control blocks are skipped whole; text after .end is ignored. */
static void test_control_and_end(void **state)
{
	(void)state;
	struct run r;
	run_text(&r, "t\nR1 a 0 1k\n.control\nrun\nplot v(a) ((\n.endc\n"
		     "R2 a 0 2k\n.end\nR3 garbage (((\n");
	assert_string_equal(r.diags, "");
	assert_int_equal(nl_part_count(r.r.circuit), 2);
	run_free(&r);
}

int main(void)
{
	const struct CMUnitTest tests[] = {
		cmocka_unit_test(test_malformed),
		cmocka_unit_test(test_recovery),
		cmocka_unit_test(test_error_cap),
		cmocka_unit_test(test_locations),
		cmocka_unit_test(test_control_and_end),
	};
	return cmocka_run_group_tests(tests, NULL, NULL);
}
