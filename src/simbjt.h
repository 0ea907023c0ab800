/* simbjt.h: the solver's bipolar transistor. A Q part becomes a few of the
 * solver's devices: its terminal resistances (RB, RC, RE), its two
 * junction diodes (which carry the base currents, the charges and the
 * junction limiting) and a transport current source between the internal
 * collector and emitter. Used by sim.c and simdev.c only; the equations
 * are in docs/solver.md. */
#ifndef HEADROOM_SIMBJT_H
#define HEADROOM_SIMBJT_H

#include <stddef.h>
#include <stdint.h>

#include "arena.h"
#include "nl.h"
#include "simmat.h"

struct simdev;

/* The transport source's parameters (after area scaling). */
struct simbjt {
	double is, nvtf, nvtr; /* A; NF and NR times kT/q (V) */
	double ivaf, ivar;     /* 1/VAF, 1/VAR (1/V; 0: no Early effect) */
	double iikf, iikr;     /* 1/IKF, 1/IKR (1/A; 0: no high injection) */
	double pol;            /* +1 NPN, -1 PNP */
	/* the base-emitter and base-collector junction diodes; they are
	   stamped before the transport source, which reads their limited
	   junction voltages (vd) of the same iterate */
	const struct simdev *je, *jc;
};

/* NULL when p (an opaque part) is a bipolar transistor the solver
 * models, else why not (a static string). */
const char *simbjt_refusal(const struct nl_part *p);

/* How many solver devices and extra unknowns (internal nodes) Q part p
 * becomes. */
void simbjt_size(const struct nl_part *p, size_t *ndev, size_t *nint);

/* Fills the simbjt_size(p) devices of Q part p (index part) from d on,
 * its collector, base and emitter unknowns in cbe (-1: ground), m its
 * multiplier (m=); internal nodes are taken from *next. Returns 0 on
 * out-of-memory. */
int simbjt_fill(struct arena *ar, const struct nl_part *p, uint32_t part,
		const long cbe[3], double m, struct simdev *d, long *next);

/* The transport source's matrix positions; 0 on out-of-memory. */
int simbjt_need(struct simdev *d, struct simmat *m);

/* Stamps the transport source linearised at its junctions' voltages. */
void simbjt_stamp(struct simdev *d, struct simmat *m);

#endif
