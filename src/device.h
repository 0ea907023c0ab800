/* device.h: turns one element card (any letter but X) into a circuit part:
 * which fields are nodes, which the value, which the model, how a source's
 * waveform is written. Scoping (parameters, node renaming inside instances,
 * model visibility) is supplied by the caller through struct dev_scope
 * (devval.h). */
#ifndef HEADROOM_DEVICE_H
#define HEADROOM_DEVICE_H

#include <stddef.h>
#include <stdint.h>

#include "deck.h"
#include "devval.h"
#include "diag.h"
#include "nl.h"

/* Builds the part for card (an element card whose letter is not X) and adds
 * it to c. Problems become diagnostics in d (DEV_ERROR); the card is then
 * skipped. */
enum dev_status dev_build(const struct dev_scope *s,
			  const struct deck_card *card, struct nl_circuit *c,
			  struct diag_sink *d);

/* True for letters whose node count depends on models that may be defined
 * later in the file: such cards wait until the whole file is read. */
int dev_needs_models(char letter);

#endif
