/* hull.h: the supply range, a proof of last resort. Where neither the
 * analysis nor the solver gives a capacitor or diode a number, its nodes
 * may still lie in an island of resistors, diodes, switches and
 * capacitors returned to steady supplies, fed only through such parts
 * from nodes that sources hold. No node of such an island ever leaves the
 * range those sources span (the maximum principle of a network whose
 * every element carries current from the higher node to the lower), so
 * the part sees at most that range (docs/check.md, "The supply range"). */
#ifndef HEADROOM_HULL_H
#define HEADROOM_HULL_H

#include "audit.h"
#include "profile.h"
#include "stress.h"

/* Bounds every voltage stress of sr still without a number whose nodes the
 * supply range covers: basis proven, the range's corner text, best not
 * shown. Allocates in ar. Returns 0 on out-of-memory. */
int hull_run(const struct audit *a, const struct profile *p, struct arena *ar,
	     struct stress_result *sr);

#endif
