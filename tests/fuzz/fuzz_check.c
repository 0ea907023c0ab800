/* End to end, through the library's one check call (check.h): netlist -> elaboration, annotations, propagation and
 * structures (audit) -> ratings -> stresses -> the transient solver
 * (--verify on circuits of up to 200 parts, held to 20 periods and 4,000
 * Newton iterations) -> rules -> waivers
 * -> the reports in every format (written to /dev/null). Includes are refused, so the
 * input alone decides what is read. Profile: rules/industrial.profile. */
#include "fuzz.h"

#include <stdlib.h>
#include <string.h>

#include "arena.h"
#include "check.h"
#include "diag.h"
#include "profile.h"
#include "report_check.h"

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
	struct check_opts o;
	struct check_run r;
	memset(&o, 0, sizeof o);
	o.audit.elab.open = open_top_only;
	o.audit.elab.open_ud = (void *)path;
	o.audit.elab.max_parts = 20000;
	o.audit.elab.max_line_len = 4096;
	o.audit.source_tol = 0.1;
	o.profile = p;
	o.profile_fixed = 1;
	o.today = "2026-12-01";
	o.verify = 1;
	o.verify_lim = (struct verify_limits){20, 4000};
	o.verify_max_parts = 200; /* the solver's time grows with the circuit */
	if (check_file_run(path, &o, &h, &r) != CHECK_OOM) {
		static const enum report_check_format fmts[] = {RC_TEXT, RC_JSON, RC_CSV,
								 RC_JUNIT, RC_SARIF, RC_HTML};
		const struct check_skip skip = {"notes.txt", "a skipped entry"};
		for (size_t i = 0; i < sizeof fmts / sizeof fmts[0]; i++) {
			struct check_totals t;
			memset(&t, 0, sizeof t);
			report_check_file(sink, fmts[i], &r.f, r.profile, 1, &t);
			t.skipped = &skip;
			t.nskipped = 1;
			report_check_end(sink, fmts[i], r.profile, &t);
			report_totals_free(&t);
		}
	}
	check_free(&r);
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
