/* topo.h: recognition of the diode-capacitor structures of docs/design.md §5 from
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
	TK_NETWORK,
	TK_COUNT
};

/* What a part does in its structure [topo-roles]. */
enum topo_role {
	TR_COUPLING_CAP, TR_CLAMP_DIODE, TR_RESERVOIR_CAP, TR_DETECTOR_DIODE,
	TR_LADDER_COUPLING, TR_LADDER_SMOOTHING, TR_LADDER_CLAMP_DIODE,
	TR_LADDER_DETECTOR_DIODE, TR_PUMP_CAP, TR_PUMP_DIODE, TR_OUTPUT_CAP,
	TR_OUTPUT_DIODE, TR_HIGH_CAP, TR_HIGH_DIODE, TR_LOW_CAP, TR_LOW_DIODE,
	TR_BRIDGE_DIODE, TR_NETWORK_CAP, TR_NETWORK_DIODE,
	TR_COUNT
};

/* Display text of a role; staged roles take the stage number through a
 * "%u" [topo-roles]. */
extern const char *const topo_role_text[TR_COUNT];

struct topo_part {
	uint32_t part;
	enum topo_role kind;
	const char *role;     /* display text, stage filled in */
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
