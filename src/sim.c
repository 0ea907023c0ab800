/* sim.c: see sim.h. Setup (unknowns and devices from the flat circuit),
 * the Newton loop at one time point, the time loop with step control and
 * source corners, and the periodic steady-state search. */
#include "sim.h"

#include <math.h>
#include <stdio.h>
#include <string.h>
#include <strings.h>

#include "dmodel.h"
#include "simbjt.h"
#include "simjfet.h"
#include "simmos.h"
#include "simsw.h"
#include "simvdmos.h"
#include "simdev.h"
#include "simint.h"
#include "simmat.h"
#include "simsrc.h"

#define SIM_MAX_NEWTON 20 /* per time point, then the step is cut (SPICE: ITL4 = 10) */
#define SIM_RMIN 1e-3      /* ohm: the smallest resistance (SPICE's, from memory) */
#define SIM_TRTOL 7.0     /* SPICE's allowance over the raw error estimate */
#define SIM_CHGTOL 1e-14  /* C: charge below which the error is not judged */
#define SIM_RING_CUT 4  /* a node ringing at the step: the next step this much shorter, */
#define SIM_RING_CUTS 2 /* this many times, then damped (backward Euler) */
#define SIM_RING_QUIET 8 /* steps without ringing that start the count again */
#define SIM_TIE_G 1.0     /* S: a part with no path to ground, tied to it at one node */
#define SIM_RELAX_STEP 1e-3 /* of the largest: a step retried at the run's own tolerance */
#define SIM_SW_RESOLVE 1e-3 /* a switch's crossing found to this share of the largest step */
#define SIM_RING_FLOOR 1e-6 /* no cut below this share of the largest step: damped instead */
#define SIM_SNAP_FIRST 1e-6 /* of the largest: the backward-Euler steps after a snap, */
#define SIM_SNAP_BE 3        /* this many of them */
#define SIM_LCM_MAX 16      /* the longest common period taken, in longest source periods */


/* ---- setup ---- */

/* Parameters outside their physical range would divide by zero in the
 * junction equations: each is brought back to its SPICE default or limit. */
static void diode_sane(struct simdev_diode *d)
{
	if (!(d->is > 0))
		d->is = 1e-14;
	if (!(d->n > 0))
		d->n = 1;
	if (!(d->rs >= 0))
		d->rs = 0;
	if (!(d->cjo >= 0))
		d->cjo = 0;
	if (!(d->vj > 0))
		d->vj = 1;
	if (!(d->m >= 0 && d->m <= 0.9))
		d->m = d->m > 0.9 ? 0.9 : 0.5;
	if (!(d->fc >= 0 && d->fc <= 0.95))
		d->fc = d->fc > 0.95 ? 0.95 : 0.5;
	if (!(d->tt >= 0))
		d->tt = 0;
	if (!(d->ibv > 0))
		d->ibv = 1e-3;
}

static struct simdev_diode *diode_model(struct sim *s, const struct nl_part *p)
{
	struct simdev_diode *d = arena_zalloc(s->ar, sizeof *d);
	if (!d)
		return NULL;
	const struct nl_model *m = p->model;
	double area = p->value > 0 ? p->value : 1;
	d->is = dmodel_value(m, DM_IS) * area;
	d->n = dmodel_value(m, DM_N);
	d->rs = dmodel_value(m, DM_RS) / area;
	d->cjo = dmodel_value(m, DM_CJO) * area;
	d->vj = dmodel_value(m, DM_VJ);
	d->m = dmodel_value(m, DM_M);
	d->tt = dmodel_value(m, DM_TT);
	d->fc = dmodel_value(m, DM_FC);
	d->bv = dmodel_value(m, DM_BV);
	d->ibv = dmodel_value(m, DM_IBV) * area;
	if (d->bv <= 0)
		d->bv = INFINITY;
	if (s->o.ideal_diodes) {
		/* nearly ideal: a few mV forward at milliamps, no series
		   resistance, charge or recovery; breakdown kept */
		d->is = SIM_IDEAL_IS * area;
		d->n = SIM_IDEAL_N;
		d->rs = d->cjo = d->tt = 0;
	}
	diode_sane(d);
	simdev_diode_init(d);
	return d;
}

static long unknown_of(uint32_t node)
{
	return node == NL_GROUND ? -1 : (long)node - 1;
}

static int refuse(struct sim_refusal *ref, uint32_t part, const char *why)
{
	ref->part = part;
	snprintf(ref->why, sizeof ref->why, "%s", why);
	return 0;
}

/* A Q, M or J part: a transistor when its model is one the solver has. */
static int transistor_kind(const struct nl_part *p, uint32_t i, uint8_t *kind,
			   struct sim_refusal *ref)
{
	const char *why = p->letter == 'q'   ? simbjt_refusal(p)
			  : p->letter == 'j' ? simjfet_refusal(p)
			  : simvdmos_is(p)   ? simvdmos_refusal(p)
					     : simmos_refusal(p);
	if (why)
		return refuse(ref, i, why);
	*kind = p->letter == 'q' ? SD_Q : SD_M;
	return 1;
}

/* An S part: a voltage-controlled switch with an SW model. */
static int switch_kind(const struct nl_part *p, uint32_t i, uint8_t *kind,
		       struct sim_refusal *ref)
{
	const char *why = simsw_refusal(p);
	if (why)
		return refuse(ref, i, why);
	*kind = SD_S;
	return 1;
}


/* A K over several inductors (every pair coupled by its coefficient), or
 * a pair on a magnetic core model (CORE: taken as linear, core_al). */
static const char *coupling_refusal(const struct nl_part *p)
{
	if (p->model && strcmp(p->model->type, "core") != 0)
		return "a coupling through a magnetic model other than a core is not simulated";
	if (!p->ext->coupled_part)
		return "the coupled inductors are not all known";
	for (uint32_t k = 0; k < p->ext->ncoupled; k++)
		if (p->ext->coupled_part[k] == NL_NONE)
			return "the coupled inductors are not all known";
	return NULL;
}

static size_t coupling_pairs(const struct nl_part *p)
{
	size_t n = p->ext && p->ext->coupled_part ? p->ext->ncoupled : 2;
	return n * (n - 1) / 2;
}

#define MU0 1.25663706e-6 /* H/m */
#define CORE_PARAM(m, dflt, name) dmodel_param((m), (const char *const[]){name, NULL}, (dflt))

/* A core model's windings taken as linear: H per turn squared through
 * AREA (cm^2) and PATH (cm) with an air GAP (cm), the core's relative
 * permeability 1 + MS/(3 A), the slope at zero of the Jiles-Atherton
 * anhysteretic curve (Langevin's). Defaults AREA 0.1, PATH 1, GAP 0, MS
 * 1e6 A/m, A 1e3 A/m (the core model's, from memory). */
static double core_al(const struct nl_model *m)
{
	double area = CORE_PARAM(m, 0.1, "area") * 1e-4, path = CORE_PARAM(m, 1, "path") * 1e-2;
	double gap = fmax(CORE_PARAM(m, 0, "gap") * 1e-2, 0);
	double ms = CORE_PARAM(m, 1e6, "ms"), a = CORE_PARAM(m, 1e3, "a");
	double mur = 1 + (ms > 0 && a > 0 ? ms / (3 * a) : 0);
	if (!(area > 0) || !(path > 0))
		return 0;
	double rel = fmax(path - gap, 0) / (MU0 * mur * area) + gap / (MU0 * area);
	return rel > 0 ? 1 / rel : 0;
}

/* Each winding of a core model: its H per turn squared, for fill_device. */
static int core_windings(struct sim *s)
{
	size_t np = nl_part_count(s->c);
	for (size_t i = 0; i < np; i++) {
		const struct nl_part *p = nl_part_at(s->c, i);
		if (p->kind != NL_K || !p->model || !p->ext || !p->ext->coupled_part ||
		    (s->o.leave_out && s->o.leave_out[i]))
			continue;
		if (!s->turns_al && !(s->turns_al = arena_zalloc(s->ar, (np + 1) * sizeof(double))))
			return 0;
		for (uint32_t k = 0; k < p->ext->ncoupled; k++)
			if (p->ext->coupled_part[k] != NL_NONE)
				s->turns_al[p->ext->coupled_part[k]] = core_al(p->model);
	}
	return 1;
}

/* An inductor's value in henries (a core's windings are given in turns). */
static double henries(const struct sim *s, uint32_t i)
{
	double v = nl_part_at(s->c, i)->value;
	return s->turns_al && s->turns_al[i] > 0 ? v * v * s->turns_al[i] : v;
}
/* Which solver device a part becomes; 0 with *ref filled when none. */
static int device_kind(const struct nl_part *p, uint32_t i, uint8_t *kind,
		       struct sim_refusal *ref, int ideal)
{
	static const uint8_t map[] = {[NL_R] = SD_R, [NL_C] = SD_C, [NL_L] = SD_L,
				      [NL_K] = SD_K, [NL_D] = SD_D, [NL_V] = SD_V,
				      [NL_I] = SD_I, [NL_E] = SD_E, [NL_F] = SD_F,
				      [NL_G] = SD_G, [NL_H] = SD_H};
	if (p->ext && p->ext->behav) {
		*kind = SD_B;
		return 1;
	}
	if (p->ext && p->ext->behav_why)
		return refuse(ref, i, p->ext->behav_why);
	if (p->kind == NL_OPAQUE && (p->letter == 'q' || p->letter == 'm' || p->letter == 'j'))
		return transistor_kind(p, i, kind, ref);
	if (p->kind == NL_OPAQUE && p->letter == 's')
		return switch_kind(p, i, kind, ref);
	if (p->kind > NL_H || p->kind == NL_X_UNUSED)
		return refuse(ref, i, "the solver has no model for this kind of part");
	if (p->kind == NL_K && (p->ext->behavioural || p->model)) {
		const char *why = coupling_refusal(p);
		if (why)
			return refuse(ref, i, why);
		*kind = SD_K;
		return 1;
	}
	if (p->ext && p->ext->behavioural && p->kind <= NL_L)
		return refuse(ref, i, "a value that follows the circuit's state (time, a node "
				      "voltage or a current) is not simulated");
	if (p->ext && p->ext->behavioural)
		return refuse(ref, i, "behavioural sources (value=, poly, table) are not simulated");
	if (p->kind == NL_D && p->model && strcmp(p->model->type, "d") != 0 && !ideal)
		return refuse(ref, i, "the diode's model is not of type D");
	if (p->kind == NL_L && !(p->value != 0 && isfinite(p->value)))
		return refuse(ref, i, "an inductor with a zero or missing value");
	if (!isfinite(p->value) && (p->kind == NL_R || p->kind == NL_C))
		return refuse(ref, i, "a missing value");
	*kind = map[p->kind];
	return 1;
}

int sim_part_supported(const struct nl_circuit *c, size_t i, struct sim_refusal *ref)
{
	uint8_t k;
	return device_kind(nl_part_at(c, i), (uint32_t)i, &k, ref, 0);
}

int sim_part_supported_ideal(const struct nl_circuit *c, size_t i)
{
	uint8_t k;
	struct sim_refusal ref;
	return device_kind(nl_part_at(c, i), (uint32_t)i, &k, &ref, 1);
}

const char *sim_part_approx(const struct nl_circuit *c, size_t i)
{
	const struct nl_part *p = nl_part_at(c, i);
	if (p->kind == NL_K && p->model && !coupling_refusal(p))
		return "(a magnetic core model) taken as a linear core: its windings' values as "
		       "turns on the core's AREA, PATH and GAP, its permeability 1 + MS/(3 A) "
		       "from the magnetisation curve's slope at zero; saturation and hysteresis "
		       "left out";
	if (p->letter != 'm' || simvdmos_is(p) || simmos_refusal(p))
		return NULL;
	return simmos_approx(p);
}

/* A PULSE far slower than the fastest source (a supply switched on for
 * seconds under a converter's microseconds): the solver cannot run its
 * period, so it is held at its second level after its first rise, and
 * the run follows that switch-on (sim_held). Its fall is not run. */
static const struct nl_source *held_or_own(struct sim *s, uint32_t i,
					   const struct nl_source *src)
{
	double per = simsrc_period(src, &s->span), pw = src->nargs > 5 ? src->args[5] : 0;
	if (src->wave != NL_WAVE_PULSE || !(s->fastest > 0) ||
	    per < SIM_SLOW_RATIO * s->fastest || pw < SIM_SLOW_RATIO * s->fastest)
		return src;
	struct nl_source *h = arena_alloc(s->ar, sizeof *h);
	double *args = arena_alloc(s->ar, 7 * sizeof *args);
	if (!h || !args)
		return NULL;
	*h = *src;
	memcpy(args, src->args, 5 * sizeof *args);
	args[5] = SIMSRC_HELD;
	args[6] = 0;        /* no repeat */
	h->args = args;
	h->nargs = 7;
	if (s->held == NL_NONE)
		s->held = i, s->held_per = per, s->held_pw = pw;
	return h;
}

/* The shortest period of the sources that are not slow PULSEs. */
static double fastest_period(const struct sim *s)
{
	double lo = INFINITY;
	for (size_t i = 0; i < nl_part_count(s->c); i++) {
		const struct nl_part *p = nl_part_at(s->c, i);
		const struct nl_source *src = p->ext ? p->ext->src : NULL;
		if (!src || (p->kind != NL_V && p->kind != NL_I) ||
		    (s->o.leave_out && s->o.leave_out[i]) || (s->o.ac_scale && s->o.ac_scale[i] == 0))
			continue;
		double per = simsrc_period(src, &s->span);
		if (per > 0)
			lo = fmin(lo, per);
	}
	return isfinite(lo) ? lo : 0;
}

uint32_t sim_held(const struct sim *s, double *period, double *width)
{
	*period = s->held_per;
	*width = s->held_pw;
	return s->held;
}

/* Unknowns: nodes but ground, then diode internal nodes, then branches. */
static int count_unknowns(struct sim *s, struct sim_refusal *ref)
{
	size_t np = nl_part_count(s->c);
	s->n = s->nnodes - 1;
	s->ndev = 0;
	for (size_t i = 0; i < np; i++) {
		const struct nl_part *p = nl_part_at(s->c, i);
		uint8_t k;
		if (s->o.leave_out && s->o.leave_out[i])
			continue;
		if (!device_kind(p, (uint32_t)i, &k, ref, s->o.ideal_diodes))
			return 0;
		if (k == SD_Q || k == SD_M) { /* several devices and internal nodes */
			size_t nd, ni;
			if (k == SD_Q)
				simbjt_size(p, &nd, &ni);
			else if (p->letter == 'j')
				simjfet_size(p, &nd, &ni);
			else if (simvdmos_is(p))
				simvdmos_size(p, &nd, &ni);
			else
				simmos_size(p, &nd, &ni);
			s->ndev += nd;
			s->n += ni;
			continue;
		}
		s->ndev += k == SD_K ? coupling_pairs(p) : 1;
		if (k == SD_V || k == SD_L || k == SD_E || k == SD_H ||
		    (k == SD_B && !p->ext->behav->current))
			s->n++;
		if (k == SD_D && !s->o.ideal_diodes && dmodel_value(p->model, DM_RS) > 0)
			s->n++;
	}
	return 1;
}

static long branch_of(const struct sim *s, uint32_t part)
{
	for (size_t i = 0; i < s->ndev; i++)
		if (s->dev[i].part == part)
			return s->dev[i].br;
	return -1;
}

static long device_of(const struct sim *s, uint32_t part)
{
	for (size_t i = 0; i < s->ndev; i++)
		if (s->dev[i].part == part)
			return (long)i;
	return -1;
}

static double cap_start(const struct sim *s, const struct nl_part *p, size_t i)
{
	double v = s->o.cap_v0 ? s->o.cap_v0[i] : NAN;
	if (!isfinite(v) && p->ext && isfinite(p->ext->ic))
		v = p->ext->ic;
	return isfinite(v) ? v : 0;
}

static int fill_device(struct sim *s, struct simdev *d, size_t i, long *next)
{
	const struct nl_part *p = nl_part_at(s->c, i);
	const uint32_t *pin = nl_pins(s->c, p);
	struct sim_refusal ignore;
	memset(d, 0, sizeof *d);
	device_kind(p, (uint32_t)i, &d->kind, &ignore, s->o.ideal_diodes);
	d->part = (uint32_t)i;
	d->a = p->npins > 0 ? unknown_of(pin[0]) : -1;
	d->b = p->npins > 1 ? unknown_of(pin[1]) : -1;
	d->c = p->npins > 3 ? unknown_of(pin[2]) : -1;
	d->d = p->npins > 3 ? unknown_of(pin[3]) : -1;
	d->br = d->br2 = -1;
	d->p = d->a;
	double mult = p->ext && isfinite(p->ext->mult) && p->ext->mult > 0 ? p->ext->mult : 1;
	d->val = p->value;
	if (d->kind == SD_R) /* a 0-ohm short is taken as 1 mOhm, as SPICE does */
		d->val = mult / (fabs(p->value) < SIM_RMIN ? SIM_RMIN : p->value);
	else if (d->kind == SD_C)
		d->val = p->value * mult;
	else if (d->kind == SD_L)
		d->val = henries(s, (uint32_t)i) / mult;
	if (d->kind == SD_V || d->kind == SD_L || d->kind == SD_E || d->kind == SD_H ||
	    (d->kind == SD_B && !p->ext->behav->current))
		d->br = (*next)++;
	if (d->kind == SD_D) {
		d->dm = diode_model(s, p);
		if (!d->dm)
			return 0;
		if (mult != 1) {
			d->dm->is *= mult, d->dm->cjo *= mult, d->dm->ibv *= mult;
			d->dm->rs /= mult;
			simdev_diode_init(d->dm);
		}
		if (d->dm->rs > 0) {
			d->p = (*next)++;
			s->rs_of[d->p] = d->a;
		}
	}
	if (d->kind == SD_V || d->kind == SD_I) {
		d->src = p->ext ? p->ext->src : NULL;
		if (!d->src)
			return 1;
		if (s->o.hold_slow && !(d->src = held_or_own(s, (uint32_t)i, d->src)))
			return 0;
		d->mean = simsrc_mean(d->src, &s->span);
		d->ac_k = s->o.ac_scale ? s->o.ac_scale[i] : 1;
		d->dc_v = d->mean * (s->o.dc_scale ? s->o.dc_scale[i] : 1);
		if (s->o.dc_set && isfinite(s->o.dc_set[i]))
			d->dc_v = s->o.dc_set[i];
	}
	if (d->kind == SD_C)
		d->q0 = d->val * cap_start(s, p, i);
	if (d->kind == SD_S)
		return simsw_fill(s->ar, p, d);
	return 1;
}

/* The devices of part i from d on, *used of them: one for most parts,
 * a transistor's several. */
/* A K: one device per pair of its windings (l1, l2; linked later). */
static int fill_coupling(struct sim *s, struct simdev *d, size_t i, long *next, size_t *used)
{
	const struct nl_part *p = nl_part_at(s->c, i);
	*used = coupling_pairs(p);
	const uint32_t *w = p->ext && p->ext->coupled_part ? p->ext->coupled_part : p->ext->ctrl_part;
	uint32_t n = p->ext && p->ext->coupled_part ? p->ext->ncoupled : 2;
	size_t k = 0;
	for (uint32_t a = 0; a < n; a++)
		for (uint32_t b = a + 1; b < n; b++, k++) {
			if (!fill_device(s, &d[k], i, next))
				return 0;
			d[k].l1 = w[a];
			d[k].l2 = w[b];
		}
	return 1;
}

static int fill_part(struct sim *s, struct simdev *d, size_t i, long *next, size_t *used)
{
	const struct nl_part *p = nl_part_at(s->c, i);
	if (p->kind == NL_K)
		return fill_coupling(s, d, i, next, used);
	if (!(p->kind == NL_OPAQUE && (p->letter == 'q' || p->letter == 'm' || p->letter == 'j')))
		return fill_device(s, d, i, next);
	const uint32_t *pin = nl_pins(s->c, p);
	long u[4] = {-1, -1, -1, -1}; /* C B E, or D G S B */
	for (size_t k = 0; k < 4 && k < p->npins; k++)
		u[k] = unknown_of(pin[k]);
	double mult = p->ext && isfinite(p->ext->mult) && p->ext->mult > 0 ? p->ext->mult : 1;
	size_t ni;
	if (p->letter == 'j') {
		simjfet_size(p, used, &ni);
		return simjfet_fill(s->ar, p, (uint32_t)i, u, mult, d, next);
	}
	if (p->letter == 'm' && simvdmos_is(p)) {
		simvdmos_size(p, used, &ni);
		return simvdmos_fill(s->ar, p, (uint32_t)i, u, mult, d, next);
	}
	if (p->letter == 'm') {
		simmos_size(p, used, &ni);
		return simmos_fill(s->ar, p, (uint32_t)i, u, mult, d, next);
	}
	simbjt_size(p, used, &ni);
	return simbjt_fill(s->ar, p, (uint32_t)i, u, mult, d, next);
}

/* Index of the part named path (any case), or NL_NONE. */
static uint32_t part_named(const struct nl_circuit *c, const char *path)
{
	for (size_t i = 0; i < nl_part_count(c); i++)
		if (strcasecmp(nl_part_at(c, i)->path, path) == 0)
			return (uint32_t)i;
	return NL_NONE;
}

/* A behavioural source's probes as unknowns: node voltages, and branch
 * currents of parts the solver gives a branch (V, L, E, H, B V=). */
static int link_behav(struct sim *s, struct simdev *d, struct sim_refusal *ref)
{
	const struct nl_behav *bh = nl_part_at(s->c, d->part)->ext->behav;
	long pa[NL_MAX_PROBES], pb[NL_MAX_PROBES];
	if (bh->nprobes > NL_MAX_PROBES)
		return refuse(ref, d->part, "the expression reads too many voltages and currents");
	for (uint32_t k = 0; k < bh->nprobes; k++) {
		const struct nl_probe *q = &bh->probes[k];
		pa[k] = unknown_of(q->a);
		pb[k] = unknown_of(q->b);
		if (q->kind == NL_PROBE_I) {
			uint32_t i = part_named(s->c, q->source);
			pa[k] = i == NL_NONE ? -1 : branch_of(s, i);
			pb[k] = -1;
			if (pa[k] < 0)
				return refuse(ref, d->part, "the expression reads the current of a part "
							    "that is not a simulated voltage source or inductor");
		}
	}
	if (!(d->bh = simbehav_create(s->ar, bh, pa, pb)))
		return refuse(ref, d->part, "out of memory");
	if (simbehav_uses_time(d->bh))
		s->behav_time = 1;
	return 1;
}

/* Windings coupled to one another, however loosely, take their steps by
 * one rule: a winding's equation holds its self flux and each mutual flux
 * alike, so a tight pair on BDF2 makes every winding coupled to it (and
 * its couplings) BDF2 too. Mixed, the mutual terms of one row would be
 * taken by a rule its history was not, and the windings would pump energy
 * in from nowhere. */
static void one_method_per_coupling(struct sim *s)
{
	for (int changed = 1; changed;) {
		changed = 0;
		for (size_t i = 0; i < s->ndev; i++) {
			struct simdev *k = &s->dev[i];
			if (k->kind != SD_K)
				continue;
			struct simdev *a = &s->dev[k->c], *b = &s->dev[k->d];
			int any = k->coupled || a->coupled || b->coupled;
			if (any && !(k->coupled && a->coupled && b->coupled)) {
				k->coupled = a->coupled = b->coupled = 1;
				changed = 1;
			}
		}
	}
}

/* Second pass: K needs its inductors' branches, F and H their sources'. */
static int link_controls(struct sim *s, struct sim_refusal *ref)
{
	for (size_t i = 0; i < s->ndev; i++) {
		struct simdev *d = &s->dev[i];
		const struct nl_part *p = nl_part_at(s->c, d->part);
		if (d->kind == SD_B) {
			if (!link_behav(s, d, ref))
				return 0;
			continue;
		}
		if (d->kind != SD_K && d->kind != SD_F && d->kind != SD_H)
			continue;
		uint32_t c0 = p->ext ? p->ext->ctrl_part[0] : NL_NONE;
		uint32_t c1 = p->ext ? p->ext->ctrl_part[1] : NL_NONE;
		if (d->kind == SD_K) {
			c0 = d->l1, c1 = d->l2;
			if (c0 == NL_NONE || c1 == NL_NONE)
				return refuse(ref, d->part, "the coupled inductors are not both known");
			d->br = branch_of(s, c0);
			d->br2 = branch_of(s, c1);
			d->c = device_of(s, c0);
			d->d = device_of(s, c1);
			if (d->c < 0 || d->d < 0)
				return refuse(ref, d->part, "the coupled inductors are not both known");
			/* k = 1 makes the inductance matrix singular: a current
			   with no net flux drifts with the integration error and
			   the run never settles. A 0.01 % leakage holds it and
			   moves no voltage by more than about that much. */
			double k = fmax(fmin(p->value, SIM_K_MAX), -SIM_K_MAX);
			d->val = k * sqrt(fabs(henries(s, c0) * henries(s, c1)));
			/* a tight coupling leaves a stiff leakage mode that the
			   trapezoidal rule rings on: those windings use BDF2 */
			if (fabs(k) >= SIM_K_STIFF)
				d->coupled = s->dev[d->c].coupled = s->dev[d->d].coupled = 1;
		} else {
			d->br2 = c0 == NL_NONE ? -1 : branch_of(s, c0);
			if (d->br2 < 0)
				return refuse(ref, d->part, "the controlling voltage source is not known");
		}
	}
	one_method_per_coupling(s);
	return 1;
}

/* The smallest multiple of *common that per divides (up to SIM_LCM_MAX
 * times it; beyond, *common is left as it is). */
static void common_multiple(double *common, double per)
{
	for (int k = 1; k <= SIM_LCM_MAX; k++) {
		double q = k * *common / per;
		if (fabs(q - nearbyint(q)) <= 1e-6 * q) {
			*common *= k;
			return;
		}
	}
}

/* The shortest source period; into *common the period of them all: the
 * least common multiple of the periods where they have one within
 * SIM_LCM_MAX times the longest, else the longest. */
static double shortest_period(struct sim *s, double *common)
{
	double lo = INFINITY, longest = 0;
	for (size_t i = 0; i < s->ndev; i++) {
		if (!s->dev[i].src || s->dev[i].ac_k == 0) /* held at a value */
			continue;
		double per = simsrc_period(s->dev[i].src, &s->span),
		       fast = simsrc_fastest(s->dev[i].src, &s->span);
		if (fast > 0)
			lo = fmin(lo, fast);
		if (per > 0)
			longest = fmax(longest, per);
	}
	*common = longest;
	for (size_t i = 0; longest > 0 && i < s->ndev; i++) {
		if (!s->dev[i].src || s->dev[i].ac_k == 0)
			continue;
		double per = simsrc_period(s->dev[i].src, &s->span);
		if (per > 0)
			common_multiple(common, per);
	}
	if (*common > SIM_LCM_MAX * longest)
		*common = longest;
	return lo;
}

static void defaults(struct sim *s)
{
	struct sim_opts *o = &s->o;
	if (o->reltol <= 0)
		o->reltol = 1e-3;
	if (o->max_work == 0)
		o->max_work = SIM_MAX_WORK;
	if (o->vntol <= 0)
		o->vntol = 1e-6;
	if (o->abstol <= 0)
		o->abstol = 1e-12;
	s->span.stop = o->stop;
	s->span.step = o->step > 0 ? o->step : o->stop / 1000;
}

static uint32_t root_of(uint32_t *up, uint32_t n)
{
	while (up[n] != n)
		n = up[n] = up[up[n]];
	return n;
}

/* A part of the circuit with no path to ground (a floating winding and
 * what it feeds, written without a node 0) leaves the matrix singular:
 * one node of each such part is tied to ground by SIM_TIE_G, through which
 * no current can flow, since it is that part's only connection. Every pin
 * of a part counts as connected to its others. Sets s->tie (per node). */
static int ground_ties(struct sim *s)
{
	size_t nn = s->nnodes;
	uint32_t *up = arena_alloc(s->ar, (nn + 1) * sizeof *up);
	s->tie = arena_zalloc(s->ar, nn + 1);
	unsigned char *seen = arena_zalloc(s->ar, nn + 1);
	if (!up || !s->tie || !seen)
		return 0;
	for (uint32_t k = 0; k < nn; k++)
		up[k] = k;
	for (size_t i = 0; i < nl_part_count(s->c); i++) {
		const struct nl_part *p = nl_part_at(s->c, i);
		const uint32_t *q = nl_pins(s->c, p);
		if (s->o.leave_out && s->o.leave_out[i])
			continue;
		for (uint32_t j = 1; j < p->npins; j++)
			up[root_of(up, q[j])] = root_of(up, q[0]);
	}
	uint32_t g = root_of(up, NL_GROUND);
	for (uint32_t k = 1; k < nn; k++) {
		uint32_t r = root_of(up, k);
		if (r != g && !seen[r])
			seen[r] = s->tie[k] = 1;
	}
	return 1;
}

static enum sim_status build(struct sim *s, struct sim_refusal *ref)
{
	if (!count_unknowns(s, ref))
		return SIM_REFUSED;
	s->dev = arena_alloc(s->ar, (s->ndev + 1) * sizeof *s->dev);
	s->shunt = arena_alloc(s->ar, s->nnodes * sizeof *s->shunt);
	size_t bytes = (s->n + 1) * sizeof(double);
	s->x = arena_zalloc(s->ar, bytes);
	s->rs_of = arena_alloc(s->ar, (s->n + 1) * sizeof *s->rs_of);
	for (size_t k = 0; s->rs_of && k <= s->n; k++)
		s->rs_of[k] = -2;
	s->xprev = arena_zalloc(s->ar, bytes);
	s->d1 = arena_zalloc(s->ar, bytes);
	s->d2 = arena_zalloc(s->ar, bytes);
	s->v = arena_zalloc(s->ar, (s->nnodes + 1) * sizeof(double));
	s->m = simmat_create(s->n, &s->h);
	if (!s->dev || !s->shunt || !s->x || !s->rs_of || !s->xprev || !s->d1 || !s->d2 || !s->v || !s->m)
		return SIM_OOM;
	long next = (long)s->nnodes - 1;
	s->held = NL_NONE;
	s->fastest = s->o.hold_slow ? fastest_period(s) : 0;
	if (!core_windings(s))
		return SIM_OOM;
	for (size_t i = 0, k = 0; i < nl_part_count(s->c); i++) {
		if (s->o.leave_out && s->o.leave_out[i])
			continue;
		size_t used = 1;
		if (!fill_part(s, &s->dev[k], i, &next, &used))
			return SIM_OOM;
		k += used;
	}
	if (!link_controls(s, ref))
		return SIM_REFUSED;
	for (size_t i = 0; i < s->ndev; i++)
		if (!(s->dev[i].kind == SD_Q   ? simbjt_need(&s->dev[i], s->m)
		      : s->dev[i].kind == SD_M ? simmos_need(&s->dev[i], s->m)
		      : s->dev[i].kind == SD_S ? simsw_need(&s->dev[i], s->m)
					       : simdev_need(&s->dev[i], s->m)))
			return SIM_OOM;
	for (size_t k = 0; k + 1 < s->nnodes; k++)
		if ((s->shunt[k] = simmat_need(s->m, (long)k, (long)k)) == -2)
			return SIM_OOM;
	if (!simmat_freeze(s->m) || !ground_ties(s))
		return SIM_OOM;
	double shortest = shortest_period(s, &s->period);
	if (s->o.max_step <= 0)
		s->o.max_step = isfinite(shortest) ? shortest / 200 : s->o.stop / 200;
	if (!(s->o.max_step > 0))
		s->o.max_step = 1e-6;
	/* an expression of time may jump anywhere: no step past TSTEP */
	if (s->behav_time && s->span.step > 0)
		s->o.max_step = fmin(s->o.max_step, s->span.step);
	return SIM_OK;
}

enum sim_status sim_create(const struct nl_circuit *c, const struct sim_opts *o,
			   const struct hr_alloc *h, struct sim **out,
			   struct sim_refusal *ref)
{
	*out = NULL;
	ref->part = NL_NONE;
	ref->why[0] = '\0';
	struct arena *ar = arena_create(h);
	struct sim *s = ar ? arena_zalloc(ar, sizeof *s) : NULL;
	if (!s) {
		arena_destroy(ar);
		return SIM_OOM;
	}
	s->h = *h;
	s->ar = ar;
	s->c = c;
	s->o = *o;
	s->nnodes = nl_node_count(c);
	s->after_corner = 1;
	defaults(s);
	enum sim_status st = build(s, ref);
	if (st != SIM_OK) {
		sim_destroy(s);
		return st;
	}
	s->st.unknowns = s->n;
	*out = s;
	return SIM_OK;
}

void sim_destroy(struct sim *s)
{
	if (!s)
		return;
	simmat_destroy(s->m);
	arena_destroy(s->ar);
}

/* ---- one time point ---- */

void sim_node_voltages(struct sim *s)
{
	s->v[0] = 0;
	for (size_t k = 1; k < s->nnodes; k++)
		s->v[k] = s->x[k - 1];
}

static double across_x(const double *x, long a, long b)
{
	return (a >= 0 ? x[a] : 0) - (b >= 0 ? x[b] : 0);
}

/* Newton has converged when no unknown moved by more than reltol of its
 * size plus the absolute tolerance. In the measured period (sim_fine_period),
 * each capacitor's and junction's own voltage, and each junction's
 * current, must also have settled to SIM_FINE_RELTOL (as SPICE's own
 * test on a diode's current): their charges feed the truncation error at
 * that tolerance, while a node's level against ground can carry the noise of a
 * floating network's common mode (1 Mohm against nanosecond steps). */
static int converged(const struct sim *s, const double *xn)
{
	for (size_t k = 0; k < s->n; k++) {
		double tol = s->o.reltol * fmax(fabs(xn[k]), fabs(s->x[k])) +
			     (k + 1 < s->nnodes ? s->o.vntol
			      : s->rs_of[k] >= -1 ? fmax(s->o.abstol, SIM_RS_NODE_TOL)
						 : s->o.abstol);
		if (fabs(xn[k] - s->x[k]) > tol)
			return 0;
	}
	if (!s->o.fine)
		return 1;
	double rel = fmin(s->o.reltol, SIM_FINE_RELTOL);
	for (size_t i = 0; i < s->ndev; i++) {
		const struct simdev *d = &s->dev[i];
		if (d->kind != SD_C && d->kind != SD_D)
			continue;
		long a = d->kind == SD_D ? d->p : d->a;
		double vn = across_x(xn, a, d->b), vo = across_x(s->x, a, d->b);
		if (fabs(vn - vo) > rel * fmax(fabs(vn), fabs(vo)) + s->o.vntol)
			return 0;
		if (d->kind != SD_D)
			continue;
		double in = simdev_junction_current(d, xn), io = simdev_junction_current(d, s->x);
		if (fabs(in - io) > rel * fmax(fabs(in), fabs(io)) + s->o.abstol)
			return 0;
	}
	return 1;
}

/* Newton at st->t from the iterate in s->x; SIM_OK leaves the solution in
 * s->x and the devices' charges updated. */
/* An inductor's flux is its own L i plus M i' of each inductor coupled to
 * it: its companion history and its truncation error are both taken on
 * that whole flux, as SPICE does (the self flux of a tightly coupled
 * winding jumps with the load current; the whole flux follows the drive). */
static void mutual_flux(struct sim *s)
{
	for (size_t i = 0; i < s->ndev; i++) {
		const struct simdev *k = &s->dev[i];
		if (k->kind != SD_K)
			continue;
		s->dev[k->c].q += k->val * s->x[k->br2];
		s->dev[k->d].q += k->val * s->x[k->br];
	}
}

static enum sim_status newton_pass(struct sim *s, const struct simdev_step *st, int hold,
				   unsigned *flips)
{
	for (int it = 0; it < SIM_MAX_NEWTON; it++) {
		int limited = 0;
		simmat_clear(s->m);
		for (size_t i = 0; i < s->ndev; i++)
			if (s->dev[i].kind == SD_Q) /* after its junctions */
				simbjt_stamp(&s->dev[i], s->m);
			else if (s->dev[i].kind == SD_M)
				simmos_stamp(&s->dev[i], s->m, s->x, &limited);
			else if (s->dev[i].kind == SD_S)
				simsw_stamp(&s->dev[i], s->m, s->x, hold, &limited, flips);
			else
				simdev_stamp(&s->dev[i], st, s->m, s->x, &limited);
		for (size_t k = 0; s->o.gshunt > 0 && k + 1 < s->nnodes; k++)
			simmat_add(s->m, s->shunt[k], s->o.gshunt);
		for (size_t k = 0; k + 1 < s->nnodes; k++)
			if (s->tie[k + 1])
				simmat_add(s->m, s->shunt[k], SIM_TIE_G);
		const double *xn = simmat_solve(s->m);
		s->st.newton++;
		if (!xn)
			return SIM_SINGULAR;
		int done = it > 0 && !limited && converged(s, xn);
		memcpy(s->x, xn, s->n * sizeof *s->x);
		if (done) {
			for (size_t i = 0; i < s->ndev; i++)
				simdev_update(&s->dev[i], st, s->x);
			mutual_flux(s);
			return SIM_OK;
		}
	}
	return SIM_NO_CONVERGENCE;
}

/* Newton's iteration at one time point. A switch that its own control
 * turns back and forth from iterate to iterate (a steep comparator on a
 * voltage the switch itself sets: no state is consistent, and the real
 * circuit chatters) is then held in the state it last took, for this
 * point only; the next point decides afresh. */
static enum sim_status newton(struct sim *s, const struct simdev_step *st)
{
	unsigned flips = 0;
	enum sim_status r = newton_pass(s, st, 0, &flips);
	if (r == SIM_NO_CONVERGENCE && flips > 2)
		r = newton_pass(s, st, 1, &flips);
	return r;
}

/* The step the local truncation error allows after a trapezoidal step of
 * h, the smallest over charges (capacitors, diodes) and fluxes (inductors).
 * The error measure is SPICE's (Nagel, UCB/ERL M520, ch. 5; as ngspice
 * does it): the third divided difference of the charge over the last four
 * points times 1/12, against a tolerance that is the larger of a current
 * (abstol + reltol |i|) and a charge per step (reltol |q| / h), with the
 * allowance TRTOL; the step is sqrt(TRTOL tol / error). */
/* A capacitor whose current collapses within the step (a diode that
 * stops conducting into it): the trapezoidal rule carries the old current
 * on through the step, h/2 times the change in charge, and the capacitor
 * overshoots what the diode let it reach; the third divided difference,
 * taken on that very solution, does not see it. Such a step is held to
 * h/2 |f - f0| <= TRTOL tol h: the largest step that keeps it. A current
 * that rises (a diode that starts to conduct) is left to the usual
 * estimate: the rule lags there, it does not overshoot. */
static double kink_step(const struct simdev *d, double h, double tol)
{
	double jump = fabs(d->f - d->f0) / 2;
	int collapse = d->f * d->f0 < 0 || fabs(d->f) < fabs(d->f0) / 4;
	return collapse && jump > SIM_TRTOL * tol ? h * SIM_TRTOL * tol / jump : INFINITY;
}

static double lte_step(const struct sim *s, double h)
{
	double best = INFINITY;
	double rel = s->o.fine ? fmin(s->o.reltol, SIM_FINE_RELTOL) : s->o.reltol;
	for (size_t i = 0; i < s->ndev; i++) {
		const struct simdev *d = &s->dev[i];
		if (d->kind != SD_C && d->kind != SD_D && d->kind != SD_L)
			continue;
		double t0 = s->t + h, t1 = d->th[0], t2 = d->th[1], t3 = d->th[2];
		double d01 = (d->q - d->qh[0]) / (t0 - t1);
		double d12 = (d->qh[0] - d->qh[1]) / (t1 - t2);
		double d23 = (d->qh[1] - d->qh[2]) / (t2 - t3);
		double dd3 = ((d01 - d12) / (t0 - t2) - (d12 - d23) / (t1 - t3)) / (t0 - t3);
		double itol = s->o.abstol + rel * fmax(fabs(d->f), fabs(d->f0));
		double qtol = rel * fmax(fmax(fabs(d->q), fabs(d->qh[0])), SIM_CHGTOL) / h;
		if (d->kind == SD_L)
			itol = rel * fmax(fabs(d->f), fabs(d->f0)) + s->o.vntol;
		double err = fmax(s->o.abstol, fabs(dd3) / 12);
		best = fmin(best, sqrt(SIM_TRTOL * fmax(itol, qtol) / err));
		if (d->kind == SD_C && s->o.ideal_diodes) /* their switching is abrupt */
			best = fmin(best, kink_step(d, h, fmax(itol, qtol)));
	}
	return best;
}

static void accept(struct sim *s, double h)
{
	s->t += h;
	s->hprev = h;
	for (size_t i = 0; i < s->ndev; i++) {
		struct simdev *d = &s->dev[i];
		d->qh[2] = d->qh[1], d->th[2] = d->th[1];
		d->qh[1] = d->qh[0], d->th[1] = d->th[0];
		d->qh[0] = d->q, d->th[0] = s->t;
		d->q0 = d->q;
		d->f0 = d->f;
	}
	memcpy(s->xprev, s->x, s->n * sizeof *s->x);
	sim_node_voltages(s);
	s->st.points++;
	s->nhist++;
}

/* The trapezoidal rule leaves a stiff mode undamped: it flips sign from
 * one step to the next (a floating bus held by junction capacitances
 * while a bridge commutes, a diode's stored charge against a stiff
 * line). A node whose last three changes alternate in sign, each above
 * the Newton tolerance tenfold, is ringing at the step itself, which no
 * waveform sampled finely enough does: the next step is then backward
 * Euler, which damps such a mode at once. 1 when a node rang. */
static int rang(struct sim *s)
{
	int any = 0;
	for (size_t k = 0; k + 1 < s->nnodes; k++) {
		double d = s->x[k] - s->xprev[k];
		double tol = 10 * (s->o.vntol + s->o.reltol * fabs(s->x[k]));
		if (fabs(d) > tol && fabs(s->d1[k]) > tol && fabs(s->d2[k]) > tol &&
		    (d > 0) != (s->d1[k] > 0) && (s->d1[k] > 0) != (s->d2[k] > 0))
			any = 1;
		s->d2[k] = s->d1[k];
		s->d1[k] = d;
	}
	return any;
}

/* What a ringing node gets: a shorter step first, which resolves an
 * oscillation the steps were too long for (a gate's LC ring); when it
 * rings on at the shorter steps too, the mode is stiff (far faster than
 * any step: a junction capacitance against a fraction of an ohm) and
 * only damping ends it, so the next step is backward Euler (as it is at
 * once for a step already below SIM_RING_FLOOR of the largest). A quiet
 * stretch of SIM_RING_QUIET steps starts the count again. */
static void ringing(struct sim *s, int ring, double h)
{
	if (!ring) {
		if (s->ring_quiet < SIM_RING_QUIET && ++s->ring_quiet == SIM_RING_QUIET)
			s->ring_cuts = 0;
		return;
	}
	s->ring_quiet = 0;
	if (s->ring_cuts < SIM_RING_CUTS && h / SIM_RING_CUT > s->o.max_step * SIM_RING_FLOOR) {
		s->ring_cuts++;
		s->hstep = h / SIM_RING_CUT;
	} else {
		s->after_corner = 1;
	}
}

static void reject(struct sim *s)
{
	memcpy(s->x, s->xprev, s->n * sizeof *s->x);
	s->st.rejected++;
}

static double next_corner(const struct sim *s)
{
	double t = INFINITY;
	for (size_t i = 0; i < s->ndev; i++)
		if (s->dev[i].src)
			t = fmin(t, simsrc_next_corner(s->dev[i].src, &s->span,
						       s->t + s->o.t_shift) -
					    s->o.t_shift);
	return t;
}

/* Variable-step BDF2 coefficients (from the last two accepted points),
 * when there are two since the last corner. */
static void bdf2(const struct sim *s, double h, int be, struct simdev_step *st)
{
	if (be || s->nhist < 2 || s->hprev <= 0)
		return;
	double r = h / s->hprev;
	st->gear = 1;
	st->ga = (1 + 2 * r) / ((1 + r) * h);
	st->g1 = -(1 + r) / h;
	st->g2 = r * r / ((1 + r) * h);
}

/* A switch that changed state within the step: the step ends just past
 * the instant its control crossed the threshold (as a breakpoint would),
 * down to SIM_SW_RESOLVE of the largest step, so that the edge it makes
 * falls where it belongs, not at the step's end. */
static double switch_step(const struct sim *s, double h)
{
	double f = 1;
	for (size_t i = 0; i < s->ndev; i++)
		if (s->dev[i].kind == SD_S)
			f = fmin(f, simsw_crossing(&s->dev[i], s->xprev, s->x));
	if (f >= 0.9 || h * f < s->o.max_step * SIM_SW_RESOLVE)
		return 2 * h;
	return fmax(h * f * 1.001, s->o.max_step * SIM_SW_RESOLVE);
}

/* A diode whose stored charge runs out within the step while a reverse
 * current drains it snaps off there: whatever carried that current (a
 * winding's leakage) rings into the junction's capacitance from that
 * instant. The step is held to the time the charge at its start lasts at
 * the rate it was draining, so that the snap falls at a step's end and
 * the steps after it start from the instant the ring does. */
static double snap_step(const struct sim *s, double h)
{
	double hs = INFINITY;
	for (size_t i = 0; i < s->ndev; i++) {
		const struct simdev *d = &s->dev[i];
		if (!s->o.fine || d->kind != SD_D || d->dm->tt <= 0 || d->f0 >= 0)
			continue;
		double q0 = d->dm->tt * simdev_junction_current(d, s->xprev);
		double q1 = d->dm->tt * simdev_junction_current(d, s->x);
		if (q0 > SIM_CHGTOL && q1 <= 0)
			hs = fmin(hs, q0 / -d->f0);
	}
	if (!(hs < 0.9 * h))
		return 2 * h;
	return fmax(hs * 1.001, s->o.max_step * SIM_SW_RESOLVE);
}

/* 1 when, in the measured period, a diode's stored charge ran out within
 * the step just solved while a reverse current drained it: its current
 * stops there, and a trapezoidal step across that corner flips the
 * charge's current from one step to the next (a flyback diode's
 * recovery through a closing switch, ringing 6 V below ground). */
static int snapped(const struct sim *s)
{
	for (size_t i = 0; s->o.fine && i < s->ndev; i++) {
		const struct simdev *d = &s->dev[i];
		if (d->kind != SD_D || d->dm->tt <= 0 || d->f0 >= 0)
			continue;
		if (d->dm->tt * simdev_junction_current(d, s->xprev) > SIM_CHGTOL &&
		    simdev_junction_current(d, s->x) <= 0)
			return 1;
	}
	return 0;
}

/* In the measured period, a step its tighter tolerance cannot take: Newton
 * stalls at the steps it asks for (a floating network's level, a junction
 * cycling between two iterates at picosecond steps), or the estimate asks
 * for ever shorter steps (a switch that closed onto a capacitor within the
 * step). It is taken as after a corner, by backward Euler at the run's own
 * tolerance, from a step of SIM_RELAX_STEP of the largest at least. 0 when
 * there is nothing to relax. */
static int relax(struct sim *s, double h0)
{
	if (!s->o.fine)
		return 0;
	s->o.fine = 0;
	s->after_corner = 1;
	s->hstep = fmax(h0, s->o.max_step * SIM_RELAX_STEP);
	return 1;
}

/* One accepted step towards t_end (shorter when rejected and retried). */
static enum sim_status take_step(struct sim *s, double t_end)
{
	double hmin = s->o.max_step * 1e-9, h0 = s->hstep;
	for (;;) {
		if (s->st.newton > s->o.max_work)
			return SIM_BUDGET;
		double corner = next_corner(s);
		double h = fmin(fmin(s->hstep, s->o.max_step), t_end - s->t);
		/* no sliver of a step left before the end */
		if (t_end - s->t - h < 1e-3 * h)
			h = t_end - s->t;
		int hits = corner < s->t + h * 1.000001;
		if (hits)
			h = corner - s->t;
		int be = s->after_corner || s->nhist < 1;
		struct simdev_step st = {s->t + h, be ? 1 / h : 2 / h, be ? 0 : 1,
					 &s->span, 1e-12, 0, 0, 0, 0, s->t + h + s->o.t_shift};
		bdf2(s, h, be, &st);
		enum sim_status r = newton(s, &st);
		double allowed = r == SIM_OK && s->nhist >= 3 && !be ? lte_step(s, h) : 2 * h;
		if (r == SIM_OK)
			allowed = fmin(fmin(allowed, switch_step(s, h)), snap_step(s, h));
		if (r == SIM_OK && allowed >= 0.9 * h) {
			if (s->on_step)
				s->on_step(s, &st);
			int ring = !be && rang(s), snap = snapped(s);
			accept(s, h);
			/* a snap is a corner of the charge's waveform: the steps
			   after it are backward Euler, as after a source's, and
			   enough of them to damp the junction's capacitance
			   against the series resistance the current took (a
			   mode of picoseconds, which trapezoidal steps flip) */
			s->snap_be = snap ? SIM_SNAP_BE : s->snap_be > 0 ? s->snap_be - 1 : 0;
			s->after_corner = hits || s->snap_be > 0;
			if (hits || snap)
				s->nhist = 0;
			/* in the measured period the steps the error estimate
			   does not yet check (the first three after a corner)
			   do not grow */
			s->hstep = fmin(s->o.fine && s->nhist < 3 && !hits ? h : 2 * h, allowed);
			/* short enough that its damping leaves the ring the
			   snap starts whole (100 ns into a 60 Hz winding's
			   leakage) */
			if (s->snap_be > 0)
				s->hstep = fmin(s->hstep, s->o.max_step * SIM_SNAP_FIRST);
			ringing(s, ring, h);
			if (hits) {
				/* as SPICE: a tenth of the way to the next corner
				   (an edge's rise), so what the corner sets off is
				   followed from its start */
				double next = next_corner(s);
				s->hstep = fmin(s->hstep, s->o.max_step / (s->o.fine ? 100 : 10));
				if (isfinite(next) && next > s->t)
					s->hstep = fmin(s->hstep, fmax((next - s->t) / 10, hmin * 10));
			}
			return SIM_OK;
		}
		reject(s);
		if (r == SIM_SINGULAR || r == SIM_OOM)
			return r;
		s->hstep = r == SIM_OK ? fmax(allowed, h / 4) : h / 8;
		if (s->hstep < hmin && !relax(s, h0))
			return SIM_NO_CONVERGENCE;
	}
}

static enum sim_status step(struct sim *s, double t_end)
{
	int fine = s->o.fine;
	enum sim_status r = take_step(s, t_end);
	s->o.fine = fine && s->st.newton <= s->fine_end;
	s->st.fine_cut |= fine && !s->o.fine;
	return r;
}

enum sim_status sim_run(struct sim *s, double t_end, sim_point_fn fn, void *ud)
{
	if (s->st.points == 0) {
		sim_node_voltages(s);
		s->hstep = s->o.max_step / 10;
		/* as after a corner: a source's first edge, from 0, is
		   followed from its start */
		double next = next_corner(s);
		if (isfinite(next) && next > s->t)
			s->hstep = fmin(s->hstep, fmax((next - s->t) / 10, s->o.max_step * 1e-8));
		s->st.points = 1;
	}
	/* the end counts as reached within rounding of the time itself */
	double eps = fmax(s->o.max_step * 1e-9, fabs(t_end) * 1e-12);
	while (s->t < t_end - eps) {
		enum sim_status r = step(s, t_end);
		if (r != SIM_OK)
			return r;
		if (fn && fn(ud, s->t, s->v))
			return SIM_OK;
	}
	return SIM_OK;
}

long sim_diode_handle(const struct sim *s, uint32_t part)
{
	long k = device_of(s, part);
	return k >= 0 && s->dev[k].kind == SD_D ? k : -1;
}

double sim_diode_current(const struct sim *s, long k)
{
	return simdev_current(&s->dev[k], s->x);
}

double sim_period(const struct sim *s)
{
	return s->period;
}

double sim_cycle(const struct sim *s)
{
	double lo = 0;
	for (size_t i = 0; i < s->ndev; i++) {
		if (!s->dev[i].src || s->dev[i].ac_k == 0) /* held at a value */
			continue;
		double per = simsrc_period(s->dev[i].src, &s->span);
		if (per > 0 && (lo == 0 || per < lo))
			lo = per;
	}
	return lo;
}

double sim_time(const struct sim *s)
{
	return s->t;
}

const double *sim_voltages(const struct sim *s)
{
	return s->v;
}

void sim_currents(const struct sim *s, double *i)
{
	size_t np = nl_part_count(s->c);
	for (size_t k = 0; k < np; k++)
		i[k] = NAN;
	for (size_t k = 0; k < s->ndev; k++)
		i[s->dev[k].part] = simdev_current(&s->dev[k], s->x);
}

void sim_dissipation(const struct sim *s, double *p)
{
	size_t np = nl_part_count(s->c);
	for (size_t k = 0; k < np; k++)
		p[k] = NAN;
	for (size_t k = 0; k < s->ndev; k++) {
		const struct simdev *d = &s->dev[k];
		if (d->kind == SD_D && nl_part_at(s->c, d->part)->kind == NL_D)
			p[d->part] = simdev_dissipation(d, s->x);
	}
}

void sim_stats(const struct sim *s, struct sim_stats *out)
{
	*out = s->st;
	simmat_counts(s->m, &out->fresh_lu, &out->refactor_lu);
}

const char *sim_status_text(enum sim_status st)
{
	switch (st) {
	case SIM_OK: return "ok";
	case SIM_REFUSED: return "the circuit cannot be simulated";
	case SIM_NO_CONVERGENCE: return "the solver did not converge (time step too small)";
	case SIM_SINGULAR: return "the circuit matrix is singular (a floating node or a loop of voltage sources)";
	case SIM_BUDGET: return "the run needs more work than allowed (sources of very different periods, or a very slow circuit)";
	default: return "out of memory";
	}
}
