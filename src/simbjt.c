/* simbjt.c: see simbjt.h. The SPICE Gummel-Poon transistor without its
 * excess phase, base-resistance modulation, substrate junction and the
 * bias dependence of TF (XTF, VTF, ITF): names, defaults and equations as
 * the ngspice manual's BJT chapter gives them (from memory, checked
 * against ngspice by tests/ngspice_devices.py). The diode pieces reuse the
 * solver's level-1 junction, so limiting, charges and the shooting
 * sensitivities need nothing new. */
#include "simbjt.h"

#include <math.h>
#include <string.h>

#include "dmodel.h"
#include "simdev.h"

#define VT_27C 0.0258648 /* kT/q at 300.15 K (V), as the diode's */

/* The card's value of a parameter under any of its names. */
#define PARAM(m, dflt, ...) dmodel_param((m), (const char *const[]){__VA_ARGS__, NULL}, (dflt))

static int is_bjt_type(const struct nl_model *m)
{
	return m && (strcmp(m->type, "npn") == 0 || strcmp(m->type, "pnp") == 0);
}

const char *simbjt_refusal(const struct nl_part *p)
{
	if (!is_bjt_type(p->model))
		return "the transistor's model is not of type NPN or PNP";
	double level = PARAM(p->model, 1, "level");
	if (level != 1)
		return "only the Gummel-Poon bipolar model (level 1) is simulated, not VBIC, "
		       "HICUM or MEXTRAM";
	return NULL;
}

static double area_of(const struct nl_part *p)
{
	return p->value > 0 && isfinite(p->value) ? p->value : 1;
}

/* Terminal resistances RB, RC, RE (ohm, before area scaling). */
static void resistances(const struct nl_model *m, double r[3])
{
	r[0] = PARAM(m, 0, "rb");
	r[1] = PARAM(m, 0, "rc");
	r[2] = PARAM(m, 0, "re");
	for (int k = 0; k < 3; k++)
		if (!(r[k] > 0))
			r[k] = 0;
}

void simbjt_size(const struct nl_part *p, size_t *ndev, size_t *nint)
{
	double r[3];
	resistances(p->model, r);
	*nint = (size_t)(r[0] > 0) + (size_t)(r[1] > 0) + (size_t)(r[2] > 0);
	*ndev = *nint + 3 + (size_t)(PARAM(p->model, 0, "ise") > 0) +
		(size_t)(PARAM(p->model, 0, "isc") > 0);
}

/* A junction diode device from anode a to cathode k. */
static int junction_dev(struct arena *ar, struct simdev *d, uint32_t part, long a, long k,
			const struct simdev_diode *proto, double vcrit)
{
	simdev_blank(d, SD_D, part, a, k);
	d->dm = arena_alloc(ar, sizeof *d->dm);
	if (!d->dm)
		return 0;
	*d->dm = *proto;
	d->dm->nvt = d->dm->n * VT_27C;
	d->dm->vcrit = vcrit;
	d->dm->xbv = INFINITY;
	return 1;
}

static void resistor_dev(struct simdev *d, uint32_t part, long a, long b, double g)
{
	simdev_blank(d, SD_R, part, a, b);
	d->val = g;
}

static double clamp_grading(double m)
{
	return m >= 0 && m <= 0.9 ? m : m > 0.9 ? 0.9
						: 0.33;
}

static struct simdev_diode junction_of(double is, double n, double cjo, double vj, double m,
				       double tt)
{
	struct simdev_diode d = {0};
	d.is = is, d.n = n, d.cjo = cjo, d.vj = vj, d.m = clamp_grading(m), d.tt = tt;
	d.bv = INFINITY;
	d.ibv = 1e-3;
	return d;
}

/* The two junctions' diode models: saturation current IS/BF and IS/BR
 * (so their currents are the base currents), their depletion charges,
 * and diffusion charges TF*IF and TR*IR as a transit time of BF*TF and
 * BR*TR on the diode's own current. */
static void junction_models(const struct nl_model *m, double area,
			    struct simdev_diode *be, struct simdev_diode *bc)
{
	double is = PARAM(m, 1e-16, "is") * area;
	double bf = PARAM(m, 100, "bf"), br = PARAM(m, 1, "br");
	double fc = PARAM(m, 0.5, "fc");
	bf = bf > 0 ? bf : 100;
	br = br > 0 ? br : 1;
	fc = fc >= 0 && fc <= 0.95 ? fc : 0.5;
	*be = junction_of(is / bf, PARAM(m, 1, "nf"), PARAM(m, 0, "cje") * area,
			  PARAM(m, 0.75, "vje", "pe"), PARAM(m, 0.33, "mje", "me"), PARAM(m, 0, "tf") * bf);
	*bc = junction_of(is / br, PARAM(m, 1, "nr"), PARAM(m, 0, "cjc") * area,
			  PARAM(m, 0.75, "vjc", "pc"), PARAM(m, 0.33, "mjc", "mc"), PARAM(m, 0, "tr") * br);
	be->fc = bc->fc = fc;
	struct simdev_diode *j[2] = {be, bc};
	for (int k = 0; k < 2; k++) {
		if (!(j[k]->n > 0))
			j[k]->n = 1;
		if (!(j[k]->vj > 0))
			j[k]->vj = 0.75;
		if (!(j[k]->cjo >= 0))
			j[k]->cjo = 0;
		if (!(j[k]->tt >= 0))
			j[k]->tt = 0;
	}
}

static double inverse(double v)
{
	return v > 0 && isfinite(v) ? 1 / v : 0;
}

static int transport(struct arena *ar, const struct nl_model *m, double area,
		     struct simbjt **out)
{
	struct simbjt *t = arena_zalloc(ar, sizeof *t);
	if (!t)
		return 0;
	t->is = PARAM(m, 1e-16, "is") * area;
	if (!(t->is > 0))
		t->is = 1e-16 * area;
	double nf = PARAM(m, 1, "nf"), nr = PARAM(m, 1, "nr");
	t->nvtf = (nf > 0 ? nf : 1) * VT_27C;
	t->nvtr = (nr > 0 ? nr : 1) * VT_27C;
	t->ivaf = inverse(PARAM(m, 0, "vaf", "va"));
	t->ivar = inverse(PARAM(m, 0, "var", "vb"));
	t->iikf = inverse(PARAM(m, 0, "ikf", "ik") * area);
	t->iikr = inverse(PARAM(m, 0, "ikr") * area);
	t->pol = strcmp(m->type, "pnp") == 0 ? -1 : 1;
	*out = t;
	return 1;
}

int simbjt_fill(struct arena *ar, const struct nl_part *p, uint32_t part,
		const long cbe[3], double mult, struct simdev *d, long *next)
{
	const struct nl_model *m = p->model;
	double area = area_of(p) * mult, r[3];
	resistances(m, r);
	long in[3];                    /* internal collector, base, emitter */
	const int of_r[3] = {1, 0, 2}; /* cbe order -> RB, RC, RE order */
	size_t k = 0;
	for (int j = 0; j < 3; j++) {
		double rr = r[of_r[j]];
		in[j] = rr > 0 ? (*next)++ : cbe[j];
		if (rr > 0)
			resistor_dev(&d[k++], part, cbe[j], in[j], area / rr);
	}
	struct simdev_diode be, bc;
	junction_models(m, area, &be, &bc);
	struct simbjt *t;
	if (!transport(ar, m, area, &t))
		return 0;
	/* SPICE limits both junctions against the transistor's own IS */
	double vcrit = VT_27C * log(VT_27C / (sqrt(2.0) * t->is));
	int npn = t->pol > 0;
	struct simdev *je = &d[k], *jc = &d[k + 1];
	if (!junction_dev(ar, &d[k++], part, npn ? in[1] : in[2], npn ? in[2] : in[1], &be, vcrit) ||
	    !junction_dev(ar, &d[k++], part, npn ? in[1] : in[0], npn ? in[0] : in[1], &bc, vcrit))
		return 0;
	/* the recombination currents ISE (NE) and ISC (NC): base current only */
	double ise = PARAM(m, 0, "ise") * area, isc = PARAM(m, 0, "isc") * area;
	struct simdev_diode leak = {.n = 1, .vj = 1, .bv = INFINITY, .ibv = 1e-3};
	if (ise > 0) {
		leak.is = ise, leak.n = PARAM(m, 1.5, "ne");
		leak.n = leak.n > 0 ? leak.n : 1.5;
		if (!junction_dev(ar, &d[k++], part, npn ? in[1] : in[2], npn ? in[2] : in[1], &leak,
				  leak.n * VT_27C * log(leak.n * VT_27C / (sqrt(2.0) * ise))))
			return 0;
	}
	if (isc > 0) {
		leak.is = isc, leak.n = PARAM(m, 2, "nc");
		leak.n = leak.n > 0 ? leak.n : 2;
		if (!junction_dev(ar, &d[k++], part, npn ? in[1] : in[0], npn ? in[0] : in[1], &leak,
				  leak.n * VT_27C * log(leak.n * VT_27C / (sqrt(2.0) * isc))))
			return 0;
	}
	t->je = je;
	t->jc = jc;
	struct simdev *q = &d[k];
	memset(q, 0, sizeof *q);
	q->kind = SD_Q;
	q->part = part;
	q->a = in[0], q->b = in[1], q->c = in[2];
	q->p = q->a;
	q->d = q->br = q->br2 = -1;
	q->bj = t;
	return 1;
}

int simbjt_need(struct simdev *d, struct simmat *m)
{
	const long row[2] = {d->a, d->c}, col[3] = {d->b, d->c, d->a};
	for (int k = 0; k < 8; k++)
		d->h[k] = -1;
	for (int r = 0; r < 2; r++)
		for (int c = 0; c < 3; c++)
			if ((d->h[r * 3 + c] = simmat_need(m, row[r], col[c])) == -2)
				return 0;
	return 1;
}

/* IS (exp(v / nvt) - 1) and its slope, with SPICE's cubic tail below
 * -3 nvt (as the diode's junction). */
static void exp_junction(double is, double nvt, double v, double *i, double *g)
{
	if (v >= -3 * nvt) {
		double e = exp(v / nvt);
		*i = is * (e - 1);
		*g = is * e / nvt;
	} else {
		double arg = 3 * nvt / (v * M_E);
		arg = arg * arg * arg;
		*i = -is * (1 + arg);
		*g = is * 3 * arg / v;
	}
}

/* Gummel-Poon base charge qb and its derivatives (ngspice's bjtload
 * form): q1 = 1 / (1 - vbc/VAF - vbe/VAR), q2 = IF/IKF + IR/IKR,
 * qb = q1 (1 + sqrt(1 + 4 q2)) / 2. */
static void base_charge(const struct simbjt *t, double vbe, double vbc, double cbe,
			double gbe, double cbc, double gbc, double *qb, double *dve,
			double *dvc)
{
	double q1 = 1 / (1 - t->ivaf * vbc - t->ivar * vbe);
	if (t->iikf == 0 && t->iikr == 0) {
		*qb = q1;
		*dve = q1 * q1 * t->ivar;
		*dvc = q1 * q1 * t->ivaf;
		return;
	}
	double q2 = t->iikf * cbe + t->iikr * cbc;
	double arg = fmax(0, 1 + 4 * q2), sq = arg != 0 ? sqrt(arg) : 1;
	*qb = q1 * (1 + sq) / 2;
	*dve = q1 * (*qb * t->ivar + t->iikf * gbe / sq);
	*dvc = q1 * (*qb * t->ivaf + t->iikr * gbc / sq);
}

void simbjt_stamp(struct simdev *d, struct simmat *m)
{
	const struct simbjt *t = d->bj;
	double vbe = t->je->vd, vbc = t->jc->vd; /* limited, polarity-corrected */
	double cbe, gbe, cbc, gbc, qb, dve, dvc;
	exp_junction(t->is, t->nvtf, vbe, &cbe, &gbe);
	exp_junction(t->is, t->nvtr, vbc, &cbc, &gbc);
	base_charge(t, vbe, vbc, cbe, gbe, cbc, gbc, &qb, &dve, &dvc);
	double ict = (cbe - cbc) / qb;
	double ge = (gbe - ict * dve) / qb;  /* d ict / d vbe */
	double gc = (-gbc - ict * dvc) / qb; /* d ict / d vbc */
	/* the current into the collector and out of the emitter, pol ict,
	   linearised in the node voltages (vbe = pol (vB - vE), pol^2 = 1) */
	double ieq = t->pol * (ict - ge * vbe - gc * vbc);
	const double g[3] = {ge + gc, -ge, -gc}; /* columns B, E, C */
	for (int c = 0; c < 3; c++) {
		simmat_add(m, d->h[c], g[c]);
		simmat_add(m, d->h[3 + c], -g[c]);
	}
	simmat_rhs(m, d->a, -ieq);
	simmat_rhs(m, d->c, ieq);
}
