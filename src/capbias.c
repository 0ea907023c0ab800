/* capbias.c: capacitance-against-bias curves (include/capbias.h). */
#include "capbias.h"

#include <math.h>
#include <string.h>

#include "num.h"

static int is_sep(char c)
{
	return c == ' ' || c == '\t' || c == ';' || c == ',';
}

/* One "V=share" point at s[i..j); returns NULL or a message. */
static const char *point(const char *s, size_t i, size_t j, double *v, double *k, size_t *bad)
{
	const char *eq = memchr(s + i, '=', j - i);
	if (!eq) {
		*bad = i;
		return "a bias point is written V=share, e.g. 16V=55%";
	}
	size_t e = (size_t)(eq - s);
	if (e == i || !num_ok(num_parse(s + i, e - i, v, NULL)) || !(*v >= 0)) {
		*bad = i;
		return "the voltage of a bias point must be a number of volts, 0 or more";
	}
	size_t kn = j - e - 1;
	int pct = kn && s[j - 1] == '%';
	if (!kn || !num_ok(num_parse(eq + 1, pct ? kn - 1 : kn, k, NULL))) {
		*bad = e + 1;
		return "the share of a bias point must be a percentage or a fraction";
	}
	if (pct)
		*k /= 100;
	if (!(*k > 0 && *k <= 1)) {
		*bad = e + 1;
		return "the share of a bias point must be above 0 and at most 100%";
	}
	return NULL;
}

const char *capbias_parse(const char *s, size_t n, struct capbias *out, size_t *bad)
{
	memset(out, 0, sizeof *out);
	size_t i = 0;
	for (;;) {
		while (i < n && is_sep(s[i]))
			i++;
		if (i == n)
			break;
		size_t j = i;
		while (j < n && !is_sep(s[j]))
			j++;
		double v, k;
		const char *msg = point(s, i, j, &v, &k, bad);
		if (msg)
			return msg;
		if (out->n == CAPBIAS_MAX) {
			*bad = i;
			return "a bias curve has at most 16 points";
		}
		if (out->n && !(v > out->v[out->n - 1])) {
			*bad = i;
			return "bias points must rise in voltage";
		}
		if (out->n && k > out->k[out->n - 1]) {
			*bad = i;
			return "the share must not grow with the voltage";
		}
		out->v[out->n] = v;
		out->k[out->n++] = k;
		i = j;
	}
	if (!out->n) {
		*bad = 0;
		return "a bias curve needs at least one V=share point";
	}
	return NULL;
}

double capbias_share(const struct capbias *c, double v, int *past)
{
	if (past)
		*past = 0;
	if (!c || !c->n)
		return 1;
	v = fabs(v);
	double v0 = 0, k0 = 1;
	for (unsigned i = 0; i < c->n; i++) {
		if (v <= c->v[i]) {
			double span = c->v[i] - v0;
			return span > 0 ? k0 + (c->k[i] - k0) * (v - v0) / span : c->k[i];
		}
		v0 = c->v[i];
		k0 = c->k[i];
	}
	if (past)
		*past = 1;
	return k0;
}
