/* report_check.h: the report of `headroom check`: findings with their
 * numbers and the computation behind them, a stress table per file, the
 * safety caution when hazardous voltages are involved; as text or as the
 * versioned JSON report (docs/report.schema.json). */
#ifndef HEADROOM_REPORT_CHECK_H
#define HEADROOM_REPORT_CHECK_H

#include <stdio.h>

#include "check.h"
#include "profile.h"

/* The most stressed parts of a run, by ratio to their rating. */
#define TOTALS_RULES 32
_Static_assert(RULE_COUNT <= TOTALS_RULES, "per_rule holds a count per rule");
#define TOTALS_TOP 5
struct totals_part {
	char file[160], part[96]; /* truncated when longer */
	const char *qty;        /* static string: "voltage", ... */
	double ratio;
};

/* What a run read and when, for the reports that list their inputs (the
 * HTML page's header); all borrowed from the caller. */
struct report_inputs {
	const char *today;        /* YYYY-MM-DD: --today, else the UTC date */
	int today_given;          /* 1: from --today */
	const char *parts;        /* --parts, or NULL */
	const char *waivers;      /* --waivers, or NULL */
	const char *baseline;     /* --baseline, or NULL */
	const char *const *files; /* the netlists of the run, in order */
	size_t nfiles;
};

/* An entry under a folder given that was not checked, and why. */
struct check_skip {
	const char *path, *why;
};

struct check_totals {
	size_t files;          /* read: checked or not checked */
	size_t errors, warnings, notes; /* unwaived findings */
	size_t netlist_errors; /* files not checked (netlist errors, out of memory) */
	size_t read_errors, read_warnings, read_notes; /* the files' diagnostics */
	const struct check_skip *skipped; /* run level, borrowed: set before */
	size_t nskipped;                  /* report_check_end */
	char *deferred;        /* SARIF notifications, written at the end */
	size_t ndeferred;      /* (malloc'd: report_totals_free) */
	size_t per_rule[TOTALS_RULES]; /* unwaived findings, by rules_table index */
	struct totals_part top[TOTALS_TOP];
	size_t ntop;
	double max_voltage;
	double hazard_voltage;
	size_t emitted;        /* records written so far (SARIF results) */
	const char *docs_uri;  /* absolute file: URI of docs/, for help links */
	/* what the run read, for the HTML header; NULL: not listed */
	const struct report_inputs *inputs;
	int color;             /* text: ANSI colours */
	int quiet;             /* text: findings only */
	size_t baselined;      /* known findings a baseline hid */
	int has_baseline;      /* a baseline was applied */
	/* Set on the run's totals before report_check_end: */
	const struct diag_sink *run_d;   /* names the files of run findings */
	const struct rules_result *run;  /* findings of the whole run (check_batch_end), or NULL */
	const char *paths_from;          /* JSON: "paths_from" of a baseline being written, or NULL */
};

enum report_check_format { RC_TEXT, RC_JSON, RC_CSV, RC_JUNIT, RC_SARIF, RC_HTML };

/* Adds the counts and most stressed parts of j into t (in file order, so
 * that ties keep the earlier file), and appends j's deferred text to t's;
 * returns 0 when memory for that runs out. */
int report_totals_merge(struct check_totals *t, const struct check_totals *j);
/* Frees t's deferred text. */
void report_totals_free(struct check_totals *t);

/* Writes one file, checked or not (f->a->analysed 0: netlist errors, or
 * out of memory; f->d may then be NULL); first/last bracket the JSON
 * document; totals are updated. Every diagnostic of f->d goes into every
 * format, located, apart from the findings. */
void report_check_file(FILE *out, enum report_check_format fmt,
		       const struct check_file *f, const struct profile *p,
		       int first, struct check_totals *t);

/* Adds the unwaived findings of rr to t's counts (errors, warnings, notes,
 * per rule). */
void report_totals_count(struct check_totals *t, const struct rules_result *rr);

/* Closes the report: the run's own findings (t->run), the skipped
 * entries (t->skipped), the counts of files seen, checked, not checked
 * and skipped, totals, how many findings a baseline hid, a draft profile,
 * the safety caution when due. */
void report_check_end(FILE *out, enum report_check_format fmt,
		      const struct profile *p, const struct check_totals *t);

#endif
