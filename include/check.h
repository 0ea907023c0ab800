/* check.h: the whole check of one netlist file, as one call: analysis
 * (audit), the profile a *@profile line picks, ratings, stresses, the
 * optional simulation (--verify), rules, waivers and the baseline. The
 * program, the fuzz harness and the tests all run a file through here, so
 * the pipeline exists once and allocation-failure injection covers all of
 * it. Reporting and exit codes are left to the caller. */
#ifndef HEADROOM_CHECK_H
#define HEADROOM_CHECK_H

#include <stddef.h>

#include "arena.h"
#include "audit.h"
#include "diag.h"
#include "profile.h"
#include "rating.h"
#include "rules.h"
#include "simbound.h"
#include "stress.h"
#include "verify.h"
#include "waiver.h"

/* What every file of a run shares; all borrowed, read-only. */
struct check_opts {
	struct audit_opts audit;         /* elaboration limits, source tolerance */
	unsigned max_errors;             /* errors kept per file (0: 50) */
	const struct profile *profile;   /* the run's profile */
	int profile_fixed;               /* 1: *@profile lines are not obeyed */
	const char *argv0;               /* where named profiles are looked up */
	const struct rating_table *parts;/* the parts table all files share, or NULL */
	const struct bom *bom;           /* the BOM all files share, or NULL */
	const struct waiver_file *waivers;/* --waivers, or NULL */
	const struct baseline *baseline; /* --baseline, or NULL */
	const char *today;               /* YYYY-MM-DD, for waiver expiry */
	int verify;                      /* simulate too */
	int ambient_set;                 /* --ambient given: ambient_c overrides the profile */
	double ambient_c;                /* degC */
	struct verify_limits verify_lim; /* zeros: the solver's defaults */
	size_t verify_max_parts;         /* simulate only up to this many parts (0: any) */
	struct simbound_limits sim_lim;  /* simulated numbers for unproven stresses */
	size_t sim_max_parts;            /* ... only up to this many parts (0: 20,000) */
};

enum check_status { CHECK_OK, CHECK_ERRORS, CHECK_OOM };

/* Everything known about one checked file. The reports read it. */
struct check_file {
	const char *path;
	const struct audit *a;          /* analysed or not (netlist errors) */
	const struct diag_sink *d;
	const struct rating *ratings;   /* NULL when not analysed */
	const struct stress_result *stress;
	const struct rules_result *rules;
	const char *caution;            /* this file's safety caution, or NULL */
	size_t baselined;               /* known findings the baseline removed */
	int has_baseline;               /* a baseline was applied */
};

/* One file's check and the memory behind it. */
struct check_run {
	enum check_status status;
	struct arena *ar;               /* owns d, the profile copy, ratings */
	struct diag_sink *d;            /* NULL only when status is CHECK_OOM */
	struct audit a;
	const struct profile *profile;  /* the effective profile */
	struct stress_result sr;
	struct rules_result rr;
	struct check_file f;            /* views of the above, for the reports */
};

/* The safety caution every report carries when a design involves more
 * than the hazard voltage (docs/design.md §14), one paragraph. */
extern const char check_caution[];

/* Checks path into *r. Netlist and annotation errors give CHECK_ERRORS
 * (diagnostics in r->d, r->a.analysed 0); out-of-memory gives CHECK_OOM.
 * Free r with check_free in every case. */
enum check_status check_file_run(const char *path, const struct check_opts *o,
				 const struct hr_alloc *hook, struct check_run *r);

void check_free(struct check_run *r);

/* What a whole run found that belongs to no single netlist, located in the
 * file it concerns: parts-table rows that rated no capacitor or diode of
 * any file checked and BOM designators that no file has (parts-unmatched),
 * --waivers lines that matched no
 * finding anywhere (waiver-unused). Call once, after every file's check;
 * names of locations are those of the sink the table and waivers were
 * loaded with. Appends to out, allocating in ar; 0 on out-of-memory. */
int check_batch_end(const struct check_opts *o, struct arena *ar,
		    struct rules_result *out);

/* The highest severity among unwaived findings, or -1 when there are none
 * (enum diag_severity values otherwise). */
int check_worst_level(const struct check_run *r);

#endif
