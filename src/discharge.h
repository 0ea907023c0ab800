/* discharge.h: how each capacitor's charge drains once the circuit is off
 * (docs/rules/stored-charge.md): the resistance it sees through resistors
 * alone with every source disconnected, and series stacks of capacitors
 * inside a structure drained as one. The verdict is the rule's (rules.c). */
#ifndef HEADROOM_DISCHARGE_H
#define HEADROOM_DISCHARGE_H

#include <stdint.h>

#include "audit.h"
#include "profile.h"
#include "stress.h"

/* Largest resistor network solved exactly for one capacitor; a capacitor
 * whose network is bigger counts as having no path (the safe side). */
#define DISCHARGE_MAX_NODES 200

/* Most two-capacitor stacks found outside the structures' own (a pair
 * through a node only capacitors hold), per file. */
#define DISCHARGE_MAX_PAIRS 64
/* ... and the most resistances solved looking for them (each up to
 * DISCHARGE_MAX_NODES nodes), so that a file of many capacitors without a
 * path stays linear in its size */
#define DISCHARGE_MAX_PAIR_TRIES 256

/* Sets discharge_r, discharge_s and drain of every bounded capacitor
 * stress in sr, finds the structures' series stacks (sr->stacks), then
 * the pairs in series through a node that only capacitors hold (structure
 * -1 in sr->stacks) for a capacitor still without a path, and
 * raises sr->max_voltage to the highest stack voltage. Run after the
 * stresses have their final worst values (after simbound). Allocates in
 * ar; returns 0 on out-of-memory. */
int discharge_run(const struct audit *a, const struct profile *p, struct arena *ar,
		  struct stress_result *sr);

/* The time a capacitor of cap_f farads at v volts, in a series stack of
 * capacitance ceq_f at vstack volts whose voltage falls with time constant
 * tau, takes to fall below hz volts: the charge leaving the stack leaves
 * every member, V(t) = v - (ceq/C) vstack (1 - exp(-t / tau)). INFINITY
 * when that never takes it below hz (it holds more than its share). */
double discharge_stack_time(double cap_f, double v, double ceq_f, double vstack,
			    double tau, double hz);

#endif
