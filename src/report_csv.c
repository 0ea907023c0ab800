/* report_csv.c: one row per stress of a capacitor, diode or resistor that
 * is bounded, rated or in a structure,
 * RFC 4180 quoting, a header row; the columns of docs/design.md §10 plus the file
 * and the quantity. */
#include "report_formats.h"

#include <math.h>
#include <string.h>

#include "num.h"
#include "report_parts.h"
#include "utf8.h"

void report_xml_text(FILE *out, const char *s)
{
	if (!s)
		return;
	for (const char *end = s + strlen(s); *s; s++) {
		size_t k = utf8_seq((const unsigned char *)s, (size_t)(end - s));
		if (k != 1) {
			if (k == 0)
				fputs(UTF8_REPLACEMENT, out);
			else
				fwrite(s, 1, k, out);
			s += k ? k - 1 : 0;
			continue;
		}
		switch (*s) {
		case '&': fputs("&amp;", out); break;
		case '<': fputs("&lt;", out); break;
		case '>': fputs("&gt;", out); break;
		case '"': fputs("&quot;", out); break;
		default:
			if ((unsigned char)*s < 0x20 && *s != '\n' && *s != '\t')
				fputc(' ', out); /* not allowed in XML 1.0 */
			else
				fputc(*s, out);
		}
	}
}

/* A draft profile, in one sentence (every format that prints text). */
void report_draft_line(char *buf, size_t n, const struct profile *p)
{
	struct profile_status st;
	buf[0] = '\0';
	if (!profile_draft(p, &st))
		return;
	snprintf(buf, n, "profile %s is a draft: of its %zu values, %zu %s marked from memory and "
		 "%zu cite%s no source (the first: %s, line %u); confirm them before relying "
		 "on its limits", p->name, st.values, st.from_memory, st.from_memory == 1 ? "is" : "are",
		 st.unsourced, st.unsourced == 1 ? "s" : "", st.first, st.first_line);
}

char report_element(const struct nl_part *p)
{
	return p->kind == NL_C ? 'C' : p->kind == NL_R ? 'R' : 'D';
}

const char *report_currents_line(const struct check_file *f, char *buf, size_t n)
{
	const struct stress_fallback *fb = f->stress->fallback;
	char per[24];
	if (f->stress->n == 0)
		return NULL;
	if (fb && fb->flow) {
		num_format_eng(fb->flow_period, "s", per, sizeof per);
		snprintf(buf, n, "currents and power: %s, over one steady-state period (%s)",
			 fb->flow_corner, per);
	} else {
		snprintf(buf, n, "currents and power: not simulated: %s",
			 !fb ? "the circuit has more parts than the simulation takes"
			     : fb->flow_why ? fb->flow_why : "no part the solver can take");
	}
	return buf;
}

double report_limit(const struct check_file *f, const struct profile *p,
		    const struct stress *s)
{
	const struct nl_part *pt = nl_part_at(f->a->er.circuit, s->part);
	const struct rating *r = &f->ratings[s->part];
	const char *cls = pt->kind == NL_D ? "diode" : pt->kind == NL_C ? "cap" : "res";
	double factor = profile_kind(p, cls, r->kind, stress_qty_derating(s->qty), NULL);
	double rated = stress_rated(r, s->qty);
	return rated * (isnan(factor) ? 1 : factor);
}

#define CSV_HEADER                                                                 \
	"file,part,element,kind,structure,role,quantity,worst,best,unit,corner,"   \
	"rating,rating_from,limit,ratio,margin,surge_i2t,surge_width,surge_phase," \
	"basis,unproven,profile,profile_status,"                                   \
	"record,line,col,code,message\n"

static void num(FILE *out, double v)
{
	if (!isnan(v) && !isinf(v))
		fprintf(out, "%.6g", v);
}

/* ",profile,draft" (or "sourced"): the profile a row was judged with. */
static void profile_cols(FILE *out, const struct profile *p)
{
	fputc(',', out);
	report_csv_field(out, p->name);
	fprintf(out, ",%s", profile_draft(p, &(struct profile_status){0}) ? "draft" : "sourced");
}

static void row(FILE *out, const struct check_file *f, const struct profile *p,
		const struct stress *s)
{
	const struct nl_part *pt = nl_part_at(f->a->er.circuit, s->part);
	const struct rating *r = &f->ratings[s->part];
	const struct rating_field *rf = stress_rating(r, s->qty);
	double worst = s->bounded ? s->worst : NAN, limit = report_limit(f, p, s);
	char st[16] = "";
	if (s->structure >= 0)
		snprintf(st, sizeof st, "S%d", s->structure + 1);
	report_csv_field(out, f->path);
	fputc(',', out);
	report_csv_field(out, pt->path);
	fprintf(out, ",%c,", report_element(pt));
	report_csv_field(out, r->kind ? r->kind : "");
	fprintf(out, ",%s,", st);
	report_csv_field(out, s->role);
	fprintf(out, ",%s,", stress_qty_name(s->qty));
	num(out, worst);
	fputc(',', out);
	num(out, s->bounded && stress_qty_is_voltage(s->qty) ? s->best : NAN);
	fprintf(out, ",%s,", stress_qty_unit(s->qty));
	report_csv_field(out, s->corner ? s->corner : "");
	fputc(',', out);
	num(out, rf->value);
	fputc(',', out);
	report_csv_field(out, rf->from ? rf->from : "");
	fputc(',', out);
	num(out, limit);
	fputc(',', out);
	num(out, stress_ratio(s, r));
	fputc(',', out);
	num(out, limit - (s->qty == SQ_SURGE ? stress_surge_judged(s, r) : worst));
	fputc(',', out);
	num(out, s->surge_i2t);
	fputc(',', out);
	num(out, s->surge_width);
	fputc(',', out);
	num(out, s->surge_phase);
	fprintf(out, ",%s,", stress_basis_name(s->basis));
	report_csv_field(out, s->unproven ? s->unproven : "");
	profile_cols(out, p);
	fputs(",part,,,,\n", out);
}

/* A row that is no part: the file, the record kind, line, column, code
 * and message; the part's columns empty, the profile's filled. */
static void other_row(FILE *out, const struct profile *p, const char *file, const char *record,
		      uint32_t line, uint32_t col, const char *code, const char *message)
{
	report_csv_field(out, file);
	fputs(",,,,,,,,,,,,,,,,,,,,", out);
	profile_cols(out, p);
	fprintf(out, ",%s,", record);
	if (line)
		fprintf(out, "%u,%u", line, col);
	else
		fputc(',', out);
	fputc(',', out);
	report_csv_field(out, code);
	fputc(',', out);
	report_csv_field(out, message);
	fputc('\n', out);
}

/* The file's safety caution as a row of its own: quantity "caution", the
 * text in the role column, the file's highest voltage as worst and the
 * hazard voltage as limit (docs/reports.md). */
static void caution_row(FILE *out, const struct check_file *f, const struct profile *p)
{
	if (!f->caution)
		return;
	report_csv_field(out, f->path);
	fputs(",,,,,", out);
	report_csv_field(out, f->caution);
	fputs(",caution,", out);
	num(out, f->stress->max_voltage);
	fputs(",,V,,,,", out);
	num(out, profile_hazard(p));
	fputs(",,,,,,,", out);
	profile_cols(out, p);
	fputs(",caution,,,,\n", out);
}

/* The file's own row, then a row per diagnostic. */
static void file_rows(FILE *out, const struct check_file *f, const struct profile *p)
{
	char why[64];
	other_row(out, p, f->path, f->a->analysed ? "file-checked" : "file-not-checked", 0, 0, "",
		  f->a->analysed ? "" : report_not_checked(f, why, sizeof why));
	for (size_t i = 0; i < report_diag_n(f); i++) {
		const struct diag *g = report_diag_at(f, i);
		other_row(out, p, report_diag_file(f, g), diag_severity_name(g->severity), g->loc.line,
			  g->loc.col, g->code, g->message);
	}
}

void report_csv_end(FILE *out, const struct profile *p, const struct check_totals *t)
{
	struct report_counts c = report_counts_of(t);
	char sum[160];
	if (t->files == 0)
		fputs(CSV_HEADER, out);
	for (size_t i = 0; i < t->nskipped; i++)
		other_row(out, p, t->skipped[i].path, "file-skipped", 0, 0, "", t->skipped[i].why);
	snprintf(sum, sizeof sum, "%zu seen, %zu checked, %zu not checked, %zu skipped", c.seen,
		 c.checked, c.not_checked, c.skipped);
	other_row(out, p, "", "summary", 0, 0, "", sum);
}

void report_csv_file(FILE *out, const struct check_file *f,
		     const struct profile *p, int first)
{
	if (first)
		fputs(CSV_HEADER, out);
	file_rows(out, f, p);
	if (!f->a->analysed)
		return;
	for (size_t i = 0; i < f->stress->n; i++) {
		const struct stress *s = &f->stress->s[i];
		const struct rating *r = &f->ratings[s->part];
		double rated = stress_rating(r, s->qty)->value;
		if (s->bounded || !isnan(rated) || s->structure >= 0)
			row(out, f, p, s);
	}
	caution_row(out, f, p);
}
