/* defects.h: circuit defects in diode-capacitor networks that no rating
 * cures: a diode that closes a loop through the sources with nothing to
 * limit its forward current (a clamp or ladder whose first pump capacitor
 * is missing), and parts duplicated in parallel on the same nodes (a
 * netlist slip). Findings join the rules' list. */
#ifndef HEADROOM_DEFECTS_H
#define HEADROOM_DEFECTS_H

#include "audit.h"
#include "rating.h"
#include "rules.h"
#include "stress.h"

/* Below this resistance (source, series resistors and the diode's RS) a
 * diode's loop through the sources limits nothing. */
#define DEFECTS_LOOP_OHMS 1.0

/* Adds the defect findings of audit a to out (allocating in ar). Returns
 * 0 on out-of-memory. */
int defects_run(const struct audit *a, const struct rating *r,
		const struct stress_result *s, struct arena *ar,
		struct rules_result *out);

#endif
