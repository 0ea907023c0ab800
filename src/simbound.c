/* simbound.c: simulated numbers for the stresses the analysis cannot
 * prove (simbound.h). Corners: every toleranced source at +tol, every one
 * at -tol, each of the first SIMBOUND_MAX_SOLO alone at +tol with the
 * rest at -tol (a bootstrap diode sees most with its rail low and the
 * switch node high) and, for three sines or more of one frequency, each
 * alone at -tol with the rest at +tol (a three-phase bridge sees most with
 * one phase low), and every swing at +tol (PULSE and PWL whole) with the
 * levels (DC values, offsets, rails) at each combination of their ends
 * (set_mask). A PULSE or PWL scales whole in a corner, so a level at 0 V
 * stays at 0 V. The all-high corner's run with the
 * diodes as modelled also gives every part's current (the file's only
 * run when every voltage is proven); current.c makes stresses of them. */
#include "simbound.h"

#include <limits.h>
#include <math.h>
#include <stdlib.h>
#include <stdio.h>
#include <string.h>

#include "cstring.h"
#include "floatnet.h"
#include "dstring.h"
#include "simrun.h"

/* The offset corners' codes among the solo codes (set_corner): SB_MASK
 * plus the mask of levels at their high end, over at most SB_MAX_OFFSETS
 * levels (more: the one corner with every level low). */
#define SB_MASK LONG_MIN
#define SB_MAX_OFFSETS 3
#define SB_BASE_CORNERS 5
#define SB_CORNERS (2 * SIMBOUND_MAX_SOLO + 3 + (1 << SB_MAX_OFFSETS))

/* What the runs found, per part. */
struct acc {
	double *worst, *best, *rev_min;
	const char **corner;
	unsigned char *seen;     /* a settled run gave this part a value */
	unsigned char *blocked;  /* per island: a part the solver cannot take */
	const char **island_why; /* per island: that part and why, or NULL */
	const char *blocked_why; /* the first such part, or why every island is */
};

struct sb {
	const struct audit *a;
	const struct profile *p;
	struct arena *ar;
	struct stress_result *sr;
	struct simrun_opts o;
	struct acc acc;
	struct stress_fallback *fb;
	double *scale, *dcs, *set; /* the corner being run: swing and offset
				      scales, rail levels */
	double *vmin, *vmax;
	struct dstring ds;       /* ungraded diode strings */
	struct cstring cs;       /* ungraded capacitor strings */
	struct floatnet fn;      /* networks held by capacitors alone */
	double *nmin, *nmax;     /* a run's node extremes, when there are any */
	unsigned long work, total_work; /* Newton iterations times unknowns */
	unsigned long run_work;  /* Newton iterations allowed in one run */
	unsigned long size;      /* unknowns of the circuit (estimate first) */
	size_t real_left;        /* real-diode runs still to come, this one's included */
	struct simrun_flow *flow; /* the currents' run writes here */
	int volts;               /* unproven voltages to simulate */
	uint32_t off[SB_MAX_OFFSETS]; /* the levels the offset corners move */
	size_t noff;
	const char *ideal_only;  /* every run with nearly ideal diodes: why
				    (a diode with a device-level model) */
	const char *approx;      /* the first part simulated with less than
				    its model, and what is left out */
};

static int needs_run(const struct stress_result *sr, const unsigned char *blocked)
{
	for (size_t i = 0; i < sr->n; i++) {
		const struct stress *s = &sr->s[i];
		uint32_t is = sr->island ? sr->island[s->part] : NL_NONE;
		if (s->unproven && stress_qty_is_voltage(s->qty) && !(blocked && is != NL_NONE && blocked[is]))
			return 1;
	}
	return 0;
}

/* Currents are wanted for every stressed part outside a blocked island. */
static int wants_flow(const struct stress_result *sr, const unsigned char *blocked)
{
	for (size_t i = 0; i < sr->n; i++) {
		uint32_t is = sr->island ? sr->island[sr->s[i].part] : NL_NONE;
		if (!(blocked && is != NL_NONE && blocked[is]))
			return 1;
	}
	return 0;
}

/* A source at 0 V with no waveform (a current probe): scaling leaves it. */
static int zero_source(const struct nl_part *pt)
{
	const struct nl_source *src = pt->ext ? pt->ext->src : NULL;
	return src && src->dc == 0 && src->wave == NL_WAVE_NONE && !src->unknown;
}

/* An independent source: a voltage source, or a current source (a
 * winding written in Norton form), whose tolerance the corners apply. */
static int is_source(const struct nl_part *pt)
{
	return pt->kind == NL_V || pt->kind == NL_I;
}

/* Sources with a tolerance or a range: the corners move them. */
static size_t moving_sources(const struct sb *b, uint32_t *out, size_t max)
{
	const struct nl_circuit *c = b->a->er.circuit;
	size_t n = 0;
	for (size_t i = 0; i < nl_part_count(c) && n < max; i++) {
		const struct nl_part *pt = nl_part_at(c, i);
		if (is_source(pt) && (isfinite(b->a->sources[i].max) ||
				      (stress_source_tol(b->a, b->p, (uint32_t)i) > 0 && !zero_source(pt))))
			out[n++] = (uint32_t)i;
	}
	return n;
}

/* 1 when the n >= 3 moving sources are sines of one frequency (the
 * phases of a polyphase supply). */
static int polyphase(const struct sb *b, const uint32_t *src, size_t n)
{
	double f0 = NAN;
	for (size_t k = 0; k < n; k++) {
		const struct nl_part *pt = nl_part_at(b->a->er.circuit, src[k]);
		const struct nl_source *w = pt->ext ? pt->ext->src : NULL;
		if (!w || w->wave != NL_WAVE_SIN || w->nargs < 3 || !(w->args[2] > 0))
			return 0;
		if (k == 0)
			f0 = w->args[2];
		else if (fabs(w->args[2] - f0) > 1e-9 * f0)
			return 0;
	}
	return n >= 3;
}

/* 1 when moving source i carries a level of its own that its tolerance
 * moves apart from any swing: a DC value, a SIN's, SFFM's or EXP's
 * offset, a rail's band. A PULSE or PWL scales whole: its swing, high in
 * these corners, takes its levels with it (the solo corners take it low). */
static int has_offset(const struct sb *b, uint32_t i)
{
	const struct nl_part *pt = nl_part_at(b->a->er.circuit, i);
	const struct nl_source *w = pt->ext ? pt->ext->src : NULL;
	if (isfinite(b->a->sources[i].max))
		return 1;
	if (stress_scales_whole(pt))
		return 0;
	if (!w)
		return 0;
	if (w->wave == NL_WAVE_NONE)
		return w->dc != 0;
	return (w->wave == NL_WAVE_SIN || w->wave == NL_WAVE_SFFM || w->wave == NL_WAVE_EXP) &&
	       w->nargs > 0 && w->args[0] != 0;
}

/* An offset corner: every swing at its high end (a PULSE or PWL whole;
 * at its low end with bit SB_MAX_OFFSETS of mask), and level j of the
 * list off (a DC value, an offset, a rail) at its high end where bit j of
 * mask is set, at its low end elsewhere; levels past the list at their
 * low end; every level high with bit SB_MAX_OFFSETS + 1. A diode from a
 * rail to a SIN riding on an offset sees most with the swing up, the
 * offset down and the rail up. */
static void set_mask(struct sb *b, unsigned mask, const uint32_t *off, size_t m, char *name,
		     size_t n)
{
	const struct nl_circuit *c = b->a->er.circuit;
	for (size_t i = 0; i < nl_part_count(c); i++) {
		const struct nl_part *pt = nl_part_at(c, i);
		double t = stress_source_tol(b->a, b->p, (uint32_t)i);
		int up = mask >> (SB_MAX_OFFSETS + 1) & 1, down = mask >> SB_MAX_OFFSETS & 1;
		for (size_t j = 0; j < m; j++)
			up |= off[j] == i && (mask >> j & 1);
		b->scale[i] = down ? 1 - t : 1 + t;
		b->dcs[i] = stress_scales_whole(pt) ? b->scale[i] : up ? 1 + t : 1 - t;
		b->set[i] = pt->kind == NL_V && isfinite(b->a->sources[i].max)
				    ? (up ? b->a->sources[i].max : b->a->sources[i].min)
				    : NAN;
	}
	size_t w = (size_t)snprintf(name, n, "every swing at its %s end; levels",
				    mask >> SB_MAX_OFFSETS & 1 ? "low" : "high");
	if (mask >> (SB_MAX_OFFSETS + 1) & 1) {
		snprintf(name + w, n - w, " all high");
		return;
	}
	for (size_t j = 0; j < m && w < n; j++)
		w += (size_t)snprintf(name + w, n - w, "%s %.40s %s", j ? "," : "",
				      nl_part_at(c, off[j])->path, mask >> j & 1 ? "high" : "low");
	if (w < n)
		snprintf(name + w, n - w, "%s", m ? "" : " all low");
}

/* Sets the corner: solo < 0 moves everything to one end (high when
 * solo == -1), else source solo high and the others low. */
static void set_corner(struct sb *b, long solo, char *name, size_t n)
{
	const struct nl_circuit *c = b->a->er.circuit;
	if (solo >= SB_MASK && solo < SB_MASK + (4L << SB_MAX_OFFSETS)) {
		set_mask(b, (unsigned)(solo - SB_MASK), b->off, b->noff, name, n);
		return;
	}
	for (size_t i = 0; i < nl_part_count(c); i++) {
		const struct nl_part *pt = nl_part_at(c, i);
		/* solo <= -3: source -solo - 3 low, the others high */
		long low = solo <= -3 ? -solo - 3 : -1;
		int high = solo == -1 || (solo >= 0 && (size_t)solo == i) ||
			   (low >= 0 && (size_t)low != i);
		double t = stress_source_tol(b->a, b->p, (uint32_t)i);
		const struct audit_source *as = &b->a->sources[i];
		b->scale[i] = b->dcs[i] = high ? 1 + t : 1 - t;
		b->set[i] = pt->kind == NL_V && isfinite(as->max) ? (high ? as->max : as->min) : NAN;
	}
	if (solo >= 0)
		snprintf(name, n, "%s at its high end, the other sources at their low end",
			 nl_part_at(c, (size_t)solo)->path);
	else if (solo <= -3)
		snprintf(name, n, "%s at its low end, the other sources at their high end",
			 nl_part_at(c, (size_t)(-solo - 3))->path);
	else
		snprintf(name, n, "every source at its %s end", solo == -1 ? "high" : "low");
}

/* A part's stress from its voltage extremes: a capacitor's largest |V|, a
 * diode's largest reverse voltage (pin 0 is its anode). */
static double peak_of(const struct nl_circuit *c, uint32_t k, const double *vmin,
		      const double *vmax)
{
	return nl_part_at(c, k)->kind == NL_D ? fmax(-vmin[k], 0) : fmax(vmax[k], -vmin[k]);
}

/* Folds one run's extremes into the accumulators. */
static void take(struct sb *b, const char *corner, int real)
{
	const struct nl_circuit *c = b->a->er.circuit;
	struct acc *x = &b->acc;
	for (size_t i = 0; i < b->sr->n; i++) {
		const struct stress *s = &b->sr->s[i];
		uint32_t k = s->part;
		if (!stress_qty_is_voltage(s->qty) || !s->unproven || !isfinite(b->vmin[k]))
			continue;
		double v = peak_of(c, k, b->vmin, b->vmax);
		if (!x->seen[k] || v > x->worst[k]) {
			x->worst[k] = v;
			x->corner[k] = corner;
		}
		if (real)
			x->best[k] = fmin(x->best[k], v);
		x->rev_min[k] = fmin(x->rev_min[k], b->vmin[k]);
		x->seen[k] = 1;
	}
}

/* Why a run gave nothing (in the arena; NULL on out-of-memory). */
static const char *fail_why(struct sb *b, const struct simrun_result *r, const char *corner)
{
	char buf[400];
	const char *what = r->status != SIM_OK ? sim_status_text(r->status)
			 : r->period <= 0 && r->oneshot
			     ? "no source repeats, so there is no period to take currents over"
			 : r->period <= 0 ? "no source repeats, and the run from switch-on did not settle"
					  : "the steady state was not reached within the periods allowed";
	snprintf(buf, sizeof buf, "the simulation (%.200s) failed: %s", corner, what);
	return arena_strdup(b->ar, buf);
}

/* A real run still rising when its periods ran out stands only where the
 * settled nearly-ideal run of the same corner stays above it everywhere:
 * charging from zero approaches from below, and the ideal diodes' steady
 * state is then the ceiling it rises to. */
static int under_ideal(const struct sb *b, const double *imin, const double *imax)
{
	const struct nl_circuit *c = b->a->er.circuit;
	for (size_t i = 0; i < b->sr->n; i++) {
		const struct stress *s = &b->sr->s[i];
		uint32_t k = s->part;
		if (!stress_qty_is_voltage(s->qty) || !s->unproven || !isfinite(b->vmin[k]))
			continue;
		double real = peak_of(c, k, b->vmin, b->vmax), ideal = peak_of(c, k, imin, imax);
		if (!(real <= ideal * (1 + 1e-3) + 1e-3))
			return 0;
	}
	return 1;
}

/* The currents of the all-high corner's real run, or why there are none;
 * 0 on out-of-memory. */
static int keep_flow(struct sb *b, const struct simrun_result *r, const char *name)
{
	struct stress_fallback *fb = b->fb;
	size_t np = nl_part_count(b->a->er.circuit);
	if (r->status != SIM_OK || r->period <= 0 || !r->settled) {
		fb->flow_why = fail_why(b, r, name);
		return fb->flow_why != NULL;
	}
	struct stress_flow *f = arena_alloc(b->ar, (np + 1) * sizeof *f);
	char buf[1000];
	snprintf(buf, sizeof buf, "simulated, %.200s; diodes as modelled%s", name,
		 b->approx ? b->approx : "");
	fb->flow_corner = arena_strdup(b->ar, buf);
	if (!f || !fb->flow_corner)
		return 0;
	for (size_t i = 0; i < np; i++)
		f[i] = (struct stress_flow){b->flow[i].avg, b->flow[i].rms, b->flow[i].peak,
					    b->flow[i].power};
	fb->flow = f;
	fb->flow_period = r->period;
	return 1;
}

/* A run settled at the solver's noise floor: its period's extremes may
 * be off by that much either way (sim_stats), a two-pin part's by no more
 * than its two nodes' levels moved between periods (sim_node_noise): the
 * 1.2 V that a 700 V rail wanders is not a 39 V zener's beside it. */
static void widen(const struct nl_circuit *c, double *vmin, double *vmax, size_t n,
		  double noise, const double *node_noise)
{
	for (size_t i = 0; noise > 0 && i < n; i++) {
		const struct nl_part *p = nl_part_at(c, i);
		const uint32_t *pin = nl_pins(c, p);
		double w = noise;
		if (node_noise && p->npins == 2)
			w = fmin(noise, node_noise[pin[0]] + node_noise[pin[1]]);
		vmin[i] -= w, vmax[i] += w;
	}
}

/* A capacitor between two floating groups, or at the boundary of a group
 * that such a capacitor joins to another: its groups' levels are a joint
 * problem floatnet does not solve (members of ungraded strings aside,
 * which their string bounds). */
static int float_tangled(const struct sb *b, uint32_t k)
{
	const struct floatnet *f = &b->fn;
	if (!f->ncoupled || (b->cs.n && b->cs.of[k] != NL_NONE))
		return 0;
	return f->coupled[k] || (f->cap[k] != NL_NONE && f->tangled[f->cap[k]]);
}

/* Floating networks (floatnet.h): boundary capacitors widened over the
 * levels leakage allows; tangled ones (float_tangled) left without a
 * number. */
static void float_widen(struct sb *b)
{
	const struct nl_circuit *c = b->a->er.circuit;
	floatnet_widen(c, &b->fn, b->vmin, b->vmax, b->nmin, b->nmax);
	for (size_t k = 0; b->fn.ncoupled && k < nl_part_count(c); k++) {
		const uint32_t *q = nl_pins(c, nl_part_at(c, k));
		if (!b->fn.coupled[k] || (b->cs.n && b->cs.of[k] != NL_NONE))
			continue;
		for (int j = 0; j < 2; j++)
			if (b->fn.group[q[j]] != NL_NONE)
				b->fn.tangled[b->fn.group[q[j]]] = 1;
	}
	for (uint32_t k = 0; b->fn.ncoupled && k < nl_part_count(c); k++)
		if (float_tangled(b, k))
			b->vmin[k] = -INFINITY, b->vmax[k] = INFINITY;
}

/* One corner: with nearly ideal diodes (when asked) and as modelled;
 * with flows the real run's currents are kept. */
static int run_corner(struct sb *b, const char *name, double *imin, double *imax, int ideal,
		      int flows)
{
	static const char *const how[3] = {"; diodes nearly ideal", "; diodes as modelled",
					   "; diodes as modelled (still rising: under the ideal run)"};
	const struct nl_circuit *c = b->a->er.circuit;
	size_t np = nl_part_count(c) + 1;
	struct hr_alloc h = *arena_hook(b->ar);
	int ideal_ok = 0;
	if (b->ideal_only) /* one run, its diodes nearly ideal, standing in for the real one */
		ideal = flows = 0;
	for (int real = !ideal; real < 2; real++) {
		if (b->work >= b->total_work) {
			const char *why = "the simulation needs more work than allowed for one file";
			if (b->volts && !b->fb->why)
				b->fb->why = why;
			if (flows && !b->fb->flow_why)
				b->fb->flow_why = why;
			return 1;
		}
		struct simrun_result r;
		char buf[900];
		b->o.ideal_diodes = !real || b->ideal_only;
		/* work is Newton iterations times unknowns: a run may use what
		   is left of the file's allowance, up to its own limit; the
		   nearly-ideal run, an extra, only its share, so that it never
		   starves the real runs every number depends on (sharp diodes
		   can keep a lightly damped circuit ringing for ever) */
		unsigned long left = (b->total_work - b->work) / b->size;
		if (!real)
			left /= b->real_left + 1;
		b->o.max_work = left < b->run_work ? (left ? left : 1) : b->run_work;
		b->o.flow = flows && real ? b->flow : NULL;
		/* the currents' run settles further where it can (simrun.h) */
		b->o.flow_tol = b->o.flow ? SIMBOUND_FLOW_TOL : 0;
		simrun_peaks(c, &b->o, &h, b->vmin, b->vmax, b->nmin, b->nmax, &r);
		b->o.flow = NULL;
		b->o.flow_tol = 0;
		b->fb->runs++;
		if (r.stats.unknowns)
			b->size = r.stats.unknowns;
		b->work += r.stats.newton * b->size;
		if (r.status == SIM_OOM || (flows && real && !keep_flow(b, &r, name)))
			return 0;
		int ran = r.status == SIM_OK && (r.period > 0 || r.oneshot);
		int rising = real && ran && !r.settled && ideal_ok && under_ideal(b, imin, imax);
		if (ran && !r.settled)
			b->fb->unsettled++;
		if (!ran || (!r.settled && !rising)) {
			/* a corner whose real run fails leaves the worst case
			   unknown: nothing simulated may stand for it */
			if (b->volts && real && !b->fb->why && !(b->fb->why = fail_why(b, &r, name)))
				return 0;
			continue;
		}
		if (b->nmin) {
			dstring_widen(c, &b->ds, b->nmin, b->nmax, b->vmin);
			cstring_widen(c, &b->cs, b->nmin, b->nmax, b->vmin, b->vmax);
		}
		if (!r.oneshot) /* from the zero state, history fixes the level */
			float_widen(b);
		if (!real) {
			ideal_ok = 1;
			memcpy(imin, b->vmin, np * sizeof *imin);
			memcpy(imax, b->vmax, np * sizeof *imax);
		}
		char held[300] = "";
		if (r.held != NL_NONE)
			snprintf(held, sizeof held,
				 "; %.80s's PULSE (period %.3g s, width %.3g s) held at its second "
				 "level after its rise, its fall not run",
				 nl_part_at(c, r.held)->path, r.held_per, r.held_pw);
		snprintf(buf, sizeof buf, "simulated, %.200s%s%s%s%s%s", name,
			 b->ideal_only ? "; diodes nearly ideal (a device-level diode model)"
				       : how[rising ? 2 : real],
			 r.oneshot ? "; no source repeats: from switch-on through the sources' "
				     "events to the settled state"
				   : "",
			 held, b->approx ? b->approx : "",
			 r.coarse ? "; its measured period at the run's own tolerance (the finer "
				    "steps failed: docs/solver.md, \"The measured period\")"
			 : r.stats.fine_cut ? "; the end of its measured period at the run's own "
					      "tolerance (the finer steps used up their share of "
					      "the run's allowance: docs/solver.md, \"The measured "
					      "period\")"
					    : "");
		const char *corner = arena_strdup(b->ar, buf);
		if (!corner)
			return 0;
		widen(c, b->vmin, b->vmax, np - 1, r.stats.noise, b->o.node_noise);
		take(b, corner, real);
	}
	return 1;
}

/* A part kept as opaque, its connections not known, could touch any node
 * of its subcircuit instance (or, at the top level, of the circuit): every
 * island with a part of that instance gets no simulated number. */
static void block_island(struct sb *b, uint32_t is, const char *why)
{
	b->acc.blocked[is] = 1;
	if (!b->acc.island_why[is])
		b->acc.island_why[is] = why;
}

static void block_instance(struct sb *b, const char *path, const char *why)
{
	const struct nl_circuit *c = b->a->er.circuit;
	const char *dot = strrchr(path, '.');
	size_t n = dot ? (size_t)(dot - path) + 1 : 0;
	for (size_t i = 0; i < nl_part_count(c); i++)
		if (strncmp(nl_part_at(c, i)->path, path, n) == 0 && b->sr->island[i] != NL_NONE)
			block_island(b, b->sr->island[i], why);
}

/* Islands are cut at the nodes sources hold, but a transformer's coupling
 * (K) and a current-controlled source (F, H) carry a part's effect across
 * the cut: a part left out on one side changes what the other side sees.
 * Such islands form one group (a union-find over island roots, which are
 * node indices); a blocked island blocks its group. */
static uint32_t group_of(uint32_t *up, uint32_t n)
{
	while (up[n] != n) {
		up[n] = up[up[n]];
		n = up[n];
	}
	return n;
}

static void couple(struct sb *b, uint32_t *up, uint32_t p1, uint32_t p2)
{
	uint32_t a = p1 == NL_NONE ? NL_NONE : b->sr->island[p1];
	uint32_t z = p2 == NL_NONE ? NL_NONE : b->sr->island[p2];
	if (a != NL_NONE && z != NL_NONE)
		up[group_of(up, a)] = group_of(up, z);
}

/* The current through sensing source v is what the parts at one of its
 * nodes (not ground) carry, through any chain of voltage sources: every
 * part met on the way is coupled to part f. seen[] holds a stamp per node
 * so that no clearing is needed between calls; a voltage source is pushed
 * at most once from each of its two nodes, so the stack holds 2 np + 1. */
struct walk {
	uint32_t *up, *seen, *stack, stamp;
};

static void couple_sensed(struct sb *b, struct walk *w, uint32_t f, uint32_t v)
{
	const struct nl_circuit *c = b->a->er.circuit;
	const uint32_t *q = nl_pins(c, nl_part_at(c, v));
	size_t top = 0;
	w->stamp++;
	w->stack[top++] = q[0] == NL_GROUND ? q[1] : q[0];
	while (top > 0) {
		uint32_t n = w->stack[--top], k;
		if (n == NL_GROUND || w->seen[n] == w->stamp)
			continue;
		w->seen[n] = w->stamp;
		const uint32_t *adj = nl_adjacency(c, n, &k);
		for (uint32_t j = 0; j < k; j++) {
			const struct nl_part *p = nl_part_at(c, adj[j]);
			couple(b, w->up, f, adj[j]);
			if (p->kind == NL_V && adj[j] != v && p->npins == 2) {
				const uint32_t *r = nl_pins(c, p);
				w->stack[top++] = r[0] == n ? r[1] : r[0];
			}
		}
	}
}

static int block_groups(struct sb *b)
{
	const struct nl_circuit *c = b->a->er.circuit;
	size_t nn = nl_node_count(c) + 1, np = nl_part_count(c);
	struct walk w = {arena_alloc(b->ar, nn * sizeof *w.up),
			 arena_zalloc(b->ar, nn * sizeof *w.seen),
			 arena_alloc(b->ar, (2 * np + 2) * sizeof *w.stack), 0};
	uint32_t *up = w.up;
	if (!w.up || !w.seen || !w.stack)
		return 0;
	for (size_t n = 0; n < nn; n++)
		up[n] = (uint32_t)n;
	for (size_t i = 0; i < np; i++) {
		const struct nl_part *p = nl_part_at(c, i);
		if (!p->ext)
			continue;
		if (p->kind == NL_K && p->ext->coupled_part)
			for (uint32_t k = 1; k < p->ext->ncoupled; k++)
				couple(b, up, p->ext->coupled_part[0], p->ext->coupled_part[k]);
		else if (p->kind == NL_K)
			couple(b, up, p->ext->ctrl_part[0], p->ext->ctrl_part[1]);
		else if ((p->kind == NL_F || p->kind == NL_H) && p->ext->ctrl_part[0] != NL_NONE)
			couple_sensed(b, &w, (uint32_t)i, p->ext->ctrl_part[0]);
	}
	/* the first blocked island of a group gives the group its reason */
	for (size_t n = 0; n < nn; n++)
		if (b->acc.blocked[n] && !b->acc.blocked[group_of(up, (uint32_t)n)])
			block_island(b, group_of(up, (uint32_t)n), b->acc.island_why[n]);
	for (size_t n = 0; n < nn; n++)
		if (b->acc.blocked[group_of(up, (uint32_t)n)])
			block_island(b, (uint32_t)n, b->acc.island_why[group_of(up, (uint32_t)n)]);
	return 1;
}

/* "X has no model in the solver either (why)", in the arena. */
static const char *no_model(struct sb *b, uint32_t part, const char *why)
{
	char buf[1500];
	snprintf(buf, sizeof buf, "%s has no model in the solver either (%s)",
		 nl_part_at(b->a->er.circuit, part)->path, why);
	return arena_strdup(b->ar, buf);
}

/* Diodes the solver takes only as nearly ideal (device-level models):
 * when they are all it lacks, every run is made with nearly ideal diodes
 * and none is left out. The smallest forward drop is the worst for
 * reverse voltages and for the charge capacitors take, but not the real
 * circuit's lower bound, so these runs give no best case (fill). */
static int ideal_stand_in(struct sb *b, unsigned char *mask, size_t *count,
			  struct sim_refusal *first)
{
	const struct nl_circuit *c = b->a->er.circuit;
	size_t np = nl_part_count(c);
	if (!*count)
		return 1;
	for (size_t i = 0; i < np; i++)
		if (mask[i] && !sim_part_supported_ideal(c, i))
			return 1;
	char buf[600];
	snprintf(buf, sizeof buf,
		 "%s's model (%.40s) is not a compact diode model: every diode taken as nearly "
		 "ideal, whose smaller forward drop is the worse case for reverse voltages and "
		 "charge",
		 nl_part_at(c, first->part)->path, nl_part_at(c, first->part)->model->type);
	if (!(b->ideal_only = arena_strdup(b->ar, buf)))
		return 0;
	memset(mask, 0, np + 1);
	*count = 0;
	b->o.ideal_diodes = 1;
	return 1;
}

/* The first part simulated with less than its model (a level-3 MOSFET
 * run as level 1): the simulated numbers say so. */
static int note_approx(struct sb *b, const unsigned char *mask)
{
	const struct nl_circuit *c = b->a->er.circuit;
	size_t first = NL_NONE, more = 0;
	for (size_t i = 0; i < nl_part_count(c); i++)
		if (!mask[i] && sim_part_approx(c, i)) {
			more += first != NL_NONE;
			first = first != NL_NONE ? first : i;
		}
	if (first == NL_NONE)
		return 1;
	char buf[700], also[60] = "";
	if (more)
		snprintf(also, sizeof also, " (and %zu more part%s like it)", more, more > 1 ? "s" : "");
	snprintf(buf, sizeof buf, "; %.200s%s %s", nl_part_at(c, first)->path, also,
		 sim_part_approx(c, first));
	return (b->approx = arena_strdup(b->ar, buf)) != NULL;
}

/* Parts the solver has no model for are left open; their islands get no
 * simulated number (the circuit simulated would not be the real one), each
 * with the first such part of that island as the reason. */
static int leave_out(struct sb *b)
{
	const struct nl_circuit *c = b->a->er.circuit;
	size_t count;
	struct sim_refusal first;
	unsigned char *mask = simrun_unsupported(c, b->ar, &count, &first);
	if (!mask || !ideal_stand_in(b, mask, &count, &first))
		return 0;
	for (size_t i = 0; i < nl_part_count(c); i++) {
		uint32_t is = b->sr->island[i];
		struct sim_refusal ref;
		if (!mask[i] || (is == NL_NONE && nl_part_at(c, i)->npins > 0))
			continue;
		sim_part_supported(c, i, &ref);
		const char *why = no_model(b, (uint32_t)i, ref.why);
		if (!why)
			return 0;
		if (is != NL_NONE)
			block_island(b, is, why);
		if (nl_part_at(c, i)->npins == 0)
			block_instance(b, nl_part_at(c, i)->path, why);
	}
	if (count && !(b->acc.blocked_why = no_model(b, first.part, first.why)))
		return 0;
	if (count && !block_groups(b))
		return 0;
	if (!note_approx(b, mask))
		return 0;
	b->o.leave_out = mask;
	b->o.gshunt = SIMRUN_GSHUNT;
	b->o.oneshot = 1;
	b->o.hold_slow = 1;
	return 1;
}

static int alloc_all(struct sb *b)
{
	const struct nl_circuit *c = b->a->er.circuit;
	size_t np = nl_part_count(c) + 1, nn = nl_node_count(c) + 1;
	struct acc *x = &b->acc;
	x->worst = arena_alloc(b->ar, np * sizeof *x->worst);
	x->best = arena_alloc(b->ar, np * sizeof *x->best);
	x->rev_min = arena_alloc(b->ar, np * sizeof *x->rev_min);
	x->corner = arena_zalloc(b->ar, np * sizeof *x->corner);
	x->seen = arena_zalloc(b->ar, np);
	x->blocked = arena_zalloc(b->ar, nn);
	x->island_why = arena_zalloc(b->ar, nn * sizeof *x->island_why);
	b->scale = arena_alloc(b->ar, np * sizeof *b->scale);
	b->set = arena_alloc(b->ar, np * sizeof *b->set);
	b->dcs = arena_alloc(b->ar, np * sizeof *b->dcs);
	b->vmin = arena_alloc(b->ar, np * sizeof *b->vmin);
	b->vmax = arena_alloc(b->ar, np * sizeof *b->vmax);
	b->fb = arena_zalloc(b->ar, sizeof *b->fb);
	b->flow = arena_alloc(b->ar, np * sizeof *b->flow);
	for (size_t i = 0; x->best && x->rev_min && i < np; i++)
		x->best[i] = x->rev_min[i] = INFINITY;
	b->o.node_noise = arena_alloc(b->ar, nn * sizeof *b->o.node_noise);
	if (!b->o.node_noise || !dstring_find(c, b->ar, &b->ds) || !cstring_find(c, b->ar, &b->cs) ||
	    !floatnet_find(c, b->ar, &b->fn))
		return 0;
	b->o.nprobe = b->fn.npair; /* the floating networks' leakage paths */
	b->o.probe_pos = b->fn.pos;
	b->o.probe_neg = b->fn.neg;
	b->o.probe_min = b->fn.pmin;
	b->o.probe_max = b->fn.pmax;
	b->o.probe_mean = b->fn.mean;
	if (b->ds.n || b->cs.n) {
		b->nmin = arena_alloc(b->ar, nn * sizeof *b->nmin);
		b->nmax = arena_alloc(b->ar, nn * sizeof *b->nmax);
		if (!b->nmin || !b->nmax)
			return 0;
	}
	return x->worst && x->best && x->rev_min && x->corner && x->seen && x->blocked &&
	       x->island_why && b->scale && b->dcs && b->set && b->vmin && b->vmax && b->fb && b->flow;
}

/* A corner failed: no simulated value is a worst case any more. */
static void forget(struct sb *b)
{
	const struct nl_circuit *c = b->a->er.circuit;
	memset(b->acc.seen, 0, nl_part_count(c) + 1);
	if (!b->acc.blocked_why)
		b->acc.blocked_why = b->fb->why;
	for (size_t i = 0; i < b->sr->n; i++) {
		uint32_t is = b->sr->island[b->sr->s[i].part];
		if (is != NL_NONE && b->sr->s[i].unproven)
			block_island(b, is, b->fb->why);
	}
}

/* Capacitors start at the analysis's best-case DC where it has one, as
 * --verify does: settling then takes a few periods instead of thousands. */
static int start_caps(struct sb *b)
{
	const struct nl_circuit *c = b->a->er.circuit;
	size_t np = nl_part_count(c);
	double *v0 = arena_alloc(b->ar, (np + 1) * sizeof *v0);
	if (!v0)
		return 0;
	for (size_t i = 0; i < np; i++) {
		const struct nl_part *pt = nl_part_at(c, i);
		v0[i] = pt->kind == NL_C && pt->npins == 2 ? stress_low_dc(b->a, b->sr, b->ar, pt) : NAN;
	}
	b->o.cap_v0 = v0;
	return 1;
}

/* A proven stress whose proof the solver is asked to check against
 * (stress.h): the simulated number where it is above the proof (by more
 * than the analysis's gap), or below it when lower_ok (a load the proof
 * leaves out: loadout_tighten), else the proof as it was (also where the
 * solver gives none). raised_why, when given, replaces the reason where
 * the simulated number is above the proof. */
static void against_proof(struct sb *b, struct stress *s, int unseen, int lower_ok,
			  const char *raised_why)
{
	const struct acc *x = &b->acc;
	uint32_t k = s->part;
	double raw = unseen ? NAN : x->worst[k];
	double sim = raw * (1 + SIMBOUND_REL) + SIMBOUND_ABS;
	int raised = raw > s->analytic * (1 + STRESS_GAP_REL) + STRESS_GAP_ABS;
	s->tighten = s->floor = 0;
	if (!raised && !(lower_ok && sim < s->analytic)) {
		s->unproven = NULL;
		s->worst = s->analytic;
		return;
	}
	if (raised && raised_why)
		s->unproven = raised_why;
	s->basis = SB_SIMULATED;
	s->worst = sim;
	s->best = b->ideal_only ? NAN : isfinite(x->best[k]) ? fmin(x->best[k], s->best) : s->best;
	s->rev_min = x->rev_min[k];
	s->corner = x->corner[k];
	const struct nl_part *pt = nl_part_at(b->a->er.circuit, k);
	if (pt->kind == NL_C)
		stress_set_energy(s, pt->value * (pt->ext ? pt->ext->mult : 1.0));
	b->fb->given++;
}

/* A proven number the load leaves loose (loadout_tighten): the simulated
 * one where it is lower, or where it is above the proof (the load raised
 * it: a doubler's pump capacitor whose drive rides on a moving rail,
 * recharged by the output diode each time the rail climbs). */
static void tighten(struct sb *b, struct stress *s, int unseen)
{
	char why[200];
	snprintf(why, sizeof why, "the structure's load takes it above the unloaded proof "
		 "(%.4g V): its charge is moved, not drawn out", s->analytic);
	against_proof(b, s, unseen, 1, arena_strdup(b->ar, why));
}

/* The corner of a member of an ungraded string, with why its number is
 * the string's (dstring.h); the corner as it was on out-of-memory. */
static const char *string_corner(struct sb *b, uint32_t k, const char *corner)
{
	uint32_t s = b->ds.n ? b->ds.of[k] : NL_NONE;
	const char *cnote = cstring_note(b->a->er.circuit, &b->cs, k, b->ar);
	if (!cnote)
		cnote = floatnet_note(b->a->er.circuit, &b->fn, k, b->ar);
	char buf[1200];
	if (cnote) {
		snprintf(buf, sizeof buf, "%.700s; %s", corner, cnote);
		const char *out = arena_strdup(b->ar, buf);
		return out ? out : corner;
	}
	if (s == NL_NONE)
		return corner;
	snprintf(buf, sizeof buf,
		 "%.900s; one of %u diodes in series with nothing at their joints: leakage and "
		 "junction capacitance set their sharing, so each may take the string's whole "
		 "reverse voltage (up to its own BV)", corner, b->ds.count[s]);
	const char *out = arena_strdup(b->ar, buf);
	return out ? out : corner;
}

/* Writes the numbers into the unproven stresses. */
static void fill(struct sb *b)
{
	const struct nl_circuit *c = b->a->er.circuit;
	const struct acc *x = &b->acc;
	for (size_t i = 0; i < b->sr->n; i++) {
		struct stress *s = &b->sr->s[i];
		uint32_t k = s->part, is = b->sr->island[k];
		if (!stress_qty_is_voltage(s->qty) || !s->unproven)
			continue;
		int blocked = is != NL_NONE && x->blocked[is];
		if (s->tighten) {
			tighten(b, s, blocked || !x->seen[k]);
			continue;
		}
		if (s->floor) { /* the proof as a floor only: stress.c banded_pins */
			against_proof(b, s, blocked || !x->seen[k], 0, NULL);
			continue;
		}
		if (blocked || !x->seen[k]) {
			s->bounded = 0;
			s->basis = SB_NONE;
			s->best = s->worst = s->rev_min = NAN;
			if (blocked)
				s->unproven = x->island_why[is] ? x->island_why[is] : x->blocked_why;
			else if (float_tangled(b, k))
				s->unproven = FLOATNET_COUPLED_WHY;
			b->fb->left++;
			continue;
		}
		s->bounded = 1;
		s->basis = SB_SIMULATED;
		s->worst = x->worst[k] * (1 + SIMBOUND_REL) + SIMBOUND_ABS;
		s->best = b->ideal_only ? NAN : isfinite(x->best[k]) ? x->best[k] : x->worst[k];
		s->rev_min = x->rev_min[k];
		s->corner = string_corner(b, k, x->corner[k]);
		if ((b->ds.n && b->ds.of[k] != NL_NONE) || /* its share may be nothing */
		    (b->cs.n && b->cs.of[k] != NL_NONE) || (b->fn.ngroup && b->fn.cap[k] != NL_NONE))
			s->best = NAN;
		const struct nl_part *pt = nl_part_at(c, k);
		if (pt->kind == NL_C)
			stress_set_energy(s, pt->value * (pt->ext ? pt->ext->mult : 1.0));
		b->fb->given++;
	}
}

/* Appends the offset corners to corners[0..nc) and returns the new
 * count: with up to SB_MAX_OFFSETS toleranced levels every mask but the
 * all-high one (that is the all-high corner), with more the one mask
 * with every level low. */
static size_t offset_corners(struct sb *b, int volts, long *corners, size_t nc)
{
	const struct nl_circuit *c = b->a->er.circuit;
	uint32_t all[SB_MAX_OFFSETS + 1];
	size_t m = 0;
	if (!volts)
		return nc;
	for (size_t i = 0; i < nl_part_count(c) && m <= SB_MAX_OFFSETS; i++) {
		const struct nl_part *pt = nl_part_at(c, i);
		if (pt->kind == NL_V && has_offset(b, (uint32_t)i) &&
		    (isfinite(b->a->sources[i].max) || stress_tolerance(b->a, b->p, (uint32_t)i) > 0))
			all[m++] = (uint32_t)i;
	}
	if (m == 0)
		return nc;
	if (m > SB_MAX_OFFSETS) {
		b->noff = 0;
		corners[nc++] = SB_MASK;
		corners[nc++] = SB_MASK + (long)(3U << SB_MAX_OFFSETS);
		return nc;
	}
	memcpy(b->off, all, m * sizeof *all);
	b->noff = m;
	for (unsigned mask = 0; mask + 1 < 1U << m; mask++)
		corners[nc++] = SB_MASK + (long)mask;
	/* and every swing low with every level high: a clipper's output
	   leans furthest to one side with a small swing on a high offset */
	corners[nc++] = SB_MASK + (long)(3U << SB_MAX_OFFSETS);
	return nc;
}

/* 1 when the corner just set moves every source as corner k of the
 * earlier ones did (sig holds theirs: scale, offset scale and level per
 * source, over the first SB_SIG sources); such a corner is not run. */
#define SB_SIG 64
static int seen_corner(const struct sb *b, double (*sig)[3 * SB_SIG], size_t k)
{
	const struct nl_circuit *c = b->a->er.circuit;
	size_t n = 0;
	for (size_t i = 0; i < nl_part_count(c); i++) {
		if (!is_source(nl_part_at(c, i)))
			continue;
		if (n == SB_SIG)
			return 0; /* too many sources to tell */
		/* a DC value has no swing to scale, a source with no level of
		   its own no level (a PULSE's moves with its swing) */
		const struct nl_source *w = nl_part_at(c, i)->ext ? nl_part_at(c, i)->ext->src : NULL;
		int swing = w && w->wave != NL_WAVE_NONE;
		sig[k][3 * n] = swing ? b->scale[i] : 0;
		sig[k][3 * n + 1] = has_offset(b, (uint32_t)i) ? b->dcs[i] : 0;
		sig[k][3 * n + 2] = isnan(b->set[i]) ? -HUGE_VAL : b->set[i];
		n++;
	}
	for (size_t j = 0; j < k; j++)
		if (!memcmp(sig[j], sig[k], 3 * n * sizeof **sig))
			return 1;
	return 0;
}

int simbound_run(const struct audit *a, const struct profile *p,
		 const struct simbound_limits *lim, struct arena *ar,
		 struct stress_result *sr)
{
	struct sb b;
	uint32_t solo[SIMBOUND_MAX_SOLO];
	char names[SB_CORNERS][200];
	if (!needs_run(sr, NULL) && !wants_flow(sr, NULL))
		return 1;
	memset(&b, 0, sizeof b);
	b.a = a, b.p = p, b.ar = ar, b.sr = sr;
	if (!alloc_all(&b) || !leave_out(&b))
		return 0;
	sr->fallback = b.fb;
	/* a copy: a failed corner later blocks more islands for the voltages
	   (forget), not for the currents of the corner that ran */
	size_t nn = nl_node_count(a->er.circuit) + 1;
	unsigned char *fblock = arena_alloc(ar, nn);
	if (!fblock)
		return 0;
	memcpy(fblock, b.acc.blocked, nn);
	b.fb->flow_blocked = fblock;
	b.fb->flow_blocked_why = b.acc.blocked_why;
	int volts = b.volts = needs_run(sr, b.acc.blocked), flows = wants_flow(sr, b.acc.blocked);
	if (b.ideal_only && flows) /* currents need the diodes as they are */
		b.fb->flow_why = b.ideal_only;
	flows = flows && !b.ideal_only;
	if (!volts && !flows) {
		fill(&b); /* every stressed island has a part the solver cannot take */
		b.fb->flow_why = b.acc.blocked_why;
		return 1;
	}
	b.o.ac_scale = b.scale;
	b.o.dc_scale = b.dcs;
	b.o.dc_set = b.set;
	if (!start_caps(&b))
		return 0;
	b.o.max_periods = lim && lim->max_periods ? lim->max_periods : 4000;
	b.run_work = lim && lim->max_work ? lim->max_work : 10000000;
	if (!volts) {
		/* the currents alone: a tenth of the allowance (simbound.h) */
		b.o.max_periods = b.o.max_periods < SIMBOUND_FLOW_PERIODS ? b.o.max_periods
									  : SIMBOUND_FLOW_PERIODS;
		b.run_work = b.run_work < SIMBOUND_FLOW_WORK ? b.run_work : SIMBOUND_FLOW_WORK;
	}
	b.size = nl_node_count(a->er.circuit) + 1;
	size_t ns = moving_sources(&b, solo, SIMBOUND_MAX_SOLO);
	long corners[SB_CORNERS] = {-1, -2};
	/* every voltage proven: the currents' run alone */
	size_t nc = !volts ? 1 : ns ? 2 : 1;
	for (size_t k = 0; volts && ns > 1 && k < ns; k++)
		corners[nc++] = (long)solo[k];
	/* a polyphase supply (three sines or more of one frequency): each
	   alone low as well; with two sources those are the corners above */
	for (size_t k = 0; volts && polyphase(&b, solo, ns) && k < ns; k++)
		corners[nc++] = -3 - (long)solo[k];
	nc = offset_corners(&b, volts, corners, nc);
	size_t np = nl_part_count(a->er.circuit) + 1;
	double *imin = arena_alloc(ar, np * sizeof *imin), *imax = arena_alloc(ar, np * sizeof *imax);
	if (!imin || !imax)
		return 0;
	b.total_work = lim && lim->total_work ? lim->total_work : SIMBOUND_TOTAL_WORK;
	/* the allowance is sized for SB_BASE_CORNERS corners; each one more
	   (the level corners of several toleranced rails) gets its share */
	if (nc > SB_BASE_CORNERS)
		b.total_work = b.total_work / SB_BASE_CORNERS * nc;
	if (!volts && b.total_work > SIMBOUND_FLOW_TOTAL)
		b.total_work = SIMBOUND_FLOW_TOTAL;
	/* nearly ideal diodes at the all-high corner only, where the
	   analysis's own worst case lies; the real diodes everywhere */
	double(*sig)[3 * SB_SIG] = arena_alloc(ar, SB_CORNERS * sizeof *sig);
	if (!sig)
		return 0;
	for (size_t k = 0; k < nc && !b.fb->why; k++) {
		set_corner(&b, corners[k], names[k], sizeof names[k]);
		if (k > 0 && seen_corner(&b, sig, k))
			continue;
		b.real_left = nc - k;
		if (!run_corner(&b, names[k], imin, imax, volts && k == 0, flows && k == 0))
			return 0;
	}
	if (b.fb->why)
		forget(&b);
	fill(&b);
	for (size_t i = 0; i < sr->n; i++)
		if (sr->s[i].bounded && stress_qty_is_voltage(sr->s[i].qty))
			sr->max_voltage = fmax(sr->max_voltage, sr->s[i].worst);
	return 1;
}
