/* simdev.c: see simdev.h. Stamps follow modified nodal analysis (Ho,
 * Ruehli and Brennan, IEEE Trans. Circuits Syst. 22(6), 1975): a current
 * leaving node k through a part adds to row k; a voltage-defined part has
 * a branch-current unknown and a row of its own. Charge-storing parts use
 * the companion model of their integration formula:
 *   i_n = a (q_n - q_{n-1}) - b i_{n-1}
 * (trapezoidal a = 2/h, b = 1; backward Euler a = 1/h, b = 0). The diode
 * is SPICE's level-1 junction (Nagel, "SPICE2", UCB/ERL M520, 1975, ch. 4;
 * from memory, checked against ngspice by tests/ngspice_sim.py). */
#include "simdev.h"

#include <math.h>
#include <string.h>

#include "simsrc.h"

static long need(struct simmat *m, long r, long c, int *ok)
{
	long h = simmat_need(m, r, c);
	if (h == -2)
		*ok = 0;
	return h;
}

/* The four positions of a two-terminal conductance between u and v. */
static void need_g(struct simdev *d, struct simmat *m, long u, long v, int k,
		   int *ok)
{
	d->h[k] = need(m, u, u, ok);
	d->h[k + 1] = need(m, v, v, ok);
	d->h[k + 2] = need(m, u, v, ok);
	d->h[k + 3] = need(m, v, u, ok);
}

/* The four positions tying branch unknown br to nodes u (+) and v (-). */
static void need_branch(struct simdev *d, struct simmat *m, long u, long v,
			long br, int k, int *ok)
{
	d->h[k] = need(m, u, br, ok);
	d->h[k + 1] = need(m, v, br, ok);
	d->h[k + 2] = need(m, br, u, ok);
	d->h[k + 3] = need(m, br, v, ok);
}

int simdev_need(struct simdev *d, struct simmat *m)
{
	int ok = 1;
	for (int k = 0; k < 8; k++)
		d->h[k] = -1;
	switch (d->kind) {
	case SD_R: case SD_C:
		need_g(d, m, d->a, d->b, 0, &ok);
		break;
	case SD_D:
		need_g(d, m, d->p, d->b, 0, &ok);
		if (d->p != d->a)
			need_g(d, m, d->a, d->p, 4, &ok);
		break;
	case SD_G:
		d->h[0] = need(m, d->a, d->c, &ok);
		d->h[1] = need(m, d->b, d->d, &ok);
		d->h[2] = need(m, d->a, d->d, &ok);
		d->h[3] = need(m, d->b, d->c, &ok);
		break;
	case SD_F:
		d->h[0] = need(m, d->a, d->br2, &ok);
		d->h[1] = need(m, d->b, d->br2, &ok);
		break;
	case SD_K:
		d->h[0] = need(m, d->br, d->br2, &ok);
		d->h[1] = need(m, d->br2, d->br, &ok);
		break;
	case SD_B:
		return simbehav_need(d->bh, m, d->a, d->b, d->br);
	case SD_V: case SD_L: case SD_E: case SD_H:
		need_branch(d, m, d->a, d->b, d->br, 0, &ok);
		d->h[4] = need(m, d->br, d->br, &ok);
		if (d->kind == SD_E) {
			d->h[5] = need(m, d->br, d->c, &ok);
			d->h[6] = need(m, d->br, d->d, &ok);
		} else if (d->kind == SD_H) {
			d->h[5] = need(m, d->br, d->br2, &ok);
		}
		break;
	default:
		break;
	}
	return ok;
}

static double at(const double *x, long k)
{
	return k < 0 ? 0 : x[k];
}

static void stamp_g(struct simmat *m, const long *h, double g)
{
	simmat_add(m, h[0], g);
	simmat_add(m, h[1], g);
	simmat_add(m, h[2], -g);
	simmat_add(m, h[3], -g);
}

/* A current ieq leaving u and entering v. */
static void stamp_i(struct simmat *m, long u, long v, double ieq)
{
	simmat_rhs(m, u, -ieq);
	simmat_rhs(m, v, ieq);
}

static void stamp_branch(struct simmat *m, const long *h)
{
	simmat_add(m, h[0], 1);
	simmat_add(m, h[1], -1);
	simmat_add(m, h[2], 1);
	simmat_add(m, h[3], -1);
}

static double source_at(const struct simdev *d, const struct simdev_step *st)
{
	if (!d->src)
		return 0;
	double v = simsrc_value(d->src, st->span, st->t_src);
	return d->dc_v + (v - d->mean) * d->ac_k;
}

/* ---- the diode ---- */

/* The knee xbv of the breakdown current -is exp(-(xbv + v) / nvt),
 * placed as ngspice places it: at bv itself when ibv is below is bv / vt
 * (the reverse current there; the knee is not moved), otherwise moved so
 * that the current at -bv, with the reverse region's linear term, is ibv
 * (a fixed-point iteration from the first estimate, to 1e-3 of ibv). */
static double breakdown_knee(const struct simdev_diode *m, double vt)
{
	if (m->ibv < m->is * m->bv / vt)
		return m->bv;
	double x = m->bv - m->nvt * log(1 + m->ibv / m->is);
	for (int k = 0; k < 25; k++) {
		double arg = m->ibv / m->is + 1 - x / vt;
		if (!(arg > 0))
			break;
		x = m->bv - m->nvt * log(arg);
		double got = m->is * (exp((m->bv - x) / m->nvt) - 1 + x / vt);
		if (fabs(got - m->ibv) <= 1e-3 * m->ibv)
			break;
	}
	return x;
}

void simdev_diode_init(struct simdev_diode *m)
{
	const double vt = 0.0258648; /* kT/q at 300.15 K (27 C, SPICE's TNOM) */
	m->nvt = m->n * vt;
	m->vcrit = m->nvt * log(m->nvt / (sqrt(2.0) * m->is));
	m->xbv = isfinite(m->bv) ? breakdown_knee(m, vt) : INFINITY;
}

/* SPICE's junction limiting: a step past vcrit is taken logarithmically. */
static double pnjlim(double vnew, double vold, double nvt, double vcrit, int *lim)
{
	if (vnew > vcrit && fabs(vnew - vold) > 2 * nvt) {
		*lim = 1;
		if (vold > 0) {
			double arg = 1 + (vnew - vold) / nvt;
			return arg > 0 ? vold + nvt * log(arg) : vcrit;
		}
		return nvt * log(vnew / nvt);
	}
	return vnew;
}

static double limit_junction(const struct simdev_diode *m, double vnew,
			     double vold, int *lim)
{
	if (isfinite(m->xbv) && vnew < -m->xbv + 10 * m->nvt) {
		/* mirrored around the breakdown knee */
		double v = pnjlim(-(vnew + m->xbv), -(vold + m->xbv), m->nvt, m->vcrit, lim);
		return -(v + m->xbv);
	}
	return pnjlim(vnew, vold, m->nvt, m->vcrit, lim);
}

/* Static current and its slope at junction voltage v. */
static void junction(const struct simdev_diode *m, double v, double *id, double *gd)
{
	if (v >= -3 * m->nvt) {
		double e = exp(v / m->nvt);
		*id = m->is * (e - 1);
		*gd = m->is * e / m->nvt;
	} else if (!isfinite(m->xbv) || v >= -m->xbv) {
		double arg = 3 * m->nvt / (v * M_E);
		arg = arg * arg * arg;
		*id = -m->is * (1 + arg);
		*gd = m->is * 3 * arg / v;
	} else {
		double e = exp(-(m->xbv + v) / m->nvt);
		*id = -m->is * e;
		*gd = m->is * e / m->nvt;
	}
}

/* Depletion charge and capacitance (with SPICE's linear extension past
 * fc*vj), plus the diffusion charge tt*id. */
static void junction_charge(const struct simdev_diode *m, double v, double id,
			    double gd, double *q, double *c)
{
	*q = m->tt * id;
	*c = m->tt * gd;
	if (m->cjo <= 0)
		return;
	double vj = m->vj, mm = m->m, fc = m->fc;
	if (v < fc * vj) {
		double s = 1 - v / vj;
		double sm = mm == 0.5 ? 1 / sqrt(s) : pow(s, -mm);
		*q += vj * m->cjo * (1 - s * sm) / (1 - mm);
		*c += m->cjo * sm;
	} else {
		double f1 = vj * (1 - pow(1 - fc, 1 - mm)) / (1 - mm);
		double f2 = pow(1 - fc, 1 + mm), f3 = 1 - fc * (1 + mm);
		double w = v - fc * vj;
		*q += m->cjo * (f1 + (f3 * w + mm / (2 * vj) * (v * v - fc * vj * fc * vj)) / f2);
		*c += m->cjo / f2 * (f3 + mm * v / vj);
	}
}

static void stamp_diode(struct simdev *d, const struct simdev_step *st,
			struct simmat *m, const double *x, int *limited)
{
	const struct simdev_diode *dm = d->dm;
	double v = limit_junction(dm, at(x, d->p) - at(x, d->b), d->vd, limited);
	d->vd = v;
	double id, gd, q, c;
	junction(dm, v, &id, &gd);
	junction_charge(dm, v, id, gd, &q, &c);
	double ic = st->a * (q - d->q0) - st->b * d->f0;
	d->q = q; /* the charge and its current where the last stamp was made */
	d->cj = c;
	d->f = ic;
	double g = gd + st->gmin + st->a * c;
	double i = id + st->gmin * v + ic;
	d->lin_g = g;
	d->lin_i = i - g * v;
	stamp_g(m, d->h, g);
	stamp_i(m, d->p, d->b, i - g * v);
	if (d->p != d->a)
		stamp_g(m, d->h + 4, 1 / dm->rs);
}

/* ---- the rest ---- */

void simdev_blank(struct simdev *d, uint8_t kind, uint32_t part, long a, long b)
{
	memset(d, 0, sizeof *d);
	d->kind = kind;
	d->part = part;
	d->a = d->p = a;
	d->b = b;
	d->c = d->d = d->br = d->br2 = -1;
}

static void stamp_linear(struct simdev *d, const struct simdev_step *st,
			 struct simmat *m)
{
	switch (d->kind) {
	case SD_R:
		stamp_g(m, d->h, d->val);
		break;
	case SD_C: {
		double g = st->a * d->val;
		stamp_g(m, d->h, g);
		stamp_i(m, d->a, d->b, -st->a * d->q0 - st->b * d->f0);
		break;
	}
	case SD_L:
		stamp_branch(m, d->h);
		if (d->coupled) {
			/* v = dphi/dt by BDF2 (or backward Euler): the trapezoidal
			   rule rings on the leakage mode of a tight coupling */
			double ga = st->gear ? st->ga : 1 / (st->t - d->th[0]);
			simmat_add(m, d->h[4], -ga * d->val);
			simmat_rhs(m, d->br, st->gear ? st->g1 * d->q0 + st->g2 * d->qh[1] : -ga * d->q0);
			break;
		}
		simmat_add(m, d->h[4], -st->a * d->val);
		simmat_rhs(m, d->br, -st->a * d->q0 - st->b * d->f0);
		break;
	case SD_K: { /* the mutual flux's history is in each inductor's q0 */
		double ga = !d->coupled ? st->a : st->gear ? st->ga : 1 / (st->t - d->th[0]);
		simmat_add(m, d->h[0], -ga * d->val);
		simmat_add(m, d->h[1], -ga * d->val);
		break;
	}
	case SD_V:
		stamp_branch(m, d->h);
		simmat_rhs(m, d->br, source_at(d, st));
		break;
	case SD_I:
		stamp_i(m, d->a, d->b, source_at(d, st));
		break;
	default:
		break;
	}
}

static void stamp_controlled(struct simdev *d, struct simmat *m)
{
	switch (d->kind) {
	case SD_E:
		stamp_branch(m, d->h);
		simmat_add(m, d->h[5], -d->val);
		simmat_add(m, d->h[6], d->val);
		break;
	case SD_H:
		stamp_branch(m, d->h);
		simmat_add(m, d->h[5], -d->val);
		break;
	case SD_G:
		simmat_add(m, d->h[0], d->val);
		simmat_add(m, d->h[1], d->val);
		simmat_add(m, d->h[2], -d->val);
		simmat_add(m, d->h[3], -d->val);
		break;
	case SD_F:
		simmat_add(m, d->h[0], d->val);
		simmat_add(m, d->h[1], -d->val);
		break;
	default:
		break;
	}
}

void simdev_stamp(struct simdev *d, const struct simdev_step *st,
		  struct simmat *m, const double *x, int *limited)
{
	if (d->kind == SD_D)
		stamp_diode(d, st, m, x, limited);
	else if (d->kind == SD_B)
		simbehav_stamp(d->bh, m, x, st->t_src, limited);
	else if (d->kind == SD_E || d->kind == SD_H || d->kind == SD_G || d->kind == SD_F)
		stamp_controlled(d, m);
	else
		stamp_linear(d, st, m);
}

/* A diode's dissipated power at x: its junction's static current times
 * the junction's voltage, plus the loss in RS. The charge terms are left
 * out: they store and give back, and at a recovery or in breakdown the
 * diffusion capacitance (TT times the slope) is so large that the
 * companion current's step-to-step error swamps the loss. */
double simdev_dissipation(const struct simdev *d, const double *x)
{
	if (d->kind != SD_D)
		return NAN;
	double v = at(x, d->p) - at(x, d->b), id, gd;
	junction(d->dm, v, &id, &gd);
	double p = id * v;
	if (d->p != d->a) {
		double vr = at(x, d->a) - at(x, d->p);
		p += vr * vr / d->dm->rs;
	}
	return p;
}

double simdev_junction_current(const struct simdev *d, const double *x)
{
	double id, gd;
	junction(d->dm, at(x, d->p) - at(x, d->b), &id, &gd);
	return id;
}

double simdev_current(const struct simdev *d, const double *x)
{
	switch (d->kind) {
	case SD_R:
		return d->val * (at(x, d->a) - at(x, d->b));
	case SD_C:
		return d->f;
	case SD_D: /* the junction's companion current at the solution (the
		      drop across a small RS would carry the Newton tolerance
		      divided by RS: 10 uA of noise at 1 uV over 0.1 ohm) */
		return d->lin_g * (at(x, d->p) - at(x, d->b)) + d->lin_i;
	case SD_L:
	case SD_V:
		return at(x, d->br);
	case SD_B:
		return d->br >= 0 ? at(x, d->br) : simbehav_value(d->bh);
	default:
		return NAN;
	}
}

void simdev_update(struct simdev *d, const struct simdev_step *st,
		   const double *x)
{
	double v = at(x, d->a) - at(x, d->b);
	switch (d->kind) {
	case SD_C:
		d->q = d->val * v;
		d->f = st->a * (d->q - d->q0) - st->b * d->f0;
		break;
	case SD_L:
		d->q = d->val * at(x, d->br);
		d->f = v;
		break;
	case SD_K:
		d->q = at(x, d->br);
		d->f = at(x, d->br2);
		break;
	default: /* diodes: set by the last stamp, as SPICE keeps them */
		break;
	}
}
