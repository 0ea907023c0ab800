/* dmodel.c: diode model parameters (dmodel.h). Names and defaults from the
 * ngspice manual's junction diode model table. */
#include "dmodel.h"

#include <assert.h>
#include <math.h>
#include <string.h>

struct dmodel_def {
	const char *names[4];   /* NULL-terminated; the first is the main name */
	double dflt;
};

/* Indexed by enum dmodel_param [dmodel-params]. */
static const struct dmodel_def defs[DM_COUNT] = {
	[DM_IS] = {{"is", "js", NULL}, 1e-14},
	[DM_N] = {{"n", NULL}, 1},
	[DM_RS] = {{"rs", NULL}, 0},
	[DM_CJO] = {{"cjo", "cj0", "cj", NULL}, 0},
	[DM_VJ] = {{"vj", "pb", NULL}, 1},
	[DM_M] = {{"m", "mj", NULL}, 0.5},
	[DM_TT] = {{"tt", NULL}, 0},
	[DM_FC] = {{"fc", NULL}, 0.5},
	[DM_BV] = {{"bv", NULL}, INFINITY},
	[DM_IBV] = {{"ibv", NULL}, 1e-3},
};
_Static_assert(sizeof defs / sizeof defs[0] == DM_COUNT, "one row per parameter");

double dmodel_given(const struct nl_model *m, enum dmodel_param k)
{
	assert(k < DM_COUNT);
	if (!m)
		return NAN;
	for (int n = 0; defs[k].names[n]; n++)
		for (uint32_t i = 0; i < m->nparams; i++)
			if (strcmp(m->keys[i], defs[k].names[n]) == 0 && isfinite(m->values[i]))
				return m->values[i];
	return NAN;
}

double dmodel_value(const struct nl_model *m, enum dmodel_param k)
{
	double v = dmodel_given(m, k);
	return isnan(v) ? defs[k].dflt : v;
}

double dmodel_param(const struct nl_model *m, const char *const *names, double dflt)
{
	if (!m)
		return dflt;
	for (int n = 0; names[n]; n++)
		for (uint32_t i = 0; i < m->nparams; i++)
			if (strcmp(m->keys[i], names[n]) == 0 && isfinite(m->values[i]))
				return m->values[i];
	return dflt;
}
