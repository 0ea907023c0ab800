/* elab.h: elaboration, from netlist files to a flat circuit: .param and
 * expressions, .func, .include, .lib sections, nested .subckt definitions
 * with parameters, .global, instance flattening with hierarchical names.
 * Models are attached to parts; what parts mean electrically is for later. */
#ifndef HEADROOM_ELAB_H
#define HEADROOM_ELAB_H

#include <stddef.h>
#include <stdint.h>
#include <stdio.h>

#include "arena.h"
#include "diag.h"
#include "dialect.h"
#include "nl.h"

struct elab_opts {
	size_t max_parts;          /* expansion cap; 0 = default 10,000,000 */
	unsigned max_include_depth;/* 0 = default 32 */
	unsigned max_inst_depth;   /* subcircuit nesting; 0 = default 256 */
	uint32_t max_line_len;     /* physical line, bytes; 0 = default 1 MiB */
	unsigned max_includes;     /* files read by .include/.lib; 0 = 10,000 */
	uint32_t max_token_len;    /* one word or value, bytes; 0 = 64 KiB */
	unsigned max_expr_depth;   /* expression nesting; 0 = 1000 */
	unsigned max_cond_depth;   /* .if nesting; 0 = 64 */
	size_t max_nodes;          /* circuit nodes; 0 = 10,000,000 */
	enum dialect dialect;      /* whose reading to follow; DIALECT_AUTO
				      (0): from the ending, then the file */
	uint32_t max_pwl_points;   /* time-value pairs per source; 0 = 100,000 */
	/* Opens a file for reading; NULL = fopen. Lets tests and fuzzers serve
	 * in-memory file sets. Sets errno on failure. */
	FILE *(*open)(void *ud, const char *path);
	void *open_ud;
};

/* An *@ annotation line, for the ratings module. */
struct elab_annot {
	const char *text;     /* after "*@" */
	const char *prefix;   /* instance path of the body it sits in, "" at top */
	struct diag_loc loc;
};

struct elab_result {
	struct nl_circuit *circuit; /* owned by the caller: nl_destroy */
	const char *title;          /* in the circuit's arena, or "" */
	void *const *annots;        /* read with elab_annot_at */
	size_t nannots;
	size_t ncards;              /* cards read, all files */
};

enum elab_status {
	ELAB_OK,      /* circuit built; warnings may exist */
	ELAB_ERRORS,  /* errors were reported; the circuit holds what was read */
	ELAB_OOM
};

/* Annotation i of a result (0 <= i < nannots). */
const struct elab_annot *elab_annot_at(const struct elab_result *r, size_t i);

/* Reads path (the top file: first line is the title) and everything it
 * includes, and builds the flat circuit into *out. Problems go to d with
 * file:line:col. On ELAB_OOM *out is empty. */
enum elab_status elab_file(const char *path, const struct elab_opts *opts,
			   const struct hr_alloc *hook, struct diag_sink *d,
			   struct elab_result *out);

#endif
