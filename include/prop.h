/* prop.h: steady-state waveform propagation with ideal diodes and no load
 * (docs/design.md §6). Every node that can be settled gets an affine form: nodes
 * held by sources (through chains of sources, series resistors or inductors,
 * controlled sources and ideal transformers), then the AC shape of nodes
 * reached through capacitors, then the DC that diodes pin those nodes at.
 * Recognising structures from the result is topo.c's job. */
#ifndef HEADROOM_PROP_H
#define HEADROOM_PROP_H

#include <stddef.h>
#include <stdint.h>

#include "form.h"
#include "nl.h"
#include "sig.h"

enum prop_class { PC_UNKNOWN, PC_GROUND, PC_FIXED, PC_DRIVEN, PC_FREE, PC_COUNT };

enum prop_how {
	PH_NONE,
	PH_GROUND,
	PH_SOURCE,   /* across a voltage source from a known node */
	PH_VCVS,     /* output of a linear E source */
	PH_XFMR,     /* secondary of coupled inductors (ideal transformer) */
	PH_SERIES,   /* through a series resistor or inductor, no current */
	PH_PIN,      /* AC shape from capacitors, DC pinned by a diode */
	PH_DIVIDER,  /* a node between capacitors only: charge balance */
	PH_BLEED,    /* AC shape from capacitors, DC through a resistor */
	PH_COUNT
};

enum prop_state { PS_UNKNOWN, PS_SHAPED, PS_RESOLVED };

struct prop_node {
	const struct form *f;   /* full form (RESOLVED), AC shape (SHAPED) */
	uint8_t state;          /* enum prop_state */
	uint8_t cls;            /* enum prop_class */
	uint8_t how;            /* enum prop_how */
	uint8_t pin_upper;      /* PH_PIN: 1 if the diode bounds it from above */
	uint8_t conflict;       /* diodes disagree: the ideal model fails here */
	uint8_t has_lo, has_hi; /* bounds collected while SHAPED */
	uint32_t by;            /* part that settled it (source, R, K, E, diode) */
	uint32_t anchor;        /* node whose AC it follows through capacitors */
	double zs;              /* series resistance back to the driving source */
	const struct form *klo, *khi; /* diode bounds on the DC while SHAPED */
	uint32_t lo_by, hi_by;  /* diodes giving klo and khi */
	double slo, shi;        /* soft bounds: a DC node that resistors set */
	uint8_t has_slo, has_shi;
};

/* Per voltage-source part: an override of its DC by a slowly moving range
 * (from *@source NAME min= max=), or NaN when none. */
struct prop_range {
	double min, max;
};

struct prop_result {
	struct form_ctx fc;
	struct sig *sigs;         /* one per voltage source */
	uint32_t *sig_of_part;    /* part -> sig index, or NL_NONE */
	uint32_t *part_of_sig;
	size_t nsigs;
	struct prop_node *nodes;  /* one per circuit node */
	size_t nnodes;
	size_t nconflicts;
};

/* A corner of the worst-case analysis: per part, the scale of a voltage
 * source's AC part, the band its mean may take (scales of the mean: every
 * source's offset independently anywhere in its band, one DC symbol per
 * source, form.h, so that every node it reaches moves with it), and the
 * forward drop of each diode (0 = ideal). NULL arrays mean nominal and
 * ideal. */
struct prop_corner {
	const double *amp;
	const double *off_lo, *off_hi;
	const double *vf;
	/* per node, or NULL: 1 leaves the node unsettled. Only whole islands
	   (proof.h) with no part a stress needs may be left so: every node
	   they reach through parts is then left too, or held by sources. */
	const unsigned char *skip;
};

/* Runs the propagation over circuit c (after nl_finish). ranges, if not
 * NULL, has one entry per part; corner may be NULL (nominal, ideal).
 * Everything is allocated in ar. Returns 0 on out-of-memory. */
int prop_run(const struct nl_circuit *c, const struct prop_range *ranges,
	     const struct prop_corner *corner, struct arena *ar,
	     struct prop_result *out);

const char *prop_class_name(enum prop_class k);
const char *prop_how_name(enum prop_how h);

#endif
