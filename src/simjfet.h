/* simjfet.h: the junction field-effect transistor (J cards, NJF and PJF
 * models, SPICE level 1) as the solver's existing pieces: terminal
 * resistors, two gate junctions (diodes) and the level-1 channel of
 * simmos.h. Used by sim.c only. */
#ifndef HEADROOM_SIMJFET_H
#define HEADROOM_SIMJFET_H

#include <stddef.h>
#include <stdint.h>

#include "arena.h"
#include "nl.h"
#include "simdev.h"

/* NULL when p (an opaque J part) is a JFET the solver models, else why
 * not (a static string). */
const char *simjfet_refusal(const struct nl_part *p);

/* How many solver devices and extra unknowns J part p becomes. */
void simjfet_size(const struct nl_part *p, size_t *ndev, size_t *nint);

/* Fills the simjfet_size(p) devices of J part p (index part) from d on,
 * its pins' unknowns in dgs (drain, gate, source; -1 ground), its
 * internal nodes numbered from *next (advanced), every current times
 * mult. Returns 0 on out-of-memory. */
int simjfet_fill(struct arena *ar, const struct nl_part *p, uint32_t part, const long dgs[3],
		 double mult, struct simdev *d, long *next);

#endif
