/* audit.h: one netlist file through the whole analysis: elaboration,
 * annotations, source ranges, propagation and structure recognition. The
 * commands (topo now, check later) start here. Owns all it makes. */
#ifndef HEADROOM_AUDIT_H
#define HEADROOM_AUDIT_H

#include <stdint.h>

#include "annot.h"
#include "diag.h"
#include "elab.h"
#include "prop.h"
#include "topo.h"

struct audit_opts {
	struct elab_opts elab;
	double source_tol;   /* default source tolerance (fraction), NaN: none */
};

/* Per voltage source: its tolerance and range as annotated. */
struct audit_source {
	double tol;          /* fraction; NaN when not given */
	double min, max;     /* slowly moving range, NaN when not given */
	const struct annot *from;
};

struct audit {
	struct arena *ar;            /* analysis memory */
	struct elab_result er;       /* circuit owned here */
	struct annot *annots;
	uint32_t nannots;
	struct audit_source *sources;/* per part (only V parts filled) */
	struct prop_range *ranges;   /* per part, for further corner runs */
	struct prop_result prop;     /* nominal corner, ideal diodes */
	struct topo_result topo;
	int analysed;                /* prop and topo ran */
};

enum audit_status { AUDIT_OK, AUDIT_ERRORS, AUDIT_OOM };

/* Runs everything on path. Netlist errors stop before the analysis (status
 * AUDIT_ERRORS, a->analysed 0). Free with audit_free in every case. */
enum audit_status audit_file(const char *path, const struct audit_opts *o,
			     const struct hr_alloc *hook, struct diag_sink *d,
			     struct audit *a);

void audit_free(struct audit *a);

#endif
