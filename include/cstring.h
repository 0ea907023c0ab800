/* cstring.h: series strings of capacitors with nothing at their joints
 * (two reservoir electrolytics stacked for voltage without balancing
 * resistors, a coupling capacitor split in series). Capacitance divides
 * a string's AC, but its DC divides by the members' leakage, which varies
 * from part to part, with temperature and age, and which no schematic
 * fixes: once the string has sat charged, a member may hold the whole of
 * it. Each member's voltage is therefore bounded by the string's
 * (docs/check.md, "Ungraded capacitor strings"). */
#ifndef HEADROOM_CSTRING_H
#define HEADROOM_CSTRING_H

#include <stddef.h>
#include <stdint.h>

#include "arena.h"
#include "nl.h"

struct cstring {
	uint32_t *of;    /* per part: its string, or NL_NONE */
	uint32_t *end0;  /* per string: one end node */
	uint32_t *end1;  /* per string: the other end node */
	uint32_t *count; /* per string: its members */
	double *sum;     /* per string: scratch for cstring_widen */
	size_t n;        /* strings */
};

/* Finds the strings of two capacitors or more, each joint a node other
 * than ground that only two capacitors touch. Returns 0 on out-of-memory. */
int cstring_find(const struct nl_circuit *c, struct arena *ar, struct cstring *out);

/* "one of N capacitors in series ...": why member k's number is its
 * string's, allocated in ar; NULL when k is in no string or on
 * out-of-memory. */
const char *cstring_note(const struct nl_circuit *c, const struct cstring *s, uint32_t k,
			 struct arena *ar);

/* For each member capacitor k (vmin[k], vmax[k]: the extremes of
 * v(pin0) - v(pin1) over a run): its larger side widened to the string's
 * largest end-to-end voltage over that run, as the nodes' extremes bound
 * it (nmin, nmax per node) and as the members' own largest voltages,
 * summed, bound it. */
void cstring_widen(const struct nl_circuit *c, const struct cstring *s, const double *nmin,
		   const double *nmax, double *vmin, double *vmax);

#endif
