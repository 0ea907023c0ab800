/* test_sim.c: the transient solver against closed-form results.
 * - RC charging from a step: v(t) = V (1 - e^{-t/RC}) (the first-order
 *   response of any circuits textbook, e.g. Horowitz & Hill, The Art of
 *   Electronics, 3rd ed., §1.4.2; from memory);
 * - a diode and resistor from a DC source settle where the resistor's
 *   current equals the Shockley current I = IS (e^{V/(N Vt)} - 1) (SPICE
 *   level-1 equation; Vt = kT/q at 300.15 K);
 * - an LC tank rings at f = 1 / (2 pi sqrt(LC)) with no loss beyond the
 *   trapezoidal rule's (which keeps the amplitude);
 * - coupled inductors with k = 1 and a light load: the secondary follows
 *   the primary by sqrt(Ls/Lp) (ideal transformer);
 * - source waveforms: PULSE, PWL with repeat, SIN with delay and damping,
 *   against their definitions in the ngspice manual, and their corners;
 * - currents over one steady-state period (simrun_peaks' flows): a
 *   resistor across a DC source takes P = V^2 / R and I = V / R exactly,
 *   its source delivers the same power; a resistor across a sine takes
 *   Vp^2 / (2 R); a half-wave rectifier (nearly ideal diode) into a
 *   resistor passes Vp / (pi R) on average, Vp / (2 R) rms and Vp / R at
 *   its peak (the textbook half-wave results: mean of a half sine over a
 *   period 1 / pi, rms 1 / 2; from memory, and one line of integration);
 * - a loop of voltage sources is a singular matrix, reported as such;
 *   a MESFET, a JFET with a doping tail and a VBIC transistor are
 *   refused with their names;
 * - a bipolar transistor's operating point (NPN and PNP, forward active
 *   and saturated, with and without the Early effect) meets the
 *   Ebers-Moll equations at the junction voltages it settled at;
 * - a level-1 MOSFET's (NMOS and PMOS, saturated and linear, with the
 *   body effect) drain current is Shichman-Hodges' at its settled vds;
 * - a level-1 JFET's (NJF and PJF, saturated and linear, area 1 and 3)
 *   drain current is BETA (Vgs-VTO)^2 (1 + LAMBDA Vds) saturated and
 *   BETA Vds (2 (Vgs-VTO) - Vds) (1 + LAMBDA Vds) linear at its vds;
 * - a VDMOS (nchan and pchan) conducts KP/2 (Vgs-VTO)^2 (1 + LAMBDA Vds)
 *   saturated, level 1's linear current below, and its body diode
 *   Shockley's current when the drain is pulled past the source;
 * - a voltage-controlled switch with hysteresis is off while its control
 *   rises through the band between VT - VH and VT + VH, on while it falls; a 0-ohm resistor is 1 mOhm and
 *   out-of-range diode parameters fall back to defaults;
 * - behavioural sources: B V={2*V(a)} follows an E source of gain 2 point
 *   by point; B I={V(a)*V(a)/1k} into 1 k gives v = -V(a)^2 (a current
 *   from the + pin through the source, as ngspice's manual defines it),
 *   and fed back on its own node through 1 k from 3 V it settles where
 *   (3 - v)/1k = v^2/1k, v = (sqrt(13) - 1)/2 (the quadratic's positive
 *   root); a ternary comparator is 5 V exactly where its input is above
 *   0.5 V; a high-gain clamp closing a resistive loop settles at its
 *   linear solution; a table() without whole x, y pairs and expressions of temper stay refused by
 *   name;
 * - the periodic steady state of a slow rectifier (5.7 us transit time)
 *   by shooting-Newton agrees with plain period-after-period settling
 *   and takes a quarter of its periods (its Newton steps work);
 * - a centre-tapped 60 Hz rectifier of slow diodes (5.7 us transit time)
 *   whose snubber spans the whole winding: each diode snaps off into its
 *   half's leakage and is driven to its 100 V breakdown, while the snubber
 *   and the reservoir stay where they are; against an ngspice simulation
 *   of the same netlist (ngspice-39, reltol 1e-5, steps of 1 us at most,
 *   the three periods from 0.65 s to 0.7 s). */
#include "testutil.h"

#include <math.h>

#include "dense.h"
#include "sim.h"
#include "simrun.h"
#include "simsrc.h"

static void near(double got, double want, double eps, int line)
{
	if (!(fabs(got - want) <= eps))
		fail_msg("line %d: %.12g, want %.12g (+- %g)", line, got, want, eps);
}
#define assert_near(got, want, eps) near((got), (want), (eps), __LINE__)

struct simrun_case {
	struct run r;
	struct sim *s;
	double t, v[8];      /* last point seen */
	uint32_t node[8];
	int nnode;
	double vmax, vmin;   /* of node[0] */
};

static int seen(void *ud, double t, const double *v)
{
	struct simrun_case *c = ud;
	c->t = t;
	for (int i = 0; i < c->nnode; i++)
		c->v[i] = v[c->node[i]];
	c->vmax = fmax(c->vmax, v[c->node[0]]);
	c->vmin = fmin(c->vmin, v[c->node[0]]);
	return 0;
}

static void start_with(struct simrun_case *c, const char *deck, const char *nodes[], int n,
		       struct sim_opts o)
{
	memset(c, 0, sizeof *c);
	run_text(&c->r, deck);
	assert_string_equal(c->r.diags, "");
	c->nnode = n;
	for (int i = 0; i < n; i++) {
		c->node[i] = nl_node_find(c->r.r.circuit, nodes[i], strlen(nodes[i]));
		assert_true(c->node[i] != NL_NONE);
	}
	struct sim_refusal ref;
	struct hr_alloc h = hr_alloc_default();
	assert_int_equal(sim_create(c->r.r.circuit, &o, &h, &c->s, &ref), SIM_OK);
	c->vmax = -INFINITY;
	c->vmin = INFINITY;
}

static void start(struct simrun_case *c, const char *deck, const char *nodes[], int n,
		  double max_step)
{
	struct sim_opts o = {0};
	o.max_step = max_step;
	start_with(c, deck, nodes, n, o);
}

static void finish(struct simrun_case *c)
{
	sim_destroy(c->s);
	run_free(&c->r);
}

static void test_rc_step(void **state)
{
	(void)state;
	struct simrun_case c;
	const char *nodes[] = {"out"};
	/* 1 k, 1 uF: tau = 1 ms; a 10 V step with a 1 ns edge at t = 0 */
	start(&c, "rc\nV1 in 0 pwl(0 0 1n 10)\nR1 in out 1k\nC1 out 0 1u\n", nodes, 1, 10e-6);
	double taus[] = {0.5, 1, 2, 5};
	for (int i = 0; i < 4; i++) {
		assert_int_equal(sim_run(c.s, taus[i] * 1e-3, seen, &c), SIM_OK);
		double want = 10 * (1 - exp(-(c.t - 1e-9) / 1e-3));
		if (fabs(c.v[0] - want) > 1e-3 * 10)
			fail_msg("t = %g: %g, want %g", c.t, c.v[0], want);
	}
	finish(&c);
}

static void test_diode_operating_point(void **state)
{
	(void)state;
	struct simrun_case c;
	const char *nodes[] = {"a"};
	start(&c, "dc\nV1 in 0 5\nR1 in a 1k\nD1 a 0 dm\n.model dm d is=1e-14 n=1.5\n",
	      nodes, 1, 1e-6);
	assert_int_equal(sim_run(c.s, 20e-6, seen, &c), SIM_OK);
	double vd = c.v[0], ir = (5 - vd) / 1e3;
	double id = 1e-14 * (exp(vd / (1.5 * 0.0258648)) - 1);
	if (fabs(ir - id) > 1e-3 * ir)
		fail_msg("resistor %g A, diode %g A at %g V", ir, id, vd);
	/* about 4 mA: 1.5 x 25.86 mV x ln(4e-3 / 1e-14) = 1.04 V */
	assert_true(vd > 1.0 && vd < 1.08);
	finish(&c);
}

/* Ebers-Moll with the Early effect (SPICE's Gummel-Poon with IKF, IKR
 * infinite; Vt = kT/q at 300.15 K): base and collector currents of the
 * junction voltages the solver settled at, against the resistors'. */
static void ebers_moll(double vbe, double vbc, double vaf, double *ib, double *ic)
{
	const double is = 1e-15, bf = 100, br = 2, vt = 0.0258648;
	double ef = exp(vbe / vt) - 1, er = exp(vbc / vt) - 1;
	double qb = vaf > 0 ? 1 / (1 - vbc / vaf) : 1;
	*ib = is / bf * ef + is / br * er;
	*ic = is * (ef - er) / qb - is / br * er;
}

/* One operating point: VCC over RC to the collector, VBB over RB to the
 * base, the emitter grounded; pol -1 is the PNP mirror (all supplies
 * negated, every current and voltage too). */
static void bjt_point_area(const char *type, double pol, double rc, double vaf, double area)
{
	char deck[512];
	/* IS / area on the card times the area on the part: IS 1e-15 */
	snprintf(deck, sizeof deck,
		 "ce\nVCC vcc 0 %g\nVBB vbb 0 %g\nRC vcc c %g\nRB vbb b 100k\nQ1 c b 0 qx %g\n"
		 ".model qx %s(is=%g bf=100 br=2 vaf=%g)\n",
		 10 * pol, 5 * pol, rc, area, type, 1e-15 / area, vaf);
	struct simrun_case c;
	const char *nodes[] = {"b", "c"};
	start(&c, deck, nodes, 2, 1e-6);
	assert_int_equal(sim_run(c.s, 20e-6, seen, &c), SIM_OK);
	double vb = pol * c.v[0], vc = pol * c.v[1], ib, ic;
	ebers_moll(vb, vb - vc, vaf, &ib, &ic);
	double ib_r = (5 - vb) / 100e3, ic_r = (10 - vc) / rc;
	if (fabs(ib - ib_r) > 2e-3 * ib_r || fabs(ic - ic_r) > 2e-3 * ic_r)
		fail_msg("%s rc %g: base %g A (resistor %g A), collector %g A (resistor %g A)",
			 type, rc, ib, ib_r, ic, ic_r);
	if (rc < 2e3) /* forward active: ic near BF ib (the Early factor apart) */
		assert_true(ic_r > 80 * ib_r && vc > vb);
	else /* saturated: the collector below the base */
		assert_true(vc < vb && ic_r < 50 * ib_r);
	finish(&c);
}

static void bjt_point(const char *type, double pol, double rc, double vaf)
{
	bjt_point_area(type, pol, rc, vaf, 1);
}

static void test_bjt_operating_point(void **state)
{
	bjt_point_area("npn", 1, 1e3, 50, 4); /* the area scales IS */
	(void)state;
	bjt_point("npn", 1, 1e3, 0);
	bjt_point("npn", 1, 1e3, 50);
	bjt_point("npn", 1, 10e3, 0);
	bjt_point("pnp", -1, 1e3, 50);
	bjt_point("pnp", -1, 10e3, 0);
}

/* One MOSFET operating point: VDD over RD to the drain, the gate at vg,
 * the source grounded, the bulk at vb; pol -1 is the PMOS mirror. The
 * drain current from the resistor against Shichman-Hodges (SPICE level
 * 1): beta = KP W / L, vth = VTO + GAMMA (sqrt(PHI - vbs) - sqrt(PHI)),
 * saturation 0.5 beta (vgs - vth)^2 (1 + LAMBDA vds), linear
 * beta vds (vgs - vth - vds / 2) (1 + LAMBDA vds). */
static void mos_point(const char *type, double pol, double rd, double vb)
{
	const double kp = 100e-6, w = 10e-6, l = 1e-6, vto = 1, lambda = 0.02, gamma = 0.5,
		     phi = 0.7, vg = 3;
	char deck[512];
	/* the PMOS as two in parallel (m=2) of half the width */
	snprintf(deck, sizeof deck,
		 "m\nVDD vdd 0 %g\nVG g 0 %g\nVB bk 0 %g\nRD vdd d %g\nM1 d g 0 bk mx %s\n"
		 ".model mx %s(vto=%g kp=100u lambda=0.02 gamma=0.5 phi=0.7)\n",
		 10 * pol, vg * pol, vb * pol, rd, pol > 0 ? "w=10u l=1u" : "l=1u w=5u m=2", type,
		 vto * pol);
	struct simrun_case c;
	const char *nodes[] = {"d"};
	start(&c, deck, nodes, 1, 1e-6);
	assert_int_equal(sim_run(c.s, 20e-6, seen, &c), SIM_OK);
	double vds = pol * c.v[0], beta = kp * w / l;
	double vth = vto + gamma * (sqrt(phi - vb) - sqrt(phi)), vov = vg - vth;
	double id = vds >= vov ? 0.5 * beta * vov * vov * (1 + lambda * vds)
			       : beta * vds * (vov - vds / 2) * (1 + lambda * vds);
	double id_r = (10 - vds) / rd;
	if (fabs(id - id_r) > 1e-3 * id_r)
		fail_msg("%s rd %g vb %g: vds %g V, resistor %g A, level 1 %g A", type, rd, vb, vds,
			 id_r, id);
	assert_true(rd < 2e3 ? vds > vov : vds < vov); /* saturated, linear */
	finish(&c);
}

static void test_mos_operating_point(void **state)
{
	(void)state;
	mos_point("nmos", 1, 1e3, 0);
	mos_point("nmos", 1, 1e3, -2); /* body effect: vth 1.43 V */
	mos_point("nmos", 1, 10e3, 0);
	mos_point("pmos", -1, 1e3, -2);
	mos_point("pmos", -1, 10e3, 0);
}

/* One JFET operating point: VDD over RD to the drain, the gate at
 * -0.5 V, the source grounded; pol -1 is the PJF mirror, whose VTO keeps
 * its negative sign (ngspice's convention for a depletion PJF). The
 * drain current from the resistor against Shichman-Hodges as the ngspice
 * manual's JFET chapter gives it (from memory): BETA area (Vgs-VTO)^2
 * (1 + LAMBDA Vds) saturated, BETA area Vds (2 (Vgs-VTO) - Vds)
 * (1 + LAMBDA Vds) linear. */
static void jfet_point(const char *type, double pol, double rd, double area)
{
	const double beta = 1e-3, vto = -2, lambda = 0.02, vg = -0.5;
	char deck[512];
	snprintf(deck, sizeof deck,
		 "j\nVDD vdd 0 %g\nVG g 0 %g\nRD vdd d %g\nJ1 d g 0 jx %g\n"
		 ".model jx %s(vto=-2 beta=1m lambda=0.02 is=1e-14)\n",
		 10 * pol, vg * pol, rd, area, type);
	struct simrun_case c;
	const char *nodes[] = {"d"};
	start(&c, deck, nodes, 1, 1e-6);
	assert_int_equal(sim_run(c.s, 20e-6, seen, &c), SIM_OK);
	double vds = pol * c.v[0], vov = vg - vto, b = beta * area;
	double id = vds >= vov ? b * vov * vov * (1 + lambda * vds)
			       : b * vds * (2 * vov - vds) * (1 + lambda * vds);
	double id_r = (10 - vds) / rd;
	if (fabs(id - id_r) > 1e-3 * id_r)
		fail_msg("%s rd %g area %g: vds %g V, resistor %g A, level 1 %g A", type, rd, area,
			 vds, id_r, id);
	assert_true(rd < 2e3 ? vds > vov : vds < vov); /* saturated, linear */
	finish(&c);
}

static void test_jfet_operating_point(void **state)
{
	(void)state;
	jfet_point("njf", 1, 1e3, 1);
	jfet_point("njf", 1, 10e3, 1);
	jfet_point("njf", 1, 1e3, 3);
	jfet_point("pjf", -1, 1e3, 1);
	jfet_point("pjf", -1, 10e3, 1);
}

/* A VDMOS (ngspice's vertical power MOSFET) as the level-1 channel:
 * VDD over RD to the drain, the gate at 5 V (pol -1: the pchan mirror,
 * whose VTO is written negative as for a PMOS); the drain current from the
 * resistor against KP/2 (vgs - VTO)^2 (1 + LAMBDA vds) saturated and
 * KP vds (vgs - VTO - vds/2) (1 + LAMBDA vds) linear (ngspice's VDMOS,
 * from memory; its subthreshold smoothing KSUBTHRES is e^-20 of the
 * overdrive here). */
static void vdmos_point(const char *flag, double pol, double rd)
{
	const double kp = 0.5, vto = 3, lambda = 0.01, vg = 5;
	char deck[512];
	snprintf(deck, sizeof deck,
		 "v\nVDD vdd 0 %g\nVG g 0 %g\nRD vdd d %g\nM1 d g 0 vx\n"
		 ".model vx VDMOS(%s vto=%g kp=0.5 lambda=0.01)\n",
		 10 * pol, vg * pol, rd, flag, vto * pol);
	struct simrun_case c;
	const char *nodes[] = {"d"};
	start(&c, deck, nodes, 1, 1e-6);
	assert_int_equal(sim_run(c.s, 20e-6, seen, &c), SIM_OK);
	double vds = pol * c.v[0], vov = vg - vto;
	double id = vds >= vov ? 0.5 * kp * vov * vov * (1 + lambda * vds)
			       : kp * vds * (vov - vds / 2) * (1 + lambda * vds);
	double id_r = (10 - vds) / rd;
	if (fabs(id - id_r) > 1e-3 * id_r)
		fail_msg("%s rd %g: vds %g V, resistor %g A, level 1 %g A", flag, rd, vds, id_r, id);
	assert_true(rd < 10 ? vds > vov : vds < vov); /* saturated, linear */
	finish(&c);
}

/* The VDMOS's body diode: the gate tied to the source, the drain pulled
 * 10 V below it through 10 ohm; the diode current (the resistor's) is
 * Shockley's IS (e^{v/(N Vt)} - 1) at the settled source-drain voltage
 * (Vt = kT/q at 300.15 K), and it conducts amps: the channel is off. For
 * pchan the diode runs from drain to source, so the drain is pushed 10 V
 * above. */
static void vdmos_body(const char *flag, double pol)
{
	char deck[512];
	snprintf(deck, sizeof deck,
		 "b\nVSS vss 0 %g\nRD vss d 10\nM1 d 0 0 vx\n"
		 ".model vx VDMOS(%s vto=%g kp=0.5 is=1e-12 n=1.2)\n",
		 -10 * pol, flag, 3 * pol);
	struct simrun_case c;
	const char *nodes[] = {"d"};
	start(&c, deck, nodes, 1, 1e-6);
	assert_int_equal(sim_run(c.s, 20e-6, seen, &c), SIM_OK);
	double v = -pol * c.v[0], i_r = (10 - v) / 10;
	double i_d = 1e-12 * (exp(v / (1.2 * 0.0258648)) - 1);
	if (fabs(i_d - i_r) > 2e-3 * i_r)
		fail_msg("%s: body diode at %g V: resistor %g A, Shockley %g A", flag, v, i_r, i_d);
	assert_true(i_r > 0.9 && v > 0.5 && v < 1);
	finish(&c);
}

static void test_vdmos(void **state)
{
	(void)state;
	vdmos_point("nchan", 1, 1);
	vdmos_point("nchan", 1, 100);
	vdmos_point("pchan", -1, 1);
	vdmos_point("pchan", -1, 100);
	vdmos_body("nchan", 1);
	vdmos_body("pchan", -1);
}

/* A switch (VT 1 V, VH 0.5 V: on above 1.5 V, off below 0.5 V, else as
 * it was) pulls a 1 k load to ground as its control follows a 5 V sine:
 * out is 10 V x 1M / (1M + 1k) off and 10 V x 1 / 1001 on. In the band
 * between, it is off while the control rises and on while it falls. */
struct sw_seen {
	uint32_t c, out;
	double vc_prev;
	int points, band_up, band_down, bad;
};

static int sw_point(void *ud, double t, const double *v)
{
	struct sw_seen *w = ud;
	double vc = v[w->c], out = v[w->out];
	int on = out < 0.1, off = out > 9.9;
	(void)t;
	w->points++;
	if (vc > 1.55 || (vc > 0.6 && vc < 1.4 && vc < w->vc_prev))
		w->bad += !on, w->band_down += vc < 1.4;
	else if (vc < 0.45 || (vc > 0.6 && vc < 1.4 && vc > w->vc_prev))
		w->bad += !off, w->band_up += vc > 0.6;
	w->vc_prev = vc;
	return 0;
}

static void test_switch_hysteresis(void **state)
{
	(void)state;
	struct run r;
	run_text(&r, "sw\nVC c 0 sin(0 5 1k)\nVDD vdd 0 10\nRL vdd out 1k\nS1 out 0 c 0 sx\n"
		     ".model sx sw(vt=1 vh=0.5 ron=1 roff=1meg)\n");
	assert_string_equal(r.diags, "");
	struct sim_opts o = {0};
	o.max_step = 2e-6;
	struct sim *s = NULL;
	struct sim_refusal ref;
	struct hr_alloc h = hr_alloc_default();
	assert_int_equal(sim_create(r.r.circuit, &o, &h, &s, &ref), SIM_OK);
	struct sw_seen w = {nl_node_find(r.r.circuit, "c", 1), nl_node_find(r.r.circuit, "out", 3),
			    0, 0, 0, 0, 0};
	assert_int_equal(sim_run(s, 2e-3, sw_point, &w), SIM_OK);
	if (w.bad || w.band_up < 10 || w.band_down < 10)
		fail_msg("%d of %d points in the wrong state (%d rising, %d falling in the band)", w.bad,
			 w.points, w.band_up, w.band_down);
	sim_destroy(s);
	run_free(&r);
}

static void test_lc_tank(void **state)
{
	(void)state;
	struct simrun_case c;
	const char *nodes[] = {"t"};
	/* 10 uH, 100 nF: f = 1/(2 pi sqrt(1e-12)) = 159.155 kHz; C starts at
	 * 1 V (ic=), no drive */
	start(&c, "lc\nL1 t 0 10u\nC1 t 0 100n ic=1\n", nodes, 1, 20e-9);
	double f = 1 / (2 * M_PI * sqrt(10e-6 * 100e-9)), per = 1 / f;
	/* the voltage crosses zero going down at T/4, then every T/2 */
	double prev = 1, tprev = 0, first = NAN, last = NAN;
	int crossings = 0;
	while (sim_time(c.s) < 20 * per) {
		assert_int_equal(sim_run(c.s, sim_time(c.s) + per / 400, seen, &c), SIM_OK);
		if ((prev > 0) != (c.v[0] > 0)) {
			double tz = tprev + (c.t - tprev) * prev / (prev - c.v[0]);
			if (crossings == 0)
				first = tz;
			last = tz;
			crossings++;
		}
		prev = c.v[0];
		tprev = c.t;
	}
	double measured = (last - first) / (crossings - 1) * 2;
	if (fabs(measured - per) > 2e-3 * per)
		fail_msg("period %g, want %g", measured, per);
	assert_true(c.vmax > 0.99 && c.vmax < 1.01); /* no loss, no gain */
	finish(&c);
}

static void test_transformer(void **state)
{
	(void)state;
	struct simrun_case c;
	const char *nodes[] = {"s"};
	/* Ls/Lp = 4: the secondary swings sqrt(4) = 2 times the primary */
	start(&c, "xf\nV1 p 0 sin(0 5 10k)\nL1 p 0 1m\nL2 s 0 4m\nK1 L1 L2 1\nRL s 0 1meg\n",
	      nodes, 1, 0);
	assert_int_equal(sim_run(c.s, 1e-3, seen, &c), SIM_OK);
	if (fabs(c.vmax - 10) > 0.01 || fabs(c.vmin + 10) > 0.01)
		fail_msg("secondary swings %g to %g, want +-10", c.vmin, c.vmax);
	finish(&c);
}

static void test_sources(void **state)
{
	(void)state;
	struct simsrc_span sp = {1e-9, 1e-3};
	double pulse[] = {0, 5, 1e-6, 10e-9, 20e-9, 490e-9, 1e-6};
	struct nl_source p = {0};
	p.wave = NL_WAVE_PULSE;
	p.nargs = 7;
	p.args = pulse;
	assert_near(simsrc_value(&p, &sp, 0.5e-6), 0, 1e-12);
	assert_near(simsrc_value(&p, &sp, 1e-6 + 5e-9), 2.5, 1e-9);
	assert_near(simsrc_value(&p, &sp, 1.3e-6), 5, 1e-12);
	assert_near(simsrc_value(&p, &sp, 2e-6 + 10e-9 + 490e-9 + 10e-9), 2.5, 1e-9);
	assert_near(simsrc_next_corner(&p, &sp, 1.2e-6), 1e-6 + 500e-9, 1e-15);
	assert_near(simsrc_next_corner(&p, &sp, 1.6e-6), 2e-6, 1e-15);
	assert_near(simsrc_period(&p, &sp), 1e-6, 1e-18);

	double pwl[] = {0, 0, 1e-3, 1, 2e-3, -1};
	struct nl_source w = {0};
	w.wave = NL_WAVE_PWL;
	w.nargs = 6;
	w.args = pwl;
	w.pwl_repeat = 0;
	assert_near(simsrc_value(&w, &sp, 0.5e-3), 0.5, 1e-12);
	assert_near(simsrc_value(&w, &sp, 1.5e-3), 0, 1e-12);
	assert_near(simsrc_value(&w, &sp, 2.5e-3), 0.5, 1e-9);  /* repeated */
	assert_near(simsrc_period(&w, &sp), 2e-3, 1e-15);
	assert_near(simsrc_next_corner(&w, &sp, 2.2e-3), 3e-3, 1e-12);

	double sine[] = {1, 2, 1e3, 1e-3, 100, 90};
	struct nl_source s = {0};
	s.wave = NL_WAVE_SIN;
	s.nargs = 6;
	s.args = sine;
	/* before TD: VO + VA sin(PHASE) = 1 + 2 = 3 */
	assert_near(simsrc_value(&s, &sp, 0.5e-3), 3, 1e-12);
	/* a quarter period after TD: 1 + 2 e^{-100 x 0.25e-3} sin(pi/2 + pi/2) */
	assert_near(simsrc_value(&s, &sp, 1.25e-3), 1 + 2 * exp(-0.025) * sin(M_PI), 1e-9);
	assert_near(simsrc_next_corner(&s, &sp, 0), 1e-3, 1e-15);
}

static void test_refusals(void **state)
{
	(void)state;
	struct run r;
	struct sim *s = NULL;
	struct sim_refusal ref;
	struct hr_alloc h = hr_alloc_default();
	struct sim_opts o = {0};
	run_text(&r, "loop\nV1 a 0 1\nV2 a 0 2\nR1 a 0 1k\n");
	assert_int_equal(sim_create(r.r.circuit, &o, &h, &s, &ref), SIM_OK);
	assert_int_equal(sim_run(s, 1e-6, NULL, NULL), SIM_SINGULAR);
	sim_destroy(s);
	run_free(&r);
	run_text(&r, "mesfet\nV1 a 0 1\nZ1 a b 0 zn\nR1 b 0 1k\n.model zn nmf\n");
	assert_int_equal(sim_create(r.r.circuit, &o, &h, &s, &ref), SIM_REFUSED);
	assert_null(s);
	assert_string_equal(nl_part_at(r.r.circuit, ref.part)->path, "Z1");
	run_free(&r);
	/* a JFET with a doping tail (B other than its default 1) */
	run_text(&r, "jfet\nV1 a 0 1\nJ1 a b 0 jn\nR1 b 0 1k\n.model jn njf b=0.9\n");
	assert_int_equal(sim_create(r.r.circuit, &o, &h, &s, &ref), SIM_REFUSED);
	assert_string_equal(nl_part_at(r.r.circuit, ref.part)->path, "J1");
	assert_non_null(strstr(ref.why, "doping-tail"));
	run_free(&r);
	/* a VDMOS with quasi-saturation */
	run_text(&r, "q\nV1 a 0 1\nM1 a b 0 vq\nR1 b 0 1k\n.model vq vdmos rq=0.1\n");
	assert_int_equal(sim_create(r.r.circuit, &o, &h, &s, &ref), SIM_REFUSED);
	assert_non_null(strstr(ref.why, "quasi-saturation"));
	run_free(&r);
	/* a bipolar model the solver does not have (VBIC is level 4) */
	run_text(&r, "vbic\nV1 a 0 1\nQ1 a b 0 qv\nR1 b 0 1k\n.model qv npn level=4\n");
	assert_int_equal(sim_create(r.r.circuit, &o, &h, &s, &ref), SIM_REFUSED);
	assert_string_equal(nl_part_at(r.r.circuit, ref.part)->path, "Q1");
	assert_non_null(strstr(ref.why, "level 1"));
	run_free(&r);
}

/* A 0-ohm resistor is a short (1 mOhm, as SPICE takes it); diode
 * parameters outside their range (IS = 0, N = 0, VJ = 0, M = 1, FC = 1)
 * fall back to defaults instead of dividing by zero. */
/* The dense solve behind the shooting step: a 3 x 3 system that needs a
 * row exchange (first pivot 0), solution by hand (1, 2, 3); a singular one
 * refused. */
static void test_dense_solve(void **state)
{
	(void)state;
	double a[9] = {0, 2, 1, 1, 1, 1, 2, 0, 3}, b[3] = {7, 6, 11};
	assert_true(dense_solve(a, b, 3, 1e-12));
	near(b[0], 1, 1e-12, __LINE__);
	near(b[1], 2, 1e-12, __LINE__);
	near(b[2], 3, 1e-12, __LINE__);
	double s[4] = {1, 2, 2, 4}, r[2] = {1, 2};
	assert_false(dense_solve(s, r, 2, 1e-12));
}

static void test_degenerate_values(void **state)
{
	(void)state;
	struct simrun_case c;
	const char *nodes[] = {"b", "d"};
	start(&c, "odd\nV1 a 0 1\nR0 a b 0\nR1 b 0 1k\nV2 x 0 sin(0 5 1k)\nC1 x d 1u\n"
		  "D1 0 d dz\nRL d 0 10k\n.model dz d is=0 n=0 vj=0 m=1 fc=1 cjo=1p\n",
	      nodes, 2, 0);
	assert_int_equal(sim_run(c.s, 3e-3, seen, &c), SIM_OK);
	assert_near(c.v[0], 1000 / 1000.001, 1e-9);
	assert_true(isfinite(c.v[1]) && fabs(c.v[1]) < 6);
	finish(&c);
}

/* One steady-state period of deck with flows: f gets one entry per part. */
static void flows_of(struct run *r, const char *deck, int ideal, struct simrun_flow *f, size_t nf)
{
	run_text(r, deck);
	assert_string_equal(r->diags, "");
	const struct nl_circuit *c = r->r.circuit;
	size_t np = nl_part_count(c);
	assert_true(np <= nf);
	double vmin[8], vmax[8];
	struct simrun_opts o = {0};
	o.ideal_diodes = ideal;
	o.flow = f;
	struct simrun_result res;
	struct hr_alloc h = hr_alloc_default();
	simrun_peaks(c, &o, &h, vmin, vmax, NULL, NULL, &res);
	assert_int_equal(res.status, SIM_OK);
	assert_true(res.settled);
}

static const struct simrun_flow *flow_of(const struct run *r, const struct simrun_flow *f,
					 const char *path)
{
	const struct nl_part *p = find_part(r, path);
	assert_non_null(p);
	return &f[p - nl_part_at(r->r.circuit, 0)];
}

static void test_flow_resistors(void **state)
{
	(void)state;
	struct run r;
	struct simrun_flow f[8];
	/* the sine gives the run its period; R1 sits across a DC source */
	flows_of(&r, "p\nV1 a 0 dc 10\nR1 a 0 100\nV2 b 0 sin(0 20 1k)\nR2 b 0 1k\n", 0, f, 8);
	const struct simrun_flow *r1 = flow_of(&r, f, "R1"), *v1 = flow_of(&r, f, "V1");
	assert_near(r1->power, 1.0, 1e-9);        /* 10^2 / 100 */
	assert_near(r1->avg, 0.1, 1e-12);
	assert_near(r1->rms, 0.1, 1e-12);
	assert_near(r1->peak, 0.1, 1e-12);
	assert_near(v1->avg, -0.1, 1e-12);        /* into + through the source */
	assert_near(v1->power, -1.0, 1e-9);       /* it delivers what R1 takes */
	const struct simrun_flow *r2 = flow_of(&r, f, "R2");
	assert_near(r2->power, 0.2, 0.2 * 1e-3);  /* 20^2 / (2 x 1k) */
	assert_near(r2->rms, 20 / sqrt(2) / 1e3, 1e-3 * 20e-3);
	assert_near(r2->avg, 0, 1e-6);
	assert_near(r2->peak, 20e-3, 1e-3 * 20e-3);
	assert_near(r2->low, -20e-3, 1e-3 * 20e-3);
	run_free(&r);
}

static void test_flow_half_wave(void **state)
{
	(void)state;
	struct run r;
	struct simrun_flow f[8];
	flows_of(&r, "hw\nV1 a 0 sin(0 100 50)\nD1 a k dm\nR1 k 0 1k\n.model dm d\n", 1, f, 8);
	const struct simrun_flow *d1 = flow_of(&r, f, "D1"), *r1 = flow_of(&r, f, "R1");
	/* a nearly ideal diode drops about 24 mV of the 100 V: 0.03 % */
	assert_near(d1->avg, 0.1 / M_PI, 1e-3 * 0.1 / M_PI);
	assert_near(d1->rms, 0.1 / 2, 1e-3 * 0.05);
	assert_near(d1->peak, 0.1, 1e-3 * 0.1);
	assert_near(r1->avg, d1->avg, 1e-9);
	assert_true(d1->low > -1e-6); /* it blocks */
	/* the resistor takes (Vp / 2)^2 / R on a half sine's rms */
	assert_near(r1->power, 100.0 * 100 / 4 / 1e3, 2.5 * 2e-3);
	run_free(&r);
}

/* The largest voltage of deck's part 'R1' over a steady-state period with
 * steps of at most max_step (an RC-free deck steps at max_step itself). */
static double peak_of(const char *deck, double max_step, double *low)
{
	struct run r;
	run_text(&r, deck);
	assert_string_equal(r.diags, "");
	const struct nl_circuit *c = r.r.circuit;
	assert_true(nl_part_count(c) <= 8);
	double vmin[8], vmax[8];
	struct simrun_opts o = {0};
	o.max_step = max_step;
	struct simrun_result res;
	struct hr_alloc h = hr_alloc_default();
	simrun_peaks(c, &o, &h, vmin, vmax, NULL, NULL, &res);
	assert_int_equal(res.status, SIM_OK);
	const struct nl_part *p = find_part(&r, "R1");
	assert_non_null(p);
	size_t k = (size_t)(p - nl_part_at(c, 0));
	double got = vmax[k];
	*low = vmin[k];
	run_free(&r);
	return got;
}

/* A sine sampled seven times a period peaks up to 1 - cos(pi/7) = 10 %
 * above its highest point (2.5 % with the samples where this run puts
 * them); the extreme between the points comes from the parabola through
 * the three around it, within 1 % of the amplitude (a parabola's error on
 * a cosine over +-2 pi/7: its fourth-order term, (2 pi/7)^4 / 24 = 2.7 %
 * at the ends, far less at the vertex). An edge onto a flat top is no
 * crest: a pulse's plateau is its peak, to the volt's thousandth. */
static void test_crests(void **state)
{
	(void)state;
	double low;
	double hi = peak_of("s\nV1 a 0 sin(0 10 1k)\nR1 a 0 1k\n", 1e-3 / 7, &low);
	assert_near(hi, 10, 0.1);
	assert_near(low, -10, 0.1);
	hi = peak_of("p\nV1 a 0 pulse(0 10 0 50u 50u 400u 1m)\nR1 a 0 1k\n", 1e-3 / 7, &low);
	assert_near(hi, 10, 1e-3);
	assert_near(low, 0, 1e-3);
}

static void test_behav_gain(void **state)
{
	(void)state;
	struct simrun_case c;
	const char *nodes[] = {"o", "e"};
	start(&c, "b gain\nV1 a 0 sin(0 3 1k)\nR0 a 0 1k\nB1 o 0 V={2*V(a)}\nR1 o 0 1k\n"
		  "E1 e 0 a 0 2\nR2 e 0 1k\n", nodes, 2, 10e-6);
	for (int k = 1; k <= 13; k++) {
		assert_int_equal(sim_run(c.s, k * 1e-4, seen, &c), SIM_OK);
		assert_near(c.v[0], c.v[1], 1e-9);
	}
	assert_near(c.vmax, 6, 0.01);
	finish(&c);
}

static void test_behav_square_law(void **state)
{
	(void)state;
	struct simrun_case c;
	const char *nodes[] = {"p", "a", "f"};
	start(&c, "b square\nV1 a 0 pwl(0 0 1m 4)\nR0 a 0 1k\nB1 p 0 I={V(a)*V(a)/1k}\n"
		  "R1 p 0 1k\nV2 s 0 3\nR2 s f 1k\nB2 f 0 I={V(f)*V(f)/1k}\n", nodes, 3, 10e-6);
	for (int k = 1; k <= 10; k++) {
		assert_int_equal(sim_run(c.s, k * 1e-4, seen, &c), SIM_OK);
		assert_near(c.v[0], -c.v[1] * c.v[1], 1e-9 + 1e-6 * c.v[1] * c.v[1]);
		assert_near(c.v[2], (sqrt(13.0) - 1) / 2, 1e-6);
	}
	assert_near(c.v[1], 4, 1e-9);
	finish(&c);
}

struct cmp_case {
	struct simrun_case c;
	int high, low, wrong;
};

static int comparator_seen(void *ud, double t, const double *v)
{
	struct cmp_case *k = ud;
	double in = v[k->c.node[0]], q = v[k->c.node[1]];
	(void)t;
	if (fabs(in - 0.5) < 1e-6)
		return 0; /* on the threshold: either is right */
	int want = in > 0.5;
	int at5 = fabs(q - 5) < 1e-9, at0 = fabs(q) < 1e-9;
	k->high += want && at5;
	k->low += !want && at0;
	k->wrong += want ? !at5 : !at0;
	return 0;
}

static void test_behav_comparator(void **state)
{
	(void)state;
	struct cmp_case k = {0};
	const char *nodes[] = {"a", "q"};
	start(&k.c, "b cmp\nV1 a 0 sin(0 1 1k)\nR0 a 0 1k\nB1 q 0 V={V(a) > 0.5 ? 5 : 0}\n"
		    "R1 q 0 1k\nC1 q 0 1n\n", nodes, 2, 10e-6);
	assert_int_equal(sim_run(k.c.s, 3e-3, comparator_seen, &k), SIM_OK);
	assert_int_equal(k.wrong, 0);
	assert_true(k.high > 50 && k.low > 100);
	finish(&k.c);
}

/* A clamp max(0, min(5, 10k (2.5 - v(x)))) closing a loop through two
 * 10 k resistors from 1 V: Newton starts on the clamp's flat end (slope 0)
 * and must still reach the linear part, where err = 2e4 / 5001 V (from
 * x = (1 + err) / 2 and err = 1e4 (2.5 - x)) once C2 has settled
 * (R4 C2 = 0.5 ms; 24 of them leave 4e-11). And one whose iterates,
 * without the solver's damping of a probe that turns back, bounce between
 * the two flat ends for ever (no convergence). */
static void test_behav_clamp_loop(void **state)
{
	(void)state;
	struct simrun_case c;
	const char *nodes[] = {"err"};
	start(&c, "clamp\nV2 ref 0 2.5\nV1 s 0 1\nR3 s x 10k\nR4 err x 10k\nC2 err x 50n\n"
		  "B1 err 0 V={max(0,min(5,V(ref,x)*10k))}\n", nodes, 1, 10e-6);
	assert_int_equal(sim_run(c.s, 12e-3, seen, &c), SIM_OK);
	assert_near(c.v[0], 2e4 / 5001, 1e-5);
	finish(&c);
	/* the same clamp (gain 10) whose output drives its input through
	   50 nF alone: from the zero state the first iterates jump between
	   the clamp's ends; at the start (C2 uncharged, x = err) it sits on
	   the linear part, err = 25/11 V, and once C2 has charged it is
	   saturated at 5 V (x stays under 1.5 V) */
	start(&c, "clamp2\nV2 ref 0 2.5\nV1 s 0 sin(1 0.5 1k)\nR3 s x 10k\nC2 err x 50n\n"
		  "B1 err 0 V={max(0,min(5,V(ref,x)*10))}\n", nodes, 1, 10e-6);
	assert_int_equal(sim_run(c.s, 3e-3, seen, &c), SIM_OK);
	assert_near(c.v[0], 5, 1e-9);
	finish(&c);
}

static void test_behav_refusals(void **state)
{
	(void)state;
	const char *decks[] = {
		"table\nV1 a 0 1\nR1 a 0 1k\nE1 b 0 value={table(V(a),0,0,1)}\nR2 b 0 1k\n",
		"temper\nV1 a 0 1\nR1 a 0 1k\nB1 b 0 V={temper*V(a)}\nR2 b 0 1k\n",
		NULL, /* -(-(...V(a)...)) 250 deep, filled in below */
	};
	const char *who[] = {"E1", "B1", "B1"};
	static char nest[1200];
	int n = snprintf(nest, sizeof nest, "nest\nV1 a 0 1\nR1 a 0 1k\nB1 b 0 V={");
	for (int i = 0; i < 250; i++)
		nest[n++] = '-', nest[n++] = '(';
	n += snprintf(nest + n, sizeof nest - (size_t)n, "V(a)");
	for (int i = 0; i < 250; i++)
		nest[n++] = ')';
	snprintf(nest + n, sizeof nest - (size_t)n, "}\nR2 b 0 1k\n");
	decks[2] = nest;
	for (int i = 0; i < 3; i++) {
		struct run r;
		struct sim *s = NULL;
		struct sim_refusal ref;
		struct hr_alloc h = hr_alloc_default();
		struct sim_opts o = {0};
		run_text(&r, decks[i]);
		assert_int_equal(sim_create(r.r.circuit, &o, &h, &s, &ref), SIM_REFUSED);
		assert_null(s);
		assert_string_equal(nl_part_at(r.r.circuit, ref.part)->path, who[i]);
		run_free(&r);
	}
}


/* Shooting-Newton on a slow rectifier: a half-wave of a diode with a
 * 5.7 us transit time (a mains rectifier's) on a coupled transformer into
 * 1000 uF and 1 k (tau = 1 s, 50 periods). Plain settling stops when a
 * period moves the level by less than 1e-4, which with tau = 50 periods
 * leaves it up to 0.5 % short, after one to three time constants (80
 * periods here; more when Newton's noise keeps a period's extremes apart);
 * shooting's Newton steps solve the reservoir's slow mode in a few
 * periods' work, if the Jacobian they carry through the period is sound
 * (the stored charge's trapezoidal recursion, carried step by step, grew
 * without bound and no step went anywhere). Both must agree on the
 * reservoir's level. */
static double settle_level(int no_shooting, unsigned *periods, unsigned long *newton)
{
	struct simrun_case c;
	const char *nodes[] = {"out"};
	struct sim_opts o = {0};
	o.max_step = 20e-3 / 200;
	o.no_shooting = no_shooting;
	start_with(&c, "slow\nV1 p 0 sin(0 100 50)\nR1 p p1 2\nL1 p1 0 2\nL2 s 0 20m\n"
		  "K1 L1 L2 0.98\nD1 s out ds\nC1 out 0 1000u\nRL out 0 1k\n"
		       ".model ds d(is=14n n=1.98 rs=0.034 cjo=26p m=0.33 vj=0.75 tt=5.7u)\n",
		   nodes, 1, o);
	int settled = 0;
	assert_int_equal(sim_settle(c.s, 20e-3, 4000, 1e-4, periods, &settled, NULL, NULL),
			 SIM_OK);
	assert_true(settled);
	c.vmax = -INFINITY;
	assert_int_equal(sim_run(c.s, sim_time(c.s) + 20e-3, seen, &c), SIM_OK);
	struct sim_stats st;
	sim_stats(c.s, &st);
	*newton = st.newton;
	double v = c.vmax;
	finish(&c);
	return v;
}

static void test_shooting_slow_diode(void **state)
{
	(void)state;
	unsigned p_shoot, p_plain;
	unsigned long n_shoot, n_plain;
	double shot = settle_level(0, &p_shoot, &n_shoot);
	double plain = settle_level(1, &p_plain, &n_plain);
	print_message("slow rectifier: shooting %u periods (%lu Newton), plain %u (%lu), "
		      "%.5g V and %.5g V\n", p_shoot, n_shoot, p_plain, n_plain, shot, plain);
	assert_near(shot, plain, 2e-3 * plain);
	assert_true(p_shoot * 2 < p_plain);
	assert_true(n_shoot * 20 < n_plain);
}

/* The peaks of deck's parts names[0..n) over one steady-state period, at
 * the solver's own steps: largest into hi, smallest into lo. */
static void part_peaks(const char *deck, const char *const *names, size_t n, double *hi,
		       double *lo)
{
	struct run r;
	run_text(&r, deck);
	assert_string_equal(r.diags, "");
	const struct nl_circuit *c = r.r.circuit;
	size_t np = nl_part_count(c);
	assert_true(np <= 32);
	double vmin[32], vmax[32];
	struct simrun_opts o = {0};
	struct simrun_result res;
	struct hr_alloc h = hr_alloc_default();
	simrun_peaks(c, &o, &h, vmin, vmax, NULL, NULL, &res);
	assert_int_equal(res.status, SIM_OK);
	assert_true(res.settled);
	for (size_t i = 0; i < n; i++) {
		const struct nl_part *p = find_part(&r, names[i]);
		assert_non_null(p);
		size_t k = (size_t)(p - nl_part_at(c, 0));
		hi[i] = vmax[k];
		lo[i] = vmin[k];
	}
	run_free(&r);
}

/* A diode that snaps off into a winding's leakage: the measured period
 * follows each snap (docs/solver.md, "The measured period"). ngspice:
 * D1, D2 reverse 100.28 V and 100.22 V, CSN 47.60 V, C1 22.33 V at its
 * top. Without the snaps followed the diodes stay at the ideal 46.8 V;
 * followed at the run's own tolerance, the rings re-trigger conduction
 * and the snubber swings to 100 V. */
static void test_snap_off(void **state)
{
	(void)state;
	const char *names[] = {"D1", "D2", "CSN", "C1"};
	double hi[4], lo[4];
	part_peaks("ct\nVL 1 0 SIN(0 186.67 60)\nRP 1 2 4\nLP 2 0 1\nLSA 11 0 17.769m\n"
		   "LSB 0 12 17.769m\nKA LP LSA 0.98\nKB LP LSB 0.98\nKAB LSA LSB 0.99\n"
		   "RWA 11 13 0.4\nRWB 12 14 0.4\nRSN 11 15 47\nCSN 15 12 220n\n"
		   "D1 13 20 dr\nD2 14 20 dr\nC1 20 0 2200u\nRL 20 0 47\nRB 20 0 4.7k\n"
		   ".model dr d(is=14n rs=0.03 n=1.98 cjo=26p m=0.33 vj=0.75 tt=5.7u "
		   "bv=100 ibv=5u)\n",
		   names, 4, hi, lo);
	print_message("snap-off: D1 %.5g V, D2 %.5g V reverse; CSN %.5g V, C1 %.5g V\n", -lo[0],
		      -lo[1], hi[2], hi[3]);
	assert_near(-lo[0], 100.28, 1.0);
	assert_near(-lo[1], 100.22, 1.0);
	assert_near(hi[2], 47.60, 0.01 * 47.60);
	assert_near(hi[3], 22.33, 0.005 * 22.33);
}

int main(void)
{
	const struct CMUnitTest tests[] = {
		cmocka_unit_test(test_rc_step),
		cmocka_unit_test(test_diode_operating_point),
		cmocka_unit_test(test_bjt_operating_point),
		cmocka_unit_test(test_mos_operating_point),
		cmocka_unit_test(test_jfet_operating_point),
		cmocka_unit_test(test_vdmos),
		cmocka_unit_test(test_switch_hysteresis),
		cmocka_unit_test(test_lc_tank),
		cmocka_unit_test(test_transformer),
		cmocka_unit_test(test_sources),
		cmocka_unit_test(test_refusals),
		cmocka_unit_test(test_degenerate_values),
		cmocka_unit_test(test_dense_solve),
		cmocka_unit_test(test_flow_resistors),
		cmocka_unit_test(test_flow_half_wave),
		cmocka_unit_test(test_crests),
		cmocka_unit_test(test_shooting_slow_diode),
		cmocka_unit_test(test_snap_off),
		cmocka_unit_test(test_behav_gain),
		cmocka_unit_test(test_behav_square_law),
		cmocka_unit_test(test_behav_comparator),
		cmocka_unit_test(test_behav_clamp_loop),
		cmocka_unit_test(test_behav_refusals),
	};
	return cmocka_run_group_tests(tests, NULL, NULL);
}
