/* test_elab.c: elaboration of whole decks: parameters and expressions,
 * subcircuit flattening with nested parameters and hierarchical names,
 * .global and ground aliases, m=, .include, .lib sections, .func, .if,
 * definitions used before they appear, sources. Expected values are worked
 * out by hand from the decks (this project's own scenarios). */
#include "testutil.h"

#include <math.h>
#include <string.h>

#include "dmodel.h"
#include <unistd.h>

static void assert_close(double a, double b)
{
	if (fabs(a - b) > 1e-9 * fmax(fabs(a), fabs(b)))
		fail_msg("%.12g != %.12g", a, b);
}

static void test_params_and_expressions(void **state)
{
	(void)state;
	struct run r;
	run_text(&r, "t\n.param vp=10 rload={vp*1k} k2 = 'sqrt(4)+2**3'\n"
		     ".func half(x) = x/2\n"
		     "R1 a 0 {rload}\nR2 a 0 'half(rload)'\nR3 a 0 {k2 > 9 ? 1 : 2}\n"
		     "C1 a 0 {1u*pi}\nR4 a 0 {max(1,5,3)}\nR5 a 0 {-2^2}\n");
	assert_string_equal(r.diags, "");
	assert_close(find_part(&r, "R1")->value, 10e3);
	assert_close(find_part(&r, "R2")->value, 5e3);
	assert_close(find_part(&r, "R3")->value, 1);
	assert_close(find_part(&r, "C1")->value, 1e-6 * 3.14159265358979323846);
	assert_close(find_part(&r, "R4")->value, 5);
	assert_close(find_part(&r, "R5")->value, -4);
	run_free(&r);
}

/* Hierarchy: a three-level subcircuit with parameter defaults, instance
 * overrides, a local .param, nested definitions, a global node and m=. */
static const char *const hier =
	"hierarchy\n"
	".global vdd\n"
	".param cbase=1n\n"
	".subckt cell in out params: c=2n r=1k\n"
	".param rr={2*r}\n"
	"R1 in mid {rr}\n"
	"C1 mid out {c}\n"
	"R2 mid vdd 10k\n"
	"R3 mid gnd 1meg\n"
	".ends cell\n"
	".subckt pair a b c=5n\n"
	".subckt inner p q\n"
	"D1 p q dm\n"
	".model dm d is=1e-15\n"
	".ends inner\n"
	"X1 a m cell c={c}\n"
	"X2 m b cell r=3k\n"
	"Xi a b inner\n"
	".ends\n"
	"Xtop n1 n2 pair c={cbase*4}\n"
	"Xm n1 0 cell m=3\n";

static void test_hierarchy(void **state)
{
	(void)state;
	struct run r;
	run_text(&r, hier);
	assert_string_equal(r.diags, "");
	/* Xtop.X1: c passed down as 4n, r default 1k, rr = 2k */
	const struct nl_part *p = find_part(&r, "Xtop.X1.R1");
	assert_non_null(p);
	assert_close(p->value, 2e3);
	assert_string_equal(pin_name(&r, p, 0), "n1");
	assert_string_equal(pin_name(&r, p, 1), "Xtop.X1.mid");
	assert_close(find_part(&r, "Xtop.X1.C1")->value, 4e-9);
	assert_string_equal(pin_name(&r, find_part(&r, "Xtop.X1.C1"), 1), "Xtop.m");
	/* Xtop.X2: r overridden to 3k, c default 2n */
	assert_close(find_part(&r, "Xtop.X2.R1")->value, 6e3);
	assert_close(find_part(&r, "Xtop.X2.C1")->value, 2e-9);
	assert_string_equal(pin_name(&r, find_part(&r, "Xtop.X2.C1"), 1), "n2");
	/* .global and ground aliases are not renamed */
	assert_string_equal(pin_name(&r, find_part(&r, "Xtop.X2.R2"), 1), "vdd");
	assert_int_equal(nl_pins(r.r.circuit, find_part(&r, "Xtop.X2.R3"))[1], NL_GROUND);
	/* the nested definition and its local model */
	p = find_part(&r, "Xtop.Xi.D1");
	assert_non_null(p);
	assert_non_null(p->model);
	assert_string_equal(p->model->name, "dm");
	/* instance m= multiplies every part inside */
	p = find_part(&r, "Xm.C1");
	assert_non_null(p->ext);
	assert_close(p->ext->mult, 3);
	assert_int_equal(nl_part_count(r.r.circuit), 4 + 4 + 1 + 4);
	run_free(&r);
}

/* Definitions may follow their use: models, subcircuits, parameters. */
static void test_forward_references(void **state)
{
	(void)state;
	struct run r;
	run_text(&r, "t\nD1 a 0 dlate\nX1 a 0 later\nR1 a 0 {rlate}\nQ1 c b e qm\n"
		     ".model dlate d bv=50\n.param rlate=47\n"
		     ".subckt later p q\nC1 p q 1p\n.ends\n.model qm npn bf=100\n");
	assert_string_equal(r.diags, "");
	assert_string_equal(find_part(&r, "D1")->model->type, "d");
	assert_non_null(find_part(&r, "X1.C1"));
	assert_close(find_part(&r, "R1")->value, 47);
	const struct nl_part *q = find_part(&r, "Q1");
	assert_int_equal(q->npins, 3);
	assert_int_equal(q->kind, NL_OPAQUE);
	run_free(&r);
}

static void test_include_and_lib(void **state)
{
	(void)state;
	struct run r;
	run_files(&r, "t\n.include sub/parts.inc\n.lib lib/models.lib fast\nD1 a 0 dfast\nX1 a 0 blk\n",
		  "sub/parts.inc", ".include more.inc\nR1 a 0 1k\n",
		  "sub/more.inc", "R2 a 0 2k\n",
		  "lib/models.lib", "* models\n.lib slow\n.model dfast d tt=1u\n.endl slow\n"
				    ".lib fast\n.model dfast d tt=1n\n.subckt blk p q\nR9 p q 9\n.ends\n.endl fast\n",
		  (const char *)NULL);
	assert_string_equal(r.diags, "");
	assert_non_null(find_part(&r, "R1"));
	assert_non_null(find_part(&r, "R2"));
	const struct nl_part *d = find_part(&r, "D1");
	assert_close(d->model->values[0], 1e-9);
	assert_non_null(find_part(&r, "X1.R9"));
	run_free(&r);
}

static void test_include_cycle(void **state)
{
	(void)state;
	struct run r;
	run_files(&r, "t\n.include a.inc\n", "a.inc", ".include a.inc\n",
		  (const char *)NULL);
	/* memory files are known by their names */
	assert_non_null(strstr(r.diags, "include cycle: 'a.inc' is already being read [include]"));
	assert_int_equal(r.st, ELAB_ERRORS);
	run_free(&r);
}

static void test_conditionals(void **state)
{
	(void)state;
	struct run r;
	run_text(&r, "t\n.param sel=2\n.if (sel == 1)\nR1 a 0 1\n.elseif (sel = 2)\n"
		     "R2 a 0 2\n.if (0)\nR3 a 0 3\n.endif\n.else\nR4 a 0 4\n.endif\n");
	assert_string_equal(r.diags, "");
	assert_null(find_part(&r, "R1"));
	assert_non_null(find_part(&r, "R2"));
	assert_null(find_part(&r, "R3"));
	assert_null(find_part(&r, "R4"));
	run_free(&r);
}

static void test_sources(void **state)
{
	(void)state;
	struct run r;
	run_text(&r, "t\nV1 a 0 DC 5 AC 1 SIN(0 10 1k 0 0 90)\n"
		     "V2 b 0 pulse 0 5 1u 1n 1n 4u 10u\n"
		     "V3 c 0 PWL(0 0 1m 5 2m 0) r=0\n"
		     "I1 d 0 2m\nV4 e 0 sin 1 2 50\nV5 f 0 dc PWL((0 0) (1 1))\n");
	assert_string_equal(r.diags, "");
	const struct nl_source *s = find_part(&r, "V1")->ext->src;
	assert_close(s->dc, 5);
	assert_close(s->ac_mag, 1);
	assert_int_equal(s->wave, NL_WAVE_SIN);
	assert_int_equal(s->nargs, 6);
	assert_close(s->args[2], 1e3);
	s = find_part(&r, "V2")->ext->src;
	assert_int_equal(s->wave, NL_WAVE_PULSE);
	assert_int_equal(s->nargs, 7);
	assert_close(s->args[6], 10e-6);
	s = find_part(&r, "V3")->ext->src;
	assert_int_equal(s->wave, NL_WAVE_PWL);
	assert_int_equal(s->nargs, 6);
	assert_close(s->pwl_repeat, 0);
	assert_close(find_part(&r, "I1")->ext->src->dc, 2e-3);
	assert_int_equal(find_part(&r, "V4")->ext->src->nargs, 3);
	assert_int_equal(find_part(&r, "V5")->ext->src->nargs, 4);
	run_free(&r);

	/* a zero PULSE width is TSTOP in SPICE3 and ngspice (ngspice-39,
	   checked by simulation: PULSE(-10 10 0 45u 5u 0 50u) is 10 V at
	   47 us and at 49.5 us): held at V2 from the rise's end to the
	   period's; LTspice's zero is zero */
	run_text(&r, "t\nV1 a 0 PULSE(-10 10 0 45u 5u 0 50u)\n");
	assert_non_null(strstr(r.diags, "2:1: warning: PULSE with a width of 0"));
	assert_close(find_part(&r, "V1")->ext->src->args[5], 5e-6);
	run_free(&r);
	run_dialect(&r, DIALECT_LTSPICE, "t\nV1 a 0 PULSE(-10 10 0 45u 5u 0 50u)\n");
	assert_string_equal(r.diags, "");
	assert_close(find_part(&r, "V1")->ext->src->args[5], 0);
	run_free(&r);
}

static void test_elements(void **state)
{
	(void)state;
	struct run r;
	run_text(&r, "t\nL1 a 0 1m\nL2 b 0 4m\nK1 L1 L2 0.99\nE1 o 0 a 0 10\n"
		     "G1 o 0 value={v(a)*2}\nF1 o 0 VS 3\nVS s 0 0\nH1 o 0 VS 2\n"
		     "C1 a b c=10p m=2 ic=1\nD2 a b dd 2 off\n.model dd d\n"
		     "M1 d g s b nch w=1u\n.model nch nmos\nXU1 a b c d e f g h\n"
		     "T1 a 0 b 0 z0=50 td=1n\nA1 [a b] c amod\n.model amod adc\n"
		     "R1 a b r={1k + 0*v(a)}\n.subckt XU1X a b c d e f g\n.ends\n");
	/* XU1 names subcircuit "h", which does not exist */
	assert_string_equal(r.diags,
		"top.cir:15:19: error: undefined subcircuit 'h' [instance]\n");
	const struct nl_part *k = find_part(&r, "K1");
	assert_int_equal(k->kind, NL_K);
	assert_int_equal(k->ext->ctrl_part[0], 0);
	assert_int_equal(k->ext->ctrl_part[1], 1);
	assert_int_equal(find_part(&r, "E1")->npins, 4);
	assert_true(find_part(&r, "G1")->ext->behavioural);
	assert_int_equal(find_part(&r, "F1")->ext->ctrl_part[0], 6);
	const struct nl_part *c = find_part(&r, "C1");
	assert_close(c->value, 10e-12);
	assert_close(c->ext->mult, 2);
	assert_close(c->ext->ic, 1);
	const struct nl_part *d = find_part(&r, "D2");
	assert_close(d->value, 2);
	assert_true(d->ext->off);
	assert_int_equal(find_part(&r, "M1")->npins, 4);
	assert_int_equal(find_part(&r, "T1")->npins, 4);
	assert_int_equal(find_part(&r, "A1")->npins, 3);
	assert_true(find_part(&r, "R1")->ext->behavioural);
	run_free(&r);
}

/* Elaborates top with options o, expects ELAB_ERRORS and diagnostics that
 * are want (exact) or contain it; returns the part count of what was built. */
static size_t expect_elab_error(const char *top, const struct elab_opts *o,
				const char *want, int exact)
{
	struct hr_alloc h = hr_alloc_default();
	struct arena *ar = arena_create(&h);
	struct diag_sink *d = diag_create(ar, 50);
	struct elab_result res;
	assert_int_equal(elab_file(top, o, &h, d, &res), ELAB_ERRORS);
	char *txt = render_headers(d);
	if (exact ? strcmp(txt, want) != 0 : !strstr(txt, want))
		fail_msg("no '%s' in:\n%s", want, txt);
	size_t n = nl_part_count(res.circuit);
	free(txt);
	nl_destroy(res.circuit);
	diag_destroy(d);
	arena_destroy(ar);
	return n;
}

/* A nest of n definitions, each two instances of the one below, over one
 * resistor: 2^n parts. */
static const char *nest(unsigned n)
{
	static char buf[8192];
	size_t k = (size_t)snprintf(buf, sizeof buf, "t\n.subckt s0 a b\nR1 a b 1\n.ends\n");
	for (unsigned i = 1; i <= n; i++)
		k += (size_t)snprintf(buf + k, sizeof buf - k,
				      ".subckt s%u a b\nX1 a m s%u\nX2 m b s%u\n.ends\n", i, i - 1, i - 1);
	snprintf(buf + k, sizeof buf - k, "V1 1 0 1\nX1 1 0 s%u\n", n);
	return buf;
}

#define THREE_BY_THREE \
	"t\n.subckt a p\nR1 p 0 1\nR2 p 0 1\n.ends\n" \
	".subckt b p\nX1 p a\nX2 p a\nX3 p a\n.ends\n" \
	".subckt c p\nX1 p b\nX2 p b\nX3 p b\n.ends\n"

/* The size of an instance is counted from the definitions before it is
 * expanded: past --max-parts it is refused at once at the top-level card,
 * with nothing of it built. A count that cannot be known (a definition
 * that instantiates itself) falls back to the cap while expanding. */
static void test_expansion_cap(void **state)
{
	(void)state;
	static const struct {
		const char *text; /* NULL: nest(levels) */
		unsigned levels;
		size_t max_parts, parts;
		const char *want;
		int exact;
	} rows[] = {
		{THREE_BY_THREE "Xbig n c\n", 0, 10, 0,
		 "top.cir:16:1: error: Xbig expands to 18 parts, past the limit of 10 (see --max-parts) [expansion]\n", 1},
		{THREE_BY_THREE "R9 n 0 1\nXbig n c\n", 0, 18, 1,
		 "top.cir:17:1: error: Xbig expands to 18 parts; with the 1 already in the circuit that passes the limit of 18 (see --max-parts) [expansion]\n", 1},
		{NULL, 40, 0, 1,
		 "top.cir:166:1: error: X1 expands to 1099511627776 parts, past the limit of 10000000 (see --max-parts) [expansion]\n", 1},
		{NULL, 70, 0, 1,
		 "top.cir:286:1: error: X1 expands to more than 18446744073709551614 parts, past the limit of 10000000 (see --max-parts) [expansion]\n", 1},
		/* R1..R4 then a self-instance (an error, no parts): not countable */
		{"t\n.subckt a p\nR1 p 0 1\nR2 p 0 1\nR3 p 0 1\nR4 p 0 1\nX1 p a\n.ends\n"
		 ".subckt b p\nX1 p a\nX2 p a\nX3 p a\n.ends\nXbig n b\n", 0, 10, 10,
		 "top.cir:14:1: error: the circuit grows past 10 parts (the limit; see --max-parts) [expansion]\n", 0},
	};
	for (size_t i = 0; i < sizeof rows / sizeof rows[0]; i++) {
		static struct memfs fs;
		fs.name[0] = "top.cir";
		fs.text[0] = rows[i].text ? rows[i].text : nest(rows[i].levels);
		fs.n = 1;
		struct elab_opts o = {0};
		o.open = memfs_open;
		o.open_ud = &fs;
		o.max_parts = rows[i].max_parts;
		assert_int_equal(expect_elab_error("top.cir", &o, rows[i].want, rows[i].exact),
				 rows[i].parts);
	}
}

/* Elaborates top.cir from fs with max_parts; expects no diagnostics and
 * returns the part count. */
static size_t parts_built(struct memfs *fs, size_t max_parts)
{
	struct hr_alloc h = hr_alloc_default();
	struct arena *ar = arena_create(&h);
	struct diag_sink *d = diag_create(ar, 50);
	struct elab_result res;
	struct elab_opts o = {0};
	o.open = memfs_open;
	o.open_ud = fs;
	o.max_parts = max_parts;
	assert_int_equal(elab_file("top.cir", &o, &h, d, &res), ELAB_OK);
	assert_int_equal(diag_count(d), 0);
	size_t n = nl_part_count(res.circuit);
	nl_destroy(res.circuit);
	diag_destroy(d);
	arena_destroy(ar);
	return n;
}

/* At the limit exactly, and a legitimate nest of 2^10 parts, expand. */
static void test_expansion_fits(void **state)
{
	(void)state;
	static struct memfs fs;
	fs.name[0] = "top.cir";
	fs.text[0] = THREE_BY_THREE "Xbig n c\n";
	fs.n = 1;
	assert_int_equal(parts_built(&fs, 18), 18);
	fs.text[0] = nest(10);
	assert_int_equal(parts_built(&fs, 0), 1025);
}

/* Includes that repeat without a cycle stop at the file count cap. */
static void test_include_count_cap(void **state)
{
	(void)state;
	static struct memfs fs;
	fs.name[0] = "top.cir";
	fs.text[0] = "t\n.include a.inc\n.include a.inc\n";
	fs.name[1] = "a.inc";
	fs.text[1] = ".include b.inc\n.include b.inc\n";
	fs.name[2] = "b.inc";
	fs.text[2] = "R1 x 0 1\n";
	fs.n = 3;
	struct elab_opts o = {0};
	o.open = memfs_open;
	o.open_ud = &fs;
	o.max_includes = 5; /* a.inc, b.inc, b.inc, a.inc, b.inc; the 6th is refused */
	expect_elab_error("top.cir", &o,
		"a.inc:2:1: error: more than 5 files read by .include and .lib for one netlist [include]", 0);
}

/* A file that changes while it is read: opening the include appends to the
 * top file, which is still open, so the change is certain to happen between
 * the start and the end of its read. */
static FILE *grow_open(void *ud, const char *path)
{
	const char *top = ud;
	if (strstr(path, "inc.cir")) {
		FILE *f = fopen(top, "ab");
		assert_non_null(f);
		fputs("R9 z 0 1\n", f);
		fclose(f);
	}
	return fopen(path, "rb");
}

static void test_file_changed_while_read(void **state)
{
	(void)state;
	char dir[] = "/tmp/hr_grow_XXXXXX";
	assert_non_null(mkdtemp(dir));
	char top[64], inc[64];
	snprintf(top, sizeof top, "%s/top.cir", dir);
	snprintf(inc, sizeof inc, "%s/inc.cir", dir);
	FILE *f = fopen(top, "wb");
	fputs("t\n.include inc.cir\nR1 a 0 1\n", f);
	fclose(f);
	f = fopen(inc, "wb");
	fputs("R2 b 0 1\n", f);
	fclose(f);
	struct elab_opts o = {0};
	o.open = grow_open;
	o.open_ud = top;
	expect_elab_error(top, &o, "top.cir: error: the file changed while it was read (28 bytes, now 37)", 0);
	remove(inc);
	remove(top);
	rmdir(dir);
}

/* Adjacency: every pin of every part appears under its node. */
/* Constructs of other simulators and of ngspice's own that the reader
 * takes (docs/netlist.md, "Dialects"); each assertion fails on a reader
 * without the construct. */
static void test_dialect_params(void **state)
{
	(void)state;
	struct run r;
	/* a parameter defined after the one that uses it, at top level and in
	 * a subcircuit; VT, the thermal voltage a PSpice model uses undeclared */
	run_text(&r, "t\n.param a={b*2}\n.param b=3\nR1 x 0 {a}\n"
		     ".subckt s p q\n.param r2={r1*2}\n.param r1=5\nR1 p q {r2}\n.ends\nX1 x 0 s\n"
		     "R2 x 0 {1/vt}\n");
	assert_string_equal(r.diags, "");
	assert_close(find_part(&r, "R1")->value, 6);
	assert_close(find_part(&r, "X1.R1")->value, 10);
	assert_close(find_part(&r, "R2")->value, 1.602176634e-19 / (1.380649e-23 * 300.15));
	run_free(&r);
	/* ngspice does not define VT; a cycle stays undefined */
	run_dialect(&r, DIALECT_NGSPICE, "t\nR2 x 0 {1/vt}\n.param c1={c2}\n.param c2={c1}\n");
	assert_string_equal(r.diags, "top.cir:3:12: error: undefined parameter 'c2' [expression]\n"
				     "top.cir:4:12: error: undefined parameter 'c1' [expression]\n"
				     "top.cir:2:11: error: undefined parameter 'vt' [expression]\n");
	run_free(&r);
	/* strings pass to models and subcircuits; a value of the circuit's
	 * state makes an R behavioural and is an error in a source */
	run_text(&r, "t\n.param tv=\"0101\" both=tv{tv}\n.model lut d_lut table_values=tv\n"
		     "A1 [a b] y lut\nX1 a y sp t=both\n.subckt sp p q t=\"00\"\n"
		     ".model m2 d_lut table_values=t\nA2 [p] q m2\n.ends\n"
		     ".param rv={1k+v(3)} pt={time}\nR1 3 0 {rv}\nB1 2 0 V={v(1)*pt}\n"
		     "R2 a 0 {tv}\nV1 1 0 {rv}\n");
	assert_string_equal(r.diags,
			    "top.cir:13:9: error: parameter 'tv' holds a string where a number is needed [expression]\n"
			    "top.cir:14:8: error: a source value may not depend on circuit voltages, currents or time [source]\n");
	assert_int_equal(find_part(&r, "R1")->ext->behavioural, 1);
	run_free(&r);
}

static void test_dialect_elements(void **state)
{
	(void)state;
	struct run r;
	run_text(&r, "t\nB1 9 0 V={POLY(2) V(3) v(4) 0 .5 -.5}\nB2 7 9 I={POLY I(V1) 300u 1}\n"
		     "V1 1 0 1\nE1 2 0 VALUE { IF( ~(V(1) >= 0), 0, 1) }\n"
		     "E2 o 0 nand(2) a 0 b 0 (1,0) (2,3)\n"
		     "L1 a 0 1m\nL2 b 0 1m\nL3 c 0 1m\nK1 L1 L2 L3 0.9\nK2 L1 L2 1 core\n"
		     ".model core core(ms=1)\nK3 L1 L9 0.5\nK4 L1 L2 0.5\n"
		     "V2 4 0 file sound.wav snd(0 1)\nR1 1 0 R47\nR2 1 0 L5\nR3 1 0 {1 + (1^1)}\n");
	assert_string_equal(r.diags,
			    "top.cir:15:8: warning: samples read from file 'sound.wav' during the simulation are not known here: only the DC value is used [source]\n"
			    "top.cir:13:1: error: 'K3' names 'L9', which is not an inductor in the same circuit [element]\n");
	assert_int_equal(find_part(&r, "E1")->ext->behavioural, 1);
	assert_int_equal(find_part(&r, "E2")->ext->behavioural, 1);
	assert_int_equal(find_part(&r, "K1")->ext->behavioural, 1);
	assert_int_equal(find_part(&r, "K1")->ext->ncoupled, 3);
	assert_int_equal(find_part(&r, "K2")->ext->behavioural, 1);
	assert_string_equal(find_part(&r, "K2")->model->name, "core");
	assert_int_equal(find_part(&r, "K4")->ext->behavioural, 0);
	assert_int_not_equal(find_part(&r, "K4")->ext->ctrl_part[1], NL_NONE);
	assert_int_equal(find_part(&r, "V2")->ext->src->unknown, 1);
	assert_close(find_part(&r, "R1")->value, 0.47);
	assert_close(find_part(&r, "R2")->value, 0.5e-3);
	assert_close(find_part(&r, "R3")->value, 2);
	run_free(&r);
	/* a model named like a letter code is the model; PSpice's reading has
	 * no letter-first codes; LTspice reads ^ as exclusive or */
	run_text(&r, "t\nR1 1 0 R47\n.model R47 r\n.param p1=10\nR2 1 0 P1\nR3 1 0 rval\n"
		     ".param rval=5\n");
	assert_string_equal(r.diags, "");
	assert_string_equal(find_part(&r, "R1")->model->name, "R47");
	assert_close(find_part(&r, "R2")->value, 10);
	assert_close(find_part(&r, "R3")->value, 5);
	run_free(&r);
	run_dialect(&r, DIALECT_PSPICE, "t\nR1 1 0 R47\n");
	assert_string_equal(r.diags, "top.cir:2:8: error: undefined model 'R47' [element]\n");
	run_free(&r);
	run_dialect(&r, DIALECT_LTSPICE, "t\nR3 1 0 {1 + (1^1)}\nR4 1 0 4k7\n");
	assert_string_equal(r.diags, "");
	assert_close(find_part(&r, "R3")->value, 1);
	run_free(&r);
}

static void test_dialect_reading(void **state)
{
	(void)state;
	struct run r;
	/* Y: nodes run to the model; Xyce's .options packages make the first
	 * word the device's name */
	run_text(&r, "t\nYPDE dev 1 2 3 pdem node={name = a, b}\n.model pdem zod level=2\n"
		     ".options timeint reltol=1e-3\n");
	assert_string_equal(r.diags, "");
	assert_int_equal(find_part(&r, "YPDE")->npins, 3);
	assert_string_equal(pin_name(&r, find_part(&r, "YPDE"), 0), "1");
	run_free(&r);
	run_text(&r, "t\nYL1 1 0 2 0 txl len=1\n.model txl txl r=1\n");
	assert_string_equal(r.diags, "");
	assert_int_equal(find_part(&r, "YL1")->npins, 4);
	run_free(&r);
	/* .lib FILE: the whole file where a file of that name is there
	 * (PSpice's reading), a section in ngspice's */
	run_files(&r, "t\n.lib models.lib\nD1 a 0 dx\n", "models.lib", ".model dx d bv=9\n", NULL);
	assert_string_equal(r.diags, "");
	run_free(&r);
	run_dialect(&r, DIALECT_NGSPICE, "t\n.lib models.lib\nD1 a 0 dx\n", "models.lib",
		    ".model dx d bv=9\n", NULL);
	assert_string_equal(r.diags,
			    "top.cir:2:1: error: .lib section has no .endl before the end of the file [lib]\n");
	run_free(&r);
	/* HSPICE: functions in .param, .macro/.eom, statistical functions at
	 * their nominal value, a blank-free expression where a value goes */
	run_text(&r, "t\n.param twice(x) = '2*x' a3=1\n.macro blk p q r0=1\n.param v1=2 v2=3\n"
		     "R1 p q r0\nR2 p q v1+v2\n.eom blk\nX1 a 0 blk r0=7\nR3 a 0 {twice(a3)}\n"
		     "R4 a 0 {agauss(10, 1, 3)}\n");
	assert_string_equal(r.diags, "");
	assert_close(find_part(&r, "X1.R1")->value, 7);
	assert_close(find_part(&r, "X1.R2")->value, 5);
	assert_close(find_part(&r, "R3")->value, 2);
	assert_close(find_part(&r, "R4")->value, 10);
	run_free(&r);
	/* PSpice: '\' in an include path is the folder separator */
	run_dialect(&r, DIALECT_PSPICE, "t\n.include sub\\x.inc\n", "sub/x.inc", "R1 a 0 1k\n", NULL);
	assert_string_equal(r.diags, "");
	assert_non_null(find_part(&r, "R1"));
	run_free(&r);
	/* a letter code is ngspice's reading: no warning owed there */
	run_text(&r, "t\nR1 1 0 4k7\n");
	assert_string_equal(r.diags, "top.cir:2:8: warning: '4k7' is read as the letter code for 4700; plain SPICE readers take only the digits before the letter [letter-code]\n");
	run_free(&r);
	run_dialect(&r, DIALECT_NGSPICE, "t\nR1 1 0 4k7\n");
	assert_string_equal(r.diags, "");
	assert_close(find_part(&r, "R1")->value, 4700);
	run_free(&r);
}

static void test_adjacency(void **state)
{
	(void)state;
	struct run r;
	run_text(&r, "t\nR1 a b 1\nR2 b c 1\nC1 b 0 1\nD1 b b dm\n.model dm d\n");
	const struct nl_circuit *c = r.r.circuit;
	uint32_t b = nl_node_find(c, "B", 1), n;
	assert_int_not_equal(b, NL_NONE);
	const uint32_t *adj = nl_adjacency(c, b, &n);
	assert_int_equal(n, 5); /* R1, R2, C1, D1 twice */
	size_t total = 0;
	for (size_t i = 0; i < nl_node_count(c); i++) {
		nl_adjacency(c, (uint32_t)i, &n);
		total += n;
	}
	assert_int_equal(total, 8);
	assert_int_equal(adj[0], 0);
	run_free(&r);
}

/* .temp, .options temp= tnom=, temp= and dtemp= on a diode, tc1= and tc2=
 * on a resistor. The equations are those of the ngspice manual's diode
 * model (its temperature section: IS through EG and XTI, BV - TCV dT) and
 * resistor (R (1 + TC1 dT + TC2 dT^2)). */
static void test_temperature(void **state)
{
	(void)state;
	struct run r;
	run_text(&r, "t\n.temp 100\nD1 a 0 dz\nD2 a 0 dz temp=27\nD3 a 0 dz dtemp=-73\n"
		     "R1 a 0 1k tc1=1e-3 tc2=1e-6\nR2 a 0 1k tc=1e-3,1e-6\nC2 a 0 1u tc=-2e-3\n"
		     "Q1 a b 0 qn\n"
		     ".model dz d bv=12 tcv=0.008 is=1e-14\n.model qn npn\n");
	assert_non_null(strstr(r.diags, "note: 1 diode taken at 100 degC"));
	assert_non_null(strstr(r.diags, "warning: the solver keeps transistor models"));
	assert_non_null(strstr(r.diags, "Q1 is simulated at 27 degC, not at 100 degC"));
	const struct nl_model *m1 = find_part(&r, "D1")->model;
	assert_close(dmodel_value(m1, DM_BV), 12 - 0.008 * 73);
	double t = 373.15, vt = 1.380649e-23 * t / 1.602176634e-19, ratio = t / 300.15;
	assert_close(dmodel_value(m1, DM_IS), 1e-14 * exp((ratio - 1) * 1.11 / vt) * pow(ratio, 3));
	assert_close(dmodel_value(m1, DM_N), t / 300.15);
	assert_close(dmodel_value(find_part(&r, "D2")->model, DM_BV), 12);
	assert_ptr_equal(find_part(&r, "D3")->model, find_part(&r, "D2")->model);
	assert_close(find_part(&r, "R1")->value, 1e3 * (1 + 1e-3 * 73 + 1e-6 * 73 * 73));
	assert_close(find_part(&r, "R2")->value, 1e3 * (1 + 1e-3 * 73 + 1e-6 * 73 * 73));
	assert_close(find_part(&r, "C2")->value, 1e-6 * (1 - 2e-3 * 73));
	run_free(&r);

	run_text(&r, "t\n.temp 100\nD1 a 0 dz\nD2 a 0 dz temp=125\n.model dz d\n");
	assert_non_null(strstr(r.diags, "note: 2 diodes taken at 100 to 125 degC"));
	run_free(&r);

	run_text(&r, "t\n.options reltol=1e-4 temp=60 tnom = 25\nD1 a 0 dz\n"
		     ".model dz d bv=12 tcv=0.01\n");
	assert_non_null(strstr(r.diags, "taken at 60 degC, its model measured at 25 degC"));
	assert_close(dmodel_value(find_part(&r, "D1")->model, DM_BV), 12 - 0.01 * 35);
	run_free(&r);

	run_text(&r, "t\n.temp 0 85\nD1 a 0 dz\n.model dz d bv=12 tnom=0\n");
	assert_non_null(strstr(r.diags, "warning: .temp lists 2 temperatures"));
	assert_null(strstr(r.diags, "note:"));
	run_free(&r);

	run_text(&r, "t\n.temp -300\nD1 a 0 dz\n.model dz d\n");
	assert_non_null(strstr(r.diags, "2:7: error: a temperature is a number"));
	run_free(&r);

	run_text(&r, "t\n.options temp=abc\nD1 a 0 dz\n.model dz d\n");
	assert_non_null(strstr(r.diags, "2:10: error: a temperature is a number"));
	run_free(&r);

	run_text(&r, "t\n.temp 600\nD1 a 0 dz\n.model dz d\n");
	assert_non_null(strstr(r.diags, "2:7: warning: 600 degC is outside the range"));
	run_free(&r);
}

int main(void)
{
	const struct CMUnitTest tests[] = {
		cmocka_unit_test(test_params_and_expressions),
		cmocka_unit_test(test_hierarchy),
		cmocka_unit_test(test_forward_references),
		cmocka_unit_test(test_include_and_lib),
		cmocka_unit_test(test_include_cycle),
		cmocka_unit_test(test_conditionals),
		cmocka_unit_test(test_sources),
		cmocka_unit_test(test_elements),
		cmocka_unit_test(test_expansion_cap),
		cmocka_unit_test(test_expansion_fits),
		cmocka_unit_test(test_include_count_cap),
		cmocka_unit_test(test_dialect_params),
		cmocka_unit_test(test_dialect_elements),
		cmocka_unit_test(test_dialect_reading),
		cmocka_unit_test(test_adjacency),
		cmocka_unit_test(test_file_changed_while_read),
		cmocka_unit_test(test_temperature),
	};
	return cmocka_run_group_tests(tests, NULL, NULL);
}
