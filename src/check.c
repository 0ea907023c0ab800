/* check.c: one netlist file through the whole check (check.h). The order
 * is fixed: analysis, the file's own profile, ratings, stresses, the loaded
 * outputs simulated, simulated numbers for what the analysis cannot prove
 * and the currents, the supply range for what is left, the optional --verify, rules
 * and circuit defects, waivers, baseline. Printing and exit codes belong to
 * the program. */
#include "check.h"

#include <assert.h>
#include <math.h>
#include <stdio.h>
#include <string.h>

#include "current.h"
#include "defects.h"
#include "discharge.h"
#include "hull.h"
#include "loadout.h"
#include "num.h"
#include "suggest.h"
#include "surge.h"

const char check_caution[] =
	"caution: this design involves voltages above the hazard level. Stored charge "
	"can injure or kill, also after power is removed. These findings are an aid to "
	"review, not a certification: follow the applicable safety standard, local codes "
	"and licensed practice.";

/* The caution for a file whose stresses or stacks exceed the hazard
 * voltage: it names the file and its highest voltage (docs/design.md §14). */
static const char *file_caution(struct check_run *r, const char *path)
{
	double hz = profile_hazard(r->profile), top = r->sr.max_voltage;
	char vt[40], vh[40], buf[1024];
	if (isnan(hz) || !(top > hz))
		return NULL;
	num_format_eng(top, "V", vt, sizeof vt);
	num_format_eng(hz, "V", vh, sizeof vh);
	snprintf(buf, sizeof buf, "caution: %s involves up to %s, above the %s hazard voltage. Stored charge "
		 "can injure or kill, also after power is removed. These findings are an aid to review, "
		 "not a certification: follow the applicable safety standard, local codes and licensed "
		 "practice.", path, vt, vh);
	const char *c = arena_strdup(r->ar, buf);
	return c ? c : check_caution;
}

/* A *@profile line picks the profile for its own file, unless the command
 * line named one. Returns 0 on out-of-memory; a profile that cannot be
 * loaded is an error diagnostic and marks the run CHECK_ERRORS. */
static int file_profile(const struct check_opts *o, struct check_run *r)
{
	const struct audit *a = &r->a;
	for (uint32_t i = 0; i < a->nannots; i++) {
		const struct annot *an = &a->annots[i];
		if (an->kind != AN_PROFILE)
			continue;
		struct profile *own = arena_alloc(r->ar, sizeof *own);
		char path[1024];
		if (!own)
			return 0;
		if (!profile_find(an->target, o->argv0, path, sizeof path) ||
		    !profile_load(path, r->d, own)) {
			struct suggest s;
			char hint[SUGGEST_HINT_SIZE];
			suggest_init(&s, an->target, strlen(an->target));
			for (size_t k = 0; profile_shipped[k]; k++)
				suggest_offer(&s, profile_shipped[k]);
			diag_add(r->d, DIAG_ERROR, "annotation", an->loc,
				 "*@profile names '%s', which cannot be loaded%s", an->target,
				 suggest_hint(&s, hint, sizeof hint));
			r->status = CHECK_ERRORS;
		} else {
			r->profile = own;
		}
	}
	return 1;
}

/* The effective profile at the run's ambient temperature: a copy with the
 * ambient recorded and every capacitor kind's temperature derating applied
 * (docs/profiles.md), so rules and reports read the same limits. Returns 0
 * on out-of-memory. */
static int at_ambient(const struct check_opts *o, struct check_run *r)
{
	struct profile *p = arena_alloc(r->ar, sizeof *p);
	if (!p)
		return 0;
	*p = *r->profile;
	double t = profile_ambient(p, o->ambient_set ? o->ambient_c : NAN);
	const char *why = o->ambient_set ? "--ambient"
			  : isnan(profile_value(p, "ambient", NULL)) ? "default: no ambient in the profile"
								     : NULL;
	if (why)
		profile_set(p, "ambient", t, why);
	profile_at_ambient(p, t);
	r->profile = p;
	return 1;
}

/* The solver gives numbers where the analysis cannot prove one, in a
 * circuit small enough to simulate. Returns 0 on out-of-memory. */
static int simulate_unproven(const struct check_opts *o, struct check_run *r)
{
	size_t cap = o->sim_max_parts ? o->sim_max_parts : 20000;
	size_t np = nl_part_count(r->a.er.circuit);
	/* the loaded outputs say themselves when the circuit is too big */
	if (!loadout_run(&r->a, r->profile, &o->sim_lim, cap, r->a.ar, &r->sr) ||
	    !loadout_tighten(&r->a, r->a.ar, &r->sr))
		return 0;
	if (np <= cap)
		return simbound_run(&r->a, r->profile, &o->sim_lim, r->a.ar, &r->sr) &&
		       surge_run(&r->a, r->profile, &o->sim_lim, r->a.ar, &r->sr);
	struct stress_fallback *fb = arena_zalloc(r->a.ar, sizeof *fb);
	char why[160];
	snprintf(why, sizeof why, "the circuit has %zu parts, more than the simulation takes (%zu)", np, cap);
	if (!fb || !(fb->why = fb->flow_why = arena_strdup(r->a.ar, why)))
		return 0;
	if (r->sr.n)
		r->sr.fallback = fb; /* the currents' line and JSON say why */
	for (size_t i = 0; i < r->sr.n; i++) {
		struct stress *s = &r->sr.s[i];
		if (s->unproven && stress_qty_is_voltage(s->qty)) {
			s->bounded = 0;
			s->basis = SB_NONE;
			s->worst = s->best = NAN;
			fb->left++;
		}
	}
	return 1;
}

/* Ratings, stresses, simulation, rules, waivers: 0 on out-of-memory. */
static int judge(const struct check_opts *o, struct check_run *r)
{
	const struct audit *a = &r->a;
	const struct rating *rt = rating_resolve(a->er.circuit, o->parts, o->bom, a->annots,
						 a->nannots, a->ar, r->d);
	r->f.ratings = rt;
	int sim = o->verify && (!o->verify_max_parts ||
				nl_part_count(a->er.circuit) <= o->verify_max_parts);
	return rt && stress_run(a, rt, r->profile, a->ar, &r->sr) &&
	       simulate_unproven(o, r) && hull_run(a, r->profile, a->ar, &r->sr) &&
	       stress_refigure_droop(&r->sr) &&
	       current_run(a, rt, profile_ambient(r->profile, NAN), a->ar, &r->sr) &&
	       discharge_run(a, r->profile, a->ar, &r->sr) &&
	       (!sim || verify_run(a, r->profile, &o->verify_lim, a->ar, &r->sr)) &&
	       rules_run(a, rt, r->profile, &r->sr, a->ar, &r->rr) &&
	       current_judge(a, rt, r->profile, &r->sr, a->ar, &r->rr) &&
	       defects_run(a, rt, &r->sr, a->ar, &r->rr) &&
	       waiver_apply(a, o->waivers, o->today, a->ar, &r->rr);
}

enum check_status check_file_run(const char *path, const struct check_opts *o,
				 const struct hr_alloc *hook, struct check_run *r)
{
	assert(o && o->profile && o->today);
	memset(r, 0, sizeof *r);
	r->profile = o->profile;
	r->f = (struct check_file){path, &r->a, NULL, NULL, &r->sr, &r->rr, NULL, 0, o->baseline != NULL};
	r->ar = arena_create(hook);
	r->d = r->ar ? diag_create(r->ar, o->max_errors ? o->max_errors : 50) : NULL;
	if (!r->d)
		return r->status = CHECK_OOM;
	r->f.d = r->d;
	enum audit_status st = audit_file(path, &o->audit, hook, r->d, &r->a);
	r->status = st == AUDIT_OK ? CHECK_OK : st == AUDIT_OOM ? CHECK_OOM : CHECK_ERRORS;
	if (r->status == CHECK_OK && !o->profile_fixed && !file_profile(o, r))
		r->status = CHECK_OOM;
	if (r->status == CHECK_OK && !at_ambient(o, r))
		r->status = CHECK_OOM;
	if (r->status == CHECK_OK)
		waiver_check_rules(r->a.annots, r->a.nannots, r->d);
	if (r->status == CHECK_OK && !judge(o, r))
		r->status = CHECK_OOM;
	if (r->status == CHECK_OK)
		r->f.caution = file_caution(r, path);
	if (r->status == CHECK_OK && o->baseline)
		r->f.baselined = baseline_filter(o->baseline, path, &r->rr, r->a.ar);
	if (r->status == CHECK_ERRORS)
		r->a.analysed = 0;
	return r->status;
}

void check_free(struct check_run *r)
{
	if (r->d)
		audit_free(&r->a);
	diag_destroy(r->d);
	arena_destroy(r->ar);
	r->d = NULL;
	r->ar = NULL;
}

int check_worst_level(const struct check_run *r)
{
	int level = -1;
	for (size_t i = 0; i < r->rr.n; i++)
		if (!r->rr.f[i].waived && (int)r->rr.f[i].rule->severity > level)
			level = (int)r->rr.f[i].rule->severity;
	return level;
}

/* A parts-table row that rated nothing in any file is a rating the user
 * believes applies and that applies nowhere: usually a misspelt or renamed
 * reference, whose part is then judged without it. */
static int unmatched_rows(const struct rating_table *t, struct arena *ar,
			  struct rules_result *out)
{
	for (size_t k = 0; k < rating_table_rows(t); k++) {
		const char *ref;
		struct diag_loc loc;
		if (rating_table_row(t, k, &ref, &loc))
			continue;
		struct finding *g = rules_add(out, ar, RULE_PARTS_UNMATCHED);
		if (!g)
			return 0;
		char msg[256];
		snprintf(msg, sizeof msg, "'%.80s' matches no capacitor or diode in any file checked: "
			 "this parts-table row rates nothing", ref);
		g->loc = loc;
		g->subject = *ref ? ref : NULL;
		g->message = arena_strdup(ar, *ref ? msg : "this parts-table row has no ref: it rates nothing");
		if (!g->message)
			return 0;
		g->fix = "correct the ref (a part path or glob, as the stress table prints it) or delete the row";
	}
	return 1;
}

/* A BOM designator that no file has, or a BOM row whose designators
 * cannot be read: the same concern as an unmatched parts-table row. */
static int unmatched_bom(const struct bom *b, struct arena *ar, struct rules_result *out)
{
	for (size_t k = 0; k < bom_unused_count(b); k++) {
		char msg[512];
		const char *subject;
		struct diag_loc loc;
		if (!bom_unused(b, k, msg, sizeof msg, &subject, &loc))
			continue;
		struct finding *g = rules_add(out, ar, RULE_PARTS_UNMATCHED);
		if (!g)
			return 0;
		g->loc = loc;
		g->subject = subject;
		g->message = arena_strdup(ar, msg);
		if (!g->message)
			return 0;
		g->fix = "correct the designator to the part's name in the netlist (as the stress table "
			 "prints it) or leave the part out of the BOM given to --bom";
	}
	return 1;
}

int check_batch_end(const struct check_opts *o, struct arena *ar,
		    struct rules_result *out)
{
	return unmatched_rows(o->parts, ar, out) && unmatched_bom(o->bom, ar, out) &&
	       waiver_unused(o->waivers, ar, out);
}
