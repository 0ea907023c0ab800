/* floatnet.h: floating networks. Join the nodes that any part other than
 * a capacitor connects (a resistor, winding, diode, source, switch or
 * transistor): a group of nodes that does not reach ground that way is
 * held to the rest of the circuit by capacitors alone (a doubler fed
 * through a blocking capacitor with its load across both rails, a bridge
 * on a floating winding whose output is decoupled to ground). Nothing in
 * the circuit fixes the group's DC level: a shift of the whole group
 * changes no voltage inside it, and only leakage (through its boundary
 * capacitors, from its nodes to ground) sets where it sits, which varies
 * from part to part and with age. The leakage currents sum to zero in the
 * steady state, so the time-averaged voltages across those leakage paths
 * cannot all be of one sign: that bounds the shift, and each boundary
 * capacitor is bounded over every shift it allows (docs/check.md,
 * "Floating networks"). */
#ifndef HEADROOM_FLOATNET_H
#define HEADROOM_FLOATNET_H

#include <stddef.h>
#include <stdint.h>

#include "arena.h"
#include "nl.h"

struct floatnet {
	uint32_t *group;   /* per node: its floating group, or NL_NONE */
	uint32_t *cap;     /* per part: the group a boundary capacitor's pin 0
			      side is in (then side[k] = 0) or pin 1's, or NL_NONE */
	unsigned char *side; /* per part: the boundary capacitor's inside pin */
	size_t ngroup;     /* groups with a boundary capacitor */
	/* leakage paths, each v(pos[k]) - v(neg[k]) with pos[k] inside group
	   grp[k]: every boundary capacitor, every node of the group to ground;
	   the run's means land in mean[k] (simrun probes) */
	size_t npair;
	uint32_t *pos, *neg, *grp;
	double *pmin, *pmax, *mean;
	double *lo, *hi;   /* per group: the shift range of the last widen */
	size_t ncoupled;   /* capacitors between two floating groups */
	unsigned char *coupled; /* per part: such a capacitor (its groups shift
				   apart by what leakage sets; not bounded) */
	unsigned char *tangled; /* per group: scratch, joined to another group */
};

/* Finds the floating groups that have boundary capacitors. Returns 0 on
 * out-of-memory. */
int floatnet_find(const struct nl_circuit *c, struct arena *ar, struct floatnet *out);

/* After a run whose probes filled f->mean: every boundary capacitor's
 * extremes (vmin, vmax per part, pin 0 minus pin 1) and every floating
 * node's (nmin, nmax, either may be NULL) widened over the group shifts
 * leakage allows. A group with a mean that is not finite is widened to
 * infinity. */
void floatnet_widen(const struct nl_circuit *c, struct floatnet *f, double *vmin, double *vmax,
		    double *nmin, double *nmax);

/* Why a capacitor between two floating groups, or at the boundary of a
 * group joined to another by a capacitor, gets no number. */
#define FLOATNET_COUPLED_WHY                                                            \
	"it sits on networks that only capacitors hold to the rest of the circuit, "     \
	"joined to one another by capacitors: leakage, not the circuit, sets their "     \
	"levels, and the solver's run is one of many"

/* "on a network held by capacitors alone ...": why capacitor k's number
 * covers its group's shifts, allocated in ar; NULL when k is no boundary
 * capacitor or on out-of-memory. */
const char *floatnet_note(const struct nl_circuit *c, const struct floatnet *f, uint32_t k,
			  struct arena *ar);

#endif
