/* simmos.h: the solver's MOSFET, SPICE level 1 (Shichman-Hodges). An M
 * part becomes a few of the solver's devices: its drain and source
 * resistances (RD, RS), its overlap capacitances (CGSO, CGDO, CGBO), its
 * two bulk junction diodes and the channel current source. Used by sim.c
 * only; the equations are in docs/solver.md. */
#ifndef HEADROOM_SIMMOS_H
#define HEADROOM_SIMMOS_H

#include <stddef.h>
#include <stdint.h>

#include "arena.h"
#include "nl.h"
#include "simmat.h"

struct simdev;

/* The channel's parameters and its limiting state. */
struct simmos {
	double type;               /* +1 NMOS, -1 PMOS */
	double vto, beta;          /* V (in the device's own polarity); A/V^2 */
	double lambda, gamma, phi; /* 1/V; sqrt(V); V */
	double ksub, theta;        /* VDMOS and level 3 (0 for the others):
				      the subthreshold smoothing (V, VDMOS)
				      and the mobility modulation (1/V) */
	int theta_on_vgst;         /* level 3: THETA acts on vgs - vth */
	double vgs, vds;           /* limited, of the last stamp (own polarity) */
	const struct simdev *jbs;  /* bulk-source diode: its vd is vbs */
};

/* NULL when p (an opaque part) is a MOSFET the solver models, else why
 * not (a static string). */
const char *simmos_refusal(const struct nl_part *p);

/* NULL when M part p's model is simulated as it is written, else what
 * the solver leaves out of it (a static string): levels 2 and 3 run as
 * level 1 with THETA. */
const char *simmos_approx(const struct nl_part *p);

/* How many solver devices and extra unknowns M part p becomes. */
void simmos_size(const struct nl_part *p, size_t *ndev, size_t *nint);

/* Fills the simmos_size(p) devices of M part p (index part) from d on,
 * its drain, gate, source and bulk unknowns in dgsb (-1: ground), m its
 * multiplier; internal nodes from *next. Returns 0 on out-of-memory. */
int simmos_fill(struct arena *ar, const struct nl_part *p, uint32_t part,
		const long dgsb[4], double m, struct simdev *d, long *next);

/* The channel's matrix positions; 0 on out-of-memory. */
int simmos_need(struct simdev *d, struct simmat *m);

/* Stamps the channel linearised at iterate x, its gate and drain
 * voltages limited as SPICE does (*limited set when they were). */
void simmos_stamp(struct simdev *d, struct simmat *m, const double *x, int *limited);

#endif
