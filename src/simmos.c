/* simmos.c: see simmos.h. SPICE's level-1 MOSFET (Shichman and Hodges,
 * IEEE J. Solid-State Circuits 3(3), 1968) as ngspice's mos1 device
 * computes it at its nominal temperature: names, defaults and equations
 * from the ngspice manual's MOSFET chapter (from memory, checked against
 * ngspice by tests/ngspice_sim.py). Left out: the Meyer gate charges,
 * the junction capacitances from CJ/CJSW with AD/AS/PD/PS, and VTO,
 * GAMMA or PHI from process parameters (NSUB, NSS); only KP follows from
 * UO and TOX when it is not given. */
#include "simmos.h"

#include <math.h>
#include <string.h>

#include "dmodel.h"
#include "simdev.h"

#define VT_27C 0.0258648    /* kT/q at 300.15 K (V), as the diode's */
#define EPS_OX 3.45314e-11  /* F/m: 3.9 times the vacuum permittivity */
#define MOS_DEFAULT_WL 1e-4 /* m: W and L when the card gives none (ngspice's
			       DEFW, DEFL; from memory) */

#define PARAM(m, dflt, ...) dmodel_param((m), (const char *const[]){__VA_ARGS__, NULL}, (dflt))

const char *simmos_refusal(const struct nl_part *p)
{
	const struct nl_model *m = p->model;
	if (m && strcmp(m->type, "vdmos") == 0)
		return "a VDMOS power MOSFET model is not simulated";
	if (!m || (strcmp(m->type, "nmos") != 0 && strcmp(m->type, "pmos") != 0))
		return "the MOSFET's model is not of type NMOS or PMOS";
	double level = PARAM(m, 1, "level");
	if (level != 1 && level != 2 && level != 3)
		return "only MOSFETs of levels 1 to 3 are simulated, not higher levels "
		       "(BSIM and others)";
	if (p->npins < 4)
		return "a MOSFET needs four nodes (drain, gate, source, bulk)";
	return NULL;
}

const char *simmos_approx(const struct nl_part *p)
{
	double level = p->model ? PARAM(p->model, 1, "level") : 1;
	if (strcmp(p->model ? p->model->type : "", "vdmos") == 0 || level == 1)
		return NULL;
	return "run with the level-1 square law and its mobility falling with THETA; the "
	       "short-channel terms of levels 2 and 3 (VMAX, KAPPA, ETA, NFS) are left out";
}

static double positive(double v)
{
	return v > 0 && isfinite(v) ? v : 0;
}

void simmos_size(const struct nl_part *p, size_t *ndev, size_t *nint)
{
	const struct nl_model *m = p->model;
	*nint = (size_t)(positive(PARAM(m, 0, "rd")) > 0) + (size_t)(positive(PARAM(m, 0, "rs")) > 0);
	*ndev = *nint + 3 + (size_t)(positive(PARAM(m, 0, "cgso")) > 0) +
		(size_t)(positive(PARAM(m, 0, "cgdo")) > 0) +
		(size_t)(positive(PARAM(m, 0, "cgbo")) > 0);
}

/* A bulk junction from anode a to cathode k: IS, CBD or CBS at PB, MJ. */
static int bulk_diode(struct arena *ar, struct simdev *d, uint32_t part, long a, long k,
		      const struct nl_model *m, double cj, double mult)
{
	simdev_blank(d, SD_D, part, a, k);
	struct simdev_diode *dm = arena_zalloc(ar, sizeof *dm);
	if (!dm)
		return 0;
	dm->is = PARAM(m, 1e-14, "is") * mult;
	dm->is = dm->is > 0 ? dm->is : 1e-14 * mult;
	dm->n = 1;
	dm->cjo = positive(cj) * mult;
	dm->vj = PARAM(m, 0.8, "pb");
	dm->vj = dm->vj > 0 ? dm->vj : 0.8;
	dm->m = PARAM(m, 0.5, "mj");
	dm->m = dm->m >= 0 && dm->m <= 0.9 ? dm->m : 0.5;
	dm->fc = PARAM(m, 0.5, "fc");
	dm->fc = dm->fc >= 0 && dm->fc <= 0.95 ? dm->fc : 0.5;
	dm->bv = INFINITY;
	dm->ibv = 1e-3;
	dm->nvt = VT_27C;
	dm->vcrit = VT_27C * log(VT_27C / (sqrt(2.0) * dm->is));
	dm->xbv = INFINITY;
	d->dm = dm;
	return 1;
}

/* The channel: beta = KP W / (L - 2 LD) times m (KP from UO and TOX when
 * only they are given). */
static struct simmos *channel(struct arena *ar, const struct nl_part *p, double mult)
{
	const struct nl_model *m = p->model;
	struct simmos *t = arena_zalloc(ar, sizeof *t);
	if (!t)
		return NULL;
	double w = p->ext && p->ext->w > 0 ? p->ext->w : MOS_DEFAULT_WL;
	double l = p->ext && p->ext->l > 0 ? p->ext->l : MOS_DEFAULT_WL;
	double leff = l - 2 * positive(PARAM(m, 0, "ld"));
	double tox = positive(PARAM(m, 0, "tox"));
	double kp = PARAM(m, tox > 0 ? PARAM(m, 600, "uo", "u0") * 1e-4 * EPS_OX / tox : 2e-5, "kp");
	t->type = strcmp(m->type, "pmos") == 0 ? -1 : 1;
	t->vto = t->type * PARAM(m, 0, "vto", "vt0");
	t->beta = positive(kp) * w / (leff > 0 ? leff : l) * mult;
	t->lambda = positive(PARAM(m, 0, "lambda"));
	t->gamma = positive(PARAM(m, 0, "gamma"));
	t->phi = PARAM(m, 0.6, "phi");
	t->phi = t->phi > 0 ? t->phi : 0.6;
	if (PARAM(m, 1, "level") == 3) { /* beta / (1 + THETA (vgs - vth)) */
		t->theta = positive(PARAM(m, 0, "theta"));
		t->theta_on_vgst = 1;
	}
	return t;
}

int simmos_fill(struct arena *ar, const struct nl_part *p, uint32_t part,
		const long dgsb[4], double mult, struct simdev *d, long *next)
{
	const struct nl_model *m = p->model;
	double rd = positive(PARAM(m, 0, "rd")), rs = positive(PARAM(m, 0, "rs"));
	size_t k = 0;
	long dp = rd > 0 ? (*next)++ : dgsb[0], sp = rs > 0 ? (*next)++ : dgsb[2];
	long g = dgsb[1], b = dgsb[3];
	if (rd > 0) {
		simdev_blank(&d[k], SD_R, part, dgsb[0], dp);
		d[k++].val = mult / rd;
	}
	if (rs > 0) {
		simdev_blank(&d[k], SD_R, part, dgsb[2], sp);
		d[k++].val = mult / rs;
	}
	struct simmos *t = channel(ar, p, mult);
	if (!t)
		return 0;
	int n = t->type > 0;
	t->jbs = &d[k];
	if (!bulk_diode(ar, &d[k++], part, n ? b : sp, n ? sp : b, m, PARAM(m, 0, "cbs"), mult) ||
	    !bulk_diode(ar, &d[k++], part, n ? b : dp, n ? dp : b, m, PARAM(m, 0, "cbd"), mult))
		return 0;
	double w = p->ext && p->ext->w > 0 ? p->ext->w : MOS_DEFAULT_WL;
	double l = p->ext && p->ext->l > 0 ? p->ext->l : MOS_DEFAULT_WL;
	const double cap[3] = {positive(PARAM(m, 0, "cgso")) * w, positive(PARAM(m, 0, "cgdo")) * w,
			       positive(PARAM(m, 0, "cgbo")) * l};
	const long to[3] = {sp, dp, b};
	for (int j = 0; j < 3; j++)
		if (cap[j] > 0) {
			simdev_blank(&d[k], SD_C, part, g, to[j]);
			d[k++].val = cap[j] * mult;
		}
	simdev_blank(&d[k], SD_M, part, dp, sp);
	d[k].c = g;
	d[k].d = b;
	t->vgs = 0;
	t->vds = 0;
	d[k].mos = t;
	return 1;
}

int simmos_need(struct simdev *d, struct simmat *m)
{
	const long row[2] = {d->a, d->b}, col[4] = {d->c, d->a, d->b, d->d};
	for (int k = 0; k < 8; k++)
		d->h[k] = -1;
	for (int r = 0; r < 2; r++)
		for (int c = 0; c < 4; c++)
			if ((d->h[r * 4 + c] = simmat_need(m, row[r], col[c])) == -2)
				return 0;
	return 1;
}

/* SPICE's step limits for a gate voltage near the threshold vto
 * (ngspice's DEVfetlim; from memory). */
static double fetlim(double vnew, double vold, double vto)
{
	double hi = fabs(2 * (vold - vto)) + 2, lo = fabs(vold - vto) + 1;
	double vtox = vto + 3.5, dv = vnew - vold;
	if (vold >= vto) {
		if (vold >= vtox) {
			if (dv <= 0)
				return vnew >= vtox ? (-dv > lo ? vold - lo : vnew) : fmax(vnew, vto + 2);
			return dv >= hi ? vold + hi : vnew;
		}
		return dv <= 0 ? fmax(vnew, vto - 0.5) : fmin(vnew, vto + 4);
	}
	if (dv <= 0)
		return -dv > hi ? vold - hi : vnew;
	if (vnew <= vto + 0.5)
		return dv > lo ? vold + lo : vnew;
	return vto + 0.5;
}

/* ... and for the drain voltage (ngspice's DEVlimvds; from memory). */
static double limvds(double vnew, double vold)
{
	if (vold >= 3.5)
		return vnew > vold ? fmin(vnew, 3 * vold + 2) : vnew < 3.5 ? fmax(vnew, 2)
									   : vnew;
	return vnew > vold ? fmin(vnew, 4) : fmax(vnew, -0.5);
}

/* The channel current cdrain from drain to source at (vgs, vds >= 0,
 * vbs) and its slopes gm, gds, gmb: the Shichman-Hodges equations with
 * the body effect vth = VTO + GAMMA (sqrt(PHI - vbs) - sqrt(PHI)). */
static double drain(const struct simmos *t, double vgs, double vds, double vbs, double *von,
		    double g[3])
{
	double sarg, sphi = sqrt(t->phi);
	if (vbs <= 0)
		sarg = sqrt(t->phi - vbs);
	else
		sarg = fmax(0, sphi - vbs / (2 * sphi));
	*von = t->vto + t->gamma * (sarg - sphi);
	double arg = sarg > 0 ? t->gamma / (2 * sarg) : 0;
	double vgst = vgs - *von, dvgst = 1, beta = t->beta, dbeta = 0;
	g[0] = g[1] = g[2] = 0;
	if (t->ksub > 0) { /* VDMOS: ksub ln(1 + e^{vgst/ksub}) in place of vgst */
		double z = vgst / t->ksub;
		vgst = z > 40 ? vgst : t->ksub * log1p(exp(z));
		dvgst = z > 40 ? 1 : 1 / (1 + exp(-z));
	}
	if (vgst <= 0)
		return 0;
	double over = t->theta_on_vgst ? vgst : vgs;
	if (t->theta > 0 && over > 0) { /* VDMOS: beta / (1 + THETA vgs); level 3 on vgst */
		beta /= 1 + t->theta * over;
		dbeta = -beta * t->theta / (1 + t->theta * over);
	}
	double betap = beta * (1 + t->lambda * vds), id;
	if (vgst <= vds) { /* saturation */
		id = betap * vgst * vgst / 2;
		g[0] = betap * vgst;
		g[1] = t->lambda * beta * vgst * vgst / 2;
	} else { /* linear */
		id = betap * vds * (vgst - vds / 2);
		g[0] = betap * vds;
		g[1] = betap * (vgst - vds) + t->lambda * beta * vds * (vgst - vds / 2);
	}
	g[0] = g[0] * dvgst + (beta > 0 ? id / beta * dbeta : 0);
	g[2] = g[0] * arg;
	return id;
}

static double at(const double *x, long k)
{
	return k < 0 ? 0 : x[k];
}

void simmos_stamp(struct simdev *d, struct simmat *m, const double *x, int *limited)
{
	struct simmos *t = d->mos;
	double vg = at(x, d->c), vdr = at(x, d->a), vs = at(x, d->b);
	double vgs = t->type * (vg - vs), vds = t->type * (vdr - vs), vbs = t->jbs->vd;
	double von = t->vto, g3[3];
	if (t->vds >= 0) {
		double vgd = vgs - vds;
		vgs = fetlim(vgs, t->vgs, von);
		vds = limvds(vgs - vgd, t->vds);
	} else {
		double vgd = fetlim(vgs - vds, t->vgs - t->vds, von);
		vds = -limvds(-(vgs - vgd), -t->vds);
		vgs = vgd + vds;
	}
	double vgs0 = t->type * (vg - vs), vds0 = t->type * (vdr - vs);
	if (fabs(vgs - vgs0) > 1e-9 * (1 + fabs(vgs0)) || fabs(vds - vds0) > 1e-9 * (1 + fabs(vds0)))
		*limited = 1;
	t->vgs = vgs, t->vds = vds;
	/* current into the drain F and its slopes on the gate, drain, source
	   and bulk voltages; sum = the slopes times the device's own voltages */
	double f, gk[4], sum;
	if (vds >= 0) {
		double id = drain(t, vgs, vds, vbs, &von, g3);
		f = t->type * id;
		gk[0] = g3[0], gk[1] = g3[1], gk[3] = g3[2];
		gk[2] = -(g3[0] + g3[1] + g3[2]);
		sum = t->type * (g3[0] * vgs + g3[1] * vds + g3[2] * vbs);
	} else { /* source and drain change roles */
		double vgd = vgs - vds, vbd = vbs - vds;
		double id = drain(t, vgd, -vds, vbd, &von, g3);
		f = -t->type * id;
		gk[0] = -g3[0], gk[2] = -g3[1], gk[3] = -g3[2];
		gk[1] = g3[0] + g3[1] + g3[2];
		sum = -t->type * (g3[0] * vgd - g3[1] * vds + g3[2] * vbd);
	}
	double ieq = f - sum;
	for (int c = 0; c < 4; c++) {
		simmat_add(m, d->h[c], gk[c]);
		simmat_add(m, d->h[4 + c], -gk[c]);
	}
	simmat_rhs(m, d->a, -ieq);
	simmat_rhs(m, d->b, ieq);
}
