/* behav.h: a behavioural part's expression made ready for the solver
 * (struct nl_behav in nl.h): parameters folded to numbers in the part's
 * scope, v() and i() probes resolved to nodes and source names. Used by
 * device.c only; the solver's side is simbehav.c. */
#ifndef HEADROOM_BEHAV_H
#define HEADROOM_BEHAV_H

#include "deck.h"
#include "devval.h"
#include "nl.h"

/* Builds the solver's form of e (borrowed) read in scope s, into ar.
 * current: 1 for a current (B I=, G), 0 for a voltage. Returns DEV_OK
 * with *out set, or with *out NULL and *why a sentence when the
 * expression has a form the solver does not take (the part then stays
 * unsimulated, never an error); DEV_DEFER when a parameter is not known
 * yet on the first pass; DEV_OOM. */
enum dev_status behav_build(const struct dev_scope *s, const struct expr *e, int current,
			    struct arena *ar, struct nl_behav **out, const char **why);

/* The expression of an unbraced value field (V = max(0,v(a)*2): an atom
 * or a call as the card reader split it), with the card's fields after it
 * (rest[0..nrest)) as long as an operator joins them ("v(a) / 1k" is
 * three fields), parsed again from its text in scope s. NULL when it does
 * not parse (reported), is longer than 4 kB, or on out-of-memory (*oom
 * set). */
struct expr *behav_field_expr(const struct dev_scope *s, const struct deck_field *f,
			      const struct deck_field *rest, uint32_t nrest, struct arena *ar,
			      int *oom);

/* True for the functions simbehav.c evaluates with their derivatives,
 * called with nargs arguments. */
int behav_function_known(const char *name, uint32_t nargs);

#endif
