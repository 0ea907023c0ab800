/* verify.c: see verify.h. */
#include "verify.h"

#include <math.h>
#include <stdio.h>
#include <string.h>

#include "num.h"
#include "simrun.h"
#include "simsrc.h"


/* The corners (VERIFY_CORNERS): every amplitude at +tol; the offsets and
 * rails at the top of their band (low 0) or at the bottom (low 1). Per
 * part source scales and capacitor start voltages; *moves is set when the
 * low corner differs from the high one. */
static int corner(const struct audit *a, struct arena *ar, const struct profile *p,
		  const struct stress_result *sr, struct simrun_opts *o,
		  size_t *started, int low, int *moves)
{
	const struct nl_circuit *c = a->er.circuit;
	size_t np = nl_part_count(c);
	double *k = arena_alloc(ar, (np + 1) * sizeof *k);
	double *dk = arena_alloc(ar, (np + 1) * sizeof *dk);
	double *set = arena_alloc(ar, (np + 1) * sizeof *set);
	double *v0 = arena_alloc(ar, (np + 1) * sizeof *v0);
	if (!k || !dk || !set || !v0)
		return 0;
	*started = 0;
	for (size_t i = 0; i < np; i++) {
		const struct nl_part *pt = nl_part_at(c, i);
		double tol = stress_source_tol(a, p, (uint32_t)i);
		int whole = stress_scales_whole(pt);
		k[i] = 1 + tol;
		dk[i] = low && !whole ? 1 - tol : 1 + tol;
		set[i] = pt->kind != NL_V ? NAN : low ? a->sources[i].min : a->sources[i].max;
		if ((tol > 0 && !whole) || (pt->kind == NL_V && isfinite(a->sources[i].min)))
			*moves = 1;
		v0[i] = pt->kind == NL_C && pt->npins == 2 ? stress_low_dc(a, sr, ar, pt) : NAN;
		if (isfinite(v0[i]))
			(*started)++;
	}
	memset(o, 0, sizeof *o);
	o->ac_scale = k;
	o->dc_scale = dk;
	o->dc_set = set;
	o->cap_v0 = v0;
	return 1;
}

/* Every stressed part's waveform is traced (one per part, not per stress). */
static int traces(struct arena *ar, struct stress_result *sr, struct simrun_opts *o)
{
	uint32_t *parts = arena_alloc(ar, (sr->n + 1) * sizeof *parts);
	size_t n = 0;
	if (!parts)
		return 0;
	for (size_t i = 0; i < sr->n; i++)
		if (stress_qty_is_voltage(sr->s[i].qty))
			parts[n++] = sr->s[i].part;
	double *tr = arena_alloc(ar, (n * STRESS_TRACE_POINTS + 1) * sizeof *tr);
	if (!tr)
		return 0;
	for (size_t k = 0; k < n * STRESS_TRACE_POINTS; k++)
		tr[k] = NAN;
	o->ntrace = n;
	o->trace_parts = parts;
	o->trace_points = STRESS_TRACE_POINTS;
	o->trace = tr;
	return 1;
}

static int near_open(const struct nl_circuit *c, uint32_t part,
		     const unsigned char *open_node)
{
	const uint32_t *pin = nl_pins(c, nl_part_at(c, part));
	return open_node && (open_node[pin[0]] || open_node[pin[1]]);
}

static void record(struct stress_result *sr, const double *vmin, const double *vmax,
		   const struct nl_circuit *c, const struct simrun_opts *o,
		   const unsigned char *open_node, const unsigned char *low)
{
	for (size_t i = 0, k = 0; i < sr->n; i++) {
		struct stress *s = &sr->s[i];
		if (!stress_qty_is_voltage(s->qty))
			continue;
		const double *w = o->trace + k++ * STRESS_TRACE_POINTS;
		if (!isfinite(vmin[s->part]))
			continue;
		if (isfinite(w[0]) && isfinite(w[STRESS_TRACE_POINTS - 1]))
			s->sim_wave = w;
		int diode = nl_part_at(c, s->part)->kind == NL_D;
		s->sim_worst = diode ? fmax(-vmin[s->part], 0)
				     : fmax(vmax[s->part], -vmin[s->part]);
		s->sim_near_open = near_open(c, s->part, open_node);
		s->sim_low = low && low[s->part];
	}
}

/* The second corner: amplitudes at +tol, offsets and rails at the bottom
 * of their band. Its extremes join vmin and vmax part by part; the mask
 * it returns (NULL on out-of-memory) marks the parts whose extreme it set.
 * A run that fails leaves the first corner's values and says so in v. */
static unsigned char *low_corner(const struct audit *a, struct arena *ar,
				 const struct profile *p, const struct stress_result *sr,
				 const struct verify_limits *lim, const struct simrun_opts *hi,
				 double *vmin, double *vmax, struct stress_verify *v)
{
	const struct nl_circuit *c = a->er.circuit;
	size_t np = nl_part_count(c), started;
	struct simrun_opts o;
	int moves = 0;
	double *lo_min = arena_alloc(ar, (np + 1) * sizeof *lo_min);
	double *lo_max = arena_alloc(ar, (np + 1) * sizeof *lo_max);
	unsigned char *won = arena_zalloc(ar, np + 1);
	if (!lo_min || !lo_max || !won || !corner(a, ar, p, sr, &o, &started, 1, &moves))
		return NULL;
	o.leave_out = hi->leave_out;
	o.gshunt = hi->gshunt;
	o.max_periods = lim ? lim->max_periods : 0;
	o.max_work = lim ? lim->max_work : 0;
	struct hr_alloc h = hr_alloc_default();
	struct simrun_result r;
	simrun_peaks(c, &o, &h, lo_min, lo_max, NULL, NULL, &r);
	v->corners = 1;
	if (r.status != SIM_OK)
		return won;
	v->corners = 2;
	v->low_settled = r.settled;
	for (size_t i = 0; i < np; i++) {
		double before = fmax(vmax[i], -vmin[i]);
		vmin[i] = fmin(vmin[i], lo_min[i]);
		vmax[i] = fmax(vmax[i], lo_max[i]);
		won[i] = fmax(vmax[i], -vmin[i]) > before;
	}
	return won;
}

/* The counts, once both runs are in. */
static void tally(const struct stress_result *sr, struct stress_verify *v)
{
	for (size_t i = 0; i < sr->n; i++) {
		const struct stress *s = &sr->s[i];
		if (!s->bounded || !isfinite(s->sim_worst))
			continue;
		if (s->sim_near_open)
			v->uncompared++;
		else if (stress_gap(s))
			v->gaps++;
		else if (stress_confirmed(s))
			v->confirmed++;
		else
			v->holds++;
	}
}

/* The power-up run (VERIFY_POWERUP_PERIODS): each compared stress gets
 * its peak from switch-on, counted when it tops the steady state. */
static void powerup(const struct audit *a, const struct verify_limits *lim,
		    const struct simrun_opts *o, struct stress_result *sr,
		    struct stress_verify *v)
{
	const struct nl_circuit *c = a->er.circuit;
	size_t np = nl_part_count(c);
	struct hr_alloc h = hr_alloc_default();
	double *lo = hr_malloc(&h, (np + 1) * sizeof *lo);
	double *hi = hr_malloc(&h, (np + 1) * sizeof *hi);
	unsigned cap = VERIFY_POWERUP_PERIODS;
	if (lim && lim->max_periods && lim->max_periods < cap)
		cap = lim->max_periods;
	struct simrun_result r;
	if (lo && hi) {
		struct simrun_opts zero = *o;
		zero.cap_v0 = NULL;
		zero.cap_end = NULL;
		simrun_track(c, &zero, cap, &h, lo, hi, &r);
		if (r.status == SIM_OK) {
			v->powerup = 1;
			v->powerup_periods = r.periods;
			for (size_t i = 0; i < sr->n; i++) {
				struct stress *s = &sr->s[i];
				if (!stress_qty_is_voltage(s->qty) || !isfinite(s->sim_worst) || !isfinite(lo[s->part]))
					continue;
				int diode = nl_part_at(c, s->part)->kind == NL_D;
				s->sim_powerup = diode ? fmax(-lo[s->part], 0)
						       : fmax(hi[s->part], -lo[s->part]);
				v->powerup_above += stress_powerup_above(s) && !s->sim_near_open;
			}
		}
	}
	hr_free(&h, lo);
	hr_free(&h, hi);
}

/* The sources that repeat VERIFY_SLOW times more slowly than the fastest
 * (a supply rail sagging at 2 Hz under a 5 kHz signal): held at their
 * extremes instead of simulated through (quasi-static, docs/solver.md).
 * Marks them in slow; returns how many there are. */
static size_t slow_sources(const struct nl_circuit *c, unsigned char *slow)
{
	const struct simsrc_span span = {0, 0};
	double fastest = INFINITY;
	size_t np = nl_part_count(c), n = 0;
	for (size_t i = 0; i < np; i++) {
		const struct nl_part *pt = nl_part_at(c, i);
		const struct nl_source *s = pt->ext ? pt->ext->src : NULL;
		double per = pt->kind == NL_V && s ? simsrc_period(s, &span) : 0;
		if (per > 0)
			fastest = fmin(fastest, per);
	}
	for (size_t i = 0; i < np; i++) {
		const struct nl_part *pt = nl_part_at(c, i);
		const struct nl_source *s = pt->ext ? pt->ext->src : NULL;
		double per = pt->kind == NL_V && s ? simsrc_period(s, &span) : 0;
		slow[i] = per > VERIFY_SLOW * fastest;
		n += slow[i];
	}
	return n;
}

/* The held values of the slow sources at the corner in o: each one's
 * lowest (lo) and highest (hi) value, the corner's scales applied; o is
 * changed to hold them at hi. Names them in v. Returns 0 on
 * out-of-memory. */
static int hold_slow(const struct nl_circuit *c, struct arena *ar, const unsigned char *slow,
		     struct simrun_opts *o, double **lo, double **hi, struct stress_verify *v)
{
	const struct simsrc_span span = {0, 0};
	size_t np = nl_part_count(c), len = 0;
	double *ac = arena_alloc(ar, (np + 1) * sizeof *ac);
	*lo = arena_alloc(ar, (np + 1) * sizeof **lo);
	*hi = arena_alloc(ar, (np + 1) * sizeof **hi);
	char names[200] = "";
	if (!ac || !*lo || !*hi)
		return 0;
	for (size_t i = 0; i < np; i++) {
		ac[i] = o->ac_scale[i];
		(*lo)[i] = (*hi)[i] = o->dc_set[i];
		if (!slow[i])
			continue;
		const struct nl_source *s = nl_part_at(c, i)->ext->src;
		double a, b, m = simsrc_mean(s, &span);
		simsrc_range(s, &span, &a, &b);
		double base = isnan(o->dc_set[i]) ? m * o->dc_scale[i] : o->dc_set[i];
		(*lo)[i] = base + (a - m) * o->ac_scale[i];
		(*hi)[i] = base + (b - m) * o->ac_scale[i];
		ac[i] = 0;
		if (len < sizeof names)
			len += (size_t)snprintf(names + len, sizeof names - len, "%s%s",
						len ? ", " : "", nl_part_at(c, i)->path);
	}
	o->ac_scale = ac;
	o->dc_set = *hi;
	v->slow_names = arena_strdup(ar, names);
	return v->slow_names != NULL;
}

/* The excursion of the slow sources: from the steady state at their top
 * (o, its capacitors' end voltages in end), moved to their bottom and run
 * to that steady state, then moved back to the top; every point of both
 * ways joins vmin and vmax. */
static int excursion(const struct nl_circuit *c, struct arena *ar,
		     const struct verify_limits *lim, const struct simrun_opts *o,
		     double *lo, double *end, double *vmin, double *vmax)
{
	size_t np = nl_part_count(c);
	double *a = arena_alloc(ar, (np + 1) * sizeof *a);
	double *b = arena_alloc(ar, (np + 1) * sizeof *b);
	double *end2 = arena_alloc(ar, (np + 1) * sizeof *end2);
	if (!a || !b || !end2)
		return 0;
	struct hr_alloc h = hr_alloc_default();
	unsigned cap = lim && lim->max_periods ? lim->max_periods : 0;
	for (int leg = 0; leg < 2; leg++) {
		struct simrun_opts x = *o;
		struct simrun_result r;
		x.ntrace = 0;
		x.dc_set = leg == 0 ? lo : o->dc_set;
		x.cap_v0 = leg == 0 ? end : end2;
		x.cap_end = leg == 0 ? end2 : NULL;
		simrun_track(c, &x, cap ? cap : 2000, &h, a, b, &r);
		if (r.status != SIM_OK)
			return r.status == SIM_OOM ? 0 : 1;
		for (size_t i = 0; i < np; i++)
			vmin[i] = fmin(vmin[i], a[i]), vmax[i] = fmax(vmax[i], b[i]);
	}
	return 1;
}

/* A part kept as opaque, its connections not known, could touch any node
 * of its subcircuit instance (at the top level: of the circuit): all of
 * them count as beside a part left open. */
static void open_instance(const struct nl_circuit *c, const char *path, unsigned char *nodes)
{
	const char *dot = strrchr(path, '.');
	size_t n = dot ? (size_t)(dot - path) + 1 : 0;
	for (size_t i = 0; i < nl_part_count(c); i++) {
		const struct nl_part *pt = nl_part_at(c, i);
		const uint32_t *pin = nl_pins(c, pt);
		if (strncmp(pt->path, path, n) != 0)
			continue;
		for (uint8_t k = 0; k < pt->npins; k++)
			if (pin[k] != NL_GROUND)
				nodes[pin[k]] = 1;
	}
}

/* Parts the solver has no model for are left out (open) and named; a
 * small shunt from every node to ground keeps what they leave floating
 * defined. The analysis ignores such parts too, so both judge the same
 * circuit. Returns 0 on out-of-memory. */
static int leave_out(const struct audit *a, struct arena *ar, struct simrun_opts *o, struct stress_verify *v,
		     unsigned char **open_node)
{
	const struct nl_circuit *c = a->er.circuit;
	size_t np = nl_part_count(c), count;
	struct sim_refusal first;
	unsigned char *mask = simrun_unsupported(c, ar, &count, &first);
	unsigned char *nodes = arena_zalloc(ar, nl_node_count(c) + 1);
	char names[200] = "";
	size_t len = 0;
	if (!mask || !nodes)
		return 0;
	*open_node = nodes;
	for (size_t i = 0; i < np; i++) {
		if (!mask[i])
			continue;
		const struct nl_part *pt = nl_part_at(c, i);
		const uint32_t *pin = nl_pins(c, pt);
		for (uint8_t k = 0; k < pt->npins; k++)
			if (pin[k] != NL_GROUND)
				nodes[pin[k]] = 1;
		if (pt->npins == 0)
			open_instance(c, pt->path, nodes);
		if (v->left_out++ < 4 && len < sizeof names)
			len += (size_t)snprintf(names + len, sizeof names - len, "%s%s",
						len ? ", " : "", nl_part_at(c, i)->path);
	}
	if (v->left_out > 4 && len < sizeof names)
		snprintf(names + len, sizeof names - len, " and %zu more", v->left_out - 4);
	v->left_out_names = arena_strdup(ar, names);
	o->leave_out = mask;
	o->gshunt = SIMRUN_GSHUNT;
	return v->left_out_names != NULL;
}

int verify_run(const struct audit *a, const struct profile *p, const struct verify_limits *lim,
	       struct arena *ar,
	       struct stress_result *sr)
{
	struct stress_verify *v = arena_zalloc(ar, sizeof *v);
	if (!v)
		return 0;
	sr->verify = v;
	const struct nl_circuit *c = a->er.circuit;
	size_t np = nl_part_count(c);
	struct simrun_opts o;
	double *vmin = arena_alloc(ar, (np + 1) * sizeof *vmin);
	double *vmax = arena_alloc(ar, (np + 1) * sizeof *vmax);
	int moves = 0;
	if (!vmin || !vmax || !corner(a, ar, p, sr, &o, &v->started, 0, &moves) ||
	    !traces(ar, sr, &o))
		return 0;
	if (lim) {
		o.max_periods = lim->max_periods;
		o.max_work = lim->max_work;
	}
	unsigned char *slow = arena_zalloc(ar, np + 1);
	double *lo = NULL, *hi = NULL, *end = arena_alloc(ar, (np + 1) * sizeof *end);
	if (!slow || !end)
		return 0;
	v->slow = slow_sources(c, slow);
	if (v->slow) {
		if (!hold_slow(c, ar, slow, &o, &lo, &hi, v))
			return 0;
		o.cap_end = end;
		moves = 0; /* the excursion takes the rails to both ends */
	}
	struct hr_alloc h = hr_alloc_default();
	struct simrun_result r;
	simrun_peaks(c, &o, &h, vmin, vmax, NULL, NULL, &r);
	unsigned char *open_node = NULL;
	if (r.status == SIM_REFUSED && r.refusal.part != NL_NONE) {
		if (!leave_out(a, ar, &o, v, &open_node))
			return 0;
		simrun_peaks(c, &o, &h, vmin, vmax, NULL, NULL, &r);
	}
	v->periods = r.periods;
	v->settled = r.settled;
	v->period = r.period;
	v->points = r.stats.points;
	v->newton = r.stats.newton;
	v->unknowns = r.stats.unknowns;
	v->residual = r.stats.residual;
	if (r.status == SIM_OOM)
		return 0;
	if (r.status == SIM_REFUSED) {
		char buf[300];
		snprintf(buf, sizeof buf, "%s: %s",
			 r.refusal.part == NL_NONE ? "the circuit" : nl_part_at(c, r.refusal.part)->path,
			 r.refusal.why);
		v->why = arena_strdup(ar, buf);
		return v->why != NULL;
	}
	if (r.status != SIM_OK) {
		v->why = sim_status_text(r.status);
		return 1;
	}
	if (r.period <= 0) {
		v->why = "no source repeats: there is no steady state to simulate";
		return 1;
	}
	if (!r.settled && r.t_end < r.stats.settled_from + r.period) {
		char buf[300], t[24], from[24];
		num_format_eng(r.t_end, "s", t, sizeof t);
		num_format_eng(r.stats.settled_from, "s", from, sizeof from);
		snprintf(buf, sizeof buf, "the run ended at %s, before the sources' delays and "
			 "one-off edges (until %s) had played out: nothing verified", t, from);
		v->why = arena_strdup(ar, buf);
		return v->why != NULL;
	}
	v->simulated = 1;
	if (v->slow && !excursion(c, ar, lim, &o, lo, end, vmin, vmax))
		return 0;
	o.cap_end = NULL;
	unsigned char *low = moves ? low_corner(a, ar, p, sr, lim, &o, vmin, vmax, v) : NULL;
	if (moves && !low)
		return 0;
	record(sr, vmin, vmax, c, &o, open_node, low);
	powerup(a, lim, &o, sr, v);
	tally(sr, v);
	return 1;
}
