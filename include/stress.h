/* stress.h: worst-case stresses (docs/design.md §6). The propagation is run at the
 * corners of the source tolerances (every amplitude and every offset at one
 * end of its band) with ideal diodes, and once more with every source at
 * its low end and each diode at its forward drop; a part's stress is the
 * interval [best, worst] over those runs, with the corner of the worst. Also: power-up surge of
 * the first diodes of each structure, stored energy and discharge time of
 * capacitors, clamp droop and ladder regulation under load. */
#ifndef HEADROOM_STRESS_H
#define HEADROOM_STRESS_H

#include <stdint.h>

#include "audit.h"
#include "profile.h"
#include "rating.h"

/* What a stress measures [stress-qty]. The currents and the power are
 * the steady state's at the all-high corner (current.h). */
enum stress_qty {
	SQ_VOLTAGE,
	SQ_REVERSE,
	SQ_SURGE,
	SQ_AVG_CURRENT,     /* a diode's mean forward current */
	SQ_PEAK_CURRENT,    /* a diode's repetitive peak forward current */
	SQ_RMS_CURRENT,     /* a diode's rms current */
	SQ_RIPPLE_CURRENT,  /* a capacitor's rms (ripple) current */
	SQ_POWER,           /* a zener's or resistor's mean power */
	SQ_LIFE,            /* an electrolytic's estimated life, hours (life.h):
			       lower is worse, so it has no rating ratio */
	SQ_COUNT
};

/* The one name of each quantity, the same in every report format (text,
 * JSON, CSV, HTML): "voltage" (a capacitor's |V|), "reverse_voltage" (a
 * diode's cathode minus anode), "surge_current" (the power-up surge
 * through a diode), "avg_current", "peak_current", "rms_current",
 * "ripple_current", "power", "life" [stress-qty]. */
const char *stress_qty_name(enum stress_qty q);
/* Its unit: "V", "A" or "W". */
const char *stress_qty_unit(enum stress_qty q);
/* Whether q is a voltage (a capacitor's |V| or a diode's reverse voltage):
 * the quantities the analysis bounds and the solver confirms. */
int stress_qty_is_voltage(enum stress_qty q);
/* Whether q is one of the steady state's currents, its power, or the life
 * estimate made from the ripple current. */
int stress_qty_is_flow(enum stress_qty q);
/* The rating field q is judged against (v_rated for voltages, i_surge for
 * the surge, i_avg, i_peak, i_ripple, p_rated); an empty field (NaN) for
 * the rms current, which no rule judges. */
const struct rating_field *stress_rating(const struct rating *r, enum stress_qty q);
/* The profile's derating field for q ("voltage", "surge", "avg_current",
 * "peak_current", "ripple_current", "power"; "" for the rms current). */
const char *stress_qty_derating(enum stress_qty q);

/* Where a stress's number comes from [stress-basis]. */
enum stress_basis {
	SB_ANALYSIS,   /* the analysis proves it (docs/check.md) */
	SB_SIMULATED,  /* the solver at the worst corners: simulated, not proven */
	SB_NONE,       /* neither: no number */
	SB_ESTIMATE,   /* a formula's figure, not proven: the power-up surge where
			  the solver cannot run (Vpeak over the series resistance) */
	SB_COUNT
};

/* Display names: "proven", "simulated", "none", "estimate" [stress-basis]. */
const char *stress_basis_name(enum stress_basis b);

/* How a capacitor's charge drains once the circuit is off [stress-drain]. */
enum stress_drain {
	SD_NONE,    /* no resistor path: it keeps its charge */
	SD_OWN,     /* resistors across it (through any nodes) */
	SD_STACK,   /* only with its series stack, through the stack's resistors */
	SD_OUTPUT,  /* estimate: through its structure's output resistance */
	SD_COUNT
};

/* A series stack of capacitors inside a structure, from its output down to
 * ground (or its low output): after switch-off one current drains every
 * member, so the stack's voltage falls no slower than exp(-t / (R (Ceq +
 * Cpar))). */
struct stress_stack {
	int32_t structure;      /* -1: a pair outside any structure's stack */
	uint32_t top, bottom;   /* nodes */
	uint32_t nseg;          /* capacitor positions in series (parallel parts merged) */
	uint32_t first;         /* a part on the top position: where findings point */
	double ceq_f;           /* series capacitance, F */
	double cpar_f;          /* capacitance joining through diodes as it drains
				   (a ladder's coupling column above stage 1), F */
	double v;               /* sum of the positions' worst voltages, V */
	double r;               /* resistance from top to bottom, INFINITY when none */
	double t;               /* time for v to fall below the hazard voltage, s */
};

struct stress {
	uint32_t part;
	int32_t structure;      /* index in the audit's topo result, -1 if none */
	const char *role;       /* role in that structure (display text), or "" */
	enum topo_role role_kind;/* TR_COUNT when not in a structure */
	enum stress_qty qty;
	double best, worst;     /* V (capacitor |V|, diode reverse) or A */
	const char *corner;     /* where the worst came from */
	double rev_min;         /* polarised capacitors: lowest V(+) - V(-) */
	int bounded;            /* a number exists (basis is not SB_NONE) */
	enum stress_basis basis;
	const char *unproven;   /* why the analysis's proof does not hold, or NULL */
	double analytic;        /* the analysis's own worst (NaN when none) */
	int hull;               /* the number is the supply range's (hull.h): no
				   steady state, every node between its supplies */
	int tighten;            /* the proof (analytic) holds but leaves out its
				   structure's load, which the loaded output shows
				   to matter: the solver is asked for a tighter
				   number, and the proof stands where it gives none
				   (loadout_tighten, simbound.c) */
	int floor;              /* the proof stands as a floor only: the part's
				   island hangs on a node pinned from a rail
				   that moves between two values, which the
				   proof takes at one end of its band; the
				   solver's number replaces it where higher
				   (stress.c banded_pins, simbound.c) */
	/* capacitors: stored energy at the worst voltage and discharge
	   (discharge.h; set only above the hazard voltage) */
	double energy_j;
	double discharge_r;     /* resistance it drains through, INFINITY when none */
	double discharge_s;     /* time to fall below the hazard voltage */
	enum stress_drain drain;/* where discharge_r comes from */
	int32_t stack;          /* its series stack in stacks[], -1 when none */
	/* surge: the series resistance that limits it (0: nothing) */
	double series_r;
	/* surge, simulated (surge.h; NaN when not): the pulse's I^2 t (A^2
	   s), its equivalent half-sine width 2 I^2t / peak^2 (s: the
	   half-sine of the same peak and I^2 t lasts that long), and the
	   switch-on instant as a phase of the longest source period
	   (degrees; NaN: the sources as written) */
	double surge_i2t, surge_width, surge_phase;
	/* life (SQ_LIFE): the run's ambient, the core's temperature and its
	   rise from ripple heating (degC; the rise is 0 when ESR or the
	   thermal resistance is not given), the life 10 degC hotter (h) and
	   life_flags' bits: LIFE_HEATED, LIFE_CAPPED, LIFE_OVER_RATED */
	double life_ambient_c, life_core_c, life_rise_c, life_hotter_h;
	unsigned life_flags;
	/* --verify: the same quantity in the steady-state simulation at the
	   +tol corner, NaN when not simulated (verify.h) */
	double sim_worst;
	/* --verify: the same quantity's peak over the power-up run (from the
	   zero state at the same corner), NaN when not simulated */
	double sim_powerup;
	/* --verify: pin 0 minus pin 1 over the simulated period at
	   STRESS_TRACE_POINTS even times, or NULL */
	const double *sim_wave;
	/* --verify: a pin shares a node with a part the solver left open, so
	   the simulated value is shown but not compared with the bound */
	int sim_near_open;
	/* --verify: the simulated value came from the corner with the offsets
	   and rails at the bottom of their band (else the top) */
	int sim_low;
};

#define LIFE_HEATED 1u     /* ESR and R_th given: the ripple heating is in */
#define LIFE_CAPPED 2u     /* the estimate is the 15-year cap */
#define LIFE_OVER_RATED 4u /* the core runs above the rated life temperature */

/* A simulated stress above its analytic bound by more than this (relative,
 * plus STRESS_GAP_ABS volts) is an analysis gap: the solver's own accuracy
 * (reltol 1e-3) is not mistaken for one. */
#define STRESS_GAP_REL 2e-3
#define STRESS_GAP_ABS 0.01
/* A simulated value this close below the bound (relative, or within
 * STRESS_GAP_ABS) confirms it; further below, the bound holds but is
 * loose by the difference, and the report says by how much. */
#define STRESS_CONFIRM_BAND 0.05

/* Samples kept of each stressed part's simulated waveform (for plots). */
#define STRESS_TRACE_POINTS 240

/* A structure's output at one corner of the source tolerances, from the
 * solver's periodic steady state with the diodes as modelled and the
 * circuit's own load (loadout.h). NaN where not known. */
struct stress_output_corner {
	double mean, min, max; /* V: the output over one period (mean: time average) */
	/* V: the analysis's output at the same corner (ideal diodes, no
	   load), the middle of its range */
	double unloaded;
	unsigned periods; /* periods run to the steady state */
};

/* A structure's output under its load (loadout.h). */
struct stress_output {
	/* a multiplier, doubler or rectifier with a load: the fields below
	   are set */
	int loaded;
	int simulated;   /* both corners came from the solver */
	const char *why; /* loaded and not simulated: why not */
	/* the output is v(pos) - v(neg); neg is ground unless the structure
	   has a low output */
	uint32_t pos, neg;
	struct stress_output_corner lo, hi; /* sources at -tol and at +tol */
};

/* Per structure: figures that need the whole structure. */
struct stress_struct {
	double period;          /* drive period, s (0 if DC) */
	double swing;           /* peak-to-peak of the drive, worst corner */
	double load_r;          /* resistance from the output to settled nodes */
	double droop_v;         /* clamp: droop per period under the load */
	double droop_frac;      /* droop / swing */
	double droop_c;         /* clamp: the coupling capacitance droop_v used */
	double ladder_i;        /* ladder: load current at the ideal output */
	double ladder_c;        /* smallest stage capacitance */
	double ladder_drop;     /* published regulation formulas */
	double ladder_ripple;
	double ladder_nopt;
	/* the smallest share of its nominal capacitance a capacitor of the
	   structure keeps under its worst DC bias (its c_bias curve, capbias.h;
	   1 without one): droop and ladder figures use the reduced values */
	double bias_share;
	int bias_past;          /* a worst voltage lies past the end of its curve */
	struct stress_output out; /* the loaded output (loadout.h) */
};

struct stress_result {
	struct stress *s;
	size_t n;
	struct stress_struct *st;   /* one per structure */
	double max_voltage;         /* largest worst voltage of any stress or stack */
	const struct stress_stack *stacks; /* discharge.h */
	size_t nstacks;
	const char *corners[8];
	size_t ncorners;
	const struct prop_result *runs;   /* one propagation per corner */
	const struct stress_verify *verify; /* --verify's run, or NULL */
	const uint32_t *island;     /* per part: its island (proof.h) */
	const struct stress_fallback *fallback; /* the simulation of unproven parts, or NULL */
	const struct stress_surge *surge;       /* the surge simulation (surge.h), or NULL */
	const struct stress_loadsim *loadsim;   /* the loaded outputs' simulation
						   (loadout.h), or NULL */
};

/* What the simulation of the loaded outputs (loadout.h) did for a file. */
struct stress_loadsim {
	int simulated;   /* both corners reached their steady state */
	const char *why; /* when not: the reason */
	unsigned runs;   /* solver runs made */
	/* per node, [0] the low corner (every source at -tol) and [1] the
	   high corner (+tol): its lowest and highest voltage to ground over
	   one steady-state period; NULL when not simulated */
	const double *node_min[2], *node_max[2];
	const char *corner[2]; /* the corners' names */
};

/* What the surge simulation (surge.h) did for a file. */
struct stress_surge {
	int simulated;     /* the surges come from the solver */
	const char *why;   /* when not: the reason */
	unsigned runs;     /* solver runs made */
	unsigned instants; /* switch-on instants tried (1: as written) */
	double period;     /* the longest source period, s */
	double span;       /* time run after each switch-on, s */
};

/* Index in runs of the corner with amplitudes and offsets at +tol, and of
 * the best case (everything at -tol, diode forward drops). */
#define STRESS_CORNER_HIGH 1
#define STRESS_CORNER_LOW 3
/* Index in runs of the corner with amplitudes at -tol, ideal diodes. */
#define STRESS_CORNER_LOW_IDEAL 2

/* A part's current over one steady-state period, from pin 0 to pin 1
 * through it (simbound.h); NaN where the solver has none. */
struct stress_flow {
	double avg, rms, peak;  /* A */
	double power;           /* mean of v(pin 0) - v(pin 1) times i, W */
};

/* What the simulation of unproven stresses did for a file (simbound.h). */
struct stress_fallback {
	unsigned runs;          /* solver runs (corners, real and ideal diodes) */
	unsigned unsettled;     /* runs that ended before their steady state */
	size_t given;           /* stresses that got a simulated number */
	size_t left;            /* unproven stresses left without a number */
	const char *why;        /* why some could not be simulated, or NULL */
	/* the currents: the steady state at the all-high corner with the
	   diodes as modelled; flow is one entry per part, or NULL with
	   flow_why saying why */
	const struct stress_flow *flow;
	const char *flow_why;
	const char *flow_corner;
	double flow_period;     /* the period they are taken over, s */
	const unsigned char *flow_blocked; /* per island: no currents there
					      (a part the solver cannot take),
					      or NULL */
	const char *flow_blocked_why;
};

/* What --verify did for a file (filled by verify_run). */
struct stress_verify {
	int simulated;          /* the solver ran to the end */
	const char *why;        /* when not: the reason (static or in the arena) */
	unsigned periods;       /* periods run before the recorded one */
	int settled;            /* steady state reached within the cap */
	double period;          /* s */
	size_t started;         /* capacitors started at the best-case analytic DC */
	double residual;        /* the last period's relative change of the state */
	size_t confirmed;       /* stresses simulated within STRESS_CONFIRM_BAND
				   below their bound */
	size_t holds;           /* simulated further below their bound */
	size_t gaps;            /* simulated above their bound */
	size_t uncompared;      /* simulated beside a part left open */
	size_t slow;            /* slow rails taken quasi-statically */
	const char *slow_names; /* their names, comma-separated */
	unsigned corners;       /* corners simulated: 1, or 2 with offsets and
				   rails at the bottom of their band too */
	int low_settled;        /* the second corner reached its steady state */
	int powerup;            /* the power-up run ran (from the zero state) */
	unsigned powerup_periods; /* its periods (steady, or the cap) */
	size_t powerup_above;   /* stresses whose power-up peak tops their
				   steady state */
	unsigned long points, newton;
	size_t unknowns;
	size_t left_out;        /* parts the solver has no model for, left open */
	const char *left_out_names; /* the first few, comma-separated */
};

/* Computes the stresses for audit a (analysed) with ratings r and profile
 * p. Allocates in ar. Returns 0 on out-of-memory. */
int stress_run(const struct audit *a, const struct rating *r, const struct profile *p,
	       struct arena *ar, struct stress_result *out);

/* 1 when part p is a voltage source whose waveform a tolerance scales
 * whole (a PULSE or PWL: its levels move together, so a level at 0 V
 * stays at 0 V); a SIN's offset and swing are toleranced apart. */
int stress_scales_whole(const struct nl_part *p);

/* A clamp's droop is figured from the analysis's voltage on its coupling
 * capacitor; where that capacitor's number is the solver's instead (or
 * none), the droop is figured again from that number (or dropped: a
 * droop on an unsettled voltage says nothing). Call once the simulated
 * numbers are in. Returns 1 (a step of check.c's pipeline). */
int stress_refigure_droop(struct stress_result *sr);

/* Source tolerance used for part (annotation, --source-tol, profile). */
double stress_tolerance(const struct audit *a, const struct profile *p,
			uint32_t part);
/* The tolerance the solver's corners move source part by: a voltage
 * source's (stress_tolerance), a current source's only where one is
 * declared on it (*@source), 0 for other parts. */
double stress_source_tol(const struct audit *a, const struct profile *p, uint32_t part);

/* Sets a capacitor stress's stored energy from its worst voltage (cap_f
 * farads). Its discharge is set later, by discharge_run (discharge.h). */
void stress_set_energy(struct stress *s, double cap_f);

/* The DC part of capacitor p's voltage (pin 0 minus pin 1) in the
 * best-case propagation (sources at -tol, diode drops), NaN where either
 * node is not settled there. The simulations start each capacitor there,
 * below where the worst corner will take it: a circuit that charges slowly
 * then approaches its steady state from below, so a run stopped early
 * underestimates rather than invents. Allocates scratch in ar. */
double stress_low_dc(const struct audit *a, const struct stress_result *sr,
		     struct arena *ar, const struct nl_part *p);

/* True when stress s was simulated above its bound (see STRESS_GAP_*):
 * the analysis-gap rule. */
int stress_gap(const struct stress *s);
/* The larger of s's steady-state and power-up simulated values (NaN when
 * neither was simulated). */
double stress_simulated_peak(const struct stress *s);
/* 1 when the power-up run's peak lies above the steady state's by more
 * than the solver's margin (STRESS_GAP_REL, STRESS_GAP_ABS). */
int stress_powerup_above(const struct stress *s);
/* What the rating rules judge: the bound, or the simulated peak (steady
 * state or power-up) when that is higher and compared. */
double stress_judged(const struct stress *s);
/* A surge rating's pulse: IFSM is the peak of one half-sine of the
 * rating's width (rating surge_width, default RATING_SURGE_WIDTH); the I^2
 * t it allows is the smaller of the rating's own i2t and that half-sine's
 * IFSM^2 t / 2. NaN when neither is given. */
double stress_surge_rated_i2t(const struct rating *r);
/* The width of r's surge rating (s). */
double stress_surge_width(const struct rating *r);
/* What a surge stress is judged as, in amperes: with a simulated pulse
 * (surge_i2t known), the peak of a half-sine of the rating's width that
 * carries the same I^2 t, sqrt(2 I^2t / width); the scaling by I^2 t is
 * common practice, no source. Without one, the peak itself (the bound
 * then counts as lasting the rating's whole pulse). */
double stress_surge_judged(const struct stress *s, const struct rating *r);
/* The surge current r allows, in the same terms: IFSM, or the half-sine
 * peak of its I^2 t when that is lower (NaN: no rating). */
double stress_surge_rated(const struct rating *r);
/* The rating q is judged against, in the terms of the judged value: the
 * rating's value for a voltage, stress_surge_rated for a surge (NaN: none). */
double stress_rated(const struct rating *r, enum stress_qty q);
/* What the rules judge s as (stress_judged for a voltage,
 * stress_surge_judged for a surge; NaN without a number). */
double stress_judged_as(const struct stress *s, const struct rating *r);
/* The ratio of s to its rating r (the figure reports sort by): worst over
 * the rating for a voltage, stress_surge_judged over stress_surge_rated
 * for a surge. NaN when s has no number or r no rating. */
double stress_ratio(const struct stress *s, const struct rating *r);

/* 1 when s was simulated, compared and lies within STRESS_CONFIRM_BAND
 * below its bound (or above it: see stress_gap). */
int stress_confirmed(const struct stress *s);

#endif
