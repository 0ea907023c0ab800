/* dialect.h: the simulator whose reading of a netlist headroom follows
 * where the same text means different things in different simulators
 * (docs/netlist.md, "Dialects"). A closed set with its display names, the
 * choice made from a file's ending, and the few per-dialect answers the
 * front end asks for. No state; every function is pure. */
#ifndef HEADROOM_DIALECT_H
#define HEADROOM_DIALECT_H

#include <stddef.h>

enum dialect {
	DIALECT_AUTO,    /* from the file's ending, then from what it holds */
	DIALECT_NGSPICE, /* the reference: SPICE3 as ngspice reads it */
	DIALECT_PSPICE,
	DIALECT_HSPICE,
	DIALECT_XYCE,
	DIALECT_LTSPICE,
	DIALECT_COUNT
};

/* The name of d as the option spells it: "auto", "ngspice", ... */
const char *dialect_name(enum dialect d);

/* The dialect named name (any case); 0 when the name is not one. */
int dialect_parse(const char *name, enum dialect *out);

/* The accepted names, comma-separated, for usage messages. */
const char *dialect_list(void);

/* The dialect a file's name says by its ending (".cir.pspice", ".cir.out"
 * and the like); DIALECT_AUTO when the ending says nothing. */
enum dialect dialect_of_path(const char *path);

/* Non-NULL when the ending names a netlist language that is not SPICE
 * (".scs", ".spectre"): the language's name. */
const char *dialect_foreign_language(const char *path);

/* For a file whose ending other simulators also use for their own
 * languages (".sim": gnucap, VACASK): non-NULL when the first n bytes of
 * its text show such a language, naming it, with the line in *line. gnucap:
 * the first line that is not blank is a language switch ("spice",
 * "verilog", "spectre") alone; VACASK: a line that starts with `load "`. */
const char *dialect_foreign_text(const char *path, const char *head, size_t n,
				 unsigned *line);

/* True when a number written as a letter code ("4k7") means the letter
 * code in d without a doubt, so no warning is owed. */
int dialect_reads_letter_codes(enum dialect d);

/* True when a value-position word that starts with a letter ("R47") may be
 * a letter code rather than a model name. */
int dialect_letter_first_codes(enum dialect d);

/* True when '^' in an expression is exclusive or rather than a power. */
int dialect_caret_is_xor(enum dialect d);

/* A constant the simulator defines itself, looked up after the netlist's
 * own parameters. Returns 1 and sets *v when name is one in d. */
int dialect_constant(enum dialect d, const char *name, double *v);

#endif
