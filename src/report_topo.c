/* report_topo.c: structure listings. Text is for people: one block per
 * structure, parts aligned; JSON is for tools. */
#include "report_topo.h"

#include <math.h>
#include <string.h>

#include "num.h"
#include "report_parts.h"

static const char *node_name(const struct audit *a, uint32_t id)
{
	return id == NL_NONE ? "-" : nl_node_at(a->er.circuit, id)->name;
}

static const char *polarity(const struct topo_struct *s)
{
	return s->negative ? "negative" : "positive";
}

/* "sin 12 V peak, 20 kHz, offset 0 V" for the source behind a drive. */
static void describe_source(const struct audit *a, uint32_t part, char *buf,
			    size_t n)
{
	if (part == NL_NONE) {
		snprintf(buf, n, "no single source");
		return;
	}
	const struct sig *s = &a->prop.sigs[a->prop.sig_of_part[part]];
	const struct audit_source *as = &a->sources[part];
	char pk[32], f[32], off[32];
	num_format_eng((s->ac_max - s->ac_min) / 2, "V", pk, sizeof pk);
	num_format_eng(s->period > 0 ? 1 / s->period : 0, "Hz", f, sizeof f);
	num_format_eng(s->mean, "V", off, sizeof off);
	size_t k = (size_t)snprintf(buf, n, "%s %s, %s peak, %s, mean %s",
				    nl_part_at(a->er.circuit, part)->path,
				    sig_kind_name(s->kind), pk, f, off);
	if (!isnan(as->tol) && k < n)
		k += (size_t)snprintf(buf + k, n - k, ", tol %g%%", as->tol * 100);
	if (!isnan(as->min) && k < n)
		k += (size_t)snprintf(buf + k, n - k, ", range %g..%g V", as->min, as->max);
	if (s->note && k < n)
		snprintf(buf + k, n - k, " (%s)", s->note);
}

static void node_range(const struct audit *a, uint32_t id, double *lo,
		       double *hi, int *exact)
{
	const struct prop_node *n = &a->prop.nodes[id];
	*lo = *hi = NAN;
	*exact = 0;
	if (n->state == PS_RESOLVED)
		form_range(&a->prop.fc, n->f, lo, hi, exact);
}

static void text_nodes(FILE *out, const struct audit *a,
		       const struct topo_struct *s)
{
	fputs("    node ranges (steady state, ideal diodes, no load):\n", out);
	for (uint32_t i = 0; i < s->nnodes; i++) {
		const struct prop_node *n = &a->prop.nodes[s->nodes[i]];
		double lo, hi;
		int exact;
		node_range(a, s->nodes[i], &lo, &hi, &exact);
		char l[32], h[32];
		num_format_eng(lo, "V", l, sizeof l);
		num_format_eng(hi, "V", h, sizeof h);
		fprintf(out, "      %-14s %10s .. %-10s %s%s%s%s\n",
			node_name(a, s->nodes[i]), l, h,
			prop_class_name((enum prop_class)n->cls),
			n->how == PH_PIN ? ", pinned by " : "",
			n->how == PH_PIN ? nl_part_at(a->er.circuit, n->by)->path : "",
			exact ? "" : " (sampled)");
	}
}

static void text_struct(FILE *out, const struct audit *a,
			const struct diag_sink *d, size_t idx)
{
	const struct topo_struct *s = &a->topo.s[idx];
	char src[256];
	fprintf(out, "  S%zu %s", idx + 1, topo_kind_name(s->kind));
	if (s->kind == TK_LADDER || s->kind == TK_PUMP)
		fprintf(out, ", %g stages", s->stages);
	if (s->kind != TK_NETWORK && s->kind != TK_RECTIFIER)
		fprintf(out, ", %s%s", polarity(s), s->biased ? ", biased" : "");
	fputc('\n', out);
	if (s->drive != NL_NONE) {
		describe_source(a, s->drive_source, src, sizeof src);
		fprintf(out, "    drive      %s  (%s)\n", node_name(a, s->drive), src);
		fprintf(out, "    reference  %s\n", node_name(a, s->reference));
		fprintf(out, "    output     %s%s%s\n", node_name(a, s->output),
			s->output2 != NL_NONE ? " and " : "",
			s->output2 != NL_NONE ? node_name(a, s->output2) : "");
	}
	if (s->note)
		fprintf(out, "    note       %s\n", s->note);
	size_t w = 4;
	for (uint32_t i = 0; i < s->nparts; i++) {
		size_t l = strlen(nl_part_at(a->er.circuit, s->parts[i].part)->path);
		w = l > w ? l : w;
	}
	fputs("    parts:\n", out);
	for (uint32_t i = 0; i < s->nparts; i++) {
		const struct nl_part *p = nl_part_at(a->er.circuit, s->parts[i].part);
		fprintf(out, "      %-*s  %-36s %s:%u\n", (int)w, p->path,
			s->parts[i].role, diag_file_name(d, p->loc.file), p->loc.line);
	}
	text_nodes(out, a, s);
}

static int through_transformer(const struct audit *a, const struct topo_struct *s)
{
	uint32_t node = s->drive;
	for (int hop = 0; hop < 64 && node != NL_NONE; hop++) {
		const struct prop_node *n = &a->prop.nodes[node];
		if (n->how == PH_XFMR)
			return 1;
		if (n->how != PH_SERIES || n->by == NL_NONE)
			return 0;
		const uint32_t *q = nl_pins(a->er.circuit, nl_part_at(a->er.circuit, n->by));
		node = q[0] == node ? q[1] : q[0];
	}
	return 0;
}

static void text_file(FILE *out, const char *path, const struct audit *a,
		      const struct diag_sink *d)
{
	size_t n = a->analysed ? a->topo.n : 0;
	fprintf(out, "%s: %zu structure%s\n", path, n, n == 1 ? "" : "s");
	int xfmr = 0;
	for (size_t i = 0; i < n; i++) {
		text_struct(out, a, d, i);
		xfmr |= through_transformer(a, &a->topo.s[i]);
	}
	if (xfmr)
		fputs("  (a transformer is taken as ideal: the secondary carries k*sqrt(L2/L1) times the primary's AC, no DC, no leakage)\n", out);
	if (a->analysed && a->prop.nconflicts)
		fprintf(out, "  (%zu node%s where ideal diodes would clip: the figures there are not settled)\n",
			a->prop.nconflicts, a->prop.nconflicts == 1 ? "" : "s");
}

/* ---- JSON ---- */

static void json_num(FILE *out, double v)
{
	if (isnan(v) || isinf(v))
		fputs("null", out);
	else
		fprintf(out, "%.10g", v);
}

static void json_source(FILE *out, const struct audit *a, uint32_t part)
{
	if (part == NL_NONE) {
		fputs("null", out);
		return;
	}
	const struct sig *s = &a->prop.sigs[a->prop.sig_of_part[part]];
	const struct audit_source *as = &a->sources[part];
	fputs("{\"part\": ", out);
	report_json_string(out, nl_part_at(a->er.circuit, part)->path);
	fprintf(out, ", \"wave\": \"%s\", \"amplitude\": ", sig_kind_name(s->kind));
	json_num(out, (s->ac_max - s->ac_min) / 2);
	fputs(", \"offset\": ", out);
	json_num(out, s->mean);
	fputs(", \"frequency\": ", out);
	json_num(out, s->period > 0 ? 1 / s->period : 0);
	fputs(", \"tol\": ", out);
	json_num(out, as->tol);
	fputs(", \"min\": ", out);
	json_num(out, as->min);
	fputs(", \"max\": ", out);
	json_num(out, as->max);
	fputs(", \"note\": ", out);
	if (s->note)
		report_json_string(out, s->note);
	else
		fputs("null", out);
	fputc('}', out);
}

static void json_node_name(FILE *out, const struct audit *a, uint32_t id)
{
	if (id == NL_NONE)
		fputs("null", out);
	else
		report_json_string(out, node_name(a, id));
}

static void json_parts(FILE *out, const struct audit *a,
		       const struct diag_sink *d, const struct topo_struct *s)
{
	fputs(", \"parts\": [", out);
	for (uint32_t i = 0; i < s->nparts; i++) {
		const struct nl_part *p = nl_part_at(a->er.circuit, s->parts[i].part);
		fputs(i ? ",\n          {\"path\": " : "\n          {\"path\": ", out);
		report_json_string(out, p->path);
		fprintf(out, ", \"element\": \"%c\", \"role\": ", p->letter);
		report_json_string(out, s->parts[i].role);
		fprintf(out, ", \"stage\": %u, \"file\": ", s->parts[i].stage);
		report_json_string(out, diag_file_name(d, p->loc.file));
		fprintf(out, ", \"line\": %u}", p->loc.line);
	}
	fputs("]", out);
}

static void json_nodes(FILE *out, const struct audit *a,
		       const struct topo_struct *s)
{
	fputs(", \"nodes\": [", out);
	for (uint32_t i = 0; i < s->nnodes; i++) {
		double lo, hi;
		int exact;
		node_range(a, s->nodes[i], &lo, &hi, &exact);
		const struct prop_node *n = &a->prop.nodes[s->nodes[i]];
		fputs(i ? ", {\"name\": " : "{\"name\": ", out);
		json_node_name(out, a, s->nodes[i]);
		fputs(", \"min\": ", out);
		json_num(out, lo);
		fputs(", \"max\": ", out);
		json_num(out, hi);
		fprintf(out, ", \"class\": \"%s\", \"exact\": %s}",
			prop_class_name((enum prop_class)n->cls), exact ? "true" : "false");
	}
	fputs("]", out);
}

static void json_struct(FILE *out, const struct audit *a,
			const struct diag_sink *d, size_t idx)
{
	const struct topo_struct *s = &a->topo.s[idx];
	fprintf(out, "{\"id\": \"S%zu\", \"kind\": \"%s\", \"stages\": %g, \"polarity\": \"%s\", \"biased\": %s",
		idx + 1, topo_kind_name(s->kind), s->stages, polarity(s),
		s->biased ? "true" : "false");
	fputs(",\n        \"drive\": ", out);
	json_node_name(out, a, s->drive);
	fputs(", \"source\": ", out);
	json_source(out, a, s->drive_source);
	fputs(",\n        \"reference\": ", out);
	json_node_name(out, a, s->reference);
	fputs(", \"output\": ", out);
	json_node_name(out, a, s->output);
	fputs(", \"output_low\": ", out);
	json_node_name(out, a, s->output2);
	fputs(", \"note\": ", out);
	if (s->note)
		report_json_string(out, s->note);
	else
		fputs("null", out);
	json_parts(out, a, d, s);
	fputs("\n        ", out);
	json_nodes(out, a, s);
	fputc('}', out);
}

static void json_file(FILE *out, const char *path, const struct audit *a,
		      const struct diag_sink *d)
{
	/* errors, then the structures */
	fputs("    {\"path\": ", out);
	report_json_string(out, path);
	fputs(", \"errors\": [", out);
	int first = 1;
	for (size_t i = 0; i < diag_count(d); i++) {
		const struct diag *g = diag_at(d, i);
		if (g->severity != DIAG_ERROR)
			continue;
		fputs(first ? "{\"file\": " : ", {\"file\": ", out);
		report_json_string(out, diag_file_name(d, g->loc.file));
		fprintf(out, ", \"line\": %u, \"col\": %u, \"message\": ", g->loc.line, g->loc.col);
		report_json_string(out, g->message);
		fputc('}', out);
		first = 0;
	}
	fputs("],\n      ", out);
	report_topo_json_structures(out, a, d);
	fputc('}', out);
}

void report_topo_json_structures(FILE *out, const struct audit *a,
				 const struct diag_sink *d)
{
	fputs("\"structures\": [", out);
	size_t n = a->analysed ? a->topo.n : 0;
	for (size_t i = 0; i < n; i++) {
		fputs(i ? ",\n      " : "\n      ", out);
		json_struct(out, a, d, i);
	}
	fputs(n ? "\n      ]" : "]", out);
}

/* One line: "file: 3 structures: ladder 1, clamp-floor 2". */
static void count_file(FILE *out, const char *path, const struct audit *a)
{
	size_t n = a->analysed ? a->topo.n : 0, per[TK_NETWORK + 1] = {0};
	for (size_t i = 0; i < n; i++)
		per[a->topo.s[i].kind]++;
	fprintf(out, "%s: %zu structure%s", path, n, n == 1 ? "" : "s");
	const char *sep = ": ";
	for (int k = 0; k <= TK_NETWORK; k++)
		if (per[k]) {
			fprintf(out, "%s%s %zu", sep, topo_kind_name((enum topo_kind)k), per[k]);
			sep = ", ";
		}
	fputc('\n', out);
}

void report_topo(FILE *out, enum report_topo_format fmt, const char *path,
		 const struct audit *a, const struct diag_sink *d, int first,
		 int last)
{
	if (!path) { /* no files at all */
		if (fmt == RT_JSON)
			fputs("{\"schema\": 1, \"tool\": {\"name\": \"headroom\"},\n  \"files\": []\n}\n", out);
		return;
	}
	if (fmt == RT_COUNT) {
		count_file(out, path, a);
		return;
	}
	if (fmt == RT_TEXT) {
		if (!first)
			fputc('\n', out);
		text_file(out, path, a, d);
		return;
	}
	if (first)
		fputs("{\"schema\": 1, \"tool\": {\"name\": \"headroom\"},\n  \"files\": [\n", out);
	else
		fputs(",\n", out);
	json_file(out, path, a, d);
	if (last)
		fputs("\n  ]\n}\n", out);
}
