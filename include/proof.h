/* proof.h: where the analysis's bounds are proofs and where they are not.
 * The steady-state analysis (prop.h) assumes ideal diodes that only block
 * or conduct forward, resistors that carry no AC into a capacitor within a
 * period, no inductance, and parts and sources it understands. This module
 * checks those assumptions over each part of the circuit that can move on
 * its own: an island is a set of nodes joined by parts, cut at the nodes
 * that ideal sources hold (ground, source chains). One failed assumption
 * makes every bound in its island unproven, with the reason; the check then
 * turns to the solver (docs/check.md, "Proven and simulated"). */
#ifndef HEADROOM_PROOF_H
#define HEADROOM_PROOF_H

#include <stdint.h>

#include "arena.h"
#include "nl.h"
#include "prop.h"

/* A resistor's time constant with the capacitance at a node it feeds AC
 * into must be at least this many periods for the analysis to neglect it
 * (the AC it lets through is then below about 1 % of the swing across it:
 * I T / (2 C) over a half period with I = V / R). */
#define PROOF_RC_PERIODS 50.0
/* Series nodes followed up from a capacitor's pin in search of its other pin
 * (proof.c): a bleeder chain is a few resistors long. */
#define PROOF_SERIES_HOPS 16

/* Per part of c (nl_part_count entries): NULL when the analysis's
 * assumptions hold in its island, else why not (a sentence naming the
 * part that breaks them, in ar). nom is the nominal propagation; breakdown
 * (per part, may be NULL) marks diodes that the analysis found reverse
 * biased past their BV, so conducting in breakdown. *island_out gets
 * each part's island (an id shared by the parts of one island; NL_NONE
 * for a part between held nodes). Returns 0 on out-of-memory. */
int proof_run(const struct nl_circuit *c, const struct prop_result *nom,
	      const unsigned char *breakdown, struct arena *ar,
	      const char ***why_out, uint32_t **island_out);

#endif
