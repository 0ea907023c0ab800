/* loadout.h: the output of every loaded multiplier, doubler and rectifier
 * (detectors, half- and full-wave doublers, ladders, pumps, bridges with a
 * resistor from the output to a settled node), simulated. The whole circuit
 * is run by the transient solver to its periodic steady state twice: every
 * source at the low end of its tolerance (and a ranged rail at its
 * minimum), then every one at the high end, the diodes as modelled (forward
 * drop, series resistance, junction capacitance, transit time) and the
 * circuit's own loads in place. Each loaded structure gets its output's
 * time average, lowest and highest value over one period at each corner
 * (docs/check.md, "Loaded outputs"). Where the solver cannot run, each
 * structure says why and keeps the analysis's unloaded figures only. */
#ifndef HEADROOM_LOADOUT_H
#define HEADROOM_LOADOUT_H

#include <stddef.h>
#include <stdint.h>

#include "audit.h"
#include "profile.h"
#include "simbound.h"
#include "stress.h"

/* Work allowed for one file's two runs, in Newton iterations times
 * unknowns (lim->total_work when given). */
#define LOADOUT_WORK 30000000UL

/* 1 when structures of kind k have an output a load draws on: detectors,
 * doublers, ladders, pumps and bridges (not clamps, whose output is an AC
 * waveform, nor networks). */
int loadout_kind(enum topo_kind k);

/* Fills sr->st[i].out for every structure and, when one is loaded,
 * sr->loadsim. A circuit of more than max_parts parts (0: no limit) is not
 * simulated, and says so. lim may be NULL. Allocates in ar. Returns 0 on
 * out-of-memory. */
int loadout_run(const struct audit *a, const struct profile *p, const struct simbound_limits *lim,
		size_t max_parts, struct arena *ar, struct stress_result *sr);

/* A loaded output that stays below the analysis's unloaded one by more
 * than LOADOUT_LOOSE_REL of it plus LOADOUT_LOOSE_ABS at the high corner
 * marks its structure's proven voltages to be tightened by the solver
 * (stress.tighten, with the reason in unproven). Call after loadout_run,
 * before simbound_run. Returns 0 on out-of-memory. */
#define LOADOUT_LOOSE_REL 0.03
#define LOADOUT_LOOSE_ABS 0.1
int loadout_tighten(const struct audit *a, struct arena *ar, struct stress_result *sr);
/* The parts outside structures whose proof also rests on a loaded output:
 * those with a pin on it or on a node at most LOADOUT_FILTER_HOPS
 * resistors from it, over nodes of at most LOADOUT_FILTER_DEGREE parts
 * that no source holds. */
#define LOADOUT_FILTER_HOPS 3
#define LOADOUT_FILTER_DEGREE 16

/* The loaded structure whose output (either side) is node, or -1. */
int32_t loadout_of_node(const struct audit *a, const struct stress_result *sr, uint32_t node);

#endif
