/* simpss.c: the periodic steady state (sim_settle, sim.h). Plain settling
 * runs the circuit period after period until its state stops changing;
 * shooting-Newton (Aprille and Trick, "Steady-state analysis of nonlinear
 * circuits with periodic inputs", Proc. IEEE 60(1), 1972) solves
 * Phi(X) = X for the state X at the period boundary, Phi being one
 * period of the transient, with Newton's method. Phi's Jacobian is carried
 * through the period step by step: each accepted step's solution depends
 * on the history it integrates from, and the step's own factored matrix
 * gives that dependence (docs/solver.md, "Periodic steady state"). */
#include <math.h>
#include <string.h>

#include "dense.h"
#include "simint.h"

#define PSS_MAX_STATES 400  /* shooting up to this many state entries */
#define PSS_MAX_NEWTON 16   /* shooting periods before plain settling goes on */
#define PSS_MAX_HALVINGS 4  /* shrinkings in a row when a Newton step does worse */
#define PSS_RADIUS 0.05     /* the first trust radius: 5 % of the largest value */
#define PSS_ATTEMPTS 6      /* shooting attempts in one settling */
#define PSS_PLAIN 20        /* plain periods after the first failed attempt */
#define PSS_WINDOW 8        /* periods over which a noise floor is judged */
#define PSS_NOISE 1e-2      /* the largest change a noise floor may have */
#define PSS_RATIOS 4        /* changes whose ratios judge a decay */
#define PSS_LONG 4          /* a long baseline's allowance, in tolerances */
#define PSS_DRIFT 0.5       /* a window that moves the state on by this share
			       of its changes' sum drifts: no noise floor */

/* The circuit's state: each capacitor's voltage and each inductor's
 * current (node voltages would do badly: a node on a fast edge at the
 * period boundary moves with the step placement, not with the state). */
static void state_of(const struct sim *s, double *st)
{
	for (size_t i = 0; i < s->ndev; i++) {
		const struct simdev *d = &s->dev[i];
		st[i] = d->kind == SD_C && d->val != 0 ? d->q0 / d->val
		      : d->kind == SD_L ? s->xprev[d->br] : 0;
	}
}

/* What an entry of the state is: 0 a capacitor's voltage, 1 an
 * inductor's current, -1 nothing (a diode's junction charge is small
 * beside the capacitors' and follows its voltage within a few transit
 * times: it is carried over as it was, not set). */
static int entry_kind(const struct simdev *d)
{
	return d->kind == SD_C && d->val != 0 ? 0 : d->kind == SD_L ? 1 : -1;
}

/* The scale of each kind of state entry: the largest capacitor voltage
 * and the largest inductor current (with floors). */
static void state_scale(const struct sim *s, const double *now, double scale[2], int *caps)
{
	scale[0] = 1e-3, scale[1] = 1e-9;
	*caps = 0;
	for (size_t i = 0; i < s->ndev; i++) {
		int k = entry_kind(&s->dev[i]);
		*caps |= k == 0;
		if (k == 0 || k == 1)
			scale[k] = fmax(scale[k], fabs(now[i]));
	}
}

/* Largest change of the state since prev, relative to the largest value
 * of its kind (capacitor voltages, inductor currents). */
static double state_change(const struct sim *s, const double *now, const double *prev)
{
	double scale[2], change[2] = {0, 0};
	int caps;
	state_scale(s, now, scale, &caps);
	for (size_t i = 0; i < s->ndev; i++) {
		int k = entry_kind(&s->dev[i]);
		if (k == 0 || k == 1)
			change[k] = fmax(change[k], fabs(now[i] - prev[i]));
	}
	/* with capacitors, their voltages carry the state that sets the
	   stresses (an LC's energy swings through them too); an inductor
	   across an ideal source keeps whatever DC current the start gave it
	   and integration error walks it without limit or consequence */
	return caps ? change[0] / scale[0] : change[1] / scale[1];
}

/* Root mean square change of the state, each kind relative to its
 * largest value. */
static double state_norm2(const struct sim *s, const double *now, const double *prev)
{
	double scale[2], sum = 0;
	int caps;
	size_t n = 0;
	state_scale(s, now, scale, &caps);
	for (size_t i = 0; i < s->ndev; i++) {
		int k = entry_kind(&s->dev[i]);
		if (k != 0 && k != 1)
			continue;
		double d = (now[i] - prev[i]) / scale[k];
		sum += d * d, n++;
	}
	return n ? sqrt(sum / (double)n) : 0;
}

/* Puts the circuit into state st (state_of's layout) at the present
 * time: the charges and fluxes the next step integrates from, its first
 * step backward Euler as after a source corner. Junction charges and the
 * iterate stay as they are (the next Newton solve starts from them). */
static void set_state(struct sim *s, const double *st)
{
	for (size_t i = 0; i < s->ndev; i++) {
		struct simdev *d = &s->dev[i];
		if (d->kind == SD_C && d->val != 0)
			d->q0 = d->val * st[i];
		if (d->kind == SD_L) {
			s->x[d->br] = s->xprev[d->br] = st[i];
			d->q0 = d->val * st[i];
		}
	}
	for (size_t i = 0; i < s->ndev; i++) {
		const struct simdev *k = &s->dev[i];
		if (k->kind != SD_K)
			continue;
		s->dev[k->c].q0 += k->val * s->x[k->br2];
		s->dev[k->d].q0 += k->val * s->x[k->br];
	}
	for (size_t i = 0; i < s->ndev; i++) {
		struct simdev *d = &s->dev[i];
		if (d->kind == SD_C || d->kind == SD_L)
			d->q = d->qh[0] = d->qh[1] = d->qh[2] = d->q0;
	}
	s->after_corner = 1;
	s->nhist = 0;
	s->hstep = fmin(s->hstep, s->o.max_step / 10);
	sim_node_voltages(s);
}

/* When every source has played out its non-repeating part. */
static double settled_from(const struct sim *s)
{
	double from = 0;
	for (size_t i = 0; i < s->ndev; i++)
		if (s->dev[i].src)
			from = fmax(from, simsrc_settled_from(s->dev[i].src, &s->span));
	return from;
}

double sim_events_end(const struct sim *s)
{
	return settled_from(s);
}

int sim_has_oneshot(const struct sim *s)
{
	for (size_t i = 0; i < s->ndev; i++)
		if (s->dev[i].src && s->dev[i].ac_k != 0 && nl_source_once(s->dev[i].src))
			return 1;
	return 0;
}

void sim_set_max_step(struct sim *s, double h)
{
	if (h > 0)
		s->o.max_step = h;
}

const double *sim_node_noise(const struct sim *s)
{
	return s->node_noise;
}

int sim_fine_period(struct sim *s, int on, unsigned long reserve)
{
	int any = 0;
	for (size_t i = 0; i < s->ndev; i++)
		any |= s->dev[i].kind == SD_D;
	s->o.fine = on && any;
	if (s->o.fine) {
		/* the history restarts as after a corner: a backward-Euler step
		   ends the trapezoidal rule's flip of a stored charge's current
		   (harmless at the looser tolerance, it would hold the error
		   estimate at the tighter one to ever shorter steps) */
		s->after_corner = 1;
		s->nhist = 0;
		s->fine_end = s->o.max_work > reserve ? s->o.max_work - reserve : 0;
	}
	return s->o.fine;
}

/* 1 when every repeating source's period divides period: only then is
 * one period of the transient the same map wherever it starts. */
static int one_map(const struct sim *s, double period)
{
	for (size_t i = 0; i < s->ndev; i++) {
		if (!s->dev[i].src || s->dev[i].ac_k == 0)
			continue;
		double p = simsrc_period(s->dev[i].src, &s->span);
		if (p > 0 && fabs(period / p - nearbyint(period / p)) > 1e-6 * (period / p))
			return 0;
		if (s->dev[i].src->wave == NL_WAVE_SFFM || s->dev[i].src->wave == NL_WAVE_AM)
			return 0;
	}
	return 1;
}

/* ---- sensitivities ---- */

/* A device whose charge or flux the sensitivities carry from step to
 * step. A diode with a transit time is left out: its stored charge's
 * capacitance (TT times the junction's slope, microfarads in conduction,
 * picofarads a step later at snap-off) makes the trapezoidal recursion of
 * the charge's derivative grow without bound across a period (Jacobian
 * entries of 1e100 on a slow rectifier bridge), and Newton's step then
 * goes nowhere. Its charge is then taken as fixed, as the state already
 * takes every junction charge; the step's matrix still holds the
 * junction's slope and capacitance. */
static int has_history(const struct simdev *d)
{
	if (d->kind == SD_D)
		return !(d->dm && d->dm->tt > 0);
	return (d->kind == SD_C && d->val != 0) || d->kind == SD_L;
}

/* The sensitivity store for s's state, or NULL when shooting does not
 * pay (no state, or more than PSS_MAX_STATES entries) or memory is out. */
static struct sim_sens *sens_create(struct sim *s)
{
	size_t m = 0;
	for (size_t i = 0; i < s->ndev; i++)
		m += entry_kind(&s->dev[i]) >= 0;
	if (m == 0 || m > PSS_MAX_STATES)
		return NULL;
	struct sim_sens *z = arena_zalloc(s->ar, sizeof *z);
	if (!z)
		return NULL;
	z->m = m;
	size_t per_dev = s->ndev * m * sizeof(double);
	z->dev_of = arena_alloc(s->ar, m * sizeof *z->dev_of);
	z->dq0 = arena_alloc(s->ar, per_dev);
	z->df0 = arena_alloc(s->ar, per_dev);
	z->dqh1 = arena_alloc(s->ar, per_dev);
	z->dqn = arena_alloc(s->ar, per_dev);
	z->rhs = arena_alloc(s->ar, (s->n + 1) * m * sizeof(double));
	if (!z->dev_of || !z->dq0 || !z->df0 || !z->dqh1 || !z->dqn || !z->rhs)
		return NULL;
	for (size_t i = 0, j = 0; i < s->ndev; i++)
		if (entry_kind(&s->dev[i]) >= 0)
			z->dev_of[j++] = (uint32_t)i;
	return z;
}

/* The state entry of device i, or -1. */
static long entry_of(const struct sim_sens *z, size_t i)
{
	for (size_t j = 0; j < z->m; j++)
		if (z->dev_of[j] == i)
			return (long)j;
	return -1;
}

/* At the start of a shooting period: each state entry's charge or flux
 * depends on itself (and a coupled inductor's flux on its partner's
 * current); junction charges are taken as fixed. */
static void sens_start(struct sim *s)
{
	struct sim_sens *z = s->sens;
	size_t m = z->m, all = s->ndev * m;
	memset(z->dq0, 0, all * sizeof *z->dq0);
	memset(z->df0, 0, all * sizeof *z->df0);
	memset(z->dqh1, 0, all * sizeof *z->dqh1);
	for (size_t j = 0; j < m; j++) {
		uint32_t i = z->dev_of[j];
		z->dq0[i * m + j] = s->dev[i].val;
	}
	for (size_t i = 0; i < s->ndev; i++) {
		const struct simdev *k = &s->dev[i];
		if (k->kind != SD_K)
			continue;
		long jc = entry_of(z, (size_t)k->c), jd = entry_of(z, (size_t)k->d);
		if (jc >= 0 && jd >= 0) {
			z->dq0[(size_t)k->c * m + (size_t)jd] += k->val;
			z->dq0[(size_t)k->d * m + (size_t)jc] += k->val;
		}
	}
}

static void add_at(double *col, long row, double v)
{
	if (row >= 0)
		col[row] += v;
}

/* The right-hand side's derivative with respect to the state, one column
 * per state entry: what each device's history term contributes. */
static void sens_rhs(struct sim *s, const struct simdev_step *st)
{
	struct sim_sens *z = s->sens;
	size_t m = z->m, n = s->n;
	memset(z->rhs, 0, n * m * sizeof *z->rhs);
	for (size_t i = 0; i < s->ndev; i++) {
		const struct simdev *d = &s->dev[i];
		if (!has_history(d))
			continue;
		const double *q0 = z->dq0 + i * m, *f0 = z->df0 + i * m, *h1 = z->dqh1 + i * m;
		for (size_t j = 0; j < m; j++) {
			double *col = z->rhs + j * n;
			if (d->kind == SD_L && d->coupled) {
				double ga = 1 / (st->t - d->th[0]);
				add_at(col, d->br, st->gear ? st->g1 * q0[j] + st->g2 * h1[j] : -ga * q0[j]);
			} else if (d->kind == SD_L) {
				add_at(col, d->br, -st->a * q0[j] - st->b * f0[j]);
			} else { /* a current -(a q0 + b f0) from one pin to the other */
				double ieq = -st->a * q0[j] - st->b * f0[j];
				add_at(col, d->kind == SD_D ? d->p : d->a, -ieq);
				add_at(col, d->b, ieq);
			}
		}
	}
}

static double at(const double *x, long k)
{
	return k >= 0 ? x[k] : 0;
}

/* One accepted step's sensitivity update, before the step's charges
 * become the history (sim.c calls it through on_step). */
static void sens_step(struct sim *s, const struct simdev_step *st)
{
	struct sim_sens *z = s->sens;
	size_t m = z->m, n = s->n;
	sens_rhs(s, st);
	if (!simmat_solve_more(s->m, z->rhs, m)) {
		z->broken = 1;
		return;
	}
	for (size_t i = 0; i < s->ndev; i++) {
		const struct simdev *d = &s->dev[i];
		if (!has_history(d))
			continue;
		double *qn = z->dqn + i * m;
		for (size_t j = 0; j < m; j++) {
			const double *dx = z->rhs + j * n;
			long p = d->kind == SD_D ? d->p : d->a;
			qn[j] = d->kind == SD_L ? d->val * at(dx, d->br)
			      : (d->kind == SD_D ? d->cj : d->val) * (at(dx, p) - at(dx, d->b));
		}
	}
	for (size_t i = 0; i < s->ndev; i++) {
		const struct simdev *k = &s->dev[i];
		if (k->kind != SD_K)
			continue;
		for (size_t j = 0; j < m; j++) {
			const double *dx = z->rhs + j * n;
			z->dqn[(size_t)k->c * m + j] += k->val * at(dx, k->br2);
			z->dqn[(size_t)k->d * m + j] += k->val * at(dx, k->br);
		}
	}
	for (size_t i = 0; i < s->ndev; i++) {
		const struct simdev *d = &s->dev[i];
		if (!has_history(d))
			continue;
		double *q0 = z->dq0 + i * m, *f0 = z->df0 + i * m, *h1 = z->dqh1 + i * m;
		const double *qn = z->dqn + i * m;
		for (size_t j = 0; j < m; j++) {
			const double *dx = z->rhs + j * n;
			double f = d->kind == SD_L ? at(dx, d->a) - at(dx, d->b)
						   : st->a * (qn[j] - q0[j]) - st->b * f0[j];
			h1[j] = q0[j];
			q0[j] = qn[j];
			f0[j] = f;
		}
	}
}

/* Phi's Jacobian at the end of the period: row i for state entry i. */
static void sens_jacobian(const struct sim *s, double *jac)
{
	const struct sim_sens *z = s->sens;
	size_t m = z->m;
	for (size_t i = 0; i < m; i++) {
		const struct simdev *d = &s->dev[z->dev_of[i]];
		for (size_t j = 0; j < m; j++)
			jac[i * m + j] = d->kind == SD_L ? z->rhs[j * s->n + (size_t)d->br]
							 : z->dq0[z->dev_of[i] * m + j] / d->val;
	}
}

/* ---- shooting ---- */

/* Work space of the shooting iteration (state vectors of ndev entries,
 * the m x m Jacobian, the m-entry Newton step). */
struct shot {
	double *x0, *x1, *best, *jac, *dx;
	double res, best_res;
};

/* One period from state x (the circuit at a period boundary) with the
 * sensitivities: x1 gets Phi(x), jac its Jacobian, the return the run's
 * status; res the relative change Phi(x) - x. */
static enum sim_status shoot_once(struct sim *s, double period, const double *x,
				  struct shot *w, unsigned *periods, sim_point_fn fn, void *ud)
{
	set_state(s, x);
	sens_start(s);
	s->sens->broken = 0;
	enum sim_status r = sim_run(s, s->t + period, fn, ud);
	++*periods;
	state_of(s, w->x1);
	w->res = state_norm2(s, w->x1, x);
	if (r == SIM_OK && !s->sens->broken)
		sens_jacobian(s, w->jac);
	return r;
}

/* The Newton step (I - J) dx = Phi(x) - x over the state entries. */
static int newton_step(const struct sim *s, struct shot *w, const double *x)
{
	const struct sim_sens *z = s->sens;
	size_t m = z->m;
	for (size_t i = 0; i < m; i++) {
		for (size_t j = 0; j < m; j++)
			w->jac[i * m + j] = (i == j) - w->jac[i * m + j];
		w->dx[i] = w->x1[z->dev_of[i]] - x[z->dev_of[i]];
	}
	return dense_solve(w->jac, w->dx, m, 1e-12);
}

/* The largest change a Newton step makes to an entry, relative to the
 * largest value of its kind. */
static double step_length(const struct sim *s, const struct shot *w, const double *x)
{
	double scale[2], len = 0;
	int caps;
	state_scale(s, x, scale, &caps);
	for (size_t j = 0; j < s->sens->m; j++) {
		const struct simdev *d = &s->dev[s->sens->dev_of[j]];
		len = fmax(len, fabs(w->dx[j]) / scale[d->kind == SD_L]);
	}
	return len;
}

/* Shooting-Newton from the state the circuit is in, in a trust region:
 * a Newton step longer than the radius (the largest relative change of
 * an entry) is cut to it; a step that lowers the residual is kept and
 * the radius grows to twice it, one that does not shrinks the radius to
 * a quarter of it (PSS_MAX_HALVINGS times in a row at most). At most
 * PSS_MAX_NEWTON periods. Leaves the circuit at the best state found, at
 * a period boundary. */
static enum sim_status shoot(struct sim *s, double period, double tol, struct shot *w,
			     unsigned max_periods, unsigned *periods, sim_point_fn fn, void *ud)
{
	size_t nd = s->ndev;
	state_of(s, w->x0);
	enum sim_status r = shoot_once(s, period, w->x0, w, periods, fn, ud);
	memcpy(w->best, w->x0, nd * sizeof *w->best);
	w->best_res = w->res;
	double radius = PSS_RADIUS;
	unsigned tries = 0, misses = 0;
	int fresh = 1; /* the Newton step is to be computed at best */
	while (r == SIM_OK && !s->sens->broken && w->best_res > tol / 10 &&
	       *periods < max_periods && ++tries <= PSS_MAX_NEWTON) {
		if (fresh && !newton_step(s, w, w->best))
			break;
		double len = step_length(s, w, w->best);
		double k = len > radius ? radius / len : 1;
		for (size_t i = 0; i < nd; i++)
			w->x0[i] = w->best[i];
		for (size_t j = 0; j < s->sens->m; j++)
			w->x0[s->sens->dev_of[j]] += k * w->dx[j];
		s->st.jumps++;
		r = shoot_once(s, period, w->x0, w, periods, NULL, NULL);
		fresh = r == SIM_OK && w->res < w->best_res;
		if (fresh) {
			memcpy(w->best, w->x0, nd * sizeof *w->best);
			w->best_res = w->res;
			radius = fmax(radius, 2 * k * len);
			misses = 0;
		} else if (++misses > PSS_MAX_HALVINGS) {
			break;
		} else {
			radius = k * len / 4;
		}
	}
	if (r == SIM_OK)
		set_state(s, w->best);
	return r;
}

static int shot_alloc(struct sim *s, struct shot *w)
{
	size_t nd = (s->ndev + 1) * sizeof(double), m = s->sens->m;
	w->x0 = arena_alloc(s->ar, nd);
	w->x1 = arena_alloc(s->ar, nd);
	w->best = arena_alloc(s->ar, nd);
	w->jac = arena_alloc(s->ar, m * m * sizeof(double));
	w->dx = arena_alloc(s->ar, m * sizeof(double));
	return w->x0 && w->x1 && w->best && w->jac && w->dx;
}

/* ---- the steady state ---- */

/* Shooting from the present state, when the circuit is small enough;
 * afterwards plain settling checks what it found. */
static enum sim_status try_shooting(struct sim *s, double period, double tol,
				   unsigned max_periods, unsigned *periods, unsigned plain)
{
	/* an attempt costs at most as many periods as plain settling has run
	   (four at least): shooting never more than doubles a run's work */
	unsigned cap = *periods + (plain > 4 ? plain : 4);
	if (cap < max_periods)
		max_periods = cap;
	struct shot w;
	s->sens = sens_create(s);
	s->on_step = s->sens ? sens_step : NULL;
	enum sim_status r = SIM_OK;
	if (s->sens && shot_alloc(s, &w)) {
		r = shoot(s, period, tol, &w, max_periods, periods, NULL, NULL);
		s->st.residual = w.best_res;
	}
	s->sens = NULL;
	s->on_step = NULL;
	return r;
}

/* Plain settling that has reached its noise floor: the steps of the
 * solver fall at other instants each period, and a circuit that switches
 * hard (an amplifier slamming into its rails) never repeats itself closer
 * than that. Over PSS_WINDOW plain periods, each change below PSS_NOISE,
 * a third of them larger than the one before, and the state PSS_WINDOW
 * periods back no further away than twice the largest of them: nothing is
 * still on its way (a slow decay shrinks its change period after period
 * and moves the state on). The largest change, in volts, is the run's noise
 * (sim_stats), which the numbers taken from it must allow for. */
struct noise {
	double *anchor;  /* the state at the window's start */
	double *vprev;   /* each node's level at the last period's start */
	double *vlargest; /* each node's largest change in the window (V) */
	double largest;  /* the largest change in the window (relative) */
	double path;     /* the sum of the window's changes */
	double last;     /* the change before this one */
	unsigned n;      /* periods in the window */
	unsigned ups;    /* changes in the window larger than the one before */
};

static int noise_floor(struct sim *s, struct noise *w, const double *now, double change,
		       int fresh)
{
	double scale[2];
	int caps;
	state_scale(s, now, scale, &caps);
	if (!caps || fresh || !(change < PSS_NOISE)) {
		w->n = 0;
		return 0;
	}
	if (w->n == 0) {
		memcpy(w->anchor, now, s->ndev * sizeof *now);
		memset(w->vlargest, 0, s->nnodes * sizeof *w->vlargest);
		w->largest = 0;
		w->path = 0;
		w->ups = 0;
		w->last = change;
	}
	w->largest = fmax(w->largest, change);
	for (size_t k = 0; k < s->nnodes; k++)
		w->vlargest[k] = fmax(w->vlargest[k], fabs(s->v[k] - w->vprev[k]));
	w->path += change;
	w->ups += change > w->last;
	w->last = change;
	if (++w->n <= PSS_WINDOW)
		return 0;
	w->n = 0;
	/* a decay, however slow, shrinks period after period: noise goes up
	   and down */
	double net = state_change(s, now, w->anchor);
	if (w->ups < PSS_WINDOW / 3 || !(net <= 2 * w->largest) || !(net < PSS_DRIFT * w->path))
		return 0;
	s->st.noise = w->largest * scale[0];
	s->node_noise = w->vlargest;
	return 1;
}

/* A drift over a long baseline: the state has moved, since the baseline
 * taken age periods ago (at the last power of two of the periods run, so
 * a quarter to a half of them back), by more than PSS_LONG times the
 * tolerance (or twice the noise window's largest change, where the state
 * is noisy). A constant slow drift under period-to-period noise (a ladder
 * behind leakage inductance, emptying by a fixed charge a period) shows
 * only there. */
static int long_drift(const struct sim *s, const double *now, const double *snap,
		      unsigned age, int have, double tol, const struct noise *w)
{
	if (!have || age < PSS_WINDOW)
		return 0;
	double limit = fmax(PSS_LONG * tol, 2 * w->largest);
	return !(state_change(s, now, snap) <= limit);
}

enum sim_status sim_settle(struct sim *s, double period, unsigned max_periods,
			   double tol, unsigned *periods, int *settled,
			   sim_point_fn fn, void *ud)
{
	double *prev = arena_alloc(s->ar, (s->ndev + 1) * sizeof *prev);
	double *now = arena_alloc(s->ar, (s->ndev + 1) * sizeof *now);
	if (!prev || !now)
		return SIM_OOM;
	*settled = 0;
	*periods = 0;
	double from = settled_from(s), last_change = INFINITY;
	double ratios[PSS_RATIOS] = {INFINITY, INFINITY, INFINITY, INFINITY};
	s->st.settled_from = from;
	s->st.residual = NAN;
	int may_shoot = !s->o.no_shooting && one_map(s, period);
	unsigned since = 0, next_shot = 1, shots = 0, plain = 0;
	struct noise nf = {arena_alloc(s->ar, (s->ndev + 1) * sizeof *nf.anchor),
			   arena_alloc(s->ar, (s->nnodes + 1) * sizeof *nf.vprev),
			   arena_alloc(s->ar, (s->nnodes + 1) * sizeof *nf.vlargest), 0, 0, 0, 0, 0};
	double *snap = arena_alloc(s->ar, (s->ndev + 1) * sizeof *snap);
	unsigned snap_at = 0; /* since, when snap was taken (0: none) */
	if (!nf.anchor || !nf.vprev || !nf.vlargest || !snap)
		return SIM_OOM;
	s->st.noise = 0;
	s->node_noise = NULL;
	enum sim_status r = sim_run(s, s->t, NULL, NULL);
	state_of(s, now);
	while (r == SIM_OK && *periods < max_periods) {
		if (may_shoot && *periods >= next_shot && s->t >= from * (1 - 1e-9)) {
			/* far from the steady state Newton's steps may not pay:
			   plain periods in between, twice as many each time */
			next_shot = *periods + (*periods > PSS_PLAIN ? *periods : PSS_PLAIN);
			may_shoot = ++shots < PSS_ATTEMPTS;
			r = try_shooting(s, period, tol, max_periods, periods, plain);
			state_of(s, now);
			last_change = INFINITY, since = 0, snap_at = 0;
			for (int k = 0; k < PSS_RATIOS; k++)
				ratios[k] = INFINITY;
			continue;
		}
		memcpy(prev, now, s->ndev * sizeof *prev);
		memcpy(nf.vprev, s->v, s->nnodes * sizeof *nf.vprev);
		r = sim_run(s, s->t + period, fn, ud);
		++*periods, ++since, ++plain;
		state_of(s, now);
		double change = state_change(s, now, prev);
		double ratio = change / last_change;
		/* geometric decay: what is still to come is change r/(1-r), r
		   the largest of the last PSS_RATIOS ratios: one small ratio
		   among noisy ones near 1 is no decay (a ladder behind leakage
		   inductance drifts at a constant rate under its ringing) */
		double rmax = ratio;
		ratios[since % PSS_RATIOS] = ratio;
		for (int k = 0; k < PSS_RATIOS; k++)
			rmax = fmax(rmax, ratios[k]);
		double to_come = rmax < 0.98 ? change * rmax / (1 - rmax) : INFINITY;
		last_change = change;
		s->st.residual = change;
		int drifting = long_drift(s, now, snap, since - snap_at, snap_at != 0, tol, &nf);
		if ((since & (since - 1)) == 0) { /* a power of two: the next baseline */
			memcpy(snap, now, s->ndev * sizeof *snap);
			snap_at = since;
		}
		/* a decay needs two changes to be seen: two periods since the
		   state was last set, three in all, after the sources' delays */
		if (r == SIM_OK && since >= 2 && *periods >= 3 && !drifting &&
		    s->t - 2 * period >= from * (1 - 1e-9) && change < tol &&
		    (to_come < tol || change < tol / 10)) {
			*settled = 1;
			break;
		}
		if (r == SIM_OK && s->t - period >= from * (1 - 1e-9) && !drifting &&
		    noise_floor(s, &nf, now, change, since < 2)) {
			*settled = 1;
			break;
		}
	}
	return r;
}
