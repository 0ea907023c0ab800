/* nl.h: the flattened circuit: interned nodes with integer ids, parts with
 * resolved values and source locations, models, and node-to-part adjacency.
 * All of it lives in one arena and is freed at once by nl_destroy. Building
 * it from cards is elaboration's job; this module only stores and indexes. */
#ifndef HEADROOM_NL_H
#define HEADROOM_NL_H

#include <stddef.h>
#include <stdint.h>

#include "arena.h"
#include "diag.h"

#define NL_NONE UINT32_MAX
#define NL_GROUND 0u /* node id of ground: "0", "gnd" */

enum nl_kind {
	NL_R, NL_C, NL_L, NL_K, NL_D, NL_V, NL_I,
	NL_E, NL_F, NL_G, NL_H, NL_X_UNUSED, NL_OPAQUE
};

enum nl_wave { NL_WAVE_NONE, NL_WAVE_SIN, NL_WAVE_PULSE, NL_WAVE_PWL,
	       NL_WAVE_EXP, NL_WAVE_SFFM, NL_WAVE_AM, NL_WAVE_COUNT };

/* An independent source's description, as written (SI units). */
struct nl_source {
	double dc;           /* DC value (0 if none given) */
	int has_dc;
	double ac_mag, ac_phase;
	enum nl_wave wave;
	uint32_t nargs;      /* wave arguments as given (PWL: t,v pairs) */
	double *args;
	double pwl_repeat;   /* PWL r= time, or -1 for none */
	double pwl_delay;    /* PWL td= */
	int unknown;         /* a waveform was given that is not understood:
				the value is not known (only its DC was read) */
};

/* 1 when src's waveform happens once and then settles: a single pulse, a
 * PWL without repeat, an EXP, a damped SIN (their levels differing). Its
 * steady state is not its worst: the analysis leaves what it feeds
 * unproven (proof.c) and the solver follows it from switch-on
 * (simrun.c). */
int nl_source_once(const struct nl_source *src);

struct nl_model {
	const char *name;    /* as written */
	const char *type;    /* lower-case: "d", "npn", "nmos", ... */
	uint32_t nparams;
	const char **keys;   /* lower-case */
	double *values;      /* NaN where a value was not a number */
	struct diag_loc loc;
};

struct expr;

/* What a behavioural expression reads (struct nl_behav). */
enum nl_probe_kind { NL_PROBE_V, NL_PROBE_I };

struct nl_probe {
	uint8_t kind;        /* enum nl_probe_kind */
	uint32_t a, b;       /* V: node ids, v(a) - v(b) (b ground for v(a)) */
	const char *source;  /* I: hierarchical name of the part whose
				branch current is read ("X1.V2") */
};

/* A behavioural source's expression as the solver evaluates it:
 * parameters folded to numbers, every probe an EXPR_VAR named
 * NL_PROBE_NAME whose num is its index in probes[], "time" the
 * simulation time (behav.h builds it, simbehav.c evaluates it). */
#define NL_PROBE_NAME "$probe"
#define NL_MAX_PROBES 32 /* probes one expression may read */
struct nl_behav {
	const struct expr *e;
	uint32_t nprobes;
	const struct nl_probe *probes;
	int current;         /* 1: a current from pin 0 through the part to
				pin 1 (B I=, G); 0: the voltage of pin 0
				over pin 1 (B V=, E) */
	int resistance;      /* 1 (with current 1): e is a resistance in ohms
				and the current is the part's own voltage,
				its last probe, over it (R = expression) */
};

/* Extra data most parts do not need. */
struct nl_extra {
	double mult;               /* m= (1 when absent) */
	double ic;                 /* ic= for C and L, NaN when absent */
	const struct nl_source *src; /* V, I */
	const char *ctrl[2];       /* F, H: controlling source; K: two inductors */
	const char **coupled;      /* K: every inductor named (ncoupled >= 2) */
	uint32_t ncoupled;
	uint32_t ctrl_part[2];     /* resolved part index of ctrl, or NL_NONE */
	uint32_t *coupled_part;    /* K: each of coupled resolved (NL_NONE
				      where not), or NULL */
	int behavioural;           /* E/G/F/H given by value=, poly(), table;
				      R/C/L valued by the circuit's state; K over
				      more than two inductors or with a core */
	int off;                   /* D: "off" */
	double temp, dtemp;        /* temp=, dtemp= (degC), NaN when absent */
	double tc1, tc2;           /* R, C: tc1=, tc2= (per degC), NaN when
				      absent */
	double w, l;               /* M: channel width and length (m), NaN
				      when absent */
	const struct nl_behav *behav; /* B, and E/G by value=: the expression
				      to simulate, or NULL when it has a
				      form the solver does not take */
	const char *behav_why;     /* when behav is NULL for such a part: why
				      the solver does not take its expression
				      (static text), or NULL */
};

/* A source location packed small: a flat deck holds one per part. */
struct nl_loc {
	uint32_t line;
	uint16_t col;   /* clamped at 65535 */
	uint16_t file;  /* diag file id, clamped at 65535 */
};

/* 48 bytes: the size of this record sets the memory per part of a flat
 * deck, which is a stated target (docs/performance.md). */
struct nl_part {
	const char *path;            /* hierarchical name: "X1.X2.C3" */
	double value;                /* ohm, farad, henry, coupling, area, gain */
	const struct nl_model *model;/* D and model-based opaque parts, or NULL */
	struct nl_extra *ext;        /* NULL when every extra is default */
	uint32_t pin0;               /* first of npins node ids: nl_pins() */
	struct nl_loc loc;           /* the card that made the part */
	uint8_t kind;                /* enum nl_kind */
	uint8_t letter;              /* element letter, lower-case */
	uint8_t npins;
	uint8_t spare;
};
_Static_assert(sizeof(void *) != 8 || sizeof(struct nl_part) == 48,
	       "the part record is 48 bytes on 64-bit machines");

struct nl_node {
	const char *name;            /* as first written, hierarchical */
	uint32_t adj_start, adj_len; /* into nl_adjacency after nl_finish */
};

struct nl_circuit;

/* Creates an empty circuit with ground as node 0. NULL on out-of-memory. */
struct nl_circuit *nl_create(const struct hr_alloc *a);
/* Frees the circuit and everything it holds. NULL is a no-op. */
void nl_destroy(struct nl_circuit *c);

/* The circuit's arena: strings, models and sources live here. */
struct arena *nl_arena(struct nl_circuit *c);

/* Returns the id of node name[0..n) (case-insensitive), creating it. "0"
 * and "gnd" are ground. NL_NONE on out-of-memory. */
uint32_t nl_node_intern(struct nl_circuit *c, const char *name, size_t n);
/* Id of an existing node, or NL_NONE. */
uint32_t nl_node_find(const struct nl_circuit *c, const char *name, size_t n);

/* Appends a part (copied) with its npins node ids (copied; p->pin0 is
 * ignored). Returns its index or NL_NONE on out-of-memory. */
uint32_t nl_add_part(struct nl_circuit *c, const struct nl_part *p,
		     const uint32_t *pins);

/* The node ids of part p. Valid until the next nl_add_part. */
const uint32_t *nl_pins(const struct nl_circuit *c, const struct nl_part *p);

/* The part's location in diagnostic form. */
struct diag_loc nl_part_loc(const struct nl_part *p);
/* Packs a diagnostic location. */
struct nl_loc nl_loc_pack(struct diag_loc l);

size_t nl_part_count(const struct nl_circuit *c);
size_t nl_node_count(const struct nl_circuit *c);
const struct nl_part *nl_part_at(const struct nl_circuit *c, size_t i);
struct nl_part *nl_part_mut(struct nl_circuit *c, size_t i);
const struct nl_node *nl_node_at(const struct nl_circuit *c, size_t i);

/* Builds the adjacency index (node -> parts touching it). Call once, after
 * the last part. Returns 0 on out-of-memory. */
int nl_finish(struct nl_circuit *c);

/* Parts touching node id: *n entries of part indices (a part appears once
 * per pin on the node). Valid after nl_finish. */
const uint32_t *nl_adjacency(const struct nl_circuit *c, uint32_t node,
			     uint32_t *n);

/* Bytes held by the circuit (arena and tables), for the benchmark. */
size_t nl_footprint(const struct nl_circuit *c);

/* Name of an element kind for listings: "resistor", "capacitor", ... */
const char *nl_kind_name(enum nl_kind k);
/* Unit of a part's main value: "ohm", "F", "H", "" ... */
const char *nl_value_unit(const struct nl_part *p);

#endif
