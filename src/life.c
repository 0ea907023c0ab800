/* life.c: electrolytic capacitor life (include/life.h, docs/life.md). */
#include "life.h"

#include <math.h>

double life_at(double rated_h, double rated_c, double core_c)
{
	double t = fmax(core_c, LIFE_FLOOR_C);
	return fmin(rated_h * exp2((rated_c - t) / 10.0), LIFE_CAP_H);
}

int life_estimate(const struct life_in *in, struct life_out *out)
{
	if (!(in->rated_h > 0) || !isfinite(in->rated_h) || !isfinite(in->rated_c) ||
	    !isfinite(in->ambient_c) || !(in->ripple_a >= 0) || !isfinite(in->ripple_a))
		return 0;
	out->heating_known = in->esr_ohm >= 0 && in->rth_c_w >= 0 && isfinite(in->esr_ohm) &&
			     isfinite(in->rth_c_w);
	out->rise_c = out->heating_known ? in->ripple_a * in->ripple_a * in->esr_ohm * in->rth_c_w
					 : 0.0;
	out->core_c = in->ambient_c + out->rise_c;
	out->hours = life_at(in->rated_h, in->rated_c, out->core_c);
	out->hotter_h = life_at(in->rated_h, in->rated_c, out->core_c + 10.0);
	out->capped = out->hours >= LIFE_CAP_H;
	out->over_rated = out->core_c > in->rated_c;
	return 1;
}
