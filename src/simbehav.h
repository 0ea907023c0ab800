/* simbehav.h: behavioural sources in the solver (B V= and I=, E and G by
 * value=): the expression of struct nl_behav evaluated with its partial
 * derivatives over the voltages and branch currents it reads, and its
 * Newton stamp. Used by sim.c and simdev.c only; docs/solver.md has the
 * equations and the limits. */
#ifndef HEADROOM_SIMBEHAV_H
#define HEADROOM_SIMBEHAV_H

#include <stddef.h>

#include "arena.h"
#include "nl.h"
#include "simmat.h"

struct simbehav;

/* A voltage probe moves at most SIMBEHAV_VSTEP plus half its last value
 * between two Newton iterates at which the expression is linearised (V);
 * see simbehav_stamp. */
#define SIMBEHAV_VSTEP 1.0

/* Builds the device for expression bh (borrowed): pa[k], pb[k] are the
 * unknowns probe k reads (x[pa] - x[pb] for a voltage, x[pa] for a branch
 * current; -1 for ground). NULL on out-of-memory. */
struct simbehav *simbehav_create(struct arena *ar, const struct nl_behav *bh,
				 const long *pa, const long *pb);

/* Registers its matrix positions: output pins a (+), b (-), branch br
 * (voltage form; -1 for a current). Returns 0 on out-of-memory. */
int simbehav_need(struct simbehav *d, struct simmat *m, long a, long b, long br);

/* Stamps the expression linearised at iterate x and time t (the time
 * the sources are evaluated at). In an expression with a steep function
 * (exp, tanh, pow, a division, ...) a voltage probe that moved more than
 * SIMBEHAV_VSTEP plus half its value since the last linearisation is
 * taken that far only,
 * and *limited is set, as junction limiting does. */
void simbehav_stamp(struct simbehav *d, struct simmat *m, const double *x, double t,
		    int *limited);

/* The expression's value at its last stamp (A for a current form). */
double simbehav_value(const struct simbehav *d);

/* Evaluates the expression with probe values p[] at time t; the
 * derivatives go to g[] (one per probe; may be NULL). For tests. */
double simbehav_eval(struct simbehav *d, const double *p, double t, double *g);

/* 1 when the expression reads the time. */
int simbehav_uses_time(const struct simbehav *d);

#endif
