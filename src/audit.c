/* audit.c: the pipeline for one file, and the wiring of *@source lines to
 * voltage sources (by path or glob). */
#include "audit.h"

#include <math.h>
#include <string.h>

static void apply_source(struct audit *a, const struct annot *an,
			 struct diag_sink *d)
{
	const struct nl_circuit *c = a->er.circuit;
	int hit = 0;
	for (size_t i = 0; i < nl_part_count(c); i++) {
		const struct nl_part *p = nl_part_at(c, i);
		if ((p->kind != NL_V && p->kind != NL_I) || !annot_glob(an->target, p->path))
			continue;
		struct audit_source *s = &a->sources[i];
		const struct annot_kv *tol = annot_get(an, "tol");
		const struct annot_kv *mn = annot_get(an, "min"), *mx = annot_get(an, "max");
		if (tol)
			s->tol = tol->num;
		if (tol && (isnan(tol->num) || (tol->num >= 1 && !tol->percent))) {
			diag_add(d, DIAG_ERROR, "annotation", an->loc,
				 "*@source tol='%s': write a tolerance with %% (tol=10%%) or as a fraction below 1",
				 tol->text);
			s->tol = NAN;
		}
		if (mn && mx) {
			s->min = fmin(mn->num, mx->num);
			s->max = fmax(mn->num, mx->num);
		}
		s->from = an;
		hit = 1;
	}
	if (!hit)
		diag_add(d, DIAG_WARNING, "annotation", an->loc,
			 "*@source names '%s', which matches no source", an->target);
}

static int sources(struct audit *a, const struct audit_opts *o,
		   struct diag_sink *d)
{
	size_t np = nl_part_count(a->er.circuit);
	a->sources = arena_alloc(a->ar, (np + 1) * sizeof *a->sources);
	if (!a->sources)
		return 0;
	for (size_t i = 0; i < np; i++) {
		a->sources[i].tol = o ? o->source_tol : NAN;
		a->sources[i].min = a->sources[i].max = NAN;
		a->sources[i].from = NULL;
	}
	for (uint32_t i = 0; i < a->nannots; i++) {
		const struct annot *an = &a->annots[i];
		if (an->kind != AN_SOURCE)
			continue;
		const struct annot_kv *mn = annot_get(an, "min"), *mx = annot_get(an, "max");
		if ((mn == NULL) != (mx == NULL) || (mn && (isnan(mn->num) || isnan(mx->num)))) {
			diag_add(d, DIAG_ERROR, "annotation", an->loc,
				 "*@source needs both min= and max= as numbers, or neither");
			continue;
		}
		apply_source(a, an, d);
	}
	return 1;
}

static int analyse(struct audit *a)
{
	size_t np = nl_part_count(a->er.circuit);
	struct prop_range *rg = arena_alloc(a->ar, (np + 1) * sizeof *rg);
	if (!rg)
		return 0;
	for (size_t i = 0; i < np; i++) {
		rg[i].min = a->sources[i].min;
		rg[i].max = a->sources[i].max;
	}
	a->ranges = rg;
	if (!prop_run(a->er.circuit, rg, NULL, a->ar, &a->prop))
		return 0;
	if (!topo_find(a->er.circuit, &a->prop, a->ar, &a->topo))
		return 0;
	a->analysed = 1;
	return 1;
}

enum audit_status audit_file(const char *path, const struct audit_opts *o,
			     const struct hr_alloc *hook, struct diag_sink *d,
			     struct audit *a)
{
	memset(a, 0, sizeof *a);
	a->ar = arena_create(hook);
	if (!a->ar)
		return AUDIT_OOM;
	enum elab_status st = elab_file(path, o ? &o->elab : NULL, hook, d, &a->er);
	if (st == ELAB_OOM)
		return AUDIT_OOM;
	size_t before = diag_errors(d, UINT32_MAX);
	if (!annot_parse_all(&a->er, a->ar, d, &a->annots, &a->nannots) ||
	    !sources(a, o, d))
		return AUDIT_OOM;
	if (st == ELAB_ERRORS || diag_errors(d, UINT32_MAX) > before)
		return AUDIT_ERRORS;
	return analyse(a) ? AUDIT_OK : AUDIT_OOM;
}

void audit_free(struct audit *a)
{
	nl_destroy(a->er.circuit);
	arena_destroy(a->ar);
	memset(a, 0, sizeof *a);
}
