/* simsw.c: see simsw.h. ngspice's SW model (the ngspice manual's switch
 * chapter: VT 0, VH 0, RON 1 ohm, ROFF 1/GMIN; from memory): the state
 * is decided on each Newton iterate against the state at the last
 * accepted time point, so that the hysteresis is that of time, not of
 * the iteration. The state lives in the device's charge slots (q: this
 * iterate, q0: the last accepted point), which the time loop keeps. */
#include "simsw.h"

#include <math.h>
#include <string.h>

#include "dmodel.h"
#include "simdev.h"

#define SW_GMIN 1e-12 /* S: ROFF's default is 1/GMIN (ngspice's GMIN) */

#define PARAM(m, dflt, ...) dmodel_param((m), (const char *const[]){__VA_ARGS__, NULL}, (dflt))

const char *simsw_refusal(const struct nl_part *p)
{
	if (!p->model || strcmp(p->model->type, "sw") != 0)
		return "the switch's model is not of type SW";
	if (p->npins != 4)
		return "a voltage-controlled switch needs four nodes";
	return NULL;
}

int simsw_fill(struct arena *ar, const struct nl_part *p, struct simdev *d)
{
	struct simsw *w = arena_zalloc(ar, sizeof *w);
	if (!w)
		return 0;
	const struct nl_model *m = p->model;
	double ron = PARAM(m, 1, "ron"), roff = PARAM(m, 1 / SW_GMIN, "roff");
	w->vt = PARAM(m, 0, "vt");
	w->vh = fabs(PARAM(m, 0, "vh"));
	w->gon = 1 / (ron > 0 ? ron : 1);
	w->goff = 1 / (roff > 0 ? roff : 1 / SW_GMIN);
	d->sw = w;
	d->q = d->q0 = 0;
	return 1;
}

int simsw_need(struct simdev *d, struct simmat *m)
{
	const long u[2] = {d->a, d->b};
	for (int k = 0; k < 8; k++)
		d->h[k] = -1;
	for (int r = 0; r < 2; r++)
		for (int c = 0; c < 2; c++)
			if ((d->h[r * 2 + c] = simmat_need(m, u[r], u[c])) == -2)
				return 0;
	return 1;
}

static double at(const double *x, long k)
{
	return k < 0 ? 0 : x[k];
}

void simsw_stamp(struct simdev *d, struct simmat *m, const double *x, int hold, int *limited,
		 unsigned *flips)
{
	const struct simsw *w = d->sw;
	double v = at(x, d->c) - at(x, d->d);
	double on = hold ? d->q : v > w->vt + w->vh ? 1 : v < w->vt - w->vh ? 0 : d->q0;
	if (on != d->q) {
		*limited = 1;
		++*flips;
	}
	d->q = on;
	double g = on != 0 ? w->gon : w->goff;
	simmat_add(m, d->h[0], g);
	simmat_add(m, d->h[3], g);
	simmat_add(m, d->h[1], -g);
	simmat_add(m, d->h[2], -g);
}

double simsw_crossing(const struct simdev *d, const double *xprev, const double *x)
{
	const struct simsw *w = d->sw;
	if (d->q == d->q0)
		return 1;
	double v0 = at(xprev, d->c) - at(xprev, d->d), v1 = at(x, d->c) - at(x, d->d);
	double thr = d->q != 0 ? w->vt + w->vh : w->vt - w->vh;
	if (!(fabs(v1 - v0) > 0))
		return 1;
	double f = (thr - v0) / (v1 - v0);
	return f > 0 && f < 1 ? f : 1;
}
