/* simvdmos.h: ngspice's vertical power MOSFET (`.model X VDMOS`, nchan
 * or pchan) as the solver's existing pieces: gate, drain and source
 * resistors, constant gate capacitances, the body diode and the level-1
 * channel of simmos.h with VDMOS's subthreshold smoothing and mobility
 * modulation. Used by sim.c only; docs/solver.md says what is simplified. */
#ifndef HEADROOM_SIMVDMOS_H
#define HEADROOM_SIMVDMOS_H

#include <stddef.h>
#include <stdint.h>

#include "arena.h"
#include "nl.h"
#include "simdev.h"

/* 1 when p (an opaque M part) has a VDMOS model. */
int simvdmos_is(const struct nl_part *p);

/* NULL when VDMOS part p is one the solver models, else why not (a
 * static string). */
const char *simvdmos_refusal(const struct nl_part *p);

/* How many solver devices and extra unknowns VDMOS part p becomes. */
void simvdmos_size(const struct nl_part *p, size_t *ndev, size_t *nint);

/* Fills the simvdmos_size(p) devices of part p (index part) from d on,
 * its pins' unknowns in dgs (drain, gate, source; -1 ground), its
 * internal nodes numbered from *next (advanced), every current times
 * mult. Returns 0 on out-of-memory. */
int simvdmos_fill(struct arena *ar, const struct nl_part *p, uint32_t part, const long dgs[3],
		  double mult, struct simdev *d, long *next);

#endif
