/* report_parts.c: listings of the flattened circuit. Text is aligned in
 * columns (two passes: widths, then rows); CSV and JSON are for tools. */
#include "report_parts.h"
#include "utf8.h"

#include <string.h>

#include "num.h"
#include "wave.h"

void report_json_string(FILE *out, const char *s)
{
	fputc('"', out);
	size_t n = strlen(s);
	for (const unsigned char *p = (const unsigned char *)s; *p; p++) {
		size_t k = utf8_seq(p, n - (size_t)(p - (const unsigned char *)s));
		if (k == 0) {
			fputs(UTF8_REPLACEMENT, out);
		} else if (k > 1) {
			fwrite(p, 1, k, out);
			p += k - 1;
		} else if (*p == '"' || *p == '\\')
			fprintf(out, "\\%c", *p);
		else if (*p == '\n')
			fputs("\\n", out);
		else if (*p < 0x20)
			fprintf(out, "\\u%04x", *p);
		else
			fputc(*p, out);
	}
	fputc('"', out);
}

void report_csv_field(FILE *out, const char *s)
{
	int quote = strpbrk(s, ",\"\r\n") != NULL;
	size_t n = strlen(s);
	if (quote)
		fputc('"', out);
	for (size_t i = 0; i < n; i++) {
		size_t k = utf8_seq((const unsigned char *)s + i, n - i);
		if (k == 0) {
			fputs(UTF8_REPLACEMENT, out);
			continue;
		}
		if (s[i] == '"')
			fputc('"', out);
		fwrite(s + i, 1, k, out);
		i += k - 1;
	}
	if (quote)
		fputc('"', out);
}

static size_t source_value(const struct nl_source *s, char *buf, size_t n)
{
	char v[32];
	num_format_eng(s->dc, "", v, sizeof v);
	size_t k = (size_t)snprintf(buf, n, "dc %s V", v);
	if (s->wave != NL_WAVE_NONE && k < n) {
		k += (size_t)snprintf(buf + k, n - k, " %s(", wave_name(s->wave));
		for (uint32_t i = 0; i < s->nargs && i < 8 && k < n; i++) {
			num_format_eng(s->args[i], "", v, sizeof v);
			k += (size_t)snprintf(buf + k, n - k, "%s%s", i ? " " : "", v);
		}
		if (k < n)
			k += (size_t)snprintf(buf + k, n - k, "%s)", s->nargs > 8 ? " ..." : "");
	}
	if (s->ac_mag != 0 && k < n)
		k += (size_t)snprintf(buf + k, n - k, " ac %g", s->ac_mag);
	return k;
}

void report_part_value(const struct nl_part *p, char *buf, size_t n)
{
	char v[32];
	buf[0] = '\0';
	if (p->ext && p->ext->behavioural) {
		snprintf(buf, n, "behavioural");
		return;
	}
	switch (p->kind) {
	case NL_R: case NL_C: case NL_L:
		num_format_eng(p->value, "", v, sizeof v);
		snprintf(buf, n, "%s %s", v, nl_value_unit(p));
		break;
	case NL_D:
		snprintf(buf, n, "area %g", p->value);
		break;
	case NL_K:
		snprintf(buf, n, "k %g", p->value);
		break;
	case NL_E: case NL_F: case NL_G: case NL_H:
		snprintf(buf, n, "gain %g", p->value);
		break;
	case NL_V: case NL_I:
		source_value(p->ext->src, buf, n);
		if (p->kind == NL_I)
			for (char *q = buf; (q = strstr(q, " V")); q += 2)
				q[1] = 'A';
		break;
	default:
		break;
	}
	if (p->ext && p->ext->mult != 1.0) {
		size_t k = strlen(buf);
		snprintf(buf + k, n - k, " m=%g", p->ext->mult);
	}
}

static size_t node_list(const struct nl_circuit *c, const struct nl_part *p,
			char *buf, size_t n, const char *sep)
{
	size_t k = 0;
	buf[0] = '\0';
	const uint32_t *pins = nl_pins(c, p);
	for (uint16_t i = 0; i < p->npins && k < n; i++)
		k += (size_t)snprintf(buf + k, n - k, "%s%s", i ? sep : "",
				      nl_node_at(c, pins[i])->name);
	return k;
}

struct widths {
	size_t path, kind, nodes, value, model;
};

static void measure(const struct nl_circuit *c, struct widths *w)
{
	char buf[512];
	*w = (struct widths){4, 7, 5, 5, 5};
	for (size_t i = 0; i < nl_part_count(c); i++) {
		const struct nl_part *p = nl_part_at(c, i);
		size_t l = strlen(p->path);
		w->path = l > w->path ? l : w->path;
		l = strlen(nl_kind_name(p->kind));
		w->kind = l > w->kind ? l : w->kind;
		l = node_list(c, p, buf, sizeof buf, " ");
		w->nodes = l > w->nodes ? l : w->nodes;
		report_part_value(p, buf, sizeof buf);
		l = strlen(buf);
		w->value = l > w->value ? l : w->value;
		l = p->model ? strlen(p->model->name) : 1;
		w->model = l > w->model ? l : w->model;
	}
	if (w->nodes > 60)
		w->nodes = 60;
	if (w->value > 48)
		w->value = 48;
}

static void text_rows(FILE *out, const struct nl_circuit *c,
		      const struct diag_sink *d)
{
	struct widths w;
	char nodes[512], value[512];
	measure(c, &w);
	fprintf(out, "%-*s  %-*s  %-*s  %-*s  %-*s  %s\n", (int)w.path, "part",
		(int)w.kind, "element", (int)w.nodes, "nodes", (int)w.value,
		"value", (int)w.model, "model", "defined at");
	for (size_t i = 0; i < nl_part_count(c); i++) {
		const struct nl_part *p = nl_part_at(c, i);
		node_list(c, p, nodes, sizeof nodes, " ");
		report_part_value(p, value, sizeof value);
		fprintf(out, "%-*s  %-*s  %-*s  %-*s  %-*s  %s:%u\n", (int)w.path,
			p->path, (int)w.kind, nl_kind_name(p->kind), (int)w.nodes,
			nodes, (int)w.value, value, (int)w.model,
			p->model ? p->model->name : "-",
			diag_file_name(d, p->loc.file), p->loc.line);
	}
}

static void csv_rows(FILE *out, const struct nl_circuit *c,
		     const struct diag_sink *d, int header)
{
	char buf[512];
	if (header)
		fputs("part,element,nodes,value,unit,model,file,line\n", out);
	for (size_t i = 0; c && i < nl_part_count(c); i++) {
		const struct nl_part *p = nl_part_at(c, i);
		report_csv_field(out, p->path);
		fprintf(out, ",%s,", nl_kind_name(p->kind));
		node_list(c, p, buf, sizeof buf, " ");
		report_csv_field(out, buf);
		fprintf(out, ",%.9g,%s,", p->value, nl_value_unit(p));
		report_csv_field(out, p->model ? p->model->name : "");
		fputc(',', out);
		report_csv_field(out, diag_file_name(d, p->loc.file));
		fprintf(out, ",%u\n", p->loc.line);
	}
}

static void json_part(FILE *out, const struct nl_circuit *c,
		      const struct diag_sink *d, const struct nl_part *p)
{
	char buf[512];
	fputs("{\"path\": ", out);
	report_json_string(out, p->path);
	fprintf(out, ", \"element\": \"%s\", \"letter\": \"%c\", \"nodes\": [",
		nl_kind_name(p->kind), p->letter);
	for (uint16_t k = 0; k < p->npins; k++) {
		fputs(k ? ", " : "", out);
		report_json_string(out, nl_node_at(c, nl_pins(c, p)[k])->name);
	}
	fprintf(out, "], \"value\": %.15g, \"unit\": \"%s\", \"text\": ", p->value,
		nl_value_unit(p));
	report_part_value(p, buf, sizeof buf);
	report_json_string(out, buf);
	fputs(", \"model\": ", out);
	if (p->model)
		report_json_string(out, p->model->name);
	else
		fputs("null", out);
	fputs(", \"file\": ", out);
	report_json_string(out, diag_file_name(d, p->loc.file));
	fprintf(out, ", \"line\": %u, \"col\": %u}", p->loc.line, p->loc.col);
}

static void json_errors(FILE *out, const struct diag_sink *d, uint32_t unit)
{
	int first = 1;
	fputs("\"errors\": [", out);
	for (size_t i = 0; i < diag_count(d); i++) {
		const struct diag *g = diag_at(d, i);
		if (g->unit != unit || g->severity != DIAG_ERROR)
			continue;
		fputs(first ? "\n        {\"file\": " : ",\n        {\"file\": ", out);
		report_json_string(out, diag_file_name(d, g->loc.file));
		fprintf(out, ", \"line\": %u, \"col\": %u, \"code\": \"%s\", \"message\": ",
			g->loc.line, g->loc.col, g->code);
		report_json_string(out, g->message);
		fputc('}', out);
		first = 0;
	}
	fputs(first ? "]" : "\n      ]", out);
}

static void json_file(FILE *out, const char *path,
		      const struct elab_result *r, const struct diag_sink *d,
		      uint32_t unit)
{
	fputs("    {\"path\": ", out);
	report_json_string(out, path);
	fputs(",\n      \"title\": ", out);
	report_json_string(out, r->title ? r->title : "");
	fputs(",\n      ", out);
	json_errors(out, d, unit);
	fputs(",\n      \"parts\": [", out);
	const struct nl_circuit *c = r->circuit;
	size_t n = c ? nl_part_count(c) : 0;
	for (size_t i = 0; i < n; i++) {
		fputs(i ? ",\n        " : "\n        ", out);
		json_part(out, c, d, nl_part_at(c, i));
	}
	fputs(n ? "\n      ]}" : "]}", out);
}

void report_parts(FILE *out, enum report_parts_format fmt, const char *path,
		  const struct elab_result *r, const struct diag_sink *d,
		  uint32_t unit, int first, int last)
{
	const struct nl_circuit *c = r->circuit;
	switch (fmt) {
	case RP_TEXT:
		if (!c)
			return;
		fprintf(out, "%s%s: %zu parts, %zu nodes\n", first ? "" : "\n",
			path, nl_part_count(c), nl_node_count(c));
		text_rows(out, c, d);
		break;
	case RP_CSV:
		csv_rows(out, c, d, first);
		break;
	case RP_COUNT:
		fprintf(out, "%s: %zu parts, %zu nodes, %zu cards\n", path,
			c ? nl_part_count(c) : 0, c ? nl_node_count(c) : 0, r->ncards);
		break;
	case RP_JSON:
		if (first)
			fputs("{\"schema\": 1, \"tool\": {\"name\": \"headroom\"},\n  \"files\": [\n", out);
		else
			fputs(",\n", out);
		json_file(out, path, r, d, unit);
		if (last)
			fputs("\n  ]\n}\n", out);
		break;
	}
}
