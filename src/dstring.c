/* dstring.c: see dstring.h. */
#include "dstring.h"

#include <math.h>

#include "dmodel.h"

#define DSTRING_BV_OVER 1.01 /* a member in breakdown holds its BV, plus this */

static int is_diode(const struct nl_part *p)
{
	return p->kind == NL_D && p->npins >= 2;
}

/* The diode whose anode is joint node j, when j is a joint: a node other
 * than ground touched by exactly two diodes, one's cathode and the
 * other's anode. *in gets the one whose cathode it is. NL_NONE otherwise. */
static uint32_t next_at(const struct nl_circuit *c, uint32_t j, uint32_t *in)
{
	uint32_t n;
	const uint32_t *adj = nl_adjacency(c, j, &n);
	if (j == NL_GROUND || n != 2 || adj[0] == adj[1])
		return NL_NONE;
	const struct nl_part *p0 = nl_part_at(c, adj[0]), *p1 = nl_part_at(c, adj[1]);
	if (!is_diode(p0) || !is_diode(p1))
		return NL_NONE;
	const uint32_t *q0 = nl_pins(c, p0), *q1 = nl_pins(c, p1);
	if (q0[1] == j && q1[0] == j && q1[1] != j && q0[0] != j) {
		*in = adj[0];
		return adj[1];
	}
	if (q1[1] == j && q0[0] == j && q0[1] != j && q1[0] != j) {
		*in = adj[1];
		return adj[0];
	}
	return NL_NONE;
}

/* The string that starts at diode k (its anode no joint): its members
 * marked with index s; the count. */
static uint32_t walk(const struct nl_circuit *c, uint32_t k, uint32_t s, struct dstring *d)
{
	uint32_t count = 1, in;
	d->of[k] = s;
	d->anode[s] = nl_pins(c, nl_part_at(c, k))[0];
	for (;;) {
		uint32_t j = nl_pins(c, nl_part_at(c, k))[1];
		uint32_t nx = next_at(c, j, &in);
		if (nx == NL_NONE || d->of[nx] != NL_NONE)
			break;
		k = nx;
		d->of[k] = s;
		count++;
	}
	d->cathode[s] = nl_pins(c, nl_part_at(c, k))[1];
	return count;
}

int dstring_find(const struct nl_circuit *c, struct arena *ar, struct dstring *out)
{
	size_t np = nl_part_count(c), n = 0;
	out->n = 0;
	out->of = arena_alloc(ar, (np + 1) * sizeof *out->of);
	out->anode = arena_alloc(ar, (np + 1) * sizeof *out->anode);
	out->cathode = arena_alloc(ar, (np + 1) * sizeof *out->cathode);
	out->count = arena_alloc(ar, (np + 1) * sizeof *out->count);
	out->sum = arena_alloc(ar, (np + 1) * sizeof *out->sum);
	if (!out->of || !out->anode || !out->cathode || !out->count || !out->sum)
		return 0;
	for (size_t i = 0; i < np; i++)
		out->of[i] = NL_NONE;
	for (uint32_t i = 0; i < np; i++) {
		const struct nl_part *p = nl_part_at(c, i);
		uint32_t in;
		if (!is_diode(p) || out->of[i] != NL_NONE ||
		    next_at(c, nl_pins(c, p)[0], &in) != NL_NONE)
			continue;
		uint32_t count = walk(c, i, (uint32_t)n, out);
		if (count < 2) {
			out->of[i] = NL_NONE;
			continue;
		}
		out->count[n++] = count;
	}
	out->n = n;
	return 1;
}

void dstring_widen(const struct nl_circuit *c, const struct dstring *d, const double *nmin,
		   const double *nmax, double *vmin)
{
	if (d->n == 0)
		return;
	for (size_t s = 0; s < d->n; s++)
		d->sum[s] = 0;
	for (size_t k = 0; k < nl_part_count(c); k++)
		if (d->of[k] != NL_NONE)
			d->sum[d->of[k]] += isfinite(vmin[k]) ? -vmin[k] : INFINITY;
	for (size_t k = 0; k < nl_part_count(c); k++) {
		uint32_t s = d->of[k];
		if (s == NL_NONE || !isfinite(vmin[k]))
			continue;
		double whole = fmin(nmax[d->cathode[s]] - nmin[d->anode[s]], d->sum[s]);
		double bv = dmodel_given(nl_part_at(c, k)->model, DM_BV);
		if (bv > 0)
			whole = fmin(whole, bv * DSTRING_BV_OVER);
		if (isfinite(whole))
			vmin[k] = fmin(vmin[k], -whole);
	}
}
