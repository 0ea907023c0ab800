/* report_html.c: one self-contained page (inline CSS and SVG, no script,
 * no network): summary counts, the findings, and per structure a sketch of
 * its chain of capacitors and diodes and plots of the steady-state voltage
 * across its most stressed parts over one drive period at the worst corner,
 * drawn against the rating and the profile's limit. */
#include "report_formats.h"


#include <math.h>
#include <stdlib.h>
#include <string.h>

#include "num.h"
#include "version.h"

#define PLOT_POINTS STRESS_TRACE_POINTS
#define PLOTS_PER_STRUCT 8

static void x(FILE *out, const char *s)
{
	report_xml_text(out, s);
}

static void fact(FILE *out, const char *name, const char *value, const char *note)
{
	fprintf(out, "<dt>%s</dt><dd>", name);
	x(out, value);
	if (note)
		fprintf(out, " <span class=\"small\">%s</span>", note);
	fputs("</dd>\n", out);
}

/* The version, the date and what the run read, so that a printed page
 * says where its numbers come from. */
static void run_facts(FILE *out, const struct profile *p, const struct report_inputs *in)
{
	fputs("<dl class=\"run\">\n", out);
	fact(out, "headroom", "version " HEADROOM_BUILD_VERSION, NULL);
	if (in)
		fact(out, "date", in->today,
		     in->today_given ? "(given with --today; waiver expiry is judged on it)"
				     : "(UTC date of the run; waiver expiry is judged on it)");
	fputs("<dt>profile</dt><dd>", out);
	x(out, p->name);
	fputs(": ", out);
	x(out, p->description);
	fputs(" <span class=\"small\">", out);
	x(out, p->path);
	fputs("</span></dd>\n", out);
	if (!in) {
		fputs("</dl>\n", out);
		return;
	}
	fact(out, "parts table", in->parts ? in->parts : "none", in->parts ? NULL : "(ratings from annotations and models)");
	fact(out, "waivers", in->waivers ? in->waivers : "none", in->waivers ? NULL : "(only *@waive lines in the netlists)");
	if (in->baseline)
		fact(out, "baseline", in->baseline, "(findings in it are not reported)");
	fprintf(out, "<dt>netlists</dt><dd><details%s><summary>%zu file%s</summary><ul class=\"files\">",
		in->nfiles <= 20 ? " open" : "", in->nfiles, in->nfiles == 1 ? "" : "s");
	for (size_t i = 0; i < in->nfiles; i++) {
		fputs("<li>", out);
		x(out, in->files[i]);
		fputs("</li>", out);
	}
	fputs("</ul></details></dd>\n</dl>\n", out);
}

static void head(FILE *out, const struct profile *p, const struct report_inputs *in)
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
	      "dl.run{display:grid;grid-template-columns:max-content 1fr;gap:.15rem .9rem;margin:.5rem 0}\n"
	      "dl.run dt{color:#4a5560}dl.run dd{margin:0}ul.files{margin:.2rem 0;padding-left:1.2rem}\n"
	      ".wide{overflow-x:auto}tr.over td{background:#fdf0f4}.over-tag{color:#ad1457;font-weight:700}\n"
	      ".plots{display:grid;grid-template-columns:repeat(auto-fill,minmax(18rem,1fr));gap:.8rem}\n"
	      "figure{margin:0;border:1px solid #e3e7ec;border-radius:6px;padding:.4rem}\n"
	      "figure.over{border:2px solid #ad1457}\n"
	      "figcaption{font-size:.85rem}svg{width:100%;height:auto}\n"
	      ".caution{border:2px solid #b3261e;padding:.6rem;border-radius:6px;background:#fff5f4}\n"
	      "@media print{.plots{grid-template-columns:1fr 1fr}body{max-width:none}}\n"
	      "@media (max-width:40rem){td,th{font-size:.85rem}}\n"
	      "</style></head><body>\n<header><h1>headroom: worst-case stress of diode-capacitor networks</h1>\n",
	      out);
	run_facts(out, p, in);
	char draft[512];
	report_draft_line(draft, sizeof draft, p);
	if (draft[0]) {
		fputs("<p class=\"warning\">", out);
		x(out, draft);
		fputs("</p>\n", out);
	}
	fputs("</header>\n", out);
}

/* The findings of rr; file_of names each one's file (run findings), or
 * is NULL when they all belong to the file of the section. */
static void findings(FILE *out, const struct rules_result *rr, const struct diag_sink *file_of)
{
	if (rr->n == 0) {
		fputs("<p>No findings.</p>\n", out);
		return;
	}
	fputs("<table><tr><th>part</th><th>finding</th></tr>\n", out);
	for (size_t i = 0; i < rr->n; i++) {
		const struct finding *g = &rr->f[i];
		const char *sev = diag_severity_name(g->rule->severity);
		fputs("<tr><td>", out);
		x(out, g->subject ? g->subject : "");
		fputs("<br><span class=\"small\">", out);
		if (file_of) {
			x(out, diag_file_name(file_of, g->loc.file));
			fputc(' ', out);
		}
		fprintf(out, "line %u</span></td><td><span class=\"%s\">%s</span> ", g->loc.line, sev, sev);
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
		if (f->stress->s[i].part == part && stress_qty_is_voltage(f->stress->s[i].qty))
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
	double sgn = p->kind == NL_D ? -1 : 1, lo, hi;
	if (sgn > 0)
		form_dc_range_diff(a->f, b->f, &lo, &hi);
	else
		form_dc_range_diff(b->f, a->f, &lo, &hi);
	double c = p->kind == NL_D ? hi : (fabs(hi) > fabs(lo) ? hi : lo);
	for (int i = 0; i < PLOT_POINTS; i++) {
		double t = period * i / (PLOT_POINTS - 1);
		v[i] = c + sgn * (form_ac_at(&r->fc, a->f, t) - form_ac_at(&r->fc, b->f, t));
	}
	return 1;
}

/* How far a stress goes past its bounds: the verdict shown in the stress
 * table and on the plots, in words as well as colour. */
enum over {
	OV_NONE,
	OV_LIMIT,
	OV_RATING,
};

static enum over over_of(double worst, double rating, double limit)
{
	if (worst > rating)
		return OV_RATING;
	return worst > limit ? OV_LIMIT : OV_NONE;
}

/* One plot: the waveform (the simulated one too with --verify), the lines
 * it is judged against, and the value range drawn. A capacitor's voltage
 * is signed (pin 0 minus pin 1) and its rating holds either way, so the
 * rating and limit lines are drawn on each side the trace reaches. */
struct plot_data {
	const struct nl_part *pt;
	const struct stress *s;
	double v[PLOT_POINTS], sv[PLOT_POINTS];
	int sim;
	double rating, limit;
	double bar;    /* the line a trace must stay inside: limit, else rating */
	int pos, neg;  /* sides the lines are drawn on */
	double lo, hi; /* value range of the drawing */
};

static double plot_y(const struct plot_data *d, double val)
{
	return 150 - (val - d->lo) / (d->hi - d->lo) * 135;
}

static double plot_x(double i)
{
	return 40 + 260.0 * i / (PLOT_POINTS - 1);
}

/* A side gets its lines when the trace goes a quarter of the way to the
 * limit there: an excursion past the limit always has its line, and a
 * trace on one side keeps the whole height of the plot. */
static void plot_sides(struct plot_data *d)
{
	double vmin = 0, vmax = 0;
	for (int i = 0; i < PLOT_POINTS; i++) {
		vmin = fmin(fmin(vmin, d->v[i]), d->sim ? d->sv[i] : vmin);
		vmax = fmax(fmax(vmax, d->v[i]), d->sim ? d->sv[i] : vmax);
	}
	d->bar = isfinite(d->limit) ? d->limit : d->rating;
	d->neg = d->pt->kind == NL_C && isfinite(d->bar) && vmin <= -0.25 * d->bar;
	d->pos = isfinite(d->bar) && (vmax >= 0.25 * d->bar || !d->neg);
	double top = isfinite(d->rating) ? fmax(d->rating, d->bar) : d->bar;
	if (d->pos)
		vmax = fmax(vmax, top);
	if (d->neg)
		vmin = fmin(vmin, -top);
	double span = vmax - vmin > 0 ? vmax - vmin : 1;
	d->hi = vmax + 0.08 * span;
	d->lo = vmin - (d->neg ? 0.08 : 0.04) * span;
}

static int plot_load(struct plot_data *d, const struct check_file *f,
		     const struct profile *p, const struct stress *s, double period)
{
	d->pt = nl_part_at(f->a->er.circuit, s->part);
	d->s = s;
	if (!waveform(f, d->pt, period, d->v))
		return 0;
	d->rating = f->ratings[s->part].v_rated.value;
	d->limit = report_limit(f, p, s);
	/* the simulated waveform (--verify), the same sense as v */
	d->sim = s->sim_wave != NULL;
	for (int i = 0; d->sim && i < PLOT_POINTS; i++)
		d->sv[i] = d->pt->kind == NL_D ? -s->sim_wave[i] : s->sim_wave[i];
	plot_sides(d);
	return 1;
}

/* A dashed line at value val, labelled at the end away from zero. */
static void hline(FILE *out, const struct plot_data *d, double val, const char *cls,
		  const char *color, const char *label)
{
	double y = plot_y(d, val);
	fprintf(out, "<line class=\"%s\" data-v=\"%.10g\" x1=\"40\" y1=\"%.1f\" x2=\"300\" y2=\"%.1f\" "
		     "stroke=\"%s\" stroke-width=\"1.5\" stroke-dasharray=\"6 4\"/>"
		     "<text x=\"298\" y=\"%.1f\" font-size=\"9\" text-anchor=\"end\" fill=\"%s\">%s%s</text>",
		cls, val, y, y, color, val < 0 ? y + 10 : y - 3, color, val < 0 ? "&#8722;" : "", label);
}

static void plot_lines(FILE *out, const struct plot_data *d)
{
	for (int side = 1; side >= -1; side -= 2) {
		if (!(side > 0 ? d->pos : d->neg))
			continue;
		if (isfinite(d->rating))
			hline(out, d, side * d->rating, "rating", "#8e24aa", "rating");
		if (isfinite(d->limit) && d->limit != d->rating)
			hline(out, d, side * d->limit, "limit", "#8a5a00", "limit");
	}
}

static void polyline(FILE *out, const struct plot_data *d, const char *cls,
		     const char *style, const double *v)
{
	fprintf(out, "<polyline class=\"%s\" fill=\"none\" %s points=\"", cls, style);
	for (int i = 0; i < PLOT_POINTS; i++)
		fprintf(out, "%.1f,%.1f ", plot_x(i), plot_y(d, v[i]));
	fputs("\"/>", out);
}

/* The stretches of the trace past the bar on one side (side * v > bar),
 * redrawn thick in red; each begins and ends where the trace crosses the
 * line, so the red starts exactly at it. */
static void over_runs(FILE *out, const struct plot_data *d, int side)
{
	int open = 0;
	for (int i = 0; i < PLOT_POINTS; i++) {
		double u = side * d->v[i] - d->bar;
		int past = u > 0;
		if (past && !open)
			fputs("<polyline class=\"over-trace\" fill=\"none\" stroke=\"#d81b60\" "
			      "stroke-width=\"4\" points=\"",
			      out);
		if (i > 0 && past != open) { /* the crossing between i - 1 and i */
			double up = side * d->v[i - 1] - d->bar;
			fprintf(out, "%.1f,%.1f ", plot_x(i - 1 + up / (up - u)),
				plot_y(d, side * d->bar));
		}
		if (past)
			fprintf(out, "%.1f,%.1f ", plot_x(i), plot_y(d, d->v[i]));
		else if (open)
			fputs("\"/>", out);
		open = past;
	}
	if (open)
		fputs("\"/>", out);
}

/* The point where the trace is farthest out; among points within 0.1 %
 * of that (a flat trace), the one nearest the middle of the period. */
static int extreme_at(const struct plot_data *d)
{
	const int mid = PLOT_POINTS / 2;
	double m = 0;
	int k = -1;
	for (int i = 0; i < PLOT_POINTS; i++)
		m = fmax(m, fabs(d->v[i]));
	for (int i = 0; i < PLOT_POINTS; i++)
		if (fabs(d->v[i]) >= 0.999 * m && (k < 0 || abs(i - mid) < abs(k - mid)))
			k = i;
	return k; /* the largest |v| always qualifies */
}

/* Past the limit (or the rating where there is no limit): the stretches
 * over it in red, a ring where the trace is farthest out, and under the
 * plot, beside the same ring, the stress in words. */
static void over_mark(FILE *out, const struct plot_data *d, enum over ov)
{
	int k = extreme_at(d);
	for (int side = 1; side >= -1; side -= 2)
		if (side > 0 ? d->pos : d->neg)
			over_runs(out, d, side);
	/* the ring sits at the reported worst on the trace's side: on the
	   trace when the plotted corner is the worst one */
	double val = d->v[k] < 0 ? -d->s->worst : d->s->worst;
	fprintf(out, "<g class=\"over-mark\"><circle cx=\"%.1f\" cy=\"%.1f\" r=\"6\" fill=\"none\" "
		     "stroke=\"#d81b60\" stroke-width=\"2.5\"/>"
		     "<circle cx=\"45\" cy=\"180\" r=\"4\" fill=\"none\" stroke=\"#d81b60\" stroke-width=\"2\"/>"
		     "<text x=\"53\" y=\"183.5\" font-size=\"9.5\" font-weight=\"700\" fill=\"#d81b60\">"
		     "%s %.0f%% of rating",
		plot_x(k), plot_y(d, val), ov == OV_RATING ? "over rating:" : "over limit:",
		100 * d->s->worst / d->rating);
	if (ov == OV_LIMIT)
		fprintf(out, " (limit %.0f%%)", 100 * d->limit / d->rating);
	fputs("</text></g>", out);
}

static void plot_caption(FILE *out, const struct check_file *f,
			 const struct plot_data *d, enum over ov)
{
	const uint32_t *q = nl_pins(f->a->er.circuit, d->pt);
	char a[32];
	fputs("<figcaption>", out);
	if (ov != OV_NONE)
		fprintf(out, "<strong class=\"over-tag\">%s</strong> ",
			ov == OV_RATING ? "Over its rating." : "Over its limit.");
	x(out, d->pt->path);
	fputs(" (", out);
	x(out, d->s->role);
	fputs(")", out);
	if (d->pt->kind == NL_C) {
		fputs(", v(", out);
		x(out, nl_node_at(f->a->er.circuit, q[0])->name);
		fputs(") &#8722; v(", out);
		x(out, nl_node_at(f->a->er.circuit, q[1])->name);
		fputs(")", out);
	}
	num_format_eng(d->s->worst, "V", a, sizeof a);
	fprintf(out, ": %s %s worst", d->pt->kind == NL_D ? "reverse" : "|V|", a);
	if (d->sim) {
		num_format_eng(d->s->sim_worst, "V", a, sizeof a);
		fprintf(out, "; simulated %s (dashed blue)", a);
	}
	fputs("</figcaption></figure>\n", out);
}

static void plot(FILE *out, const struct check_file *f, const struct profile *p,
		 const struct stress *s, double period)
{
	struct plot_data d;
	if (!plot_load(&d, f, p, s, period))
		return;
	enum over ov = over_of(s->worst, d.rating, d.limit);
	char a[32], b[32];
	num_format_eng(d.hi, "V", a, sizeof a);
	num_format_eng(d.lo, "V", b, sizeof b);
	fputs("<figure", out);
	fputs(ov != OV_NONE ? " class=\"over\" data-part=\"" : " data-part=\"", out);
	x(out, d.pt->path);
	/* an over-limit plot has a row below its time axis for the words */
	fprintf(out, "\"><svg class=\"plot\" viewBox=\"-8 0 318 %d\" role=\"img\" aria-label=\"waveform\">"
		     "<rect x=\"40\" y=\"5\" width=\"260\" height=\"145\" fill=\"#f7f9fb\"/>"
		     "<text x=\"36\" y=\"14\" font-size=\"9\" text-anchor=\"end\">%s</text>"
		     "<text x=\"36\" y=\"150\" font-size=\"9\" text-anchor=\"end\">%s</text>"
		     "<line class=\"zero\" x1=\"40\" y1=\"%.1f\" x2=\"300\" y2=\"%.1f\" stroke=\"#c3cad2\"/>",
		ov != OV_NONE ? 190 : 175, a, b, plot_y(&d, 0), plot_y(&d, 0));
	plot_lines(out, &d);
	polyline(out, &d, "wave", "stroke=\"#137a5a\" stroke-width=\"2\"", d.v);
	if (d.sim)
		polyline(out, &d, "sim", "stroke=\"#2f5fb3\" stroke-width=\"1.5\" stroke-dasharray=\"3 2\"", d.sv);
	if (ov != OV_NONE && isfinite(d.bar))
		over_mark(out, &d, ov);
	num_format_eng(period, "s", a, sizeof a);
	fprintf(out, "<text x=\"170\" y=\"168\" font-size=\"9\" text-anchor=\"middle\">one period (%s)</text></svg>", a);
	plot_caption(out, f, &d, ov);
}

/* ---- the stress table: every stress of the file, as in the JSON report ---- */

/* Quantity names: the JSON report's, and the table's [stress_qty order]. */
static const struct {
	const char *id, *shown;
} qty_names[] = {{"voltage", "voltage"}, {"reverse_voltage", "reverse"}, {"surge_current", "surge"},
		 {"avg_current", "mean current"}, {"peak_current", "peak current"},
		 {"rms_current", "rms current"}, {"ripple_current", "ripple (rms)"}, {"power", "power"},
		 {"life", "life"}};
_Static_assert(sizeof qty_names / sizeof qty_names[0] == SQ_COUNT, "a name per quantity");

/* A number cell: engineering notation to read, the exact value in data-v
 * for scripts; "-" when there is none. */
static void num_cell(FILE *out, double v, const char *unit)
{
	char b[32];
	if (!isfinite(v)) {
		fputs("<td class=\"num\">-</td>", out);
		return;
	}
	num_format_eng(v, unit, b, sizeof b);
	fprintf(out, "<td class=\"num\" data-v=\"%.10g\">%s</td>", v, b);
}

static const char *verdict(const struct stress *s, double rated, enum over ov)
{
	if (!s->bounded)
		return "no number";
	if (isnan(rated))
		return "no rating";
	static const char *const words[] = {"within limit", "over limit", "over rating"};
	_Static_assert(sizeof words / sizeof words[0] == OV_RATING + 1, "a word per verdict");
	return words[ov];
}

static void stress_row(FILE *out, const struct check_file *f, const struct profile *p,
		       const struct stress *s)
{
	const struct nl_part *pt = nl_part_at(f->a->er.circuit, s->part);
	const struct rating *r = &f->ratings[s->part];
	double rated = stress_rated(r, s->qty);
	double worst = s->bounded ? s->worst : NAN, limit = report_limit(f, p, s);
	const char *unit = stress_qty_unit(s->qty);
	/* a simulated surge is judged by its I2t (stress.h), the rest by the bound */
	enum over ov = over_of(s->qty == SQ_SURGE ? stress_surge_judged(s, r) : worst, rated, limit);
	fputs(ov != OV_NONE ? "<tr class=\"over\" data-part=\"" : "<tr data-part=\"", out);
	x(out, pt->path);
	fprintf(out, "\" data-qty=\"%s\"><td>", qty_names[s->qty].id);
	x(out, pt->path);
	if (s->role[0]) {
		fputs("<br><span class=\"small\">", out);
		x(out, s->role);
		fputs("</span>", out);
	}
	if (s->structure >= 0)
		fprintf(out, "</td><td>S%d</td>", s->structure + 1);
	else
		fputs("</td><td>-</td>", out);
	fprintf(out, "<td>%s", qty_names[s->qty].shown);
	if (isfinite(s->surge_i2t)) {
		char w[24];
		num_format_eng(s->surge_width, "s", w, sizeof w);
		fprintf(out, "<br><span class=\"small\">pulse I2t %.4g A^2 s, %s wide (half-sine)</span>",
			s->surge_i2t, w);
	}
	fputs("</td>", out);
	num_cell(out, worst, unit);
	num_cell(out, rated, unit);
	num_cell(out, limit, unit);
	double ratio = stress_ratio(s, r);
	if (isfinite(ratio))
		fprintf(out, "<td class=\"num\" data-v=\"%.10g\">%.0f%%</td>", ratio, 100 * ratio);
	else
		fputs("<td class=\"num\">-</td>", out);
	fprintf(out, "<td>%s</td><td%s>%s</td></tr>\n", stress_basis_name(s->basis),
		ov != OV_NONE ? " class=\"over-tag\"" : "", verdict(s, rated, ov));
}

static void stress_table(FILE *out, const struct check_file *f, const struct profile *p)
{
	if (f->stress->n == 0)
		return;
	fputs("<h3>Stresses</h3>\n<div class=\"wide\"><table class=\"stress\"><tr><th>part</th><th>in</th>"
	      "<th>stress</th><th class=\"num\">worst</th><th class=\"num\">rating</th>"
	      "<th class=\"num\">limit</th><th class=\"num\">of rating</th><th>basis</th><th>verdict</th></tr>\n",
	      out);
	for (size_t i = 0; i < f->stress->n; i++)
		stress_row(out, f, p, &f->stress->s[i]);
	fputs("</table></div>\n", out);
	char cur[512];
	fputs("<p class=\"small\">", out);
	x(out, report_currents_line(f, cur, sizeof cur));
	fputs("</p>\n", out);
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

/* A number to read, its exact value in data-v for scripts. */
static void num_span(FILE *out, double v, const char *unit)
{
	char b[32];
	if (!isfinite(v)) {
		fputs("<span>-</span>", out);
		return;
	}
	num_format_eng(v, unit, b, sizeof b);
	fprintf(out, "<span data-v=\"%.10g\">%s</span>", v, b);
}

static void output_corner(FILE *out, const char *name, const struct stress_output_corner *c)
{
	fprintf(out, "%s corner: mean ", name);
	num_span(out, c->mean, "V");
	fputs(", ", out);
	num_span(out, c->min, "V");
	fputs(" .. ", out);
	num_span(out, c->max, "V");
	fputs(", ripple ", out);
	num_span(out, c->max - c->min, "V");
	fputs(" p-p (unloaded, ideal diodes: ", out);
	num_span(out, c->unloaded, "V");
	fputc(')', out);
}

/* One line per loaded structure: its output at the low and high corners
 * (docs/check.md, "Loaded outputs"), the ladder formulas beside them. */
static void output_line(FILE *out, const struct check_file *f, size_t si)
{
	const struct stress_struct *st = &f->stress->st[si];
	const struct stress_output *o = &st->out;
	const struct nl_circuit *c = f->a->er.circuit;
	if (!o->loaded)
		return;
	fputs("<p class=\"output\">Output v(", out);
	x(out, nl_node_at(c, o->pos)->name);
	if (o->neg != NL_GROUND) {
		fputs(", ", out);
		x(out, nl_node_at(c, o->neg)->name);
	}
	fputs(") under its ", out);
	num_span(out, st->load_r, "ohm");
	if (!o->simulated) {
		fputs(" load: not simulated: ", out);
		x(out, o->why ? o->why : "?");
		fputs("; the analysis, unloaded with ideal diodes, gives ", out);
		num_span(out, o->lo.unloaded, "V");
		fputs(" at the low corner, ", out);
		num_span(out, o->hi.unloaded, "V");
		fputs(" at the high.</p>\n", out);
		return;
	}
	fputs(" load, simulated with the diodes as modelled: ", out);
	output_corner(out, "low", &o->lo);
	fputs("; ", out);
	output_corner(out, "high", &o->hi);
	if (f->a->topo.s[si].kind == TK_LADDER && st->ladder_i > 0) {
		fputs("; ladder formulas at ", out);
		num_span(out, st->ladder_i, "A");
		fputs(": drop ", out);
		num_span(out, st->ladder_drop, "V");
		fputs(", ripple ", out);
		num_span(out, st->ladder_ripple, "V");
	}
	fputs(".</p>\n", out);
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
	output_line(out, f, si);
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
	fprintf(out, "<p>Simulated (--verify): %s after %u periods of %s (last period's change %.1e); "
		     "%zu stresses confirmed (within %.0f %% below their bounds), %zu hold further below, "
		     "%zu above their bounds. Plots show the simulation dashed in blue.</p>\n",
		v->settled ? "steady" : "not steady (cap reached)", v->periods, per, v->residual,
		v->confirmed, 100 * STRESS_CONFIRM_BAND, v->holds, v->gaps);
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
		      const struct profile *p, int first,
		      const struct check_totals *t)
{
	if (first)
		head(out, p, t->inputs);
	fputs("<section class=\"file\"><h2>", out);
	x(out, f->path);
	fputs("</h2>\n", out);
	if (f->caution) {
		fputs("<p class=\"caution\"><strong>Caution.</strong> ", out);
		x(out, f->caution + strlen("caution: "));
		fputs("</p>\n", out);
	}
	if (!f->a->analysed) {
		char why[64];
		fputs("<p class=\"error not-checked\">Not checked: ", out);
		x(out, report_not_checked(f, why, sizeof why));
		fputs(".</p>\n", out);
		diags(out, f);
	} else {
		diags(out, f);
		verify_line(out, f->stress->verify);
		if (profile_draft(p, &(struct profile_status){0}))
			fprintf(out, "<p class=\"warning\">Checked with profile %s, a draft (see the summary).</p>\n",
				p->name);
		findings(out, f->rules, NULL);
		stress_table(out, f, p);
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
		head(out, p, t->inputs);
	skipped(out, t);
	fputs("<section id=\"summary\"><h2>Summary</h2>\n", out);
	counts(out, t);
	if (t->has_baseline)
		fprintf(out, "<p>Baseline: %zu known finding%s not shown.</p>\n", t->baselined,
			t->baselined == 1 ? "" : "s");
	char draft[512];
	report_draft_line(draft, sizeof draft, p);
	if (draft[0]) {
		fputs("<p class=\"warning\">", out);
		x(out, draft);
		fputs("</p>\n", out);
	}
	if (t->run && t->run->n) {
		fputs("<h3>Findings of the run (parts table, waiver file)</h3>\n", out);
		findings(out, t->run, t->run_d);
	}
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
