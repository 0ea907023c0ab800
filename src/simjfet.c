/* simjfet.c: see simjfet.h. SPICE's level-1 JFET (Shichman and Hodges,
 * IEEE J. Solid-State Circuits 3(3), 1968) as ngspice's jfet device
 * computes it at its nominal temperature: names and defaults from the
 * ngspice manual's JFET chapter (from memory, checked against ngspice by
 * tests/ngspice_sim.py). The channel is the level-1 MOSFET's with KP W/L
 * = 2 BETA and no body effect: BETA (Vgs-VTO)^2 (1 + LAMBDA Vds) in
 * saturation, BETA Vds (2 (Vgs-VTO) - Vds) (1 + LAMBDA Vds) below it.
 * Left out: the doping-tail parameter B (only its default 1, the plain
 * square law, is simulated; another value is refused), temperature
 * coefficients and noise. */
#include "simjfet.h"

#include <math.h>
#include <string.h>

#include "dmodel.h"
#include "simmos.h"

#define VT_27C 0.0258648 /* kT/q at 300.15 K (V), as the diode's */

#define PARAM(m, dflt, ...) dmodel_param((m), (const char *const[]){__VA_ARGS__, NULL}, (dflt))

const char *simjfet_refusal(const struct nl_part *p)
{
	const struct nl_model *m = p->model;
	if (!m || (strcmp(m->type, "njf") != 0 && strcmp(m->type, "pjf") != 0))
		return "the JFET's model is not of type NJF or PJF";
	if (PARAM(m, 1, "level") != 1)
		return "only level-1 (Shichman-Hodges) JFETs are simulated, not the "
		       "Parker-Skellern model (level 2)";
	if (PARAM(m, 1, "b") != 1)
		return "a JFET model with a doping-tail parameter B other than 1 is not simulated";
	if (p->npins < 3)
		return "a JFET needs three nodes (drain, gate, source)";
	return NULL;
}

static double positive(double v)
{
	return v > 0 && isfinite(v) ? v : 0;
}

static double area_of(const struct nl_part *p)
{
	return p->value > 0 && isfinite(p->value) ? p->value : 1;
}

void simjfet_size(const struct nl_part *p, size_t *ndev, size_t *nint)
{
	const struct nl_model *m = p->model;
	*nint = (size_t)(positive(PARAM(m, 0, "rd")) > 0) + (size_t)(positive(PARAM(m, 0, "rs")) > 0);
	*ndev = *nint + 3;
}

/* A gate junction from anode a to cathode k: IS and N, depletion
 * capacitance cj at PB with grading 0.5 (ngspice's fixed JFET grading),
 * FC; no transit time, no breakdown. */
static int gate_diode(struct arena *ar, struct simdev *d, uint32_t part, long a, long k,
		      const struct nl_model *m, double cj, double scale)
{
	simdev_blank(d, SD_D, part, a, k);
	struct simdev_diode *dm = arena_zalloc(ar, sizeof *dm);
	if (!dm)
		return 0;
	dm->is = positive(PARAM(m, 1e-14, "is")) * scale;
	dm->is = dm->is > 0 ? dm->is : 1e-14 * scale;
	dm->n = PARAM(m, 1, "n");
	dm->n = dm->n > 0 && isfinite(dm->n) ? dm->n : 1;
	dm->cjo = positive(cj) * scale;
	dm->vj = PARAM(m, 1, "pb");
	dm->vj = dm->vj > 0 && isfinite(dm->vj) ? dm->vj : 1;
	dm->m = 0.5;
	dm->fc = PARAM(m, 0.5, "fc");
	dm->fc = dm->fc >= 0 && dm->fc <= 0.95 ? dm->fc : 0.5;
	dm->bv = INFINITY;
	dm->ibv = 1e-3;
	simdev_diode_init(dm);
	d->dm = dm;
	return 1;
}

/* The channel as a level-1 MOSFET's: the JFET's BETA is half the MOSFET's
 * beta, its VTO keeps its sign for both polarities (ngspice does not
 * mirror it for PJF: a depletion PJF has a negative VTO too). */
static struct simmos *channel(struct arena *ar, const struct nl_model *m, double scale)
{
	struct simmos *t = arena_zalloc(ar, sizeof *t);
	if (!t)
		return NULL;
	t->type = strcmp(m->type, "pjf") == 0 ? -1 : 1;
	t->vto = PARAM(m, -2, "vto", "vt0");
	t->beta = 2 * positive(PARAM(m, 1e-4, "beta")) * scale;
	t->lambda = positive(PARAM(m, 0, "lambda"));
	t->phi = 0.6; /* unused: no body effect (gamma 0) */
	return t;
}

int simjfet_fill(struct arena *ar, const struct nl_part *p, uint32_t part, const long dgs[3],
		 double mult, struct simdev *d, long *next)
{
	const struct nl_model *m = p->model;
	double scale = area_of(p) * mult;
	double rd = positive(PARAM(m, 0, "rd")), rs = positive(PARAM(m, 0, "rs"));
	size_t k = 0;
	long dp = rd > 0 ? (*next)++ : dgs[0], sp = rs > 0 ? (*next)++ : dgs[2], g = dgs[1];
	if (rd > 0) {
		simdev_blank(&d[k], SD_R, part, dgs[0], dp);
		d[k++].val = scale / rd;
	}
	if (rs > 0) {
		simdev_blank(&d[k], SD_R, part, dgs[2], sp);
		d[k++].val = scale / rs;
	}
	struct simmos *t = channel(ar, m, scale);
	if (!t)
		return 0;
	int n = t->type > 0;
	t->jbs = &d[k]; /* read as vbs, which nothing uses without a body effect */
	if (!gate_diode(ar, &d[k++], part, n ? g : sp, n ? sp : g, m, PARAM(m, 0, "cgs"), scale) ||
	    !gate_diode(ar, &d[k++], part, n ? g : dp, n ? dp : g, m, PARAM(m, 0, "cgd"), scale))
		return 0;
	simdev_blank(&d[k], SD_M, part, dp, sp);
	d[k].c = g;
	d[k].d = sp; /* the bulk column: its slope is zero */
	d[k].mos = t;
	return 1;
}
