/* dstring.h: series strings of diodes with nothing at their joints (a
 * high-voltage string without grading resistors or capacitors). How such
 * a string shares a reverse voltage is set by its members' leakage and
 * junction capacitances, which no design fixes: a member may take the
 * whole of it, up to its own breakdown. A simulated run shows one sharing
 * of many, so each member's reverse voltage is widened to the string's
 * (docs/check.md, "Ungraded diode strings"). */
#ifndef HEADROOM_DSTRING_H
#define HEADROOM_DSTRING_H

#include <stddef.h>
#include <stdint.h>

#include "arena.h"
#include "nl.h"

struct dstring {
	uint32_t *of;      /* per part: its string, or NL_NONE */
	uint32_t *anode;   /* per string: the first member's anode node */
	uint32_t *cathode; /* per string: the last member's cathode node */
	uint32_t *count;   /* per string: its members */
	double *sum;       /* per string: scratch for dstring_widen */
	size_t n;          /* strings */
};

/* Finds the strings of two diodes or more, each joint a node that only
 * the two members touch (one's cathode, the next one's anode). Returns 0
 * on out-of-memory. */
int dstring_find(const struct nl_circuit *c, struct arena *ar, struct dstring *out);

/* For each member diode k (vmin[k]: its lowest anode-to-cathode voltage
 * over a run): vmin[k] lowered to minus the string's largest reverse
 * voltage over that run, as the nodes' extremes bound it (nmin, nmax per
 * node) and as the members' own largest reverse voltages, summed, bound
 * it (a string that only ever conducts, an LED string, is then widened
 * by nothing: its ends' extremes, taken at different instants, would
 * say it blocks its ripple), capped at the member's own breakdown
 * voltage (BV, plus 1 %). */
void dstring_widen(const struct nl_circuit *c, const struct dstring *d, const double *nmin,
		   const double *nmax, double *vmin);

#endif
