/* sig.h: independent sources as steady-state periodic signals: each is
 * split into its mean (DC) and a zero-mean AC part that can be evaluated at
 * any time, with its exact minimum, maximum and period. Waveforms that
 * settle (EXP, a PWL without repeat, a damped SIN, a single PULSE) are
 * reduced to the DC they settle at, with a note saying so. */
#ifndef HEADROOM_SIG_H
#define HEADROOM_SIG_H

#include <stddef.h>

#include "nl.h"

enum sig_kind { SIG_DC, SIG_SIN, SIG_PULSE, SIG_PWL, SIG_SFFM, SIG_AM, SIG_COUNT };

struct sig {
	enum sig_kind kind;
	double mean;          /* DC part, V or A */
	double ac_min, ac_max;/* extremes of the AC part (ac_min <= 0 <= ac_max) */
	double period;        /* s; 0 for DC */
	/* SIN: amplitude, angular frequency, phase (rad) of
	 * amp * sin(w t + phase) */
	double amp, w, phase;
	/* PULSE, PWL: one period of breakpoints (time from 0, value minus
	 * mean), linear between them; npts >= 2, t[0] = 0, t[n-1] = period */
	size_t npts;
	const double *t, *v;
	double t0;            /* delay of the breakpoint waveform */
	/* SFFM: amp * sin(wc t + mdi sin(ws t)) */
	double wc, mdi, ws;
	/* AM: amp * (am_vo + sin(ws t + phase)) * sin(wc t + phase) */
	double am_vo;
	const char *note;     /* why the steady state differs from the card, or NULL */
};

/* Builds the steady-state signal of source src (V or I card) into *out;
 * breakpoint arrays are allocated in ar. Returns 0 on out-of-memory. */
int sig_from_source(const struct nl_source *src, struct arena *ar,
		    struct sig *out);

/* The AC part at time t (the mean not included). */
double sig_ac(const struct sig *s, double t);

/* Name of a kind: "dc", "sin", "pulse", "pwl", "sffm". */
const char *sig_kind_name(enum sig_kind k);

#endif
