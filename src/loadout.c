/* loadout.c: the loaded outputs simulated (loadout.h). It picks the
 * structures, runs the solver at the two corners and writes the figures;
 * the corners are simbound.c's all-low and all-high ones, and what a
 * steady state is belongs to the solver (simrun.h). Judging the figures
 * against *@expect is the rules' (rules.c). */
#include "loadout.h"

#include <math.h>
#include <stdio.h>
#include <string.h>

#include "simrun.h"

struct lx {
	const struct audit *a;
	const struct profile *p;
	struct arena *ar;
	struct stress_result *sr;
	struct stress_loadsim *ls;
	struct simrun_opts o;
	double *scale, *set;    /* the corner being run */
	double *vmin, *vmax;    /* per part (simrun_peaks needs them) */
	unsigned char *blocked; /* per island: a part the solver cannot take */
	int block_all;          /* such a part outside every island */
	const char *blocked_why;
	unsigned long work, total, per_run, size;
	size_t nprobe;
	uint32_t *pos, *neg; /* one probe per loaded structure */
	double *pmin, *pmax, *pmean;
	size_t *probe_of;          /* per structure: its probe, or SIZE_MAX */
	double *nmin[2], *nmax[2]; /* per node, per corner (ls->node_min, _max) */
};

int loadout_kind(enum topo_kind k)
{
	switch (k) {
	case TK_DETECTOR_HIGH:
	case TK_DETECTOR_LOW:
	case TK_DOUBLER_HALF:
	case TK_DOUBLER_FULL:
	case TK_LADDER:
	case TK_PUMP:
	case TK_RECTIFIER:
		return 1;
	default:
		return 0;
	}
}

/* The middle of v(pos) - v(neg)'s range in the propagation r (ideal
 * diodes, no load), NaN where either node is not settled. */
static double unloaded(struct arena *ar, const struct prop_result *r, uint32_t pos, uint32_t neg)
{
	const struct prop_node *a = &r->nodes[pos], *b = &r->nodes[neg];
	if (a->state != PS_RESOLVED || b->state != PS_RESOLVED || a->conflict || b->conflict)
		return NAN;
	const struct form *d = form_lin(ar, 1, a->f, -1, b->f);
	if (!d)
		return NAN;
	double lo, hi;
	int exact;
	form_range(&r->fc, d, &lo, &hi, &exact);
	return (lo + hi) / 2;
}

static void corner_unknown(struct stress_output_corner *c, double unl)
{
	c->mean = c->min = c->max = NAN;
	c->unloaded = unl;
	c->periods = 0;
}

/* 1 when clamp i's load drains more from its capacitor in a period than
 * the tolerance of a tight bound (3 % of the level it holds + 0.1 V): its
 * level then sits that far below the unloaded proof. A lighter load leaves
 * the proof tight and is not simulated. */
static int clamp_sags(const struct lx *x, size_t i)
{
	const struct topo_struct *s = &x->a->topo.s[i];
	double level = fabs(unloaded(x->ar, &x->sr->runs[STRESS_CORNER_HIGH], s->output, s->drive));
	double droop = x->sr->st[i].droop_v;
	return isfinite(level) && isfinite(droop) &&
	       droop > level * LOADOUT_LOOSE_REL + LOADOUT_LOOSE_ABS;
}

/* Marks the loaded structures and gives each a probe. */
static int mark(struct lx *x)
{
	const struct topo_result *t = &x->a->topo;
	x->probe_of = arena_alloc(x->ar, (t->n + 1) * sizeof *x->probe_of);
	x->pos = arena_alloc(x->ar, (t->n + 1) * sizeof *x->pos);
	x->neg = arena_alloc(x->ar, (t->n + 1) * sizeof *x->neg);
	if (!x->probe_of || !x->pos || !x->neg)
		return 0;
	for (size_t i = 0; i < t->n; i++) {
		const struct topo_struct *s = &t->s[i];
		struct stress_output *o = &x->sr->st[i].out;
		x->probe_of[i] = SIZE_MAX;
		int clamp = s->kind == TK_CLAMP_FLOOR || s->kind == TK_CLAMP_CEILING;
		if (!(loadout_kind(s->kind) || (clamp && s->drive != NL_NONE)) ||
		    s->output == NL_NONE || !isfinite(x->sr->st[i].load_r))
			continue;
		if (clamp && !clamp_sags(x, i))
			continue;
		o->loaded = 1;
		o->pos = s->output;
		o->neg = clamp ? s->drive : s->output2 != NL_NONE ? s->output2 : NL_GROUND;
		/* a clamp's output is the level it holds, the clamped node less
		 * the drive, taken positive */
		if (clamp && unloaded(x->ar, &x->sr->runs[STRESS_CORNER_HIGH], o->pos, o->neg) < 0) {
			o->pos = s->drive;
			o->neg = s->output;
		}
		corner_unknown(&o->lo, unloaded(x->ar, &x->sr->runs[STRESS_CORNER_LOW_IDEAL], o->pos, o->neg));
		corner_unknown(&o->hi, unloaded(x->ar, &x->sr->runs[STRESS_CORNER_HIGH], o->pos, o->neg));
		x->probe_of[i] = x->nprobe;
		x->pos[x->nprobe] = o->pos;
		x->neg[x->nprobe++] = o->neg;
	}
	return 1;
}

/* A part kept as opaque could touch any node of its subcircuit instance:
 * every island with a part of that instance is blocked. */
static void block_instance(struct lx *x, const char *path)
{
	const struct nl_circuit *c = x->a->er.circuit;
	const char *dot = strrchr(path, '.');
	size_t n = dot ? (size_t)(dot - path) + 1 : 0;
	for (size_t i = 0; i < nl_part_count(c); i++)
		if (strncmp(nl_part_at(c, i)->path, path, n) == 0 && x->sr->island[i] != NL_NONE)
			x->blocked[x->sr->island[i]] = 1;
}

/* Parts the solver has no model for are left open; the islands they sit
 * in are blocked, and one outside every island (a source, a part between
 * held nodes) blocks the lot: the circuit run would not be the real one. */
static int leave_out(struct lx *x)
{
	const struct nl_circuit *c = x->a->er.circuit;
	size_t count;
	struct sim_refusal first;
	unsigned char *mask = simrun_unsupported(c, x->ar, &count, &first);
	x->blocked = arena_zalloc(x->ar, nl_node_count(c) + 1);
	if (!mask || !x->blocked)
		return 0;
	for (size_t i = 0; i < nl_part_count(c); i++) {
		if (!mask[i])
			continue;
		if (x->sr->island[i] != NL_NONE)
			x->blocked[x->sr->island[i]] = 1;
		else
			x->block_all = 1;
		if (nl_part_at(c, i)->npins == 0)
			block_instance(x, nl_part_at(c, i)->path);
	}
	if (count) {
		char buf[600];
		snprintf(buf, sizeof buf, "%s has no model in the solver (%s)",
			 nl_part_at(c, first.part)->path, first.why);
		if (!(x->blocked_why = arena_strdup(x->ar, buf)))
			return 0;
	}
	x->o.leave_out = mask;
	x->o.gshunt = SIMRUN_GSHUNT;
	return 1;
}

/* 1 when structure s touches a blocked island. */
static int blocked(const struct lx *x, const struct topo_struct *s)
{
	if (x->block_all)
		return 1;
	for (uint32_t k = 0; x->blocked && k < s->nparts; k++) {
		uint32_t is = x->sr->island[s->parts[k].part];
		if (is != NL_NONE && x->blocked[is])
			return 1;
	}
	return 0;
}

static int alloc_all(struct lx *x)
{
	const struct nl_circuit *c = x->a->er.circuit;
	size_t np = nl_part_count(c) + 1, nn = nl_node_count(c) + 1, m = x->nprobe + 1;
	x->scale = arena_alloc(x->ar, np * sizeof *x->scale);
	x->set = arena_alloc(x->ar, np * sizeof *x->set);
	x->vmin = arena_alloc(x->ar, np * sizeof *x->vmin);
	x->vmax = arena_alloc(x->ar, np * sizeof *x->vmax);
	x->pmin = arena_alloc(x->ar, 2 * m * sizeof *x->pmin);
	x->pmax = arena_alloc(x->ar, 2 * m * sizeof *x->pmax);
	x->pmean = arena_alloc(x->ar, 2 * m * sizeof *x->pmean);
	double *nodes = arena_alloc(x->ar, 4 * nn * sizeof *nodes);
	if (!x->scale || !x->set || !x->vmin || !x->vmax || !x->pmin || !x->pmax || !x->pmean || !nodes)
		return 0;
	for (int k = 0; k < 2; k++) {
		x->ls->node_min[k] = x->nmin[k] = nodes + (size_t)(2 * k) * nn;
		x->ls->node_max[k] = x->nmax[k] = nodes + (size_t)(2 * k + 1) * nn;
	}
	return 1;
}

/* Every source at one end of its band, as simbound.c's all-high and
 * all-low corners: a source's whole waveform scales, a ranged rail sits at
 * its end. */
static void set_corner(struct lx *x, int high)
{
	const struct nl_circuit *c = x->a->er.circuit;
	for (size_t i = 0; i < nl_part_count(c); i++) {
		const struct nl_part *pt = nl_part_at(c, i);
		double t = pt->kind == NL_V || pt->kind == NL_I ? stress_tolerance(x->a, x->p, (uint32_t)i) : 0;
		const struct audit_source *as = &x->a->sources[i];
		x->scale[i] = high ? 1 + t : 1 - t;
		x->set[i] = pt->kind == NL_V && isfinite(as->max) ? (high ? as->max : as->min) : NAN;
	}
}

/* Capacitors start at the analysis's best-case DC where it has one (as
 * simbound.c): the steady state is then a few periods away. */
static int start_caps(struct lx *x)
{
	const struct nl_circuit *c = x->a->er.circuit;
	size_t np = nl_part_count(c);
	double *v0 = arena_alloc(x->ar, (np + 1) * sizeof *v0);
	if (!v0)
		return 0;
	for (size_t i = 0; i < np; i++) {
		const struct nl_part *pt = nl_part_at(c, i);
		v0[i] = pt->kind == NL_C && pt->npins == 2 ? stress_low_dc(x->a, x->sr, x->ar, pt) : NAN;
	}
	x->o.cap_v0 = v0;
	return 1;
}

/* Why a run gave nothing (in the arena; NULL on out-of-memory). */
static const char *fail_why(struct lx *x, const struct simrun_result *r, int high)
{
	char buf[400];
	const char *what = r->status != SIM_OK ? sim_status_text(r->status)
			   : r->period <= 0    ? "no source repeats, so there is no steady state"
					       : "the steady state was not reached within the periods allowed";
	snprintf(buf, sizeof buf, "the simulation at the %s corner failed: %s", high ? "high" : "low",
		 what);
	return arena_strdup(x->ar, buf);
}

/* One corner (high 0: every source at -tol; 1: at +tol). Returns 0 on
 * out-of-memory; a failed run sets x->ls->why. */
static int run_corner(struct lx *x, int high, unsigned *periods)
{
	const struct nl_circuit *c = x->a->er.circuit;
	struct hr_alloc h = *arena_hook(x->ar);
	struct simrun_result r;
	if (x->work >= x->total) {
		x->ls->why = "the simulation needs more work than allowed for one file";
		return 1;
	}
	set_corner(x, high);
	size_t m = x->nprobe;
	x->o.probe_min = x->pmin + (size_t)high * m;
	x->o.probe_max = x->pmax + (size_t)high * m;
	x->o.probe_mean = x->pmean + (size_t)high * m;
	unsigned long left = (x->total - x->work) / x->size;
	x->o.max_work = left < x->per_run ? (left ? left : 1) : x->per_run;
	simrun_peaks(c, &x->o, &h, x->vmin, x->vmax, x->nmin[high], x->nmax[high], &r);
	x->ls->runs++;
	if (r.stats.unknowns)
		x->size = r.stats.unknowns;
	x->work += r.stats.newton * x->size;
	if (r.status == SIM_OOM)
		return 0;
	*periods = r.periods;
	if (r.status != SIM_OK || !(r.period > 0) || !r.settled)
		return (x->ls->why = fail_why(x, &r, high)) != NULL;
	return 1;
}

static void take(struct stress_output_corner *c, const struct lx *x, size_t k, int high,
		 unsigned periods)
{
	size_t m = x->nprobe;
	c->mean = x->pmean[(size_t)high * m + k];
	c->min = x->pmin[(size_t)high * m + k];
	c->max = x->pmax[(size_t)high * m + k];
	c->periods = periods;
}

/* Writes the figures, or why there are none, into each loaded structure. */
static void fill(struct lx *x, const unsigned *periods)
{
	const struct topo_result *t = &x->a->topo;
	for (size_t i = 0; i < t->n; i++) {
		struct stress_output *o = &x->sr->st[i].out;
		size_t k = x->probe_of[i];
		if (!o->loaded)
			continue;
		if (blocked(x, &t->s[i])) {
			o->why = x->blocked_why ? x->blocked_why : x->ls->why;
			continue;
		}
		if (!x->ls->simulated) {
			o->why = x->ls->why;
			continue;
		}
		o->simulated = 1;
		take(&o->lo, x, k, 0, periods[0]);
		take(&o->hi, x, k, 1, periods[1]);
	}
}

/* Any loaded structure the solver may run. */
static int any_runnable(const struct lx *x)
{
	for (size_t i = 0; i < x->a->topo.n; i++)
		if (x->sr->st[i].out.loaded && !blocked(x, &x->a->topo.s[i]))
			return 1;
	return 0;
}

static int simulate(struct lx *x, const struct simbound_limits *lim)
{
	const struct nl_circuit *c = x->a->er.circuit;
	unsigned periods[2] = {0, 0};
	if (!alloc_all(x) || !start_caps(x))
		return 0;
	x->o.ac_scale = x->o.dc_scale = x->scale;
	x->o.dc_set = x->set;
	x->o.max_periods = lim && lim->max_periods ? lim->max_periods : 4000;
	x->o.nprobe = x->nprobe;
	x->o.probe_pos = x->pos;
	x->o.probe_neg = x->neg;
	x->total = lim && lim->total_work ? lim->total_work : LOADOUT_WORK;
	x->per_run = lim && lim->max_work ? lim->max_work : 5000000;
	x->size = nl_node_count(c) + 1;
	for (int high = 0; high < 2 && !x->ls->why; high++)
		if (!run_corner(x, high, &periods[high]))
			return 0;
	x->ls->simulated = !x->ls->why;
	x->ls->corner[0] = "every source at its low end";
	x->ls->corner[1] = "every source at its high end";
	if (!x->ls->simulated)
		x->ls->node_min[0] = x->ls->node_min[1] = x->ls->node_max[0] = x->ls->node_max[1] = NULL;
	fill(x, periods);
	return 1;
}

int loadout_run(const struct audit *a, const struct profile *p, const struct simbound_limits *lim,
		size_t max_parts, struct arena *ar, struct stress_result *sr)
{
	struct lx x;
	memset(&x, 0, sizeof x);
	x.a = a, x.p = p, x.ar = ar, x.sr = sr;
	if (!mark(&x))
		return 0;
	if (x.nprobe == 0)
		return 1;
	if (!(x.ls = arena_zalloc(ar, sizeof *x.ls)))
		return 0;
	sr->loadsim = x.ls;
	size_t np = nl_part_count(a->er.circuit);
	if (max_parts && np > max_parts) {
		char buf[160];
		snprintf(buf, sizeof buf, "the circuit has %zu parts, more than the %zu the simulation takes",
			 np, max_parts);
		if (!(x.ls->why = arena_strdup(ar, buf)))
			return 0;
		fill(&x, (unsigned[2]){0, 0});
		return 1;
	}
	if (!leave_out(&x))
		return 0;
	if (!any_runnable(&x)) {
		x.ls->why = x.blocked_why;
		fill(&x, (unsigned[2]){0, 0});
		return 1;
	}
	return simulate(&x, lim);
}

int32_t loadout_of_node(const struct audit *a, const struct stress_result *sr, uint32_t node)
{
	for (size_t i = 0; sr->st && i < a->topo.n; i++) {
		const struct stress_output *o = &sr->st[i].out;
		if (o->loaded && node != NL_GROUND && (o->pos == node || o->neg == node))
			return (int32_t)i;
	}
	return -1;
}

/* A source declared to wander slowly over a band (*@source min= max=) can
 * leave a capacitor charged from the band's top while the rail sits at its
 * bottom; the simulation runs the corners, not that walk, so its number is
 * no ceiling under the proof there. */
static int any_band(const struct audit *a)
{
	size_t np = nl_part_count(a->er.circuit);
	for (size_t i = 0; a->sources && i < np; i++)
		if (isfinite(a->sources[i].min) && a->sources[i].max > a->sources[i].min)
			return 1;
	return 0;
}

/* A node a source holds (or ground): no path to an output runs through it. */
static int held_node(const struct audit *a, uint32_t n)
{
	const struct prop_node *pn = &a->prop.nodes[n];
	return n == NL_GROUND || (pn->state == PS_RESOLVED &&
				  (pn->how == PH_SOURCE || pn->how == PH_VCVS || pn->how == PH_GROUND));
}

/* 1 when node n reaches o's output through at most hops resistors, over
 * nodes no source holds and with few parts each (a filter's resistor
 * from a reservoir to its second capacitor). */
static int by_resistors(const struct audit *a, uint32_t n, const struct stress_output *o,
			int hops)
{
	if (n == NL_GROUND)
		return 0;
	if (n == o->pos || n == o->neg)
		return 1;
	uint32_t deg;
	const uint32_t *adj = nl_adjacency(a->er.circuit, n, &deg);
	if (hops == 0 || held_node(a, n) || deg > LOADOUT_FILTER_DEGREE)
		return 0;
	for (uint32_t i = 0; i < deg; i++) {
		const struct nl_part *r = nl_part_at(a->er.circuit, adj[i]);
		if (r->kind != NL_R || r->npins != 2)
			continue;
		const uint32_t *q = nl_pins(a->er.circuit, r);
		if (q[0] != q[1] && by_resistors(a, q[0] == n ? q[1] : q[0], o, hops - 1))
			return 1;
	}
	return 0;
}

/* 1 when s's part has a pin on o's output (a Y capacitor from a bridge's
 * output to ground) or on a node resistors join to it (a pi filter's
 * second capacitor, the clamps of a pin the output feeds through a
 * resistor): its proof rests on the same unloaded output. */
static int on_output(const struct audit *a, const struct stress *s,
		     const struct stress_output *o)
{
	const struct nl_part *pt = nl_part_at(a->er.circuit, s->part);
	const uint32_t *pin = nl_pins(a->er.circuit, pt);
	for (uint32_t j = 0; j < pt->npins; j++)
		if (by_resistors(a, pin[j], o, LOADOUT_FILTER_HOPS))
			return 1;
	return 0;
}

int loadout_tighten(const struct audit *a, struct arena *ar, struct stress_result *sr)
{
	int band = any_band(a);
	for (size_t k = 0; sr->st && k < a->topo.n; k++) {
		const struct stress_output *o = &sr->st[k].out;
		double ul = o->hi.unloaded, got = o->hi.max;
		if (!o->loaded || !o->simulated || !isfinite(ul) || !isfinite(got) ||
		    !(fabs(got) < fabs(ul) * (1 - LOADOUT_LOOSE_REL) - LOADOUT_LOOSE_ABS))
			continue;
		char buf[400];
		snprintf(buf, sizeof buf,
			 "the proof leaves out the load, under which the output reaches %.4g V where "
			 "the unloaded proof gives %.4g V: simulated under the load, the proof its %s",
			 fabs(got), fabs(ul),
			 band ? "floor (a rail declared to move keeps its band in the proof; "
				"the simulation runs the band's ends)"
			      : "ceiling");
		const char *why = arena_strdup(ar, buf);
		if (!why)
			return 0;
		for (size_t i = 0; i < sr->n; i++) {
			struct stress *s = &sr->s[i];
			if ((s->structure != (int32_t)k && !on_output(a, s, o)) ||
			    !stress_qty_is_voltage(s->qty) || s->unproven ||
			    s->basis != SB_ANALYSIS || !isfinite(s->worst))
				continue;
			/* with a band the simulation is no ceiling under the
			   proof (any_band), but a part whose stress grows as the
			   output sags (a capacitor to a rail above it, a pin
			   clamp the output feeds) can rise above it */
			s->tighten = !band;
			s->floor = band;
			s->analytic = s->worst;
			s->unproven = why;
		}
	}
	return 1;
}
