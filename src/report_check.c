/* report_check.c: check reports. Text: one block per finding (location,
 * severity, message, rule id; then where the number comes from, the rating
 * and limit, the fix), a stress table, a summary. JSON: docs/design.md §10 shape. */
#include "report_check.h"
#include "report_formats.h"

#include <math.h>
#include <string.h>

#include "num.h"
#include "report_parts.h"
#include "report_topo.h"
#include "version.h"

static const char *sev_name(enum diag_severity s)
{
	return diag_severity_name(s);
}

void report_totals_count(struct check_totals *t, const struct rules_result *r)
{
	for (size_t i = 0; r && i < r->n; i++) {
		if (r->f[i].waived)
			continue;
		size_t k = (size_t)(r->f[i].rule - rules_table);
		if (k < TOTALS_RULES)
			t->per_rule[k]++;
		switch (r->f[i].rule->severity) {
		case DIAG_ERROR: t->errors++; break;
		case DIAG_WARNING: t->warnings++; break;
		default: t->notes++; break;
		}
	}
}

/* ---- text ---- */

static void text_finding(FILE *out, const struct diag_sink *d,
			 const struct finding *g, int color)
{
	/* bold red errors, yellow warnings, blue notes */
	static const char *const paint[] = {"\033[1;34m", "\033[1;33m", "\033[1;31m"};
	fprintf(out, "%s:%u:%u: %s%s%s: %s [%s]%s\n", diag_file_name(d, g->loc.file),
		g->loc.line, g->loc.col, color ? paint[g->rule->severity] : "",
		sev_name(g->rule->severity), color ? "\033[0m" : "", g->message, g->rule->id,
		g->waived ? " (waived)" : "");
	if (g->waived && g->waiver)
		fprintf(out, "    waived: %s\n", g->waiver);
	if (g->computation)
		fprintf(out, "    how:    %s\n", g->computation);
	if (g->limits)
		fprintf(out, "    limits: %s\n", g->limits);
	if (g->fix)
		fprintf(out, "    fix:    %s\n", g->fix);
}

static const char *qty_unit(const struct stress *s)
{
	return stress_qty_unit(s->qty);
}

/* The --verify line: how the simulation ran, or why it did not. */
static void text_verify(FILE *out, const struct stress_verify *v)
{
	if (!v)
		return;
	if (!v->simulated) {
		fprintf(out, "  not simulated (--verify): %s\n", v->why ? v->why : "?");
		return;
	}
	char per[24];
	num_format_eng(v->period, "s", per, sizeof per);
	fprintf(out, "  simulated (--verify): %s after %u periods of %s, %zu capacitors started "
		     "at the analysis's best-case voltages, last period's change %.1e; %zu stresses "
		     "confirmed (within %.0f %% below their bounds), %zu hold further below, %zu above their bounds\n",
		v->settled ? "steady" : "NOT steady (cap reached)", v->periods, per, v->started,
		v->residual, v->confirmed, 100 * STRESS_CONFIRM_BAND, v->holds, v->gaps);
	if (v->left_out)
		fprintf(out, "  left open in the simulation (no solver model): %s; %zu stresses "
			     "beside them not compared\n", v->left_out_names, v->uncompared);
	if (v->slow)
		fprintf(out, "  slow rails (--verify): %s held at their lowest and highest and moved "
			     "between them (quasi-static)\n", v->slow_names);
	if (v->corners == 2)
		fprintf(out, "  corners (--verify): amplitudes at +tol with the offsets and rails at the "
			     "top and at the bottom of their band\n");
	if (v->powerup)
		fprintf(out, "  power-up (--verify): %u periods from the zero state; %zu stresses peak "
			     "above their steady state\n", v->powerup_periods, v->powerup_above);
}

/* The surge line: how the switch-on was simulated, or why not; then one
 * line per simulated pulse (docs/check.md, "Power-up surge"). */
static void text_surge(FILE *out, const struct check_file *f)
{
	const struct stress_surge *sg = f->stress->surge;
	if (!sg)
		return;
	char per[24], span[24];
	num_format_eng(sg->period, "s", per, sizeof per);
	num_format_eng(sg->span, "s", span, sizeof span);
	if (!sg->simulated) {
		fprintf(out, "  surge not simulated: %s; the analytic bounds (peak drive over the series "
			     "resistance) stand\n",
			sg->why ? sg->why : "?");
		return;
	}
	fprintf(out, "  surge (simulated): %u switch-on instant%s from the zero state at the high "
		     "corner, %s each\n",
		sg->instants, sg->instants == 1 ? " (as written)" : "s", span);
	for (size_t i = 0; i < f->stress->n; i++) {
		const struct stress *s = &f->stress->s[i];
		char pk[24], w[24], an[24], at[64] = "";
		if (s->qty != SQ_SURGE || !isfinite(s->surge_i2t))
			continue;
		num_format_eng(s->worst, "A", pk, sizeof pk);
		num_format_eng(s->surge_width, "s", w, sizeof w);
		num_format_eng(s->analytic, "A", an, sizeof an);
		if (isfinite(s->surge_phase))
			snprintf(at, sizeof at, ", on at %.0f deg of %s", s->surge_phase, per);
		fprintf(out, "    %s: pulse %s peak, %s wide (half-sine), I2t %.4g A^2 s%s; analytic "
			     "bound %s\n",
			nl_part_at(f->a->er.circuit, s->part)->path, pk, w, s->surge_i2t,
			at, isfinite(s->analytic) ? an : "none");
	}
}

static void text_table(FILE *out, const struct check_file *f)
{
	const struct stress_result *sr = f->stress;
	const struct nl_circuit *c = f->a->er.circuit;
	if (!sr)
		return;
	text_verify(out, sr->verify);
	text_surge(out, f);
	if (sr->n == 0)
		return;
	char cur[512];
	fprintf(out, "  %s\n", report_currents_line(f, cur, sizeof cur));
	size_t w = 4;
	for (size_t i = 0; i < sr->n; i++) {
		size_t l = strlen(nl_part_at(c, sr->s[i].part)->path);
		w = l > w ? l : w;
	}
	int sim = sr->verify && sr->verify->simulated;
	fprintf(out, "  %-*s  %-4s %-15s %-38s %11s %11s %10s %6s %-9s%s\n", (int)w, "part", "in",
		"stress", "role", "worst", "best", "rating", "ratio", "basis",
		sim ? "   simulated" : "");
	for (size_t i = 0; i < sr->n; i++) {
		const struct stress *s = &sr->s[i];
		const struct nl_part *p = nl_part_at(c, s->part);
		const struct rating *r = &f->ratings[s->part];
		double rated = stress_rating(r, s->qty)->value;
		char st[16] = "-", wv[24] = "unbounded", bv[24] = "-", rv[24] = "-", ratio[16] = "-";
		if (stress_qty_is_flow(s->qty))
			snprintf(wv, sizeof wv, "-"); /* the currents line says why */
		if (s->structure >= 0)
			snprintf(st, sizeof st, "S%d", s->structure + 1);
		if (s->bounded && isfinite(s->worst))
			num_format_eng(s->worst, qty_unit(s), wv, sizeof wv);
		if (s->bounded && isfinite(s->best) && stress_qty_is_voltage(s->qty))
			num_format_eng(s->best, qty_unit(s), bv, sizeof bv);
		if (!isnan(rated))
			num_format_eng(rated, qty_unit(s), rv, sizeof rv);
		if (isfinite(stress_ratio(s, r)))
			snprintf(ratio, sizeof ratio, "%.0f%%", 100 * stress_ratio(s, r));
		char sv[24] = "-";
		if (isfinite(s->sim_worst))
			num_format_eng(s->sim_worst, qty_unit(s), sv, sizeof sv);
		fprintf(out, "  %-*s  %-4s %-15s %-38.38s %11s %11s %10s %6s %-9s", (int)w, p->path, st,
			stress_qty_name(s->qty),
			s->role[0] ? s->role : "-", wv, bv, rv, ratio, stress_basis_name(s->basis));
		if (sim)
			fprintf(out, " %11s%s", sv, stress_gap(s) ? " GAP" : s->sim_near_open ? " n/c" : "");
		fputc('\n', out);
	}
}

/* "mean 478.2 V, 477.9 V .. 478.6 V, ripple 700 mV p-p, 41.8 V below
 * the unloaded 520 V" */
static void text_corner(FILE *out, const struct stress_output_corner *c)
{
	char m[24], lo[24], hi[24], rp[24], sag[24], un[24];
	num_format_eng(c->mean, "V", m, sizeof m);
	num_format_eng(c->min, "V", lo, sizeof lo);
	num_format_eng(c->max, "V", hi, sizeof hi);
	num_format_eng(c->max - c->min, "V", rp, sizeof rp);
	fprintf(out, "mean %s, %s .. %s, ripple %s p-p", m, lo, hi, rp);
	if (isfinite(c->unloaded)) {
		num_format_eng(fabs(c->unloaded - c->mean), "V", sag, sizeof sag);
		num_format_eng(c->unloaded, "V", un, sizeof un);
		fprintf(out, ", %s %s the unloaded %s", sag,
			fabs(c->mean) <= fabs(c->unloaded) ? "short of" : "beyond", un);
	}
}

/* The loaded output line (docs/check.md, "Loaded outputs"). */
static void text_output(FILE *out, const struct check_file *f, const struct stress_struct *x)
{
	const struct stress_output *o = &x->out;
	const struct nl_circuit *c = f->a->er.circuit;
	char ld[24], lo[24], hi[24];
	if (!o->loaded)
		return;
	num_format_eng(x->load_r, "ohm", ld, sizeof ld);
	fprintf(out, "     output v(%s", nl_node_at(c, o->pos)->name);
	if (o->neg != NL_GROUND)
		fprintf(out, ", %s", nl_node_at(c, o->neg)->name);
	fprintf(out, ") under its %s load", ld);
	if (!o->simulated) {
		num_format_eng(o->lo.unloaded, "V", lo, sizeof lo);
		num_format_eng(o->hi.unloaded, "V", hi, sizeof hi);
		fprintf(out, ": not simulated: %s; the analysis, unloaded with ideal diodes, gives %s "
			     "at the low corner, %s at the high\n",
			o->why ? o->why : "?", lo, hi);
		return;
	}
	fputs(", simulated with the diodes as modelled: low corner ", out);
	text_corner(out, &o->lo);
	fputs("; high corner ", out);
	text_corner(out, &o->hi);
	fputc('\n', out);
}

static void text_structs(FILE *out, const struct check_file *f)
{
	const struct audit *a = f->a;
	for (size_t i = 0; i < a->topo.n; i++) {
		const struct topo_struct *t = &a->topo.s[i];
		const struct stress_struct *x = &f->stress->st[i];
		fprintf(out, "  S%zu %s", i + 1, topo_kind_name(t->kind));
		if (t->kind == TK_LADDER || t->kind == TK_PUMP)
			fprintf(out, ", %g stages", t->stages);
		if (t->output != NL_NONE)
			fprintf(out, ", output %s", nl_node_at(a->er.circuit, t->output)->name);
		fputc('\n', out);
		if (t->kind == TK_LADDER && x->ladder_i > 0) {
			char i_[24], d_[24], r_[24];
			num_format_eng(x->ladder_i, "A", i_, sizeof i_);
			num_format_eng(x->ladder_drop, "V", d_, sizeof d_);
			num_format_eng(x->ladder_ripple, "V", r_, sizeof r_);
			fprintf(out, "     under its load (%s): drop %s, ripple %s peak-to-peak, best stage count %.1f\n",
				i_, d_, r_, x->ladder_nopt);
		}
		if (x->droop_v > 0) {
			char d_[24];
			num_format_eng(x->droop_v, "V", d_, sizeof d_);
			fprintf(out, "     clamp droop under its load: %s per period (%.2f%% of the swing)\n",
				d_, 100 * x->droop_frac);
		}
		if (x->bias_share < 1 && (x->droop_v > 0 || x->ladder_i > 0))
			fprintf(out, "     with the capacitance left under DC bias: down to %.0f%% of "
				     "nominal (c_bias)%s\n", 100 * x->bias_share,
				x->bias_past ? "; a worst voltage lies past the end of its curve" : "");
		text_output(out, f, x);
	}
}

static void text_file(FILE *out, const struct check_file *f,
		      const struct profile *p, const struct check_totals *t)
{
	if (!f->a->analysed) {
		char why[64];
		fprintf(out, "%s: not checked: %s\n", f->path, report_not_checked(f, why, sizeof why));
		report_text_diags(out, f);
		return;
	}
	size_t n = f->rules->n, nd = report_diag_n(f);
	char msgs[48] = "";
	if (nd)
		snprintf(msgs, sizeof msgs, ", %zu netlist message%s", nd, nd == 1 ? "" : "s");
	if (!t->quiet)
		fprintf(out, "%s: %zu structure%s, %zu finding%s%s (profile %s%s)\n", f->path,
			f->a->topo.n, f->a->topo.n == 1 ? "" : "s", n, n == 1 ? "" : "s", msgs,
			p->name, profile_draft(p, &(struct profile_status){0}) ? ", draft" : "");
	report_text_diags(out, f);
	for (size_t i = 0; i < n; i++)
		text_finding(out, f->d, &f->rules->f[i], t->color);
	if (!t->quiet) {
		text_structs(out, f);
		text_table(out, f);
	}
	if (f->caution)
		fprintf(out, "%s\n", f->caution);
}

/* ---- JSON ---- */

static void jnum(FILE *out, double v)
{
	if (isnan(v) || isinf(v))
		fputs("null", out);
	else
		fprintf(out, "%.10g", v);
}

static void jstr(FILE *out, const char *s)
{
	if (s)
		report_json_string(out, s);
	else
		fputs("null", out);
}

/* A surge's pulse and the rating's (docs/check.md, "Power-up surge"). */
static void json_surge(FILE *out, const struct stress *s, const struct rating *r)
{
	fputs(", \"surge_i2t\": ", out);
	jnum(out, s->surge_i2t);
	fputs(", \"surge_width\": ", out);
	jnum(out, s->surge_width);
	fputs(", \"surge_phase\": ", out);
	jnum(out, s->surge_phase);
	fputs(", \"surge_judged\": ", out);
	jnum(out, stress_surge_judged(s, r));
	fputs(", \"rating_surge_width\": ", out);
	jnum(out, stress_surge_width(r));
	fputs(", \"rating_i2t\": ", out);
	jnum(out, stress_surge_rated_i2t(r));
}

/* A life stress's terms (docs/life.md). */
static void json_life(FILE *out, const struct stress *s, const struct rating *r)
{
	fputs(", \"life\": {\"ambient_c\": ", out);
	jnum(out, s->life_ambient_c);
	fputs(", \"core_c\": ", out);
	jnum(out, s->bounded ? s->life_core_c : NAN);
	fputs(", \"rise_c\": ", out);
	jnum(out, s->bounded ? s->life_rise_c : NAN);
	fputs(", \"hotter_10c_h\": ", out);
	jnum(out, s->bounded ? s->life_hotter_h : NAN);
	fputs(", \"rated_h\": ", out);
	jnum(out, r->life_h.value);
	fputs(", \"rated_c\": ", out);
	jnum(out, r->life_temp.value);
	fprintf(out, ", \"heating_included\": %s, \"capped\": %s, \"core_above_rated\": %s}",
		s->life_flags & LIFE_HEATED ? "true" : "false",
		s->life_flags & LIFE_CAPPED ? "true" : "false",
		s->life_flags & LIFE_OVER_RATED ? "true" : "false");
}

static void json_stress(FILE *out, const struct check_file *f,
			const struct stress *s)
{
	const struct nl_part *p = nl_part_at(f->a->er.circuit, s->part);
	const struct rating *r = &f->ratings[s->part];
	const struct rating_field *rf = stress_rating(r, s->qty);
	char sid[16];
	snprintf(sid, sizeof sid, "S%d", s->structure + 1);
	fputs("{\"part\": ", out);
	jstr(out, p->path);
	fprintf(out, ", \"element\": \"%c\", \"structure\": ", report_element(p));
	jstr(out, s->structure >= 0 ? sid : NULL);
	fputs(", \"role\": ", out);
	jstr(out, s->role[0] ? s->role : NULL);
	fprintf(out, ", \"quantity\": \"%s\", \"bounded\": %s, \"best\": ",
		stress_qty_name(s->qty), s->bounded ? "true" : "false");
	jnum(out, s->bounded ? s->best : NAN);
	fputs(", \"worst\": ", out);
	jnum(out, s->bounded ? s->worst : NAN);
	fprintf(out, ", \"unit\": \"%s\", \"corner\": ", stress_qty_unit(s->qty));
	jstr(out, s->bounded ? s->corner : NULL);
	fprintf(out, ", \"basis\": \"%s\", \"unproven\": ", stress_basis_name(s->basis));
	jstr(out, s->unproven);
	fputs(", \"analytic\": ", out);
	jnum(out, s->analytic);
	fputs(", \"kind\": ", out);
	jstr(out, r->kind);
	fputs(", \"rating\": ", out);
	jnum(out, rf->value);
	fputs(", \"rating_from\": ", out);
	jstr(out, rf->from);
	fputs(", \"ratio\": ", out);
	jnum(out, stress_ratio(s, r));
	if (s->qty == SQ_LIFE)
		json_life(out, s, r);
	if (s->qty == SQ_SURGE) {
		fputs(", \"series_r\": ", out);
		jnum(out, s->series_r);
		json_surge(out, s, r);
	}
	if (p->kind == NL_C && s->bounded) {
		fputs(", \"energy\": ", out);
		jnum(out, s->energy_j);
	}
	if (f->stress->verify) {
		fputs(", \"simulated\": ", out);
		jnum(out, s->sim_worst);
		fputs(", \"simulated_powerup\": ", out);
		jnum(out, s->sim_powerup);
		fprintf(out, ", \"analysis_gap\": %s, \"compared\": %s", stress_gap(s) ? "true" : "false",
			isfinite(s->sim_worst) && !s->sim_near_open ? "true" : "false");
	}
	fputc('}', out);
}

static void json_finding(FILE *out, const struct diag_sink *d,
			 const struct finding *g)
{
	fprintf(out, "{\"rule\": \"%s\", \"severity\": \"%s\", \"part\": ", g->rule->id,
		sev_name(g->rule->severity));
	jstr(out, g->subject);
	fputs(", \"file\": ", out);
	jstr(out, diag_file_name(d, g->loc.file));
	fprintf(out, ", \"line\": %u, \"col\": %u, \"message\": ", g->loc.line, g->loc.col);
	jstr(out, g->message);
	fputs(", \"computation\": ", out);
	jstr(out, g->computation);
	fputs(", \"limits\": ", out);
	jstr(out, g->limits);
	fputs(", \"fix\": ", out);
	jstr(out, g->fix);
	fputs(", \"worst\": ", out);
	jnum(out, g->worst);
	fputs(", \"limit\": ", out);
	jnum(out, g->limit);
	fputs(", \"rating\": ", out);
	jnum(out, g->rating);
	fprintf(out, ", \"unit\": \"%s\", \"waived\": %s}", g->unit, g->waived ? "true" : "false");
}

/* One corner of a loaded output: {"mean": ..., "ripple": ...}. */
static void json_output_corner(FILE *out, const struct stress_output_corner *c)
{
	fputs("{\"mean\": ", out);
	jnum(out, c->mean);
	fputs(", \"min\": ", out);
	jnum(out, c->min);
	fputs(", \"max\": ", out);
	jnum(out, c->max);
	fputs(", \"ripple\": ", out);
	jnum(out, c->max - c->min);
	fputs(", \"unloaded\": ", out);
	jnum(out, c->unloaded);
	fputs(", \"sag\": ", out);
	jnum(out, fabs(c->unloaded) - fabs(c->mean));
	fprintf(out, ", \"periods\": %u}", c->periods);
}

/* The ladder regulation formulas beside the simulation, or null. */
static void json_formula(FILE *out, const struct topo_struct *t, const struct stress_struct *x)
{
	if (t->kind != TK_LADDER || !(x->ladder_i > 0)) {
		fputs("null", out);
		return;
	}
	fputs("{\"current\": ", out);
	jnum(out, x->ladder_i);
	fputs(", \"drop\": ", out);
	jnum(out, x->ladder_drop);
	fputs(", \"ripple\": ", out);
	jnum(out, x->ladder_ripple);
	fputs(", \"best_stages\": ", out);
	jnum(out, x->ladder_nopt);
	fputc('}', out);
}

/* "output_simulation" and "loaded_outputs" (docs/reports.md). */
static void json_outputs(FILE *out, const struct check_file *f)
{
	const struct stress_loadsim *ls = f->a->analysed ? f->stress->loadsim : NULL;
	const struct nl_circuit *c = f->a->er.circuit;
	if (ls) {
		fprintf(out, ",\n      \"output_simulation\": {\"simulated\": %s, \"why\": ",
			ls->simulated ? "true" : "false");
		jstr(out, ls->why);
		fprintf(out, ", \"runs\": %u}", ls->runs);
	}
	fputs(",\n      \"loaded_outputs\": [", out);
	size_t n = f->a->analysed ? f->a->topo.n : 0, k = 0;
	for (size_t i = 0; i < n; i++) {
		const struct stress_struct *x = &f->stress->st[i];
		const struct stress_output *o = &x->out;
		if (!o->loaded)
			continue;
		fprintf(out, "%s{\"structure\": \"S%zu\", \"kind\": \"%s\", \"output\": ",
			k++ ? ",\n        " : "\n        ", i + 1, topo_kind_name(f->a->topo.s[i].kind));
		jstr(out, nl_node_at(c, o->pos)->name);
		fputs(", \"output_low\": ", out);
		jstr(out, o->neg != NL_GROUND ? nl_node_at(c, o->neg)->name : NULL);
		fputs(", \"load_r\": ", out);
		jnum(out, x->load_r);
		fprintf(out, ", \"simulated\": %s, \"why\": ", o->simulated ? "true" : "false");
		jstr(out, o->simulated ? NULL : o->why);
		fputs(",\n          \"low\": ", out);
		json_output_corner(out, &o->lo);
		fputs(",\n          \"high\": ", out);
		json_output_corner(out, &o->hi);
		fputs(",\n          \"formula\": ", out);
		json_formula(out, &f->a->topo.s[i], x);
		fputc('}', out);
	}
	fputs("]", out);
}

static void json_file(FILE *out, const struct check_file *f, const struct profile *p)
{
	fputs("    {\"path\": ", out);
	jstr(out, f->path);
	fputs(", \"caution\": ", out);
	jstr(out, f->caution);
	fputs(", \"profile\": ", out);
	jstr(out, p->name);
	fprintf(out, ", \"profile_draft\": %s, ",
		profile_draft(p, &(struct profile_status){0}) ? "true" : "false");
	report_json_diags(out, f);
	fputs(",\n      ", out);
	report_topo_json_structures(out, f->a, f->d);
	const struct stress_verify *v = f->a->analysed ? f->stress->verify : NULL;
	if (v) {
		fprintf(out, ",\n      \"verify\": {\"simulated\": %s, \"reason\": ",
			v->simulated ? "true" : "false");
		jstr(out, v->simulated ? NULL : v->why);
		fprintf(out, ", \"settled\": %s, \"periods\": %u, \"period\": ",
			v->settled ? "true" : "false", v->periods);
		jnum(out, v->period);
		fprintf(out, ", \"residual\": ");
		jnum(out, v->residual);
		fprintf(out, ", \"started_from_analysis\": %zu, \"confirmed\": %zu, \"holds\": %zu, "
			     "\"gaps\": %zu, \"uncompared\": %zu, \"points\": %lu, \"unknowns\": %zu, "
			     "\"left_out\": %zu, \"left_out_names\": ",
			v->started, v->confirmed, v->holds, v->gaps, v->uncompared, v->points, v->unknowns,
			v->left_out);
		jstr(out, v->left_out ? v->left_out_names : NULL);
		fprintf(out, ", \"powerup\": %s, \"powerup_periods\": %u, \"powerup_above\": %zu, "
			     "\"corners\": %u, \"slow_rails\": ",
			v->powerup ? "true" : "false", v->powerup_periods, v->powerup_above, v->corners);
		jstr(out, v->slow ? v->slow_names : NULL);
		fputc('}', out);
	}
	const struct stress_fallback *fb = f->a->analysed ? f->stress->fallback : NULL;
	if (fb) {
		fprintf(out, ",\n      \"fallback\": {\"runs\": %u, \"unsettled\": %u, \"given\": %zu, "
			     "\"left\": %zu, \"why\": ", fb->runs, fb->unsettled, fb->given, fb->left);
		jstr(out, fb->why);
		fprintf(out, ", \"currents\": {\"simulated\": %s, \"period\": ", fb->flow ? "true" : "false");
		jnum(out, fb->flow ? fb->flow_period : NAN);
		fputs(", \"corner\": ", out);
		jstr(out, fb->flow ? fb->flow_corner : NULL);
		fputs(", \"why\": ", out);
		jstr(out, fb->flow ? NULL : fb->flow_why);
		fputs("}}", out);
	}
	const struct stress_surge *sg = f->a->analysed ? f->stress->surge : NULL;
	if (sg) {
		fprintf(out, ",\n      \"surge_simulation\": {\"simulated\": %s, \"why\": ",
			sg->simulated ? "true" : "false");
		jstr(out, sg->why);
		fprintf(out, ", \"runs\": %u, \"instants\": %u, \"period\": ", sg->runs, sg->instants);
		jnum(out, sg->period);
		fputs(", \"span\": ", out);
		jnum(out, sg->span);
		fputc('}', out);
	}
	json_outputs(out, f);
	fputs(",\n      \"stresses\": [", out);
	size_t n = f->a->analysed ? f->stress->n : 0;
	for (size_t i = 0; i < n; i++) {
		fputs(i ? ",\n        " : "\n        ", out);
		json_stress(out, f, &f->stress->s[i]);
	}
	fputs("],\n      \"findings\": [", out);
	n = f->a->analysed ? f->rules->n : 0;
	for (size_t i = 0; i < n; i++) {
		fputs(i ? ",\n        " : "\n        ", out);
		json_finding(out, f->d, &f->rules->f[i]);
	}
	fputs("]}", out);
}

/* Whether the profile is a draft, and why (docs/profiles.md, "Drafts"). */
static void json_profile_status(FILE *out, const struct profile *p)
{
	struct profile_status st;
	int draft = profile_draft(p, &st);
	fprintf(out, "{\"draft\": %s, \"values\": %zu, \"from_memory\": %zu, \"unsourced\": %zu, \"first\": ",
		draft ? "true" : "false", st.values, st.from_memory, st.unsourced);
	jstr(out, st.first);
	fputs(", \"first_line\": ", out);
	if (st.first)
		fprintf(out, "%u}", st.first_line);
	else
		fputs("null}", out);
}

static void json_head(FILE *out, const struct profile *p, const struct check_totals *t)
{
	fputs("{\"schema\": 1, \"tool\": {\"name\": \"headroom\", \"version\": \"" HEADROOM_BUILD_VERSION "\"},\n", out);
	if (t->paths_from) {
		fputs("  \"paths_from\": ", out);
		jstr(out, t->paths_from);
		fputs(",\n", out);
	}
	fputs("  \"profile\": ", out);
	jstr(out, p->name);
	fputs(", \"profile_status\": ", out);
	json_profile_status(out, p);
	fputs(", \"assumptions\": {\"source_tol_default\": ", out);
	jnum(out, profile_value(p, "source_tol", NULL));
	fputs(", \"hazard_voltage\": ", out);
	jnum(out, profile_hazard(p));
	fputs(", \"ambient_c\": ", out);
	jnum(out, profile_ambient(p, NAN));
	fputs(", \"life_required_h\": ", out);
	jnum(out, profile_value(p, "life_required", NULL));
	fputs(", \"diodes\": \"ideal for the worst case; forward drop at 1 mA for the best\", "
	      "\"load\": \"none for node waveforms; loads used for droop, ladder regulation and discharge\"},\n"
	      "  \"files\": [\n", out);
}

/* Inserts one part into the top list, kept sorted by ratio (descending);
 * an equal ratio goes after the ones already there. */
static void top_add(struct check_totals *t, const struct totals_part *x)
{
	if (!(x->ratio > 0))
		return;
	size_t k = t->ntop;
	if (k == TOTALS_TOP) {
		if (!(x->ratio > t->top[k - 1].ratio))
			return;
		k--;
	} else {
		t->ntop++;
	}
	while (k > 0 && x->ratio > t->top[k - 1].ratio) {
		t->top[k] = t->top[k - 1];
		k--;
	}
	t->top[k] = *x;
}

static void top_file(struct check_totals *t, const struct check_file *f)
{
	for (size_t i = 0; i < f->stress->n; i++) {
		const struct stress *s = &f->stress->s[i];
		const struct rating *r = &f->ratings[s->part];
		double ratio = stress_ratio(s, r);
		if (!s->bounded || !isfinite(ratio))
			continue;
		struct totals_part x;
		snprintf(x.file, sizeof x.file, "%s", f->path);
		snprintf(x.part, sizeof x.part, "%s", nl_part_at(f->a->er.circuit, s->part)->path);
		x.qty = stress_qty_name(s->qty);
		x.ratio = ratio;
		top_add(t, &x);
	}
}

int report_totals_merge(struct check_totals *t, const struct check_totals *j)
{
	t->files += j->files;
	t->read_errors += j->read_errors;
	t->read_warnings += j->read_warnings;
	t->read_notes += j->read_notes;
	t->errors += j->errors;
	t->warnings += j->warnings;
	t->notes += j->notes;
	t->netlist_errors += j->netlist_errors;
	t->baselined += j->baselined;
	t->has_baseline |= j->has_baseline;
	t->max_voltage = fmax(t->max_voltage, j->max_voltage);
	for (size_t i = 0; i < TOTALS_RULES; i++)
		t->per_rule[i] += j->per_rule[i];
	for (size_t i = 0; i < j->ntop; i++)
		top_add(t, &j->top[i]);
	return report_totals_defer(t, j->deferred, j->ndeferred);
}

void report_check_file(FILE *out, enum report_check_format fmt,
		       const struct check_file *f, const struct profile *p,
		       int first, struct check_totals *t)
{
	t->files++;
	t->baselined += f->baselined;
	t->has_baseline |= f->has_baseline;
	t->read_errors += report_diag_count(f, DIAG_ERROR);
	t->read_warnings += report_diag_count(f, DIAG_WARNING);
	t->read_notes += report_diag_count(f, DIAG_NOTE);
	if (!f->a->analysed)
		t->netlist_errors++;
	else {
		report_totals_count(t, f->rules);
		top_file(t, f);
		t->max_voltage = fmax(t->max_voltage, f->stress->max_voltage);
	}
	switch (fmt) {
	case RC_TEXT:
		if (!first && !t->quiet)
			fputc('\n', out);
		text_file(out, f, p, t);
		return;
	case RC_CSV:
		report_csv_file(out, f, p, first);
		return;
	case RC_JUNIT:
		report_junit_file(out, f, p, first);
		return;
	case RC_SARIF:
		report_sarif_file(out, f, p, first, t);
		return;
	case RC_HTML:
		report_html_file(out, f, p, first, t);
		return;
	default:
		break;
	}
	if (first)
		json_head(out, p, t);
	else
		fputs(",\n", out);
	json_file(out, f, p);
}

/* Across files: findings per rule and the most stressed parts. */
static void text_batch(FILE *out, const struct check_totals *t)
{
	int any = 0;
	for (size_t i = 0; i < rules_count && i < TOTALS_RULES; i++)
		if (t->per_rule[i])
			fprintf(out, "%s%s %zu", any++ ? ", " : "  by rule: ", rules_table[i].id,
				t->per_rule[i]);
	if (any)
		fputc('\n', out);
	if (t->ntop)
		fputs("  most stressed, by ratio to rating:\n", out);
	for (size_t i = 0; i < t->ntop; i++)
		fprintf(out, "    %5.0f%%  %s %s (%s)\n", 100 * t->top[i].ratio, t->top[i].file,
			t->top[i].part, t->top[i].qty);
}

/* The run's own findings (parts-table rows, file waivers), after the files. */
static void text_run(FILE *out, const struct check_totals *t)
{
	if (!t->run || t->run->n == 0)
		return;
	if (!t->quiet)
		fputc('\n', out);
	for (size_t i = 0; i < t->run->n; i++)
		text_finding(out, t->run_d, &t->run->f[i], t->color);
}

static void text_end(FILE *out, const struct profile *p, const struct check_totals *t,
		     int hazard)
{
	char draft[512];
	report_draft_line(draft, sizeof draft, p);
	text_run(out, t);
	if (t->quiet) {
		report_text_skipped(out, t);
		if (hazard)
			fprintf(out, "%s\n", check_caution);
		return;
	}
	if (t->nskipped && t->files)
		fputc('\n', out);
	report_text_skipped(out, t);
	fputc('\n', out);
	report_text_counts(out, t);
	if (t->has_baseline)
		fprintf(out, "  baseline: %zu known finding%s not shown\n", t->baselined,
			t->baselined == 1 ? "" : "s");
	if (t->files > 1)
		text_batch(out, t);
	if (draft[0])
		fprintf(out, "  %s\n", draft);
	if (hazard)
		fprintf(out, "\n%s\n", check_caution);
}

static void json_end(FILE *out, const struct profile *p, const struct check_totals *t,
		     int hazard)
{
	if (t->files == 0)
		json_head(out, p, t);
	fputs("\n  ],\n", out);
	report_json_skipped(out, t);
	fputs("  \"run_findings\": [", out);
	for (size_t i = 0; t->run && i < t->run->n; i++) {
		fputs(i ? ",\n    " : "\n    ", out);
		json_finding(out, t->run_d, &t->run->f[i]);
	}
	fprintf(out, "],\n  \"summary\": {\"files\": %zu, \"errors\": %zu, \"warnings\": %zu, \"notes\": %zu, \"netlist_errors\": %zu,\n    ",
		t->files, t->errors, t->warnings, t->notes, t->netlist_errors);
	report_json_counts(out, t);
	fputs(", \"baseline_hidden\": ", out);
	if (t->has_baseline)
		fprintf(out, "%zu", t->baselined);
	else
		fputs("null", out);
	fputs(", \"profile_draft\": ", out);
	fputs(profile_draft(p, &(struct profile_status){0}) ? "true" : "false", out);
	fputs(", \"max_voltage\": ", out);
	jnum(out, t->max_voltage);
	fputs(", \"caution\": ", out);
	jstr(out, hazard ? check_caution : NULL);
	fputs(",\n    \"per_rule\": {", out);
	for (size_t i = 0, n = 0; i < rules_count && i < TOTALS_RULES; i++)
		if (t->per_rule[i])
			fprintf(out, "%s\"%s\": %zu", n++ ? ", " : "", rules_table[i].id, t->per_rule[i]);
	fputs("},\n    \"most_stressed\": [", out);
	for (size_t i = 0; i < t->ntop; i++) {
		fputs(i ? ", {\"file\": " : "{\"file\": ", out);
		jstr(out, t->top[i].file);
		fputs(", \"part\": ", out);
		jstr(out, t->top[i].part);
		fprintf(out, ", \"quantity\": \"%s\", \"ratio\": ", t->top[i].qty);
		jnum(out, t->top[i].ratio);
		fputc('}', out);
	}
	fputs("]}\n}\n", out);
}

void report_check_end(FILE *out, enum report_check_format fmt,
		      const struct profile *p, const struct check_totals *t0)
{
	struct check_totals all = *t0, *t = &all;
	report_totals_count(t, t->run);
	double hz = profile_hazard(p);
	int hazard = !isnan(hz) && t->max_voltage > hz;
	switch (fmt) {
	case RC_CSV: report_csv_end(out, p, t); return;
	case RC_JUNIT: report_junit_end(out, p, t); return;
	case RC_SARIF: report_sarif_end(out, p, t); return;
	case RC_HTML: report_html_end(out, p, t); return;
	case RC_TEXT: text_end(out, p, t, hazard); return;
	default: json_end(out, p, t, hazard); return;
	}
}
