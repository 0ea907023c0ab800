/* thermal.h: the circuit at its temperature. A deck's .temp (or
 * .options temp=) and an element's temp= or dtemp= move each diode's
 * model card from its measurement temperature (TNOM) to the temperature
 * it works at, by the junction diode's temperature equations as ngspice
 * documents them, and a resistor's or capacitor's value by its tc1= and
 * tc2=. Parts whose models the solver keeps at TNOM (transistors) are
 * named in a warning. docs/netlist.md, "Temperature". */
#ifndef HEADROOM_THERMAL_H
#define HEADROOM_THERMAL_H

#include "diag.h"
#include "nl.h"

/* What the deck says (degC; NaN where it says nothing). */
struct thermal_deck {
	double temp;            /* .temp or .options temp= */
	double tnom;            /* .options tnom= (27 when NaN) */
	struct diag_loc at;     /* the card that set temp */
};

/* The diode model m at t_k kelvin, measured at tnom_k: a copy in ar with
 * IS, N (as N T / 300.15 K, so that N times the thermal voltage at
 * 27 degC is the emission coefficient times the thermal voltage at t_k),
 * BV (TCV), RS (TRS1, TRS2), TT (TTT1, TTT2), CJO and VJ moved; m itself
 * when the two temperatures are equal. NULL on out-of-memory. */
const struct nl_model *thermal_diode(struct arena *ar, const struct nl_model *m, double t_k,
				     double tnom_k);

/* Moves every part of c to its temperature (see above); notes and
 * warnings go to d. 0 on out-of-memory. */
int thermal_apply(struct nl_circuit *c, const struct thermal_deck *t, struct diag_sink *d);

#endif
