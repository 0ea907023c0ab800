/* subsize.h: how many parts one instance of a subcircuit definition
 * expands to, and how deep its instances nest, worked out from the
 * definitions before anything is expanded, so that an expansion past
 * --max-parts is refused at once instead of after it has filled memory.
 * Private to elaboration (elab.c, scope.c). */
#ifndef HEADROOM_SUBSIZE_H
#define HEADROOM_SUBSIZE_H

#include <stddef.h>

#include "elab_state.h"

/* Parts (SIZE_MAX when the count does not fit) and nesting levels
 * (counting def itself) of one instance of def; known is 0 when the size
 * cannot be known before expanding: a definition that instantiates itself
 * (the expansion reports that). Memoised in each definition, so the work is
 * linear in the total size of the definitions, not of the expansion.
 * Returns 0 (and sets el->oom) on out-of-memory. */
struct subsize {
	size_t parts;
	unsigned levels;
	int known;
};

int subsize_of(struct elab *el, struct subdef *def, struct subsize *out);

#endif
