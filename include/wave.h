/* wave.h: reads the waveform part of an independent source card (DC, AC,
 * SIN, PULSE, PWL, EXP, SFFM; with or without parentheses, several on one
 * line). Steady-state meaning is analysis's job; this only records. */
#ifndef HEADROOM_WAVE_H
#define HEADROOM_WAVE_H

#include <stdint.h>

#include "deck.h"
#include "devval.h"
#include "nl.h"

/* Reads fields [start..) of card into a new source in ar. Problems are
 * reported to d and give DEV_ERROR (or DEV_DEFER, see dev_scope). */
enum dev_status wave_parse(const struct dev_scope *s,
			   const struct deck_card *card, uint32_t start,
			   struct arena *ar, struct diag_sink *d,
			   struct nl_source **out);

/* Name of a waveform kind: "dc", "sin", ... */
const char *wave_name(enum nl_wave w);

#endif
