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
#include "capbias.h"
#include "diag.h"
#include "nl.h"

struct rating_field {
	double value;        /* NaN when not given */
	const char *from;    /* "model BV", "parts.csv:4", "annotation top.cir:12" */
};

/* Every numeric field; rating.c's table of columns and *@part keys
 * lists them in this order [rating-fields]. */
struct rating {
	struct rating_field v_rated; /* cap DC rating; diode repetitive reverse */
	struct rating_field i_surge; /* diode: non-repetitive surge (IFSM), A */
	struct rating_field i_avg;   /* diode: average forward current (IF(AV)), A */
	struct rating_field i_peak;  /* diode: repetitive peak forward (IFRM), A */
	struct rating_field p_rated; /* zener: power dissipation, W */
	struct rating_field trr, tol;
	/* capacitors: the rated ripple current (rms, A) and the frequency
	   (Hz) and temperature (degrees C) it is specified at */
	struct rating_field i_ripple, ripple_freq, ripple_temp;
	/* capacitors, for a life estimate: ESR (ohm), rated life (hours) at
	   the life temperature (degrees C), thermal resistance from the case
	   to ambient (K/W) */
	struct rating_field esr, life_h, life_temp, rth_ca;
	/* the surge rating's pulse: the width of the half-sine i_surge is
	   given for (s), and the I^2 t the diode takes (A^2 s) */
	struct rating_field surge_width, i2t;
	const char *kind;            /* one of profile_*_kinds, or NULL */
	const struct capbias *c_bias;/* capacitance against DC bias, or NULL */
	const char *c_bias_from;
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

/* A diode rated only by its model's BV that the circuit takes to this
 * share of it is taken to work in breakdown (the knee: at IBV it sits at
 * BV). */
#define RATING_BREAKDOWN_SHARE 0.98

/* 1 when diode p (rating r), whose worst reverse voltage is reverse_v,
 * works in reverse breakdown on purpose: kind zener (reaching 90 % of its
 * rated voltage, or with none), or rated only by its model's BV and taken
 * to RATING_BREAKDOWN_SHARE of it. Its stress is then power, not reverse
 * voltage (docs/rules/breakdown-work.md); a rectifier given a reverse
 * rating of its own is not. */
int rating_breakdown(const struct nl_part *p, const struct rating *r, double reverse_v);

/* Diode forward drop at 1 mA times area from the model (Shockley, N*Vt*
 * ln(1 + I/(IS*area)) + RS*I, Vt at 27 C), else by kind (silicon 0.7 V,
 * Schottky 0.3 V). */
double rating_vf(const struct nl_part *d, const char *kind);
/* The same at a forward current of amps (A): from the model's IS, N, RS
 * (area scaled); without IS, 0.3 V (Schottky) or 0.7 V at 1 mA and below,
 * 0.4 V or 0.85 V above (common practice, no source). */
double rating_vf_at(const struct nl_part *d, const char *kind, double amps);

#endif
