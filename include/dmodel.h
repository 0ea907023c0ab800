/* dmodel.h: a diode's .model card as SPICE's junction diode reads it (the
 * ngspice manual's diode model parameters, names and defaults). One reader
 * for the ratings, the analysis and the solver, so that they can never
 * disagree about one model card: the same aliases, the same defaults. */
#ifndef HEADROOM_DMODEL_H
#define HEADROOM_DMODEL_H

#include "nl.h"

/* The parameters read [dmodel-params]. */
enum dmodel_param { DM_IS, DM_N, DM_RS, DM_CJO, DM_VJ, DM_M, DM_TT, DM_FC,
		    DM_BV, DM_IBV, DM_COUNT };

/* The value written on the card (under its name or an alias: IS/JS,
 * CJO/CJ0/CJ, VJ/PB, M/MJ), or NaN when the card does not give a finite
 * one. m may be NULL. */
double dmodel_given(const struct nl_model *m, enum dmodel_param k);

/* As dmodel_given, with SPICE's default when not given (IS 1e-14 A, N 1,
 * RS 0, CJO 0, VJ 1 V, M 0.5, TT 0, FC 0.5, BV infinite, IBV 1e-3 A). */
double dmodel_value(const struct nl_model *m, enum dmodel_param k);

/* Any model card's parameter by name: the finite value written under
 * names[0] or one of its aliases (names is NULL-terminated), else dflt.
 * The solver's transistor models read their cards so, by the same
 * matching rules as the diode's. m may be NULL. */
double dmodel_param(const struct nl_model *m, const char *const *names, double dflt);

#endif
