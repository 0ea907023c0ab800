/* simbehav.c: see simbehav.h. The expression is differentiated forward
 * over its tree (each node gives its value and its gradient over the
 * probes), so the Newton stamp is the exact linearisation wherever the
 * functions are smooth; comparisons, u(), sgn() and the like have zero
 * slope and switch between iterates. Results that are not finite are
 * held at +-SIMBEHAV_HUGE so that one bad iterate cannot poison the
 * matrix. Leaves evaluation of probes to the caller's unknowns. */
#include "simbehav.h"

#include <math.h>
#include <string.h>
#include <strings.h>

#include "expr.h"

/* A bound on any value or slope the expression hands the matrix
 * (common practice, no source). */
#define SIMBEHAV_HUGE 1e15

struct simbehav {
	const struct nl_behav *bh;
	size_t np;
	const long *pa, *pb;
	long *h; /* per probe 4 handles, then 4 for the branch */
	long a, b, br;
	double *p0;       /* probe values of the last linearisation */
	double *dp, *lim; /* per probe: its last step, its step limit */
	double t_last;    /* time of the last stamp */
	int have_p0;
	double *g, *scratch; /* gradient; 2 np per nesting level */
	unsigned depth;
	double val;
	int uses_time;
	int steep; /* has a steep function: probes are limited */
};

struct bev {
	const double *p;
	double t;
	size_t np;
	double *scratch;
};

static double clampv(double v)
{
	if (isnan(v))
		return 0;
	return fmax(-SIMBEHAV_HUGE, fmin(SIMBEHAV_HUGE, v));
}

#define SIMBEHAV_RMIN 1e-3 /* ohm: as the solver's plain resistors */

static void zero(double *g, size_t n)
{
	memset(g, 0, n * sizeof *g);
}

static void scale(double *g, size_t n, double k)
{
	k = clampv(k);
	for (size_t i = 0; i < n; i++)
		g[i] = clampv(g[i] * k);
}

static double ev(const struct bev *b, const struct expr *e, unsigned d, double *g);

/* One-argument functions: value and slope at x [behav-functions]. */
static int f1(const char *n, double x, double *v, double *dv)
{
	static const char *const flat[] = {"sgn", "sign", "floor", "ceil", "int", "u", NULL};
	for (int i = 0; flat[i]; i++)
		if (strcasecmp(n, flat[i]) == 0) {
			*dv = 0;
			*v = i < 2 ? (x > 0) - (x < 0) : i == 2 ? floor(x)
						 : i == 3       ? ceil(x)
						 : i == 4       ? trunc(x)
								: x > 0;
			return 1;
		}
	if (strcasecmp(n, "abs") == 0)
		*v = fabs(x), *dv = x < 0 ? -1 : 1;
	else if (strcasecmp(n, "sqrt") == 0)
		*v = sqrt(fmax(x, 0)), *dv = x > 0 ? 0.5 / *v : SIMBEHAV_HUGE;
	else if (strcasecmp(n, "exp") == 0)
		*v = exp(x), *dv = *v;
	else if (strcasecmp(n, "log") == 0 || strcasecmp(n, "ln") == 0)
		*v = log(x), *dv = 1 / x;
	else if (strcasecmp(n, "log10") == 0)
		*v = log10(x), *dv = 1 / (x * log(10.0));
	else if (strcasecmp(n, "sin") == 0)
		*v = sin(x), *dv = cos(x);
	else if (strcasecmp(n, "cos") == 0)
		*v = cos(x), *dv = -sin(x);
	else if (strcasecmp(n, "tan") == 0)
		*v = tan(x), *dv = 1 + *v * *v;
	else if (strcasecmp(n, "atan") == 0)
		*v = atan(x), *dv = 1 / (1 + x * x);
	else if (strcasecmp(n, "tanh") == 0)
		*v = tanh(x), *dv = 1 - *v * *v;
	else if (strcasecmp(n, "sinh") == 0)
		*v = sinh(x), *dv = cosh(x);
	else if (strcasecmp(n, "cosh") == 0)
		*v = cosh(x), *dv = sinh(x);
	else if (strcasecmp(n, "uramp") == 0)
		*v = x > 0 ? x : 0, *dv = x > 0;
	else if (strcasecmp(n, "sqr") == 0)
		*v = x * x, *dv = 2 * x;
	else
		return 0;
	return 1;
}

/* a^b with its slopes; pwr keeps the sign of a (ngspice's reading, from
 * memory). */
static double power(const char *n, double a, double b, double *da, double *db)
{
	int keep_sign = n && strcasecmp(n, "pwr") == 0;
	double s = keep_sign && a < 0 ? -1 : 1, m = keep_sign ? fabs(a) : a;
	double v = pow(m, b);
	*da = m != 0 ? b * v / m : (b == 1 ? 1 : 0);
	*db = m > 0 ? v * log(m) : 0;
	return s * v;
}

/* Sum of |g|: at a tie of min or max the branch with a slope is kept,
 * so that Newton at the corner of a clamp still sees the linear part. */
static double slope(const double *g, size_t n)
{
	double s = 0;
	for (size_t i = 0; i < n; i++)
		s += fabs(g[i]);
	return s;
}

/* table(x, x1, y1, x2, y2, ...), PSpice's TABLE: linear between the
 * points (x rising), held at the first and last y past the ends. */
static double table(const struct bev *b, const struct expr *e, unsigned d, double *g)
{
	double *tb = b->scratch + (size_t)d * 2 * b->np + b->np;
	double x = ev(b, e->args[0], d + 1, g);
	double xa = ev(b, e->args[1], d + 1, tb), ya = ev(b, e->args[2], d + 1, tb);
	for (uint32_t k = 3; x > xa && k + 1 < e->nargs; k += 2) {
		double xb = ev(b, e->args[k], d + 1, tb), yb = ev(b, e->args[k + 1], d + 1, tb);
		if (x < xb && xb > xa) {
			double s = (yb - ya) / (xb - xa);
			scale(g, b->np, s);
			return ya + s * (x - xa);
		}
		xa = xb, ya = yb;
	}
	scale(g, b->np, 0);
	return ya;
}

static double call(const struct bev *b, const struct expr *e, unsigned d, double *g)
{
	double *ta = b->scratch + (size_t)d * 2 * b->np, *tb = ta + b->np;
	const char *n = e->name;
	if (strcasecmp(n, "if") == 0 || strcasecmp(n, "ternary_fcn") == 0)
		return ev(b, e->args[ev(b, e->args[0], d + 1, ta) != 0 ? 1 : 2], d + 1, g);
	if (strcasecmp(n, "limit") == 0) {
		double x = ev(b, e->args[0], d + 1, g), lo = ev(b, e->args[1], d + 1, ta);
		if (x < lo) {
			memcpy(g, ta, b->np * sizeof *g);
			return lo;
		}
		double hi = ev(b, e->args[2], d + 1, ta);
		if (x > hi)
			memcpy(g, ta, b->np * sizeof *g);
		return x > hi ? hi : x;
	}
	if (strcasecmp(n, "table") == 0)
		return table(b, e, d, g);
	if (strcasecmp(n, "min") == 0 || strcasecmp(n, "max") == 0) {
		int mx = (n[1] | 32) == 'a';
		double v = ev(b, e->args[0], d + 1, g);
		for (uint32_t i = 1; i < e->nargs; i++) {
			double w = ev(b, e->args[i], d + 1, ta);
			if ((mx ? w > v : w < v) || (w == v && slope(ta, b->np) > slope(g, b->np))) {
				v = w;
				memcpy(g, ta, b->np * sizeof *g);
			}
		}
		return v;
	}
	if (e->nargs == 2) { /* pow, pwr */
		double x = ev(b, e->args[0], d + 1, g), y = ev(b, e->args[1], d + 1, tb), da, db;
		double v = power(n, x, y, &da, &db);
		for (size_t i = 0; i < b->np; i++)
			g[i] = clampv(da * g[i] + db * tb[i]);
		return v;
	}
	double x = ev(b, e->args[0], d + 1, g), v = NAN, dv = 0;
	if (e->nargs != 1 || !f1(n, x, &v, &dv))
		v = NAN, dv = 0; /* behav.c lets no other call through */
	scale(g, b->np, dv);
	return v;
}

static double binary(const struct bev *b, const struct expr *e, unsigned d, double *g)
{
	double *tb = b->scratch + (size_t)d * 2 * b->np + b->np;
	double x = ev(b, e->args[0], d + 1, g), y = ev(b, e->args[1], d + 1, tb);
	size_t n = b->np;
	switch (e->op) {
	case EXPR_ADD:
		for (size_t i = 0; i < n; i++)
			g[i] += tb[i];
		return x + y;
	case EXPR_SUB:
		for (size_t i = 0; i < n; i++)
			g[i] -= tb[i];
		return x - y;
	case EXPR_MUL:
		for (size_t i = 0; i < n; i++)
			g[i] = clampv(y * g[i] + x * tb[i]);
		return x * y;
	case EXPR_DIV:
		for (size_t i = 0; i < n; i++)
			g[i] = clampv((g[i] - x / y * tb[i]) / y);
		return x / y;
	case EXPR_MOD:
		return fmod(x, y);
	case EXPR_POW: {
		double da, db, v = power(NULL, x, y, &da, &db);
		for (size_t i = 0; i < n; i++)
			g[i] = clampv(da * g[i] + db * tb[i]);
		return v;
	}
	default:
		break;
	}
	zero(g, n); /* comparisons and logic: flat between their switchings */
	switch (e->op) {
	case EXPR_LT: return x < y;
	case EXPR_GT: return x > y;
	case EXPR_LE: return x <= y;
	case EXPR_GE: return x >= y;
	case EXPR_EQ: return x == y;
	case EXPR_NE: return x != y;
	case EXPR_AND: return x != 0 && y != 0;
	case EXPR_OR: return x != 0 || y != 0;
	case EXPR_XOR: return (x != 0) != (y != 0);
	default: return NAN;
	}
}

static double ev(const struct bev *b, const struct expr *e, unsigned d, double *g)
{
	double *ta = b->scratch + (size_t)d * 2 * b->np;
	double v;
	switch (e->op) {
	case EXPR_NUM:
		zero(g, b->np);
		return e->num;
	case EXPR_VAR:
		zero(g, b->np);
		if (e->name[0] != '$')
			return b->t; /* behav.c keeps only time and probes */
		g[(size_t)e->num] = 1;
		return b->p[(size_t)e->num];
	case EXPR_CALL:
		v = call(b, e, d, g);
		break;
	case EXPR_NEG:
		v = -ev(b, e->args[0], d + 1, g);
		scale(g, b->np, -1);
		break;
	case EXPR_NOT:
		v = ev(b, e->args[0], d + 1, g) == 0;
		zero(g, b->np);
		break;
	case EXPR_COND:
		v = ev(b, e->args[ev(b, e->args[0], d + 1, ta) != 0 ? 1 : 2], d + 1, g);
		break;
	default:
		v = binary(b, e, d, g);
		break;
	}
	return clampv(v);
}

/* Functions steep enough to throw Newton far (they get step limiting);
 * piecewise-linear ones (min, max, comparisons, abs, uramp) do not: a
 * limit would only slow a switching logic chain. */
static int is_steep(const struct expr *e)
{
	static const char *const steep[] = {"exp", "sinh", "cosh", "tanh", "pow", "pwr",
					    "log", "ln", "log10", "sqrt", "tan", NULL};
	if (e->op == EXPR_POW || e->op == EXPR_DIV)
		return 1;
	for (int i = 0; e->op == EXPR_CALL && steep[i]; i++)
		if (strcasecmp(e->name, steep[i]) == 0)
			return 1;
	return 0;
}

/* Nesting depth of e, and whether it reads the time or has a steep
 * function (time: bit 0, steep: bit 1 of *flags). */
static unsigned depth_of(const struct expr *e, int *flags)
{
	unsigned n = e->op == EXPR_CALL                                            ? e->nargs
		     : e->op == EXPR_NUM || e->op == EXPR_VAR || e->op == EXPR_STR ? 0
		     : e->op == EXPR_NEG || e->op == EXPR_NOT                      ? 1
		     : e->op == EXPR_COND                                          ? 3
										   : 2;
	unsigned d = 0;
	if (e->op == EXPR_VAR && e->name[0] != '$')
		*flags |= 1;
	if (is_steep(e))
		*flags |= 2;
	for (unsigned i = 0; i < n; i++) {
		unsigned k = depth_of(e->args[i], flags);
		d = k > d ? k : d;
	}
	return d + 1;
}

struct simbehav *simbehav_create(struct arena *ar, const struct nl_behav *bh,
				 const long *pa, const long *pb)
{
	struct simbehav *d = arena_zalloc(ar, sizeof *d);
	if (!d)
		return NULL;
	d->bh = bh;
	d->np = bh->nprobes;
	int flags = 0;
	d->depth = depth_of(bh->e, &flags);
	d->uses_time = flags & 1;
	d->steep = (flags & 2) != 0;
	size_t np = d->np ? d->np : 1;
	long *a = arena_alloc(ar, np * sizeof *a), *b = arena_alloc(ar, np * sizeof *b);
	d->h = arena_alloc(ar, (4 * np + 4) * sizeof *d->h);
	d->p0 = arena_zalloc(ar, np * sizeof *d->p0);
	d->dp = arena_zalloc(ar, np * sizeof *d->dp);
	d->lim = arena_zalloc(ar, np * sizeof *d->lim);
	d->g = arena_zalloc(ar, np * sizeof *d->g);
	d->scratch = arena_zalloc(ar, ((size_t)d->depth + 2) * 2 * np * sizeof *d->scratch);
	if (!a || !b || !d->h || !d->p0 || !d->dp || !d->lim || !d->g || !d->scratch)
		return NULL;
	memcpy(a, pa, d->np * sizeof *a);
	memcpy(b, pb, d->np * sizeof *b);
	d->pa = a;
	d->pb = b;
	return d;
}

int simbehav_need(struct simbehav *d, struct simmat *m, long a, long b, long br)
{
	long rows[2] = {br >= 0 ? br : a, br >= 0 ? -1 : b};
	d->a = a, d->b = b, d->br = br;
	for (size_t k = 0; k < d->np; k++)
		for (int r = 0; r < 2; r++) {
			d->h[4 * k + 2 * (size_t)r] = simmat_need(m, rows[r], d->pa[k]);
			d->h[4 * k + 2 * (size_t)r + 1] = simmat_need(m, rows[r], d->pb[k]);
		}
	long *h = d->h + 4 * d->np;
	h[0] = simmat_need(m, a, br), h[1] = simmat_need(m, b, br);
	h[2] = simmat_need(m, br, a), h[3] = simmat_need(m, br, b);
	for (size_t k = 0; k < 4 * d->np + 4; k++)
		if (d->h[k] == -2)
			return 0;
	return 1;
}

double simbehav_eval(struct simbehav *d, const double *p, double t, double *g)
{
	struct bev b = {p, t, d->np, d->scratch};
	return ev(&b, d->bh->e, 0, g ? g : d->g);
}

static double at(const double *x, long k)
{
	return k < 0 ? 0 : x[k];
}

/* Probe values at iterate x into p[], limited against the last
 * linearisation. Two limits: a steep expression's voltage probe moves at
 * most SIMBEHAV_VSTEP plus half its value per iterate (as junction
 * limiting does); and within one time point, a probe whose iterate turns
 * back gets at most half its last step from then on (Newton bouncing
 * between the two flat ends of a clamp, whose slopes are zero, closes in
 * on the solution between them). */
static void probes_at(struct simbehav *d, const double *x, double t, double *p, int *limited)
{
	int same = d->have_p0 && t == d->t_last;
	for (size_t k = 0; k < d->np; k++) {
		int volt = d->bh->probes[k].kind == NL_PROBE_V;
		p[k] = at(x, d->pa[k]) - (volt ? at(x, d->pb[k]) : 0);
		double step = p[k] - d->p0[k], most = INFINITY;
		if (!same)
			d->lim[k] = INFINITY, d->dp[k] = 0;
		double small = 1e-6 + 1e-3 * fabs(d->p0[k]); /* below: never limited */
		if (same && step * d->dp[k] < 0 && fabs(step) > small)
			d->lim[k] = fmax(fmin(d->lim[k], fabs(d->dp[k]) / 2), small);
		if (same)
			most = d->lim[k];
		if (volt && d->steep && d->have_p0)
			most = fmin(most, SIMBEHAV_VSTEP + 0.5 * fabs(d->p0[k]));
		if (fabs(step) > most) {
			step = copysign(most, step);
			*limited = 1;
		}
		p[k] = d->p0[k] + step;
		if (step != 0)
			d->dp[k] = step;
		d->p0[k] = p[k];
	}
	d->have_p0 = 1;
	d->t_last = t;
}

/* R = expression: from the resistance r (slopes in d->g) to the current
 * v / r through it, v being the last probe, and that current's slopes.
 * |r| below SIMBEHAV_RMIN is taken as SIMBEHAV_RMIN, as a plain R's. */
static double resistor_current(struct simbehav *d, const double *p, double r)
{
	size_t self = d->np - 1;
	double v = p[self];
	if (fabs(r) < SIMBEHAV_RMIN) {
		r = r < 0 ? -SIMBEHAV_RMIN : SIMBEHAV_RMIN;
		for (size_t k = 0; k < d->np; k++)
			d->g[k] = 0;
	}
	for (size_t k = 0; k < d->np; k++)
		d->g[k] = -v / (r * r) * d->g[k];
	d->g[self] += 1 / r;
	return v / r;
}

void simbehav_stamp(struct simbehav *d, struct simmat *m, const double *x, double t,
		    int *limited)
{
	double *p = d->scratch + (size_t)(d->depth + 1) * 2 * (d->np ? d->np : 1);
	probes_at(d, x, t, p, limited);
	double f = simbehav_eval(d, p, t, d->g), lin;
	if (d->bh->resistance)
		f = resistor_current(d, p, f);
	lin = f;
	d->val = f;
	for (size_t k = 0; k < d->np; k++)
		lin -= d->g[k] * p[k];
	long *h = d->h + 4 * d->np;
	if (d->br >= 0) { /* x[a] - x[b] - sum g p = f - sum g p0 */
		simmat_add(m, h[0], 1), simmat_add(m, h[1], -1);
		simmat_add(m, h[2], 1), simmat_add(m, h[3], -1);
		for (size_t k = 0; k < d->np; k++) {
			simmat_add(m, d->h[4 * k], -d->g[k]);
			simmat_add(m, d->h[4 * k + 1], d->g[k]);
		}
		simmat_rhs(m, d->br, lin);
		return;
	}
	/* a current f leaving a through the part into b */
	for (size_t k = 0; k < d->np; k++) {
		simmat_add(m, d->h[4 * k], d->g[k]);
		simmat_add(m, d->h[4 * k + 1], -d->g[k]);
		simmat_add(m, d->h[4 * k + 2], -d->g[k]);
		simmat_add(m, d->h[4 * k + 3], d->g[k]);
	}
	simmat_rhs(m, d->a, -lin);
	simmat_rhs(m, d->b, lin);
}

double simbehav_value(const struct simbehav *d)
{
	return d->val;
}

int simbehav_uses_time(const struct simbehav *d)
{
	return d->uses_time;
}
