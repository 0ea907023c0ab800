/* report_html.c: one self-contained page (inline CSS and SVG, no script,
 * no network): summary counts, the findings, and per structure a sketch of
 * its chain of capacitors and diodes and plots of the steady-state voltage
 * across its most stressed parts over one drive period at the worst corner,
 * drawn against the rating and the profile's limit. */
#include "report_formats.h"


#include <math.h>
#include <string.h>

#include "num.h"

#define PLOT_POINTS STRESS_TRACE_POINTS
#define PLOTS_PER_STRUCT 8

static void x(FILE *out, const char *s)
{
	report_xml_text(out, s);
}

static void head(FILE *out, const struct profile *p)
{
	fputs("<!DOCTYPE html>\n<html lang=\"en\"><head><meta charset=\"utf-8\">\n"
	      "<meta name=\"viewport\" content=\"width=device-width, initial-scale=1\">\n"
	      "<title>headroom report</title>\n<style>\n"
	      "body{font:15px/1.45 system-ui,sans-serif;margin:1rem auto;max-width:70rem;padding:0 1rem;color:#1d2329;display:flex;flex-direction:column}\n"
	      "header{order:-2}#summary{order:-1}svg.sketch{width:auto;max-width:100%}\n"
	      "h1{font-size:1.5rem}h2{font-size:1.2rem;margin-top:2rem;border-bottom:2px solid #d8dde3}\n"
	      "h3{font-size:1.05rem}table{border-collapse:collapse;width:100%;margin:.5rem 0}\n"
	      "td,th{border-bottom:1px solid #e3e7ec;padding:.3rem .4rem;text-align:left;vertical-align:top}\n"
	      ".error{color:#b3261e;font-weight:600}.warning{color:#8a5a00;font-weight:600}.note{color:#2b5f9e}\n"
	      ".small{font-size:.85rem;color:#4a5560}.num{text-align:right;white-space:nowrap}\n"
	      ".plots{display:grid;grid-template-columns:repeat(auto-fill,minmax(18rem,1fr));gap:.8rem}\n"
	      "figure{margin:0;border:1px solid #e3e7ec;border-radius:6px;padding:.4rem}\n"
	      "figcaption{font-size:.85rem}svg{width:100%;height:auto}\n"
	      ".caution{border:2px solid #b3261e;padding:.6rem;border-radius:6px;background:#fff5f4}\n"
	      "@media print{.plots{grid-template-columns:1fr 1fr}body{max-width:none}}\n"
	      "@media (max-width:40rem){td,th{font-size:.85rem}}\n"
	      "</style></head><body>\n<header><h1>headroom: worst-case stress of diode-capacitor networks</h1>\n"
	      "<p class=\"small\">profile ", out);
	x(out, p->name);
	fputs(": ", out);
	x(out, p->description);
	fputs("</p></header>\n", out);
}

static void findings(FILE *out, const struct check_file *f)
{
	if (f->rules->n == 0) {
		fputs("<p>No findings.</p>\n", out);
		return;
	}
	fputs("<table><tr><th>part</th><th>finding</th></tr>\n", out);
	for (size_t i = 0; i < f->rules->n; i++) {
		const struct finding *g = &f->rules->f[i];
		const char *sev = diag_severity_name(g->rule->severity);
		fputs("<tr><td>", out);
		x(out, g->subject ? g->subject : "");
		fprintf(out, "<br><span class=\"small\">line %u</span></td><td><span class=\"%s\">%s</span> ",
			g->loc.line, sev, sev);
		x(out, g->message);
		fprintf(out, " <span class=\"small\">[%s]%s</span>", g->rule->id, g->waived ? " waived" : "");
		const char *parts[3] = {g->computation, g->limits, g->fix};
		const char *labels[3] = {"how", "limits", "fix"};
		for (int k = 0; k < 3; k++)
			if (parts[k]) {
				fprintf(out, "<br><span class=\"small\">%s: ", labels[k]);
				x(out, parts[k]);
				fputs("</span>", out);
			}
		fputs("</td></tr>\n", out);
	}
	fputs("</table>\n", out);
}

/* A sketch of the chain: a diode or capacitor symbol per part, in order,
 * each labelled, joined by a line (this project's own drawing). */
static void sketch(FILE *out, const struct check_file *f, const struct topo_struct *t)
{
	uint32_t n = t->nparts > 24 ? 24 : t->nparts;
	double w = 60.0 * n + 20 + (n < t->nparts ? 80 : 0);
	fprintf(out, "<svg class=\"sketch\" width=\"%.0f\" viewBox=\"0 0 %.0f 70\" role=\"img\" aria-label=\"sketch\">"
		"<line x1=\"10\" y1=\"30\" x2=\"%.0f\" y2=\"30\" stroke=\"#8895a2\"/>", w, w, w - 10);
	for (uint32_t i = 0; i < n; i++) {
		const struct nl_part *p = nl_part_at(f->a->er.circuit, t->parts[i].part);
		double cx = 40 + 60.0 * i;
		if (p->kind == NL_D)
			fprintf(out, "<polygon points=\"%.0f,20 %.0f,40 %.0f,30\" fill=\"#3d6fa8\"/>"
				"<line x1=\"%.0f\" y1=\"20\" x2=\"%.0f\" y2=\"40\" stroke=\"#3d6fa8\" stroke-width=\"3\"/>",
				cx - 9, cx - 9, cx + 7, cx + 8, cx + 8);
		else
			fprintf(out, "<rect x=\"%.0f\" y=\"18\" width=\"14\" height=\"24\" fill=\"#fff\"/>"
				"<line x1=\"%.0f\" y1=\"18\" x2=\"%.0f\" y2=\"42\" stroke=\"#a8533d\" stroke-width=\"3\"/>"
				"<line x1=\"%.0f\" y1=\"18\" x2=\"%.0f\" y2=\"42\" stroke=\"#a8533d\" stroke-width=\"3\"/>",
				cx - 7, cx - 4, cx - 4, cx + 4, cx + 4);
		fprintf(out, "<text x=\"%.0f\" y=\"60\" font-size=\"10\" text-anchor=\"middle\">", cx);
		x(out, p->path);
		fputs("</text>", out);
	}
	if (n < t->nparts)
		fprintf(out, "<text x=\"%.0f\" y=\"34\" font-size=\"11\">+%u more</text>",
			40 + 60.0 * n, t->nparts - n);
	fputs("</svg>\n", out);
}

static const struct stress *stress_of(const struct check_file *f, uint32_t part)
{
	for (size_t i = 0; i < f->stress->n; i++)
		if (f->stress->s[i].part == part && f->stress->s[i].qty != SQ_SURGE)
			return &f->stress->s[i];
	return NULL;
}

/* The voltage across part (reverse for diodes) at the worst tolerance
 * corner over one period, into v[PLOT_POINTS]; 0 if not settled. */
static int waveform(const struct check_file *f, const struct nl_part *p,
		    double period, double *v)
{
	const struct prop_result *r = &f->stress->runs[1]; /* amplitudes at +tol */
	const uint32_t *q = nl_pins(f->a->er.circuit, p);
	const struct prop_node *a = &r->nodes[q[0]], *b = &r->nodes[q[1]];
	if (a->state != PS_RESOLVED || b->state != PS_RESOLVED)
		return 0;
	/* v(pin 0) - v(pin 1), negated for a diode's reverse voltage; the
	 * constant at its largest magnitude (interval arithmetic) */
	double sgn = p->kind == NL_D ? -1 : 1;
	double hi = sgn > 0 ? a->f->hi - b->f->lo : b->f->hi - a->f->lo;
	double lo = sgn > 0 ? a->f->lo - b->f->hi : b->f->lo - a->f->hi;
	double c = p->kind == NL_D ? hi : (fabs(hi) > fabs(lo) ? hi : lo);
	for (int i = 0; i < PLOT_POINTS; i++) {
		double t = period * i / (PLOT_POINTS - 1);
		v[i] = c + sgn * (form_ac_at(&r->fc, a->f, t) - form_ac_at(&r->fc, b->f, t));
	}
	return 1;
}

static void hline(FILE *out, double y, const char *color, const char *label)
{
	fprintf(out, "<line x1=\"40\" y1=\"%.1f\" x2=\"300\" y2=\"%.1f\" stroke=\"%s\" stroke-width=\"1.5\" stroke-dasharray=\"6 4\"/>"
		"<text x=\"298\" y=\"%.1f\" font-size=\"9\" text-anchor=\"end\" fill=\"%s\">%s</text>",
		y, y, color, y - 3, color, label);
}

static void plot(FILE *out, const struct check_file *f, const struct profile *p,
		 const struct stress *s, double period)
{
	const struct nl_part *pt = nl_part_at(f->a->er.circuit, s->part);
	double v[PLOT_POINTS], lo = 0, hi = 0;
	if (!waveform(f, pt, period, v))
		return;
	double rating = f->ratings[s->part].v_rated.value, limit = report_limit(f, p, s);
	/* the simulated waveform (--verify), the same sense as v */
	double sv[PLOT_POINTS];
	int sim = s->sim_wave != NULL;
	for (int i = 0; sim && i < PLOT_POINTS; i++)
		sv[i] = pt->kind == NL_D ? -s->sim_wave[i] : s->sim_wave[i];
	for (int i = 0; i < PLOT_POINTS; i++) {
		lo = fmin(fmin(lo, v[i]), sim ? sv[i] : lo);
		hi = fmax(fmax(hi, v[i]), sim ? sv[i] : hi);
	}
	if (!isnan(rating))
		hi = fmax(hi, rating), lo = fmin(lo, pt->kind == NL_C ? -0.05 * rating : lo);
	double span = hi - lo > 0 ? hi - lo : 1;
	hi += 0.08 * span;
	lo -= 0.04 * span;
#define Y(val) (150 - ((val) - lo) / (hi - lo) * 135)
	fputs("<figure><svg class=\"plot\" viewBox=\"0 0 310 175\" role=\"img\" aria-label=\"waveform\">"
	      "<rect x=\"40\" y=\"5\" width=\"260\" height=\"145\" fill=\"#f7f9fb\"/>", out);
	char a[32], b[32];
	num_format_eng(hi, "V", a, sizeof a);
	num_format_eng(lo, "V", b, sizeof b);
	fprintf(out, "<text x=\"36\" y=\"14\" font-size=\"9\" text-anchor=\"end\">%s</text>"
		"<text x=\"36\" y=\"150\" font-size=\"9\" text-anchor=\"end\">%s</text>"
		"<line x1=\"40\" y1=\"%.1f\" x2=\"300\" y2=\"%.1f\" stroke=\"#c3cad2\"/>", a, b, Y(0), Y(0));
	if (!isnan(rating))
		hline(out, Y(rating), "#8e24aa", "rating");
	if (!isnan(limit) && limit != rating)
		hline(out, Y(limit), "#8a5a00", "limit");
	fputs("<polyline class=\"wave\" fill=\"none\" stroke=\"#137a5a\" stroke-width=\"2\" points=\"", out);
	for (int i = 0; i < PLOT_POINTS; i++)
		fprintf(out, "%.1f,%.1f ", 40 + 260.0 * i / (PLOT_POINTS - 1), Y(v[i]));
	fputs("\"/>", out);
	if (sim) {
		fputs("<polyline class=\"sim\" fill=\"none\" stroke=\"#2f5fb3\" stroke-width=\"1.5\" "
		      "stroke-dasharray=\"3 2\" points=\"", out);
		for (int i = 0; i < PLOT_POINTS; i++)
			fprintf(out, "%.1f,%.1f ", 40 + 260.0 * i / (PLOT_POINTS - 1), Y(sv[i]));
		fputs("\"/>", out);
	}
	num_format_eng(period, "s", a, sizeof a);
	fprintf(out, "<text x=\"170\" y=\"168\" font-size=\"9\" text-anchor=\"middle\">one period (%s)</text></svg>", a);
#undef Y
	fputs("<figcaption>", out);
	x(out, pt->path);
	fputs(" (", out);
	x(out, s->role);
	num_format_eng(s->worst, "V", a, sizeof a);
	fprintf(out, "): %s %s worst", pt->kind == NL_D ? "reverse" : "|V|", a);
	if (sim) {
		num_format_eng(s->sim_worst, "V", a, sizeof a);
		fprintf(out, "; simulated %s (dashed blue)", a);
	}
	fputs("</figcaption></figure>\n", out);
}

static int by_ratio(const struct check_file *f, const struct stress *a,
		    const struct stress *b)
{
	double ra = a->worst / f->ratings[a->part].v_rated.value;
	double rb = b->worst / f->ratings[b->part].v_rated.value;
	if (isnan(ra))
		ra = 0;
	if (isnan(rb))
		rb = 0;
	return ra > rb;
}

static void structure(FILE *out, const struct check_file *f, const struct profile *p,
		      size_t si)
{
	const struct topo_struct *t = &f->a->topo.s[si];
	const struct stress *pick[PLOTS_PER_STRUCT];
	int n = 0;
	fprintf(out, "<h3>S%zu %s", si + 1, topo_kind_name(t->kind));
	if (t->kind == TK_LADDER || t->kind == TK_PUMP)
		fprintf(out, ", %g stages", t->stages);
	fputs("</h3>\n", out);
	sketch(out, f, t);
	/* the most stressed parts first, by ratio to their rating */
	for (uint32_t i = 0; i < t->nparts; i++) {
		const struct stress *s = stress_of(f, t->parts[i].part);
		if (!s || !s->bounded)
			continue;
		int k;
		if (n < PLOTS_PER_STRUCT)
			k = n++;
		else if (by_ratio(f, s, pick[n - 1]))
			k = n - 1;
		else
			continue;
		pick[k] = s;
		for (; k > 0 && by_ratio(f, pick[k], pick[k - 1]); k--) {
			const struct stress *tmp = pick[k];
			pick[k] = pick[k - 1];
			pick[k - 1] = tmp;
		}
	}
	double period = f->stress->st[si].period;
	if (n == 0 || !(period > 0))
		return;
	fputs("<div class=\"plots\">\n", out);
	for (int i = 0; i < n; i++)
		plot(out, f, p, pick[i], period);
	fputs("</div>\n", out);
}

static void verify_line(FILE *out, const struct stress_verify *v)
{
	if (!v)
		return;
	if (!v->simulated) {
		fputs("<p>Not simulated (--verify): ", out);
		x(out, v->why ? v->why : "?");
		fputs(".</p>\n", out);
		return;
	}
	char per[24];
	num_format_eng(v->period, "s", per, sizeof per);
	fprintf(out, "<p>Simulated (--verify): %s after %u periods of %s; %zu stresses confirmed, "
		     "%zu above their bounds. Plots show the simulation dashed in blue.</p>\n",
		v->settled ? "steady" : "not steady (cap reached)", v->periods, per,
		v->confirmed, v->gaps);
	if (v->left_out) {
		fputs("<p>Left open in the simulation (no solver model): ", out);
		x(out, v->left_out_names);
		fprintf(out, "; %zu stresses beside them not compared.</p>\n", v->uncompared);
	}
}

/* The file's diagnostics (netlist errors, the reader's warnings), one
 * list item each with its location. */
static void diags(FILE *out, const struct check_file *f)
{
	size_t n = report_diag_n(f);
	if (n == 0)
		return;
	fprintf(out, "<p>Reading the netlist gave %zu message%s:</p>\n<ul class=\"diags\">\n", n,
		n == 1 ? "" : "s");
	for (size_t i = 0; i < n; i++) {
		const struct diag *g = report_diag_at(f, i);
		const char *sev = diag_severity_name(g->severity);
		fputs("<li>", out);
		x(out, report_diag_file(f, g));
		if (g->loc.line)
			fprintf(out, ":%u:%u", g->loc.line, g->loc.col);
		fprintf(out, ": <span class=\"%s\">%s</span>: ", sev, sev);
		x(out, g->message);
		fputs(" <span class=\"small\">[", out);
		x(out, g->code);
		fputs("]</span></li>\n", out);
	}
	fputs("</ul>\n", out);
}

void report_html_file(FILE *out, const struct check_file *f,
		      const struct profile *p, int first)
{
	if (first)
		head(out, p);
	fputs("<section class=\"file\"><h2>", out);
	x(out, f->path);
	fputs("</h2>\n", out);
	if (!f->a->analysed) {
		char why[64];
		fputs("<p class=\"error not-checked\">Not checked: ", out);
		x(out, report_not_checked(f, why, sizeof why));
		fputs(".</p>\n", out);
		diags(out, f);
	} else {
		diags(out, f);
		verify_line(out, f->stress->verify);
		findings(out, f);
		for (size_t i = 0; i < f->a->topo.n; i++)
			structure(out, f, p, i);
	}
	fputs("</section>\n", out);
}

/* The entries of folders that were not checked, with the reasons. */
static void skipped(FILE *out, const struct check_totals *t)
{
	if (t->nskipped == 0)
		return;
	fprintf(out, "<section id=\"skipped\"><h2>Skipped (%zu)</h2>\n<table><tr><th>file</th><th>reason</th></tr>\n",
		t->nskipped);
	for (size_t i = 0; i < t->nskipped; i++) {
		fputs("<tr><td>", out);
		x(out, t->skipped[i].path);
		fputs("</td><td>", out);
		x(out, t->skipped[i].why);
		fputs("</td></tr>\n", out);
	}
	fputs("</table></section>\n", out);
}

/* The counts of files and of the files' own diagnostics. */
static void counts(FILE *out, const struct check_totals *t)
{
	struct report_counts c = report_counts_of(t);
	fprintf(out, "<p class=\"files\"><span class=\"seen\">%zu</span> file%s seen: "
		"<span class=\"checked\">%zu</span> checked, <span class=\"not-checked\">%zu</span> not checked, "
		"<span class=\"skipped\">%zu</span> skipped.</p>\n",
		c.seen, c.seen == 1 ? "" : "s", c.checked, c.not_checked, c.skipped);
	fprintf(out, "<p>Findings: <span class=\"error\">%zu error%s</span>, <span class=\"warning\">%zu warning%s</span>, "
		"<span class=\"note\">%zu note%s</span>. Reading the netlists: %zu error%s, %zu warning%s, %zu note%s.</p>\n",
		t->errors, t->errors == 1 ? "" : "s", t->warnings, t->warnings == 1 ? "" : "s",
		t->notes, t->notes == 1 ? "" : "s", t->read_errors, t->read_errors == 1 ? "" : "s",
		t->read_warnings, t->read_warnings == 1 ? "" : "s", t->read_notes,
		t->read_notes == 1 ? "" : "s");
}

void report_html_end(FILE *out, const struct profile *p,
		     const struct check_totals *t)
{
	if (t->files == 0)
		head(out, p);
	skipped(out, t);
	fputs("<section id=\"summary\"><h2>Summary</h2>\n", out);
	counts(out, t);
	if (t->ntop) {
		fputs("<table><tr><th>most stressed</th><th>quantity</th><th class=\"num\">of rating</th></tr>\n", out);
		for (size_t i = 0; i < t->ntop; i++) {
			fputs("<tr><td>", out);
			x(out, t->top[i].file);
			fputs(" ", out);
			x(out, t->top[i].part);
			fprintf(out, "</td><td>%s</td><td class=\"num\">%.0f%%</td></tr>\n",
				t->top[i].qty, 100 * t->top[i].ratio);
		}
		fputs("</table>\n", out);
	}
	int any = 0;
	for (size_t i = 0; i < rules_count && i < TOTALS_RULES; i++)
		if (t->per_rule[i])
			fprintf(out, "%s%s %zu", any++ ? ", " : "<p class=\"small\">by rule: ",
				rules_table[i].id, t->per_rule[i]);
	if (any)
		fputs("</p>\n", out);
	if (t->max_voltage > profile_hazard(p)) {
		fputs("<p class=\"caution\"><strong>Caution.</strong> ", out);
		x(out, check_caution + strlen("caution: "));
		fputs("</p>\n", out);
	}
	fputs("</section>\n</body></html>\n", out);
}
