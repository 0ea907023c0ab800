/* capbias.h: a class-2 ceramic capacitor's capacitance against DC bias, as
 * the maker's curve gives it: points "V=share" (the share of the nominal
 * capacitance left at V volts), e.g. "0V=100% 16V=55% 25V=40%". Droop and
 * ripple figures use the capacitance left at the part's worst voltage
 * (docs/check.md, "Capacitance under DC bias"). */
#ifndef HEADROOM_CAPBIAS_H
#define HEADROOM_CAPBIAS_H

#include <stddef.h>

#define CAPBIAS_MAX 16

struct capbias {
	unsigned n;               /* points, rising in V; 0: no curve */
	double v[CAPBIAS_MAX];    /* V, >= 0 */
	double k[CAPBIAS_MAX];    /* share of nominal, (0, 1] */
};

/* Reads s[0..n): points separated by blanks, ';' or ','. Returns NULL and
 * fills *out, or a message for the first problem with its offset in *bad. */
const char *capbias_parse(const char *s, size_t n, struct capbias *out, size_t *bad);

/* The share left at |v| volts: straight lines between the points, from
 * 100 % at 0 V to the first point, and the last point's share past the end
 * of the curve (then *past, when not NULL, is set to 1: the curve does not
 * reach the voltage and the figure may be optimistic). 1 with no curve. */
double capbias_share(const struct capbias *c, double v, int *past);

#endif
