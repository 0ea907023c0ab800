/* simvdmos.c: see simvdmos.h. Names, defaults and equations of ngspice's
 * VDMOS device at its nominal temperature (the ngspice manual's VDMOS
 * section, from memory; the channel equations checked against ngspice's
 * operating points by tests/test_sim.c and tests/ngspice_sim.py). The
 * simplification: ngspice's gate-drain capacitance moves between CGDMAX
 * and CGDMIN with the gate-drain voltage; here it is CGDMAX throughout
 * (the larger coupling). Left out and refused when given: thermal nodes,
 * quasi-saturation (RQ), MTRIODE, SUBSHIFT, NBV; temperature is not
 * simulated. */
#include "simvdmos.h"

#include <math.h>
#include <string.h>

#include "dmodel.h"
#include "simmos.h"

#define PARAM(m, dflt, ...) dmodel_param((m), (const char *const[]){__VA_ARGS__, NULL}, (dflt))

int simvdmos_is(const struct nl_part *p)
{
	return p->model && strcmp(p->model->type, "vdmos") == 0;
}

const char *simvdmos_refusal(const struct nl_part *p)
{
	const struct nl_model *m = p->model;
	if (p->npins != 3)
		return "a VDMOS with thermal nodes (tj, tcase) is not simulated";
	if (PARAM(m, 0, "rq") > 0)
		return "a VDMOS with quasi-saturation (RQ) is not simulated";
	if (PARAM(m, 1, "mtriode") != 1 || PARAM(m, 0, "subshift") != 0 || PARAM(m, 1, "nbv") != 1)
		return "a VDMOS with MTRIODE, SUBSHIFT or NBV away from their defaults is not "
		       "simulated";
	return NULL;
}

static double positive(double v)
{
	return v > 0 && isfinite(v) ? v : 0;
}

/* Terminal resistances RD, RG, RS (ohm). */
static void resistances(const struct nl_model *m, double r[3])
{
	r[0] = positive(PARAM(m, 0, "rd"));
	r[1] = positive(PARAM(m, 0, "rg"));
	r[2] = positive(PARAM(m, 0, "rs"));
}

void simvdmos_size(const struct nl_part *p, size_t *ndev, size_t *nint)
{
	const struct nl_model *m = p->model;
	double r[3];
	resistances(m, r);
	*nint = (size_t)(r[0] > 0) + (size_t)(r[1] > 0) + (size_t)(r[2] > 0) +
		(size_t)(positive(PARAM(m, 0, "rb")) > 0);
	*ndev = (size_t)(r[0] > 0) + (size_t)(r[1] > 0) + (size_t)(r[2] > 0) + 2 +
		(size_t)(positive(PARAM(m, 0, "rds")) > 0) +
		(size_t)(positive(PARAM(m, 0, "cgs")) > 0) +
		(size_t)(positive(PARAM(m, 0, "cgdmax", "cgdmin")) > 0);
}

/* The body diode from anode a to cathode k (IS, N, RB, CJO, VJ, M, FC,
 * TT, BV, IBV), its junction node internal when RB is given. */
static int body_diode(struct arena *ar, struct simdev *d, uint32_t part, long a, long k,
		      const struct nl_model *m, double mult, long *next)
{
	simdev_blank(d, SD_D, part, a, k);
	struct simdev_diode *dm = arena_zalloc(ar, sizeof *dm);
	if (!dm)
		return 0;
	dm->is = positive(PARAM(m, 1e-14, "is"));
	dm->is = (dm->is > 0 ? dm->is : 1e-14) * mult;
	dm->n = PARAM(m, 1, "n");
	dm->n = dm->n > 0 && isfinite(dm->n) ? dm->n : 1;
	dm->rs = positive(PARAM(m, 0, "rb")) / mult;
	dm->cjo = positive(PARAM(m, 0, "cjo", "cj0")) * mult;
	dm->vj = PARAM(m, 0.8, "vj");
	dm->vj = dm->vj > 0 && isfinite(dm->vj) ? dm->vj : 0.8;
	dm->m = PARAM(m, 0.5, "m");
	dm->m = dm->m >= 0 && dm->m <= 0.9 ? dm->m : 0.5;
	dm->fc = PARAM(m, 0.5, "fc");
	dm->fc = dm->fc >= 0 && dm->fc <= 0.95 ? dm->fc : 0.5;
	dm->tt = positive(PARAM(m, 0, "tt"));
	double bv = PARAM(m, INFINITY, "bv");
	dm->bv = bv > 0 ? bv : INFINITY;
	dm->ibv = positive(PARAM(m, 1e-10, "ibv"));
	dm->ibv = (dm->ibv > 0 ? dm->ibv : 1e-10) * mult;
	simdev_diode_init(dm);
	d->dm = dm;
	if (dm->rs > 0)
		d->p = (*next)++;
	return 1;
}

static struct simmos *channel(struct arena *ar, const struct nl_model *m, double mult, int pch)
{
	struct simmos *t = arena_zalloc(ar, sizeof *t);
	if (!t)
		return NULL;
	t->type = pch ? -1 : 1;
	t->vto = t->type * PARAM(m, 0, "vto", "vt0");
	t->beta = positive(PARAM(m, 1, "kp")) * mult;
	t->lambda = positive(PARAM(m, 0, "lambda"));
	t->ksub = positive(PARAM(m, 0.1, "ksubthres"));
	t->theta = positive(PARAM(m, 0, "theta"));
	t->phi = 0.6; /* unused: no body effect */
	return t;
}

int simvdmos_fill(struct arena *ar, const struct nl_part *p, uint32_t part, const long dgs[3],
		  double mult, struct simdev *d, long *next)
{
	const struct nl_model *m = p->model;
	double r[3];
	resistances(m, r);
	long in[3]; /* drain, gate, source inside their resistors */
	size_t k = 0;
	for (int j = 0; j < 3; j++) {
		in[j] = r[j] > 0 ? (*next)++ : dgs[j];
		if (r[j] > 0) {
			simdev_blank(&d[k], SD_R, part, dgs[j], in[j]);
			d[k++].val = mult / r[j];
		}
	}
	double rds = positive(PARAM(m, 0, "rds"));
	if (rds > 0) {
		simdev_blank(&d[k], SD_R, part, dgs[0], dgs[2]);
		d[k++].val = mult / rds;
	}
	int pch = PARAM(m, 0, "pchan") == 1;
	struct simmos *t = channel(ar, m, mult, pch);
	if (!t)
		return 0;
	t->jbs = &d[k]; /* read as vbs, which nothing uses without a body effect */
	if (!body_diode(ar, &d[k++], part, pch ? dgs[0] : dgs[2], pch ? dgs[2] : dgs[0], m, mult,
			next))
		return 0;
	const double cap[2] = {positive(PARAM(m, 0, "cgs")),
			       positive(PARAM(m, 0, "cgdmax", "cgdmin"))};
	const long to[2] = {in[2], in[0]};
	for (int j = 0; j < 2; j++)
		if (cap[j] > 0) {
			simdev_blank(&d[k], SD_C, part, in[1], to[j]);
			d[k++].val = cap[j] * mult;
		}
	simdev_blank(&d[k], SD_M, part, in[0], in[2]);
	d[k].c = in[1];
	d[k].d = in[2];
	d[k].mos = t;
	return 1;
}
