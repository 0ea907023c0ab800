/* life.h: the estimated life of an aluminium electrolytic capacitor from its
 * ripple heating and the ambient temperature (docs/life.md).
 *
 *   core  = ambient + I_rms^2 * ESR * R_th            (ripple heating)
 *   life  = L0 * 2^((T0 - core) / 10)                   (10 degC doubling)
 *
 * with L0 the rated life at the rated temperature T0. The doubling rule is
 * used only where the makers publish it: the core is taken at 40 degC or
 * more (no credit for a cooler one) and the result is capped at 15 years.
 * Operating below the rated voltage is given no credit: the makers' voltage
 * factors differ from series to series, and leaving them out can only make
 * the estimate shorter. */
#ifndef HEADROOM_LIFE_H
#define HEADROOM_LIFE_H

/* The lowest core temperature the doubling rule is applied at, degC. */
#define LIFE_FLOOR_C 40.0
/* The longest estimate given, hours (15 years of 8,760 h). */
#define LIFE_CAP_H (15.0 * 8760.0)

struct life_in {
	double rated_h;     /* L0: rated life, hours (> 0) */
	double rated_c;     /* T0: the temperature L0 is rated at, degC */
	double ambient_c;   /* air around the part, degC */
	double ripple_a;    /* rms ripple current, A (>= 0) */
	double esr_ohm;     /* ESR at the ripple's frequency; NaN when unknown */
	double rth_c_w;     /* core-to-ambient thermal resistance, degC/W; NaN when unknown */
};

struct life_out {
	double rise_c;      /* ripple heating, degC (0 when ESR or R_th is unknown) */
	double core_c;      /* ambient + rise */
	double hours;       /* estimated life */
	double hotter_h;    /* the same 10 degC hotter (the enclosure's sensitivity) */
	int heating_known;  /* ESR and R_th were both given */
	int capped;         /* hours is the 15-year cap */
	int over_rated;     /* the core runs above the rated temperature */
};

/* Fills *out; returns 0 when the inputs cannot give an estimate (a rated
 * life that is not positive, a temperature or current that is not finite). */
int life_estimate(const struct life_in *in, struct life_out *out);

/* Life at a core temperature, by the doubling rule alone (with the floor and
 * the cap). */
double life_at(double rated_h, double rated_c, double core_c);

#endif
