/* rating.h: part ratings from the three places of docs/design.md §4, later ones
 * overriding earlier ones field by field: a diode model's BV, a bill of
 * materials (--bom, bom.h), the parts table (--parts FILE.csv, rows matched
 * by path or glob), and *@part annotations. Each field remembers where it came from. */
#ifndef HEADROOM_RATING_H
#define HEADROOM_RATING_H

#include <stdint.h>

#include "annot.h"
#include "arena.h"
#include "bom.h"
#include "diag.h"
#include "nl.h"

struct rating_field {
	double value;        /* NaN when not given */
	const char *from;    /* "model BV", "parts.csv:4", "annotation top.cir:12" */
};

struct rating {
	struct rating_field v_rated; /* cap DC rating; diode repetitive reverse */
	struct rating_field i_surge, i_avg, trr, tol;
	/* the surge rating's pulse: the width of the half-sine i_surge is
	   given for (s), and the I^2 t the diode takes (A^2 s) */
	struct rating_field surge_width, i2t;
	const char *kind;            /* one of profile_*_kinds, or NULL */
	const char *kind_from;
	const char *note;
};

/* The width of the half-sine a surge rating (IFSM) is given for, when the
 * parts table does not say: 8.3 ms, one half-cycle at 60 Hz (at 50 Hz it is
 * 10 ms; the shorter is the stricter when judged by I^2 t). IFSM as the
 * peak of one half-sine of 8.3 ms or 10 ms: Journal of Electrical Systems
 * and Information Technology 2022, article s43067-022-00051-4, "Diode
 * selection". */
#define RATING_SURGE_WIDTH 8.3e-3

/* A parsed parts table. rating_resolve only marks which rows it used, so
 * one table can serve many files checked at once, on several threads. */
struct rating_table;

/* Reads a parts table (CSV, header row, RFC 4180 quoting). Problems go to
 * d with file:line:col; returns NULL when the file cannot be used. */
struct rating_table *rating_table_load(const char *path, struct arena *ar,
				       struct diag_sink *d);

/* Rows of a parts table (0 for NULL). */
size_t rating_table_rows(const struct rating_table *t);

/* Row k's ref (never NULL) and the location of its ref cell in the sink the
 * table was loaded with; returns whether the row has rated a capacitor or
 * diode in any rating_resolve call so far (thread-safe). */
int rating_table_row(const struct rating_table *t, size_t k, const char **ref,
		     struct diag_loc *loc);

/* Ratings for every part of c (array of nl_part_count entries, in ar).
 * table and bom may be NULL. Field by field, later sources override
 * earlier ones: model BV, the BOM, the parts table, *@part lines. The
 * BOM's problems in rows that name parts of c become warnings in d. Kinds that do not fit the part (a diode kind on a
 * capacitor) and unknown kinds are errors reported to d. */
struct rating *rating_resolve(const struct nl_circuit *c,
			      const struct rating_table *table, const struct bom *bom,
			      const struct annot *annots, uint32_t nannots,
			      struct arena *ar, struct diag_sink *d);

/* Diode forward drop at 1 mA times area from the model (Shockley, N*Vt*
 * ln(1 + I/(IS*area)) + RS*I, Vt at 27 C), else by kind (silicon 0.7 V,
 * Schottky 0.3 V). */
double rating_vf(const struct nl_part *d, const char *kind);

#endif
