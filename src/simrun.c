/* simrun.c: see simrun.h. */
#include "simrun.h"

#include <math.h>
#include <string.h>

#define SIMRUN_PERIODS 2000
#define SIMRUN_TOL 1e-4
#define SIMRUN_HOLD 1e-3 /* s: the stand-in period of a circuit with no events */

struct probe {
	uint32_t pos, neg;   /* node ids (neg NL_GROUND for a plain node) */
};

struct writer {
	FILE *out;
	const struct probe *p;
	size_t n;
	double from;
};

static int write_row(void *ud, double t, const double *v)
{
	const struct writer *w = ud;
	if (t < w->from)
		return 0;
	fprintf(w->out, "%.9g", t);
	for (size_t i = 0; i < w->n; i++)
		fprintf(w->out, ",%.9g", v[w->p[i].pos] - v[w->p[i].neg]);
	fputc('\n', w->out);
	return 0;
}

static int find_probe(const struct nl_circuit *c, const char *name, struct probe *p)
{
	const char *comma = strchr(name, ',');
	size_t n1 = comma ? (size_t)(comma - name) : strlen(name);
	p->pos = nl_node_find(c, name, n1);
	p->neg = comma ? nl_node_find(c, comma + 1, strlen(comma + 1)) : NL_GROUND;
	return p->pos != NL_NONE && p->neg != NL_NONE;
}

static void opts_of(const struct simrun_opts *o, double stop, struct sim_opts *so)
{
	memset(so, 0, sizeof *so);
	so->stop = stop;
	so->max_step = o->max_step;
	so->ac_scale = o->ac_scale;
	so->dc_scale = o->dc_scale;
	so->dc_set = o->dc_set;
	so->cap_v0 = o->cap_v0;
	so->leave_out = o->leave_out;
	so->gshunt = o->gshunt;
	so->max_work = o->max_work;
	so->ideal_diodes = o->ideal_diodes;
	so->t_shift = o->t_shift;
	so->hold_slow = o->hold_slow;
}

struct extremes;
static int track(void *ud, double t, const double *v);

/* From the zero state to the end of the sources' events, every point
 * tracked into e. */
static enum sim_status follow_events(struct sim *s, struct extremes *e)
{
	double ev = sim_events_end(s);
	track(e, sim_time(s), sim_voltages(s));
	return ev > 0 ? sim_run(s, ev, track, e) : SIM_OK;
}

/* A mean current is the small difference of large charges: a state
 * settled to 1e-4 of a ladder's kilovolt still drifts a tenth of a stage's
 * charge per period. Towards o->flow_tol, for as many periods again as
 * the settling took (8 at least), where the work so far is under a third
 * of the allowance (so that doubling it stays inside); short of it, the
 * state stays as settled as it got. */
static void settle_more(struct sim *s, const struct simrun_opts *o, struct simrun_result *r)
{
	struct sim_stats st;
	sim_stats(s, &st);
	unsigned long cap = o->max_work ? o->max_work : SIM_MAX_WORK;
	if (st.newton * 3 > cap)
		return;
	unsigned more = 0;
	int settled = 0;
	enum sim_status q = sim_settle(s, r->period, r->periods > 8 ? r->periods : 8, o->flow_tol,
				       &more, &settled, NULL, NULL);
	r->periods += more;
	if (q != SIM_OK)
		r->status = q;
}

/* Creates the solver and, for the steady state, runs to it; with
 * o->oneshot and a source whose waveform happens once (a single pulse,
 * a PWL without repeat, an EXP), the way there through the sources'
 * events is tracked into e (its extremes). */
static struct sim *start(const struct nl_circuit *c, const struct simrun_opts *o,
			 const struct hr_alloc *h, struct simrun_result *r, struct extremes *e)
{
	struct sim_opts so;
	struct sim *s;
	memset(r, 0, sizeof *r);
	r->held = NL_NONE;
	opts_of(o, o->until, &so);
	r->status = sim_create(c, &so, h, &s, &r->refusal);
	if (r->status != SIM_OK)
		return NULL;
	r->period = sim_period(s);
	r->held = sim_held(s, &r->held_per, &r->held_pw);
	if (o->until > 0 || r->period <= 0)
		return s;
	if (o->oneshot && e && sim_has_oneshot(s) &&
	    (r->status = follow_events(s, e)) != SIM_OK)
		return s;
	r->status = sim_settle(s, r->period, o->max_periods ? o->max_periods : SIMRUN_PERIODS,
			       o->settle_tol > 0 ? o->settle_tol : SIMRUN_TOL,
			       &r->periods, &r->settled, NULL, NULL);
	if (r->status == SIM_OK && r->settled && o->flow && o->flow_tol > 0)
		settle_more(s, o, r);
	return s;
}

/* Each capacitor's voltage where the run stands, into end (per part). */
static void cap_voltages(const struct nl_circuit *c, const struct sim *s, double *end)
{
	const double *v = sim_voltages(s);
	for (size_t i = 0; i < nl_part_count(c); i++) {
		const struct nl_part *p = nl_part_at(c, i);
		const uint32_t *pin = nl_pins(c, p);
		end[i] = p->kind == NL_C && p->npins == 2 ? v[pin[0]] - v[pin[1]] : NAN;
	}
}

static void finish(struct sim *s, struct simrun_result *r)
{
	if (s) {
		r->t_end = sim_time(s);
		sim_stats(s, &r->stats);
	}
	sim_destroy(s);
}

/* What the measured period keeps back from its finer steps: twice what a
 * period took on average so far, to finish it at the run's own tolerance. */
static unsigned long fine_reserve(const struct sim *s, const struct simrun_result *r)
{
	struct sim_stats st;
	sim_stats(s, &st);
	return 2 * st.newton / (r->periods ? r->periods : 1);
}

/* The measured period's finer steps turned on (1 when they were), and a
 * cycle of the fastest source run with them first, not tracked: the
 * measured period (any whole period of the steady state) starts from
 * their own state, not the settling steps' (a fast diode's recovery ring
 * into leakage: docs/solver.md, "The measured period"). */
static int lead_in(struct sim *s, struct simrun_result *r)
{
	if (!sim_fine_period(s, 1, fine_reserve(s, r)))
		return 0;
	double lead = fmin(r->period, sim_cycle(s));
	if (lead > 0)
		r->status = sim_run(s, sim_time(s) + lead, NULL, NULL);
	return 1;
}

int simrun_csv(FILE *out, const struct nl_circuit *c, const char *const *names,
	       size_t n, const struct simrun_opts *o, const struct hr_alloc *h,
	       struct simrun_result *r, const char **bad)
{
	struct probe p[64];
	if (n > 64)
		n = 64;
	for (size_t i = 0; i < n; i++)
		if (!find_probe(c, names[i], &p[i])) {
			*bad = names[i];
			return 0;
		}
	struct sim *s = start(c, o, h, r, NULL);
	if (s && r->status == SIM_OK) {
		fputs("time", out);
		for (size_t i = 0; i < n; i++)
			fprintf(out, ",v(%s)", names[i]);
		fputc('\n', out);
		double from = o->until > 0 ? o->from : sim_time(s);
		double end = o->until > 0 ? o->until : sim_time(s) + r->period;
		struct writer w = {out, p, n, from};
		write_row(&w, sim_time(s), sim_voltages(s));
		r->status = sim_run(s, end, write_row, &w);
	}
	finish(s, r);
	return 1;
}

/* Running integrals of each part's current over the recorded period
 * (simrun_flow). */
struct flows {
	const struct sim *s;
	struct simrun_flow *out;
	double *i, *iprev, *vprev; /* per part: current now; current and
				      voltage at the last point */
	double *pw, *pwprev;       /* per part: a diode's dissipation now and
				      at the last point (NaN: other parts) */
	double tprev;
	int started;
};

struct extremes {
	const struct nl_circuit *c;
	double *vmin, *vmax, *nmin, *nmax;
	const struct simrun_opts *o;
	double t0, span, tprev;
	double *vprev;          /* node voltages at tprev */
	unsigned next;          /* next trace sample */
	struct flows *fw;       /* or NULL */
	double *pprev;          /* probes: their values at the last point */
	double ptime;           /* probes: the last point's time (NaN: none yet) */
	struct crests *cr;      /* or NULL: extremes at the points only */
};

/* The last two points of every part's voltage and every node's, for the
 * extreme between the points: a ring sampled a ninth of its period apart
 * peaks up to 6 % of its swing above its highest point. */
struct crests {
	double *p;         /* parts: the last three points' voltages, newest first */
	double *n;         /* nodes: likewise, or NULL */
	double t1, t2, t3; /* the times of the last three */
	unsigned seen;     /* points so far, up to 3 */
};

/* The extreme of the parabola through three points where the middle one
 * is a strict local extreme and the vertex falls between the outer two;
 * else the middle value. Its excess is held to the smaller change into
 * or out of the middle point: a kink (an edge onto a plateau, a diode
 * that stops conducting) is not a curve and must not be made one, while
 * a parabola's own excess stays below that change for a vertex within
 * 0.41 of a step of the middle point (u^2 h^2 against (1 - 2u) h^2). */
static double crest(double t0, double x0, double t1, double x1, double t2, double x2)
{
	if ((x1 - x0) * (x1 - x2) <= 0 || t1 <= t0 || t2 <= t1)
		return x1;
	double f01 = (x1 - x0) / (t1 - t0), f12 = (x2 - x1) / (t2 - t1);
	double a = (f12 - f01) / (t2 - t0);
	if (a == 0)
		return x1;
	double tv = (t0 + t1) / 2 - f01 / (2 * a);
	if (tv <= t0 || tv >= t2)
		return x1;
	double xv = x0 + f01 * (tv - t0) + a * (tv - t0) * (tv - t1);
	double cap = fmin(fabs(x1 - x0), fabs(x1 - x2));
	return x1 + fmax(fmin(xv - x1, cap), -cap) * ((xv - x1) * (x1 - x0) > 0);
}

/* 1 when four points rise (or fall) into the third and curve the same
 * way throughout, alike: the slope into the second is steeper than the
 * slope into the third, and the curvatures of the first three and of the
 * last three are within CREST_BEND of each other (a parabola's are equal,
 * a sine's sampled seven times a period within 4: 1.6 with a point on
 * its crest, 4 with the crest half way between two). A trapezoidal ring
 * flips sign at every point, an edge leaves a plateau with a slope
 * steeper than the one it had, and a spike (a diode's recovery) turns far
 * harder than it came in: none is a crest. */
#define CREST_BEND 5.0
static int bends_alike(const struct crests *cr, double x3, double x2, double x1, double t,
		       double x0)
{
	if (cr->t2 <= cr->t3 || cr->t1 <= cr->t2 || t <= cr->t1)
		return 0;
	double s32 = (x2 - x3) / (cr->t2 - cr->t3), s21 = (x1 - x2) / (cr->t1 - cr->t2);
	double s10 = (x0 - x1) / (t - cr->t1);
	double a1 = (s21 - s32) / (cr->t1 - cr->t3), a2 = (s10 - s21) / (t - cr->t2);
	return s32 * s21 > 0 && fabs(s32) > fabs(s21) && a1 * a2 > 0 &&
	       fmax(fabs(a1), fabs(a2)) <= CREST_BEND * fmin(fabs(a1), fabs(a2));
}

/* One value into an extreme pair, with the crest of the last three where
 * the point before them leads into it alike (bends_alike). p holds the
 * last three values, newest first. */
static void crest_add(const struct crests *cr, double t, double x, double *p, double *lo,
		      double *hi)
{
	double *p1 = p, *p2 = p + 1, *p3 = p + 2;
	if (cr->seen >= 3) {
		double xv = bends_alike(cr, *p3, *p2, *p1, t, x) ? crest(cr->t2, *p2, cr->t1, *p1, t, x)
								  : *p1;
		*lo = fmin(*lo, xv);
		*hi = fmax(*hi, xv);
	}
	*p3 = *p2;
	*p2 = *p1;
	*p1 = x;
}

static double across(const struct nl_circuit *c, uint32_t part, const double *v)
{
	const uint32_t *pin = nl_pins(c, nl_part_at(c, part));
	return v[pin[0]] - v[pin[1]];
}

/* One more point into the integrals: between the last point and this
 * one each current and voltage is taken as linear, so the mean of i, of
 * i^2 and of v i over the step are exact for that shape. */
static void flow_add(struct flows *w, const struct nl_circuit *c, double t, const double *v)
{
	size_t np = nl_part_count(c);
	double h = t - w->tprev;
	sim_currents(w->s, w->i);
	sim_dissipation(w->s, w->pw);
	for (size_t k = 0; k < np; k++) {
		struct simrun_flow *f = &w->out[k];
		double a = w->iprev[k], b = w->i[k], va = w->vprev[k];
		double vb = nl_part_at(c, k)->npins >= 2 ? across(c, (uint32_t)k, v) : 0;
		if (w->started) {
			f->avg += h * (a + b) / 2;
			f->rms += h * (a * a + a * b + b * b) / 3;
			if (isfinite(w->pw[k]))
				f->power += h * (w->pwprev[k] + w->pw[k]) / 2;
			else
				f->power += h * (2 * va * a + va * b + vb * a + 2 * vb * b) / 6;
		}
		w->pwprev[k] = w->pw[k];
		f->peak = fmax(f->peak, b);
		f->low = fmin(f->low, b);
		w->iprev[k] = b;
		w->vprev[k] = vb;
	}
	w->tprev = t;
	w->started = 1;
}

/* The integrals over span become means; a part without a current (NaN
 * at every point) gets NaN throughout. */
static void flow_end(struct flows *w, size_t np, double span)
{
	for (size_t k = 0; k < np; k++) {
		struct simrun_flow *f = &w->out[k];
		if (!isfinite(w->iprev[k]) || !(span > 0)) {
			f->avg = f->rms = f->peak = f->low = f->power = NAN;
			continue;
		}
		f->avg /= span;
		f->rms = sqrt(fmax(f->rms / span, 0));
		f->power /= span;
	}
}

static void flow_start(struct flows *w, const struct sim *s, size_t np)
{
	w->s = s;
	w->started = 0;
	for (size_t k = 0; k < np; k++) {
		struct simrun_flow *f = &w->out[k];
		f->avg = f->rms = f->power = 0;
		f->peak = -INFINITY;
		f->low = INFINITY;
	}
}

/* Trace samples between the last point and this one, linearly. */
static void sample(struct extremes *e, double t, const double *v)
{
	const struct simrun_opts *o = e->o;
	while (e->next < o->trace_points) {
		double ts = e->t0 + e->span * e->next / (o->trace_points - 1);
		if (ts > t + 1e-12 * e->span)
			break;
		double w = t > e->tprev ? (ts - e->tprev) / (t - e->tprev) : 1;
		w = fmin(fmax(w, 0), 1);
		for (size_t k = 0; k < o->ntrace; k++) {
			double a = across(e->c, o->trace_parts[k], e->vprev);
			double b = across(e->c, o->trace_parts[k], v);
			o->trace[k * o->trace_points + e->next] = a + w * (b - a);
		}
		e->next++;
	}
	memcpy(e->vprev, v, nl_node_count(e->c) * sizeof *v);
	e->tprev = t;
}

/* Probes: extremes, and the integral of each over time for its mean
 * (trapezoidal rule between accepted points). */
static void probe(struct extremes *e, double t, const double *v)
{
	const struct simrun_opts *o = e->o;
	for (size_t k = 0; k < o->nprobe; k++) {
		double x = v[o->probe_pos[k]] - v[o->probe_neg[k]];
		o->probe_min[k] = fmin(o->probe_min[k], x);
		o->probe_max[k] = fmax(o->probe_max[k], x);
		if (!isnan(e->ptime))
			o->probe_mean[k] += (e->pprev[k] + x) / 2 * (t - e->ptime);
		e->pprev[k] = x;
	}
	e->ptime = t;
}

static int track(void *ud, double t, const double *v)
{
	struct extremes *e = ud;
	if (e->o->ntrace && e->vprev)
		sample(e, t, v);
	if (e->fw)
		flow_add(e->fw, e->c, t, v);
	if (e->o->nprobe && e->pprev)
		probe(e, t, v);
	size_t np = nl_part_count(e->c), nn = nl_node_count(e->c);
	for (size_t i = 0; i < np; i++) {
		const struct nl_part *p = nl_part_at(e->c, i);
		if (p->npins < 2)
			continue;
		const uint32_t *pin = nl_pins(e->c, p);
		double x = v[pin[0]] - v[pin[1]];
		e->vmin[i] = fmin(e->vmin[i], x);
		e->vmax[i] = fmax(e->vmax[i], x);
		if (e->cr)
			crest_add(e->cr, t, x, e->cr->p + 3 * i, &e->vmin[i], &e->vmax[i]);
	}
	for (size_t k = 0; e->nmin && k < nn; k++) {
		e->nmin[k] = fmin(e->nmin[k], v[k]);
		e->nmax[k] = fmax(e->nmax[k], v[k]);
		if (e->cr && e->cr->n)
			crest_add(e->cr, t, v[k], e->cr->n + 3 * k, &e->nmin[k], &e->nmax[k]);
	}
	if (e->cr) {
		e->cr->t3 = e->cr->t2;
		e->cr->t2 = e->cr->t1;
		e->cr->t1 = t;
		e->cr->seen += e->cr->seen < 3;
	}
	return 0;
}

/* The crests' memory for np parts and nn nodes (nodes only with
 * with_nodes), or NULL when there is none to spare. */
static struct crests *crests_new(const struct hr_alloc *h, size_t np, size_t nn, int with_nodes)
{
	struct crests *cr = hr_malloc(h, sizeof *cr);
	double *m = hr_malloc(h, 3 * (np + (with_nodes ? nn : 0) + 1) * sizeof *m);
	if (!cr || !m) {
		hr_free(h, cr);
		hr_free(h, m);
		return NULL;
	}
	*cr = (struct crests){m, with_nodes ? m + 3 * np : NULL, 0, 0, 0, 0};
	return cr;
}

static void crests_free(const struct hr_alloc *h, struct crests *cr)
{
	if (cr)
		hr_free(h, cr->p);
	hr_free(h, cr);
}

/* No source repeats: from the zero state through the sources' events
 * (every point tracked), then settled with a stand-in period (the events'
 * span, at least SIMRUN_HOLD; Newton's trial states are not tracked) and
 * one more such span tracked. Traces, flows and probes stay empty. */
static void oneshot(struct sim *s, const struct simrun_opts *o, struct simrun_result *r,
		    struct extremes *e)
{
	double ev = sim_events_end(s), span = fmax(ev, SIMRUN_HOLD);
	if (o->max_step <= 0)
		sim_set_max_step(s, span / 200);
	r->status = follow_events(s, e);
	if (r->status == SIM_OK)
		r->status = sim_settle(s, span, o->max_periods ? o->max_periods : SIMRUN_PERIODS,
				       o->settle_tol > 0 ? o->settle_tol : SIMRUN_TOL, &r->periods,
				       &r->settled, NULL, NULL);
	if (r->status == SIM_OK && r->settled)
		r->status = sim_run(s, sim_time(s) + span, track, e);
	r->oneshot = r->status == SIM_OK && r->settled;
	if (o->cap_end)
		cap_voltages(e->c, s, o->cap_end);
}

/* simrun_peaks once, the measured period's finer steps asked for or not;
 * 1 when they were taken and the run failed (a retry without them may
 * not). */
static int peaks_once(const struct nl_circuit *c, const struct simrun_opts *o,
		      const struct hr_alloc *h, double *vmin, double *vmax,
		      double *node_min, double *node_max, struct simrun_result *r, int fine)
{
	int retry = 0;
	size_t np = nl_part_count(c), nn = nl_node_count(c);
	for (size_t i = 0; i < np; i++)
		vmin[i] = INFINITY, vmax[i] = -INFINITY;
	for (size_t k = 0; node_min && k < nn; k++)
		node_min[k] = INFINITY, node_max[k] = -INFINITY;
	for (size_t k = 0; k < o->nprobe; k++) {
		o->probe_min[k] = INFINITY, o->probe_max[k] = -INFINITY;
		o->probe_mean[k] = NAN;
	}
	struct crests *cr = crests_new(h, np, nn, node_min != NULL);
	struct extremes pre = {c, vmin, vmax, node_min, node_max, o, 0, 0, 0, NULL, 0, NULL, NULL, NAN, cr};
	struct sim *s = start(c, o, h, r, &pre);
	if (cr)
		cr->seen = 0;
	const double *noise = s ? sim_node_noise(s) : NULL;
	for (size_t k = 0; o->node_noise && k < nn; k++)
		o->node_noise[k] = noise ? noise[k] : 0;
	double *vprev = o->ntrace ? hr_malloc(h, (nn + 1) * sizeof *vprev) : NULL;
	double *scratch = o->flow ? hr_malloc(h, 5 * (np + 1) * sizeof *scratch) : NULL;
	struct flows fw = {NULL, o->flow, scratch, scratch + np + 1, scratch + 2 * (np + 1),
			   scratch + 3 * (np + 1), scratch + 4 * (np + 1), 0, 0};
	if (o->flow && !scratch)
		r->status = SIM_OOM;
	double *pprev = o->nprobe ? hr_malloc(h, o->nprobe * sizeof *pprev) : NULL;
	int once = r->period <= 0 && o->until <= 0 && o->oneshot;
	fine = s && r->status == SIM_OK && !once && (pprev || !o->nprobe) && fine &&
	       lead_in(s, r);
	if (s && r->status == SIM_OK && once) {
		oneshot(s, o, r, &pre);
	} else if (s && r->status == SIM_OK && (pprev || !o->nprobe)) {
		double span = r->period > 0 ? r->period : o->until;
		struct extremes e = {c, vmin, vmax, node_min, node_max, o, sim_time(s), span,
				     sim_time(s), vprev, 0, scratch ? &fw : NULL, pprev, NAN, cr};
		for (size_t k = 0; k < o->nprobe; k++)
			o->probe_mean[k] = 0;
		if (vprev)
			memcpy(vprev, sim_voltages(s), nn * sizeof *vprev);
		if (e.fw)
			flow_start(e.fw, s, np);
		track(&e, sim_time(s), sim_voltages(s));
		double t0 = sim_time(s);
		r->status = sim_run(s, t0 + span, track, &e);
		if (e.fw)
			flow_end(e.fw, np, sim_time(s) - e.t0);
		for (size_t k = 0; k < o->nprobe; k++)
			o->probe_mean[k] = sim_time(s) > t0 ? o->probe_mean[k] / (sim_time(s) - t0) : NAN;
		if (o->cap_end)
			cap_voltages(c, s, o->cap_end);
	} else if (s && r->status == SIM_OK) {
		r->status = SIM_OOM;
	}
	retry = fine && r->status != SIM_OK && r->status != SIM_OOM;
	hr_free(h, scratch);
	hr_free(h, vprev);
	hr_free(h, pprev);
	crests_free(h, cr);
	finish(s, r);
	return retry;
}

void simrun_peaks(const struct nl_circuit *c, const struct simrun_opts *o,
		  const struct hr_alloc *h, double *vmin, double *vmax,
		  double *node_min, double *node_max, struct simrun_result *r)
{
	if (!peaks_once(c, o, h, vmin, vmax, node_min, node_max, r, 1))
		return;
	struct sim_stats first = r->stats;
	peaks_once(c, o, h, vmin, vmax, node_min, node_max, r, 0);
	r->coarse = 1;
	r->stats.points += first.points;
	r->stats.rejected += first.rejected;
	r->stats.newton += first.newton;
}

void simrun_track(const struct nl_circuit *c, const struct simrun_opts *o,
		  unsigned max_periods, const struct hr_alloc *h, double *vmin,
		  double *vmax, struct simrun_result *r)
{
	size_t np = nl_part_count(c);
	for (size_t i = 0; i < np; i++)
		vmin[i] = INFINITY, vmax[i] = -INFINITY;
	struct simrun_opts zero = *o;
	zero.ntrace = 0;
	zero.flow = NULL;
	zero.nprobe = 0;
	zero.until = 0;
	struct sim_opts so;
	struct sim *s = NULL;
	memset(r, 0, sizeof *r);
	r->held = NL_NONE;
	opts_of(&zero, 0, &so);
	so.no_shooting = 1; /* the trajectory itself is wanted */
	r->status = sim_create(c, &so, h, &s, &r->refusal);
	if (r->status == SIM_OK && (r->period = sim_period(s)) > 0) {
		struct extremes e = {c, vmin, vmax, NULL, NULL, &zero, 0, 0, 0, NULL, 0, NULL, NULL, NAN, NULL};
		r->status = sim_settle(s, r->period, max_periods,
				       o->settle_tol > 0 ? o->settle_tol : SIMRUN_TOL,
				       &r->periods, &r->settled, track, &e);
		if (o->cap_end)
			cap_voltages(c, s, o->cap_end);
	}
	finish(s, r);
}

/* ---- power-up surge ---- */

struct surge_track {
	const struct sim *s;
	long *dev; /* solver handle per diode, -1: none */
	size_t n;
	struct simrun_pulse *best, *cur;
	double *iprev, tprev;
};

/* The pulse in cur ends: it is kept when its I^2 t tops the best. */
static void pulse_end(struct simrun_pulse *cur, struct simrun_pulse *best, double t)
{
	cur->t_end = t;
	if (cur->i2t > best->i2t)
		*best = *cur;
	memset(cur, 0, sizeof *cur);
}

/* One diode at a new point: the segment from the last point is integrated
 * by the trapezoidal rule on i^2 (clipped at 0: reverse current is no
 * surge). */
static void pulse_step(struct surge_track *u, size_t k, double t, double i)
{
	struct simrun_pulse *cur = &u->cur[k];
	double a = fmax(u->iprev[k], 0), b = fmax(i, 0);
	u->iprev[k] = i;
	if (cur->peak_a > 0 && (i <= 0 || i < SIMRUN_PULSE_END * cur->peak_a)) {
		cur->i2t += (a * a + b * b) / 2 * (t - u->tprev);
		pulse_end(cur, &u->best[k], t);
		return;
	}
	if (!(i > 0))
		return;
	if (cur->peak_a == 0)
		cur->t_start = u->tprev;
	cur->i2t += (a * a + b * b) / 2 * (t - u->tprev);
	if (i > cur->peak_a) {
		cur->peak_a = i;
		cur->t_peak = t;
	}
}

static int surge_point(void *ud, double t, const double *v)
{
	struct surge_track *u = ud;
	(void)v;
	for (size_t k = 0; k < u->n; k++)
		if (u->dev[k] >= 0)
			pulse_step(u, k, t, sim_diode_current(u->s, u->dev[k]));
	u->tprev = t;
	return 0;
}

static void surge_run(struct sim *s, double span, const uint32_t *parts, struct surge_track *u,
		      struct simrun_result *r)
{
	long *dev = u->dev;
	for (size_t k = 0; k < u->n; k++) {
		dev[k] = sim_diode_handle(s, parts[k]);
		memset(&u->best[k], 0, sizeof u->best[k]);
		memset(&u->cur[k], 0, sizeof u->cur[k]);
		u->iprev[k] = 0;
	}
	u->s = s;
	r->status = sim_run(s, span, surge_point, u);
	for (size_t k = 0; k < u->n; k++) {
		if (u->cur[k].peak_a > 0)
			pulse_end(&u->cur[k], &u->best[k], sim_time(s));
		if (dev[k] < 0)
			u->best[k].peak_a = u->best[k].i2t = NAN;
	}
}

void simrun_surge(const struct nl_circuit *c, const struct simrun_opts *o, double span,
		  const uint32_t *parts, size_t n, const struct hr_alloc *h,
		  struct simrun_pulse *pulse, struct simrun_result *r)
{
	struct simrun_opts zero = *o;
	struct sim_opts so;
	struct sim *s = NULL;
	zero.cap_v0 = NULL;
	memset(r, 0, sizeof *r);
	r->held = NL_NONE;
	opts_of(&zero, span, &so);
	long *dev = hr_malloc(h, (n + 1) * sizeof *dev);
	double *iprev = hr_malloc(h, (n + 1) * sizeof *iprev);
	struct simrun_pulse *cur = hr_malloc(h, (n + 1) * sizeof *cur);
	r->status = dev && iprev && cur ? sim_create(c, &so, h, &s, &r->refusal) : SIM_OOM;
	if (r->status == SIM_OK) {
		struct surge_track u = {s, dev, n, pulse, cur, iprev, 0};
		r->period = sim_period(s);
		surge_run(s, span, parts, &u, r);
	}
	hr_free(h, dev);
	hr_free(h, iprev);
	hr_free(h, cur);
	finish(s, r);
}

unsigned char *simrun_unsupported(const struct nl_circuit *c, struct arena *ar,
				  size_t *n, struct sim_refusal *first)
{
	size_t np = nl_part_count(c);
	unsigned char *mask = arena_zalloc(ar, np + 1);
	*n = 0;
	first->part = NL_NONE;
	first->why[0] = '\0';
	for (size_t i = 0; mask && i < np; i++) {
		struct sim_refusal ref;
		if (sim_part_supported(c, i, &ref))
			continue;
		mask[i] = 1;
		if (!(*n)++) {
			*first = ref;
			first->part = (uint32_t)i;
		}
	}
	return mask;
}
