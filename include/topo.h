/* topo.h: recognition of the diode-capacitor structures of DESIGN §5 from
 * the propagation result: clamps (floor, ceiling, biased), detectors, half-
 * and full-wave doublers, ladders of any length (odd ones in half-stages),
 * charge pumps, bridge rectifiers, and the networks that fit none of these.
 * It works on the graph and the settled waveforms, never on names. */
#ifndef HEADROOM_TOPO_H
#define HEADROOM_TOPO_H

#include <stddef.h>
#include <stdint.h>

#include "nl.h"
#include "prop.h"

enum topo_kind {
	TK_CLAMP_FLOOR,
	TK_CLAMP_CEILING,
	TK_DETECTOR_HIGH,
	TK_DETECTOR_LOW,
	TK_DOUBLER_HALF,
	TK_DOUBLER_FULL,
	TK_LADDER,
	TK_PUMP,
	TK_RECTIFIER,
	TK_NETWORK
};

struct topo_part {
	uint32_t part;
	const char *role;     /* e.g. "stage 2 smoothing column cap" */
	uint32_t stage;       /* 1-based; 0 when not staged */
};

struct topo_struct {
	enum topo_kind kind;
	double stages;        /* ladders: full stages, odd ones count 0.5 */
	int negative;         /* output below the reference */
	int biased;           /* clamp reference is not ground */
	uint32_t drive;       /* node that drives it, or NL_NONE */
	uint32_t drive_source;/* voltage-source part behind the drive, or NL_NONE */
	uint32_t reference;   /* node the structure is referenced to */
	uint32_t output;      /* output node (high side for full-wave) */
	uint32_t output2;     /* low side of a full-wave doubler or rectifier */
	struct topo_part *parts;
	uint32_t nparts;
	uint32_t *nodes;      /* nodes in the structure, for ranges */
	uint32_t nnodes;
	const char *note;     /* NULL or a short remark */
};

struct topo_result {
	struct topo_struct *s;
	size_t n;
};

/* Finds the structures of circuit c given its propagation p. Everything is
 * allocated in ar. Returns 0 on out-of-memory. */
int topo_find(const struct nl_circuit *c, const struct prop_result *p,
	      struct arena *ar, struct topo_result *out);

/* The structure kind as reports spell it: "clamp-floor", "ladder", ... */
const char *topo_kind_name(enum topo_kind k);

#endif
