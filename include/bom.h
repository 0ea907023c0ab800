/* bom.h: a bill of materials as a schematic tool exports it (--bom FILE):
 * CSV read with libcsv, columns found by name from an alias list, grouped
 * designators and ranges expanded, voltages and part kinds read from the
 * voltage, kind, value and description columns. Where its ratings stand
 * among the others (model BV < BOM < parts table < *@part) is rating.c's
 * business; this module only reads and looks up. */
#ifndef HEADROOM_BOM_H
#define HEADROOM_BOM_H

#include <stddef.h>
#include <stdint.h>

#include "arena.h"
#include "diag.h"
#include "nl.h"

/* A read BOM: read-only after bom_load except for the atomic flags that
 * say which designators some file used, so one BOM serves every file of a
 * run on every thread. */
struct bom;

/* Reads path. Problems that make the file useless (cannot be read, UTF-16,
 * no header row with a designator column, an unclosed quote, out of
 * memory) are errors in d and give NULL. Problems of single rows and cells
 * are kept with the row and reach the files whose parts the row names
 * (bom_use_end). All memory in ar. */
struct bom *bom_load(const char *path, struct arena *ar, struct diag_sink *d);

/* One line saying which column gives what and which are not used
 * ("BOM b.csv: header on line 1, ';' separated; designator: column 1
 * 'Reference', ..."), in ar; never NULL for a loaded BOM. */
const char *bom_columns(const struct bom *b);

/* What one BOM row says of a part. */
struct bom_entry {
	const char *from;      /* "BOM b.csv:4" */
	double v_rated;        /* V; NaN: not given */
	struct diag_loc v_loc; /* where it was read (file: bom_use_file) */
	const char *kind;      /* a profile kind, or NULL */
	struct diag_loc kind_loc;
	const char *mpn; /* or NULL */
};

/* The BOM's use by one file's check. */
struct bom_use;

/* Starts one file's use: registers the BOM in d (the file's sink); NULL on
 * out-of-memory. */
struct bom_use *bom_use_begin(const struct bom *b, struct arena *ar, struct diag_sink *d);

/* The BOM's file id in the file's sink. */
uint32_t bom_use_file(const struct bom_use *u);

/* Looks part p up: its designator is its path ("C7", "X1.C3") or, for a
 * path that starts with the element letter, the path without it ("DLED1"
 * for designator LED1); a subcircuit instance's designator is the first
 * segment of its parts' paths, with or without a leading X ("XU1.C3": U1).
 * Marks every designator it meets as used; returns the row that rates p
 * when p is a capacitor or diode named by a designator, else NULL. */
const struct bom_entry *bom_use_part(struct bom_use *u, const struct nl_part *p);

/* Ends the use: each problem of a row that named a part of this file
 * becomes a warning (code "bom") in the file's sink, and a note says which
 * columns were read. */
void bom_use_end(struct bom_use *u);

/* Entries for the run's end: k from 0 below bom_unused_count. Returns 1
 * and fills msg, *subject (or NULL) and *loc (in the sink of bom_load) when
 * entry k is a designator no file used that the BOM rates or that names a
 * capacitor or diode by its letter, or a row whose designator cell could
 * not be read at all; else 0. Thread-safe once the checks are done. */
size_t bom_unused_count(const struct bom *b);
int bom_unused(const struct bom *b, size_t k, char *msg, size_t size, const char **subject,
	       struct diag_loc *loc);

#endif
