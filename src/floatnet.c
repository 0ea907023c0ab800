/* floatnet.c: see floatnet.h. */
#include "floatnet.h"

#include <math.h>
#include <stdio.h>

static uint32_t root(uint32_t *up, uint32_t n)
{
	while (up[n] != n) {
		up[n] = up[up[n]];
		n = up[n];
	}
	return n;
}

static int is_cap(const struct nl_part *p)
{
	return p->kind == NL_C && p->npins == 2;
}

/* Joins the pins of every part but a capacitor; up[] per node. */
static void join(const struct nl_circuit *c, uint32_t *up)
{
	for (size_t i = 0; i < nl_part_count(c); i++) {
		const struct nl_part *p = nl_part_at(c, i);
		const uint32_t *q = nl_pins(c, p);
		for (uint8_t k = 1; !is_cap(p) && k < p->npins; k++) {
			uint32_t a = root(up, q[0]), b = root(up, q[k]);
			if (a != b)
				up[a < b ? b : a] = a < b ? a : b; /* ground's root stays 0 */
		}
	}
}

/* Numbers the groups that have a boundary capacitor to a fixed node
 * (gid per root, NL_NONE otherwise) and marks those capacitors. */
static void boundaries(const struct nl_circuit *c, uint32_t *up, uint32_t *gid, struct floatnet *f)
{
	for (uint32_t i = 0; i < nl_part_count(c); i++) {
		const struct nl_part *p = nl_part_at(c, i);
		f->cap[i] = NL_NONE;
		if (!is_cap(p))
			continue;
		const uint32_t *q = nl_pins(c, p);
		uint32_t a = root(up, q[0]), b = root(up, q[1]);
		if (a == b || (a != 0 && b != 0)) {
			f->ncoupled += a != b;
			f->coupled[i] = a != b;
			continue;
		}
		uint32_t in = a != 0 ? a : b;
		if (gid[in] == NL_NONE)
			gid[in] = (uint32_t)f->ngroup++;
		f->cap[i] = gid[in];
		f->side[i] = a != 0 ? 0 : 1;
	}
}

static int alloc_pairs(struct arena *ar, struct floatnet *f, size_t n)
{
	size_t m = n ? n : 1;
	f->pos = arena_alloc(ar, m * sizeof *f->pos);
	f->neg = arena_alloc(ar, m * sizeof *f->neg);
	f->grp = arena_alloc(ar, m * sizeof *f->grp);
	f->pmin = arena_alloc(ar, m * sizeof *f->pmin);
	f->pmax = arena_alloc(ar, m * sizeof *f->pmax);
	f->mean = arena_alloc(ar, m * sizeof *f->mean);
	f->lo = arena_alloc(ar, (f->ngroup + 1) * sizeof *f->lo);
	f->tangled = arena_zalloc(ar, f->ngroup + 1);
	f->hi = arena_alloc(ar, (f->ngroup + 1) * sizeof *f->hi);
	return f->pos && f->neg && f->grp && f->pmin && f->pmax && f->mean && f->lo && f->hi &&
	       f->tangled;
}

static void add_pair(struct floatnet *f, uint32_t pos, uint32_t neg, uint32_t g)
{
	f->pos[f->npair] = pos;
	f->neg[f->npair] = neg;
	f->grp[f->npair++] = g;
}

/* The leakage paths: every boundary capacitor, every grouped node to ground. */
static int pairs(const struct nl_circuit *c, struct arena *ar, struct floatnet *f)
{
	size_t n = 0, nn = nl_node_count(c);
	for (size_t i = 0; i < nl_part_count(c); i++)
		n += f->cap[i] != NL_NONE;
	for (size_t j = 0; j < nn; j++)
		n += f->group[j] != NL_NONE;
	if (!alloc_pairs(ar, f, n))
		return 0;
	for (uint32_t i = 0; i < nl_part_count(c); i++) {
		if (f->cap[i] == NL_NONE)
			continue;
		const uint32_t *q = nl_pins(c, nl_part_at(c, i));
		add_pair(f, q[f->side[i]], q[!f->side[i]], f->cap[i]);
	}
	for (uint32_t j = 0; j < nn; j++)
		if (f->group[j] != NL_NONE)
			add_pair(f, j, NL_GROUND, f->group[j]);
	return 1;
}

int floatnet_find(const struct nl_circuit *c, struct arena *ar, struct floatnet *out)
{
	size_t np = nl_part_count(c), nn = nl_node_count(c);
	*out = (struct floatnet){0};
	uint32_t *up = arena_alloc(ar, (nn + 1) * sizeof *up);
	uint32_t *gid = arena_alloc(ar, (nn + 1) * sizeof *gid);
	out->group = arena_alloc(ar, (nn + 1) * sizeof *out->group);
	out->cap = arena_alloc(ar, (np + 1) * sizeof *out->cap);
	out->side = arena_zalloc(ar, np + 1);
	out->coupled = arena_zalloc(ar, np + 1);
	if (!up || !gid || !out->group || !out->cap || !out->side || !out->coupled)
		return 0;
	for (uint32_t j = 0; j < nn; j++)
		up[j] = j, gid[j] = NL_NONE;
	join(c, up);
	boundaries(c, up, gid, out);
	for (uint32_t j = 0; j < nn; j++)
		out->group[j] = gid[root(up, j)];
	return out->ngroup == 0 ? alloc_pairs(ar, out, 0) : pairs(c, ar, out);
}

/* Each group's shift range from the pair means: the shifted means must
 * take both signs (or be zero), and the run's own level (no shift) is
 * kept. */
static void ranges(struct floatnet *f)
{
	for (size_t g = 0; g < f->ngroup; g++)
		f->lo[g] = INFINITY, f->hi[g] = -INFINITY;
	for (size_t k = 0; k < f->npair; k++) {
		uint32_t g = f->grp[k];
		double m = f->mean[k];
		if (!isfinite(m)) {
			f->lo[g] = -INFINITY, f->hi[g] = INFINITY;
			continue;
		}
		/* the shift lies in [-max m, -min m] */
		f->lo[g] = fmin(f->lo[g], -m);
		f->hi[g] = fmax(f->hi[g], -m);
	}
	for (size_t g = 0; g < f->ngroup; g++) {
		f->lo[g] = fmin(f->lo[g], 0);
		f->hi[g] = fmax(f->hi[g], 0);
	}
}

void floatnet_widen(const struct nl_circuit *c, struct floatnet *f, double *vmin, double *vmax,
		    double *nmin, double *nmax)
{
	if (f->ngroup == 0)
		return;
	ranges(f);
	for (size_t k = 0; k < nl_part_count(c); k++) {
		uint32_t g = f->cap[k];
		if (g == NL_NONE || !isfinite(vmin[k]) || !isfinite(vmax[k]))
			continue;
		/* pin 0 inside: v moves with the shift; pin 1 inside: against it */
		double lo = f->side[k] ? -f->hi[g] : f->lo[g];
		double hi = f->side[k] ? -f->lo[g] : f->hi[g];
		vmin[k] += lo;
		vmax[k] += hi;
	}
	for (size_t j = 0; nmin && nmax && j < nl_node_count(c); j++) {
		uint32_t g = f->group[j];
		if (g != NL_NONE && isfinite(nmin[j]) && isfinite(nmax[j])) {
			nmin[j] += f->lo[g];
			nmax[j] += f->hi[g];
		}
	}
}

const char *floatnet_note(const struct nl_circuit *c, const struct floatnet *f, uint32_t k,
			  struct arena *ar)
{
	uint32_t g = f->ngroup ? f->cap[k] : NL_NONE;
	if (g == NL_NONE)
		return NULL;
	const uint32_t *q = nl_pins(c, nl_part_at(c, k));
	char buf[400];
	snprintf(buf, sizeof buf,
		 "its %.60s side is on a network that only capacitors hold to the rest of the "
		 "circuit: leakage, not the circuit, sets that network's DC level, so the number "
		 "covers every level leakage allows",
		 nl_node_at(c, q[f->side[k]])->name);
	return arena_strdup(ar, buf);
}
