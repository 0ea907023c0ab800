/* thermal.c: the circuit at its temperature (thermal.h). The diode's
 * equations are those of ngspice's junction diode (its manual's diode
 * temperature section; read in diotemp.c): the saturation current
 * through EG and XTI, the junction potential and capacitance through the
 * silicon band gap's temperature law (TLEVC 0) or CTA and TPB (TLEVC 1),
 * the breakdown voltage through TCV (TLEV 0: BV - TCV dT, else
 * BV (1 - TCV dT)), RS and TT through their two coefficients. */
#include "thermal.h"

#include <math.h>
#include <stdio.h>
#include <string.h>

#include "arena.h"
#include "dmodel.h"

#define KELVIN 273.15
#define T_REF 300.15                            /* K: 27 degC */
#define K_OVER_Q (1.380649e-23 / 1.602176634e-19) /* V/K */
#define CACHE 32                                /* models moved, remembered */

static double param(const struct nl_model *m, const char *a, const char *b, double dflt)
{
	const char *const names[] = {a, b, NULL};
	return dmodel_param(m, names, dflt);
}

/* -2 vt (1.5 ln(T / T_ref) - Eg(T) / 2 vt + Eg(T_ref) / 2 vt_ref): the
 * junction potential's shift with temperature, Eg(T) the band gap of
 * silicon, 1.16 - 7.02e-4 T^2 / (T + 1108) eV. */
static double pb_shift(double t)
{
	double vt = K_OVER_Q * t, eg = 1.16 - 7.02e-4 * t * t / (t + 1108);
	return -2 * vt * (1.5 * log(t / T_REF) - eg / (2 * vt) + 1.1150877 / (2 * K_OVER_Q * T_REF));
}

/* VJ and CJO at t, from their values at tnom (TLEVC 0). */
static void junction(double vj, double cjo, double grading, double t, double tnom,
		     double *vj_t, double *cj_t)
{
	double pbo = (vj - pb_shift(tnom)) / (tnom / T_REF);
	double cj = cjo / (1 + grading * (400e-6 * (tnom - T_REF) - (vj - pbo) / pbo));
	*vj_t = pb_shift(t) + t / T_REF * pbo;
	*cj_t = cj * (1 + grading * (400e-6 * (t - T_REF) - (*vj_t - pbo) / pbo));
}

struct moved {
	const char *names[4]; /* the main name first, then its aliases */
	double v;
	int keep;             /* written into the copy */
};

static int is_moved(const struct moved *mv, size_t n, const char *key)
{
	for (size_t i = 0; i < n; i++)
		for (int k = 0; mv[i].names[k]; k++)
			if (strcmp(mv[i].names[k], key) == 0)
				return 1;
	return 0;
}

/* m with the values of mv in place of what it gives under their names. */
static const struct nl_model *copy_moved(struct arena *ar, const struct nl_model *m,
					 const struct moved *mv, size_t n)
{
	struct nl_model *c = arena_zalloc(ar, sizeof *c);
	uint32_t cap = m->nparams + (uint32_t)n;
	const char **keys = c ? arena_zalloc(ar, cap * sizeof *keys) : NULL;
	double *values = keys ? arena_zalloc(ar, cap * sizeof *values) : NULL;
	if (!values)
		return NULL;
	*c = *m;
	uint32_t k = 0;
	for (uint32_t i = 0; i < m->nparams; i++)
		if (!is_moved(mv, n, m->keys[i])) {
			keys[k] = m->keys[i];
			values[k++] = m->values[i];
		}
	for (size_t i = 0; i < n; i++)
		if (mv[i].keep) {
			keys[k] = mv[i].names[0];
			values[k++] = mv[i].v;
		}
	c->keys = keys;
	c->values = values;
	c->nparams = k;
	return c;
}

const struct nl_model *thermal_diode(struct arena *ar, const struct nl_model *m, double t_k,
				     double tnom_k)
{
	if (!m || !(fabs(t_k - tnom_k) > 1e-9) || !(t_k > 0) || !(tnom_k > 0))
		return m;
	double n = dmodel_value(m, DM_N), dt = t_k - tnom_k, r = t_k / tnom_k;
	double eg = param(m, "eg", NULL, 1.11), xti = param(m, "xti", NULL, 3);
	double is = dmodel_value(m, DM_IS) * exp((r - 1) * eg / (n * K_OVER_Q * t_k) + xti / n * log(r));
	double vj = dmodel_value(m, DM_VJ), cjo = dmodel_value(m, DM_CJO), vj_t, cj_t;
	if (param(m, "tlevc", NULL, 0) == 1) {
		vj_t = vj - param(m, "tpb", "tvj", 0) * (t_k - T_REF);
		cj_t = cjo * (1 + param(m, "cta", "ctc", 0) * (t_k - T_REF));
	} else {
		junction(vj, cjo, dmodel_value(m, DM_M), t_k, tnom_k, &vj_t, &cj_t);
	}
	double fc = dmodel_value(m, DM_FC);
	if (fc > 0 && fc * vj_t > 1)
		vj_t = 1 / fc;
	double bv = dmodel_given(m, DM_BV), tcv = param(m, "tcv", NULL, 0);
	bv = param(m, "tlev", NULL, 0) == 0 ? bv - tcv * dt : bv * (1 - tcv * dt);
	double rs = dmodel_value(m, DM_RS) *
		    (1 + param(m, "trs", "trs1", 0) * dt + param(m, "trs2", NULL, 0) * dt * dt);
	double tt = dmodel_value(m, DM_TT) *
		    (1 + param(m, "ttt1", NULL, 0) * dt + param(m, "ttt2", NULL, 0) * dt * dt);
	struct moved mv[] = {
		{{"is", "js", NULL}, is, 1},
		{{"n", NULL}, n * t_k / T_REF, 1},
		{{"vj", "pb", NULL}, vj_t, 1},
		{{"cjo", "cj0", "cj", NULL}, cj_t, 1},
		{{"bv", NULL}, bv, isfinite(bv)},
		{{"rs", NULL}, rs, 1},
		{{"tt", NULL}, tt, 1},
	};
	return copy_moved(ar, m, mv, sizeof mv / sizeof mv[0]);
}

struct cache {
	const struct nl_model *from[CACHE], *to[CACHE];
	double t[CACHE];
	size_t n;
};

static const struct nl_model *moved_model(struct arena *ar, struct cache *k,
					  const struct nl_model *m, double t_k, double tnom_k)
{
	for (size_t i = 0; i < k->n; i++)
		if (k->from[i] == m && k->t[i] == t_k)
			return k->to[i];
	const struct nl_model *to = thermal_diode(ar, m, t_k, tnom_k);
	if (to && k->n < CACHE) {
		k->from[k->n] = m;
		k->to[k->n] = to;
		k->t[k->n++] = t_k;
	}
	return to;
}

/* The part's temperature (degC): its temp=, else the circuit's plus its
 * dtemp=. */
static double part_temp(const struct nl_part *p, double circuit)
{
	const struct nl_extra *x = p->ext;
	if (x && isfinite(x->temp))
		return x->temp;
	return circuit + (x && isfinite(x->dtemp) ? x->dtemp : 0);
}

struct tally {
	size_t diodes, others;
	const struct nl_part *diode, *other;
	double other_t;
	double tmin, tmax; /* the moved diodes' temperatures */
};

static int move_part(struct nl_circuit *c, struct nl_part *p, double temp, double tnom,
		     struct cache *k, struct tally *n)
{
	double t = part_temp(p, temp), dt = t - tnom;
	const struct nl_extra *x = p->ext;
	if (p->kind == NL_D && p->model) {
		double tn = param(p->model, "tnom", "tref", tnom);
		if (!(fabs(t - tn) > 1e-9))
			return 1;
		const struct nl_model *m = moved_model(nl_arena(c), k, p->model, t + KELVIN, tn + KELVIN);
		if (!m)
			return 0;
		p->model = m;
		n->tmin = n->diodes ? fmin(n->tmin, t) : t;
		n->tmax = n->diodes ? fmax(n->tmax, t) : t;
		n->diode = n->diodes++ ? n->diode : p;
	} else if ((p->kind == NL_R || p->kind == NL_C) && x && (isfinite(x->tc1) || isfinite(x->tc2))) {
		double a = isfinite(x->tc1) ? x->tc1 : 0, b = isfinite(x->tc2) ? x->tc2 : 0;
		p->value *= 1 + a * dt + b * dt * dt;
	} else if (strchr("qmjz", p->letter) && p->kind == NL_OPAQUE && fabs(dt) > 1e-9) {
		if (!n->others++) {
			n->other = p;
			n->other_t = t;
		}
	}
	return 1;
}

int thermal_apply(struct nl_circuit *c, const struct thermal_deck *t, struct diag_sink *d)
{
	double tnom = isfinite(t->tnom) ? t->tnom : 27;
	double temp = isfinite(t->temp) ? t->temp : tnom;
	struct cache k = {.n = 0};
	struct tally n = {0};
	for (size_t i = 0; i < nl_part_count(c); i++)
		if (!move_part(c, nl_part_mut(c, i), temp, tnom, &k, &n))
			return 0;
	if (n.diodes) {
		const struct nl_extra *x = n.diode->ext;
		struct diag_loc at = isfinite(t->temp) && !(x && isfinite(x->temp))
					     ? t->at : nl_part_loc(n.diode);
		char when[80];
		if (n.tmax - n.tmin > 1e-9)
			snprintf(when, sizeof when, "%g to %g degC", n.tmin, n.tmax);
		else
			snprintf(when, sizeof when, "%g degC", n.tmin);
		diag_add(d, DIAG_NOTE, "temperature", at,
			 "%zu diode%s taken at %s, %s at %g degC: saturation current, "
			 "emission voltage, breakdown (TCV), RS, TT and junction capacitance moved "
			 "by SPICE's temperature equations",
			 n.diodes, n.diodes == 1 ? "" : "s", when,
			 n.diodes == 1 ? "its model measured" : "their models measured",
			 param(n.diode->model, "tnom", "tref", tnom));
	}
	if (n.others) {
		char who[160];
		if (n.others == 1)
			snprintf(who, sizeof who, "%s is", n.other->path);
		else
			snprintf(who, sizeof who, "%s and %zu others are", n.other->path, n.others - 1);
		diag_add(d, DIAG_WARNING, "temperature", nl_part_loc(n.other),
			 "the solver keeps transistor models at their measurement temperature "
			 "(%g degC): %s simulated at %g degC, not at %g degC",
			 tnom, who, tnom, n.other_t);
	}
	return 1;
}
