/* waiver.h: waivers (*@waive lines in a netlist or in a --waivers file) and
 * baselines (an earlier JSON report). A waiver names one rule, a
 * part glob, a mandatory reason and an optional expiry date; a finding it
 * matches is kept but marked waived; an expired waiver waives nothing and
 * becomes a finding; a waiver that matches nothing is a note. A baseline
 * drops findings already present in it, matched by file (its real path),
 * rule and part (never by line). */
#ifndef HEADROOM_WAIVER_H
#define HEADROOM_WAIVER_H

#include <stdatomic.h>
#include <stddef.h>

#include "annot.h"
#include "arena.h"
#include "diag.h"
#include "audit.h"
#include "rules.h"

/* Waiver lines read from a file (the *@waive syntax, one per line). */
struct waiver_file {
	struct annot *w;
	uint32_t n;
	atomic_uchar *used;   /* set by any file's check, from any thread */
};

/* Reads a waiver file; problems go to d with locations. NULL on error. */
struct waiver_file *waiver_load(const char *path, struct arena *ar,
				struct diag_sink *d);

/* Reports (errors in d, at the rule's column) the waivers among w[0..n)
 * that name no rule of rules_table, with the closest rule's name when one
 * is close (suggest.h); returns how many. Such waivers then waive
 * nothing and are not reported as unused. */
size_t waiver_check_rules(const struct annot *w, uint32_t n, struct diag_sink *d);

/* Applies inline waivers (a->annots) and file waivers to the findings of
 * one netlist; today is "YYYY-MM-DD". Adds waiver-expired and
 * waiver-unused findings, allocated in ar. Returns 0 on out-of-memory. */
int waiver_apply(const struct audit *a, const struct waiver_file *wf,
		 const char *today, struct arena *ar, struct rules_result *rr);

/* Once after a batch: a waiver-unused finding (located in the waiver
 * file) for each file waiver that matched nothing in any file. Appends to
 * rr in ar; 0 on out-of-memory. */
int waiver_unused(const struct waiver_file *wf, struct arena *ar,
		  struct rules_result *rr);

/* Findings of an earlier JSON report, as (file, rule, part) keys. */
struct baseline;

/* Reads a JSON report written by `headroom check --format json`. Problems
 * go to d with file:line:col. NULL on error. */
struct baseline *baseline_load(const char *path, struct arena *ar,
			       struct diag_sink *d);

/* Removes from rr the findings present in the baseline for file path;
 * returns how many. Files are compared by real path, whatever folder each
 * check was run from. ar holds the resolved path. */
size_t baseline_filter(const struct baseline *b, const char *path,
		       struct rules_result *rr, struct arena *ar);

/* The current directory as seen from the folder of baseline_path (".",
 * "..", "../src"), which a baseline records as "paths_from" so that its
 * relative paths can be found from anywhere. 0 when a folder cannot be
 * resolved or out is too small. */
int baseline_paths_from(const char *baseline_path, char *out, size_t n);

#endif
