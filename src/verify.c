/* verify.c: see verify.h. */
#include "verify.h"

#include <math.h>
#include <stdio.h>
#include <string.h>

#include "num.h"
#include "simrun.h"


/* The corner: per part source scales and capacitor start voltages. */
static int corner(const struct audit *a, struct arena *ar, const struct profile *p,
		  const struct stress_result *sr, struct simrun_opts *o,
		  size_t *started)
{
	const struct nl_circuit *c = a->er.circuit;
	size_t np = nl_part_count(c);
	double *k = arena_alloc(ar, (np + 1) * sizeof *k);
	double *set = arena_alloc(ar, (np + 1) * sizeof *set);
	double *v0 = arena_alloc(ar, (np + 1) * sizeof *v0);
	if (!k || !set || !v0)
		return 0;
	*started = 0;
	for (size_t i = 0; i < np; i++) {
		const struct nl_part *pt = nl_part_at(c, i);
		k[i] = pt->kind == NL_V ? 1 + stress_tolerance(a, p, (uint32_t)i) : 1;
		set[i] = pt->kind == NL_V ? a->sources[i].max : NAN;
		v0[i] = pt->kind == NL_C && pt->npins == 2 ? stress_low_dc(a, sr, ar, pt) : NAN;
		if (isfinite(v0[i]))
			(*started)++;
	}
	memset(o, 0, sizeof *o);
	o->ac_scale = k;
	o->dc_scale = k;
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
		if (sr->s[i].qty != SQ_SURGE)
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
		   const unsigned char *open_node)
{
	for (size_t i = 0, k = 0; i < sr->n; i++) {
		struct stress *s = &sr->s[i];
		if (s->qty == SQ_SURGE)
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
	}
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
		simrun_powerup(c, o, cap, &h, lo, hi, &r);
		if (r.status == SIM_OK) {
			v->powerup = 1;
			v->powerup_periods = r.periods;
			for (size_t i = 0; i < sr->n; i++) {
				struct stress *s = &sr->s[i];
				if (s->qty == SQ_SURGE || !isfinite(s->sim_worst) || !isfinite(lo[s->part]))
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
	if (!vmin || !vmax || !corner(a, ar, p, sr, &o, &v->started) || !traces(ar, sr, &o))
		return 0;
	if (lim) {
		o.max_periods = lim->max_periods;
		o.max_work = lim->max_work;
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
	record(sr, vmin, vmax, c, &o, open_node);
	powerup(a, lim, &o, sr, v);
	tally(sr, v);
	return 1;
}
