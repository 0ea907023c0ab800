/* End to end: netlist -> elaboration, annotations, propagation and
 * structures (audit) -> ratings -> stresses -> the transient solver
 * (--verify on circuits of up to 200 parts, held to 20 periods and 4,000
 * Newton iterations) -> rules -> waivers
 * -> the JSON and HTML reports (written to /dev/null). Includes are refused, so the
 * input alone decides what is read. Profile: rules/industrial.profile. */
#include "fuzz.h"

#include <stdlib.h>
#include <string.h>

#include "arena.h"
#include "audit.h"
#include "diag.h"
#include "profile.h"
#include "rating.h"
#include "report_check.h"
#include "rules.h"
#include "stress.h"
#include "verify.h"
#include "waiver.h"

#ifndef FUZZ_RULES
#define FUZZ_RULES "rules"
#endif

static FILE *open_top_only(void *ud, const char *path)
{
	if (strcmp(path, (const char *)ud) == 0)
		return fopen(path, "r");
	return fopen("/nonexistent/headroom-fuzz", "r"); /* sets errno */
}

static void check(const char *path, struct profile *p, FILE *sink)
{
	struct hr_alloc h = hr_alloc_default();
	struct arena *ar = arena_create(&h);
	struct diag_sink *d = ar ? diag_create(ar, 50) : NULL;
	if (!d) {
		arena_destroy(ar);
		return;
	}
	struct audit a;
	struct audit_opts o;
	memset(&o, 0, sizeof o);
	o.elab.open = open_top_only;
	o.elab.open_ud = (void *)path;
	o.elab.max_parts = 20000;
	o.elab.max_line_len = 4096;
	o.source_tol = 0.1;
	enum audit_status st = audit_file(path, &o, &h, d, &a);
	struct stress_result sr;
	struct rules_result rr;
	memset(&sr, 0, sizeof sr);
	memset(&rr, 0, sizeof rr);
	struct check_file f = {path, &a, d, NULL, &sr, &rr};
	if (st == AUDIT_OK) {
		f.ratings = rating_resolve(a.er.circuit, NULL, a.annots, a.nannots, a.ar, d);
		struct verify_limits lim = {20, 4000};
		/* the solver's time grows with the circuit: small ones only */
		int small = nl_part_count(a.er.circuit) <= 200;
		if (!f.ratings || !stress_run(&a, f.ratings, p, &sr) ||
		    (small && !verify_run(&a, p, &lim, &sr)) ||
		    !rules_run(&a, f.ratings, p, &sr, &rr) ||
		    !waiver_apply(&a, NULL, "2026-12-01", &rr))
			st = AUDIT_OOM;
	} else {
		a.analysed = 0;
	}
	if (st != AUDIT_OOM) {
		struct check_totals t;
		memset(&t, 0, sizeof t);
		report_check_file(sink, RC_JSON, &f, p, 1, &t);
		report_check_end(sink, RC_JSON, p, &t);
		memset(&t, 0, sizeof t);
		report_check_file(sink, RC_HTML, &f, p, 1, &t);
		report_check_end(sink, RC_HTML, p, &t);
	}
	audit_free(&a);
	diag_destroy(d);
	arena_destroy(ar);
}

int LLVMFuzzerTestOneInput(const uint8_t *data, size_t size)
{
	if (size > 1 << 16)
		return 0;
	char path[64];
	int fd = fuzz_memfile(data, size, path, sizeof path);
	if (fd < 0)
		return 0;
	struct profile *p = malloc(sizeof *p);
	struct diag_sink *pd = NULL;
	struct hr_alloc h = hr_alloc_default();
	struct arena *par = arena_create(&h);
	pd = par ? diag_create(par, 50) : NULL;
	FILE *sink = fopen("/dev/null", "w");
	if (p && pd && sink && profile_load(FUZZ_RULES "/industrial.profile", pd, p))
		check(path, p, sink);
	else
		abort(); /* the harness itself is broken: say so loudly */
	if (sink)
		fclose(sink);
	diag_destroy(pd);
	arena_destroy(par);
	free(p);
	close(fd);
	return 0;
}
