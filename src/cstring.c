/* cstring.c: see cstring.h. */
#include "cstring.h"

#include <math.h>
#include <stdio.h>

static int is_cap(const struct nl_part *p)
{
	return p->kind == NL_C && p->npins == 2;
}

/* 1 when node j is a joint: not ground, touched by exactly two
 * capacitors, on other node pairs than j with itself. */
static int joint(const struct nl_circuit *c, uint32_t j)
{
	uint32_t n;
	const uint32_t *adj = nl_adjacency(c, j, &n);
	if (j == NL_GROUND || n != 2 || adj[0] == adj[1])
		return 0;
	for (int i = 0; i < 2; i++) {
		const struct nl_part *p = nl_part_at(c, adj[i]);
		const uint32_t *q = nl_pins(c, p);
		if (!is_cap(p) || q[0] == q[1])
			return 0;
	}
	return 1;
}

static uint32_t other(const struct nl_circuit *c, uint32_t part, uint32_t node)
{
	const uint32_t *q = nl_pins(c, nl_part_at(c, part));
	return q[0] == node ? q[1] : q[0];
}

/* From capacitor k out through node j: the end node past the joints,
 * marking the members with s; NL_NONE on a ring. */
static uint32_t reach(const struct nl_circuit *c, uint32_t k, uint32_t j, uint32_t s,
		      struct cstring *out, uint32_t *count)
{
	while (joint(c, j)) {
		uint32_t n;
		const uint32_t *adj = nl_adjacency(c, j, &n);
		uint32_t nx = adj[0] == k ? adj[1] : adj[0];
		if (out->of[nx] != NL_NONE)
			return NL_NONE;
		out->of[nx] = s;
		++*count;
		j = other(c, nx, j);
		k = nx;
	}
	return j;
}

#define CSTRING_RING (NL_NONE - 1) /* a member of a ring, while finding */

/* The members of string s reached from capacitor k through node j marked
 * as a ring's (reach's walk again, over what it marked). */
static void release(const struct nl_circuit *c, uint32_t k, uint32_t j, uint32_t s,
		    struct cstring *out)
{
	while (joint(c, j)) {
		uint32_t n;
		const uint32_t *adj = nl_adjacency(c, j, &n);
		uint32_t nx = adj[0] == k ? adj[1] : adj[0];
		if (out->of[nx] != s)
			return;
		out->of[nx] = CSTRING_RING;
		j = other(c, nx, j);
		k = nx;
	}
}

int cstring_find(const struct nl_circuit *c, struct arena *ar, struct cstring *out)
{
	size_t np = nl_part_count(c), n = 0;
	out->n = 0;
	out->of = arena_alloc(ar, (np + 1) * sizeof *out->of);
	out->end0 = arena_alloc(ar, (np + 1) * sizeof *out->end0);
	out->end1 = arena_alloc(ar, (np + 1) * sizeof *out->end1);
	out->count = arena_alloc(ar, (np + 1) * sizeof *out->count);
	out->sum = arena_alloc(ar, (np + 1) * sizeof *out->sum);
	if (!out->of || !out->end0 || !out->end1 || !out->count || !out->sum)
		return 0;
	for (size_t i = 0; i < np; i++)
		out->of[i] = NL_NONE;
	for (uint32_t i = 0; i < np; i++) {
		const struct nl_part *p = nl_part_at(c, i);
		if (!is_cap(p) || out->of[i] != NL_NONE)
			continue;
		const uint32_t *q = nl_pins(c, p);
		if (q[0] == q[1] || (!joint(c, q[0]) && !joint(c, q[1])))
			continue;
		uint32_t count = 1, s = (uint32_t)n;
		out->of[i] = s;
		uint32_t e0 = reach(c, i, q[0], s, out, &count);
		uint32_t e1 = e0 == NL_NONE ? NL_NONE : reach(c, i, q[1], s, out, &count);
		if (e0 == NL_NONE || e1 == NL_NONE || e0 == e1) {
			/* a ring, or a string closed on itself: no ends to bound it
			   by; its members are let go in one pass at the end */
			out->of[i] = CSTRING_RING;
			for (uint32_t j = 0; j < 2; j++)
				release(c, i, q[j], s, out);
			continue;
		}
		out->end0[n] = e0;
		out->end1[n] = e1;
		out->count[n++] = count;
	}
	for (size_t i = 0; i < np; i++)
		if (out->of[i] == CSTRING_RING)
			out->of[i] = NL_NONE;
	out->n = n;
	return 1;
}

const char *cstring_note(const struct nl_circuit *c, const struct cstring *s, uint32_t k,
			 struct arena *ar)
{
	uint32_t i = s->n ? s->of[k] : NL_NONE;
	if (i == NL_NONE)
		return NULL;
	char buf[400];
	snprintf(buf, sizeof buf,
		 "one of %u capacitors in series from %.60s to %.60s with nothing at their joints: "
		 "leakage, not capacitance, divides their DC, so each may hold the string's whole "
		 "voltage",
		 s->count[i], nl_node_at(c, s->end0[i])->name, nl_node_at(c, s->end1[i])->name);
	return arena_strdup(ar, buf);
}

void cstring_widen(const struct nl_circuit *c, const struct cstring *s, const double *nmin,
		   const double *nmax, double *vmin, double *vmax)
{
	if (s->n == 0)
		return;
	for (size_t i = 0; i < s->n; i++)
		s->sum[i] = 0;
	for (size_t k = 0; k < nl_part_count(c); k++)
		if (s->of[k] != NL_NONE)
			s->sum[s->of[k]] += isfinite(vmin[k]) && isfinite(vmax[k])
						    ? fmax(vmax[k], -vmin[k]) : INFINITY;
	for (size_t k = 0; k < nl_part_count(c); k++) {
		uint32_t i = s->of[k];
		if (i == NL_NONE || !isfinite(vmin[k]) || !isfinite(vmax[k]))
			continue;
		uint32_t a = s->end0[i], b = s->end1[i];
		double whole = fmin(fmax(nmax[a] - nmin[b], nmax[b] - nmin[a]), s->sum[i]);
		if (!isfinite(whole))
			continue;
		if (vmax[k] >= -vmin[k])
			vmax[k] = fmax(vmax[k], whole);
		else
			vmin[k] = fmin(vmin[k], -whole);
	}
}
