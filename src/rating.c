/* rating.c: ratings of parts, and the parts-table reader. The table is a
 * header row then one row per part or pattern; columns ref, kind, note and
 * the value columns of value_cols below, in any order and case; others are
 * an error. A BOM's rows (bom.h) come in below the table's, above the
 * model's BV. */
#include "rating.h"

#include "dmodel.h"
#include "infile.h"

#include <errno.h>

#include <math.h>
#include <stdatomic.h>
#include <stddef.h>
#include <stdio.h>
#include <string.h>

#include "num.h"
#include "profile.h"

/* The value columns of the parts table, which are also the *@part keys
 * (annot.c lists the same names), each with its field of struct rating
 * [rating-fields]. */
static const struct {
	const char *name;
	size_t off;  /* offsetof(struct rating, field) */
	int pct;     /* a tolerance: written 10% or 0.1 */
} value_cols[] = {
	{"v_rated", offsetof(struct rating, v_rated), 0},
	{"i_surge", offsetof(struct rating, i_surge), 0},
	{"i_avg", offsetof(struct rating, i_avg), 0},
	{"i_peak", offsetof(struct rating, i_peak), 0},
	{"p_rated", offsetof(struct rating, p_rated), 0},
	{"trr", offsetof(struct rating, trr), 0},
	{"tol", offsetof(struct rating, tol), 1},
	{"i_ripple", offsetof(struct rating, i_ripple), 0},
	{"ripple_freq", offsetof(struct rating, ripple_freq), 0},
	{"ripple_temp", offsetof(struct rating, ripple_temp), 0},
	{"esr", offsetof(struct rating, esr), 0},
	{"life_h", offsetof(struct rating, life_h), 0},
	{"life_temp", offsetof(struct rating, life_temp), 0},
	{"rth_ca", offsetof(struct rating, rth_ca), 0},
	{"surge_width", offsetof(struct rating, surge_width), 0},
	{"i2t", offsetof(struct rating, i2t), 0},
};
#define NVALUES (sizeof value_cols / sizeof value_cols[0])
_Static_assert(offsetof(struct rating, kind) == NVALUES * sizeof(struct rating_field),
	       "a column for every numeric field of struct rating [rating-fields]");

/* Columns: ref, kind, note, then the value columns in value_cols' order. */
enum col { COL_REF, COL_KIND, COL_NOTE, COL_CBIAS, COL_VALUE0, NCOLS = COL_VALUE0 + NVALUES };

static const char *col_name(int c)
{
	static const char *const fixed[COL_VALUE0] = {"ref", "kind", "note", "c_bias"};
	return c < COL_VALUE0 ? fixed[c] : value_cols[c - COL_VALUE0].name;
}

static struct rating_field *field_at(struct rating *r, size_t k)
{
	return (struct rating_field *)((char *)r + value_cols[k].off);
}

struct row {
	const char *cell[NCOLS];
	unsigned col[NCOLS];   /* 1-based column of each cell */
	unsigned line;
};

struct rating_table {
	const char *path;
	uint32_t file;
	struct row *rows;
	size_t n;
	atomic_uchar *used;    /* per row: rated a part of some file, any thread */
};

/* One CSV record from line (RFC 4180 quoting, no embedded newlines); cells
 * point into out (NUL-separated); starts[] their columns. */
static int split_csv(const char *line, char *out, const char **cells,
		     unsigned *starts, int max)
{
	int n = 0;
	size_t i = 0, k = 0;
	while (n < max) {
		cells[n] = out + k;
		starts[n] = (unsigned)i + 1;
		if (line[i] == '"') {
			for (i++; line[i]; i++) {
				if (line[i] == '"' && line[i + 1] == '"')
					out[k++] = line[i++];
				else if (line[i] == '"')
					break;
				else
					out[k++] = line[i];
			}
			if (line[i] != '"')
				return -1;
			i++;
		} else {
			while (line[i] && line[i] != ',' && line[i] != '\r' && line[i] != '\n')
				out[k++] = line[i++];
		}
		out[k++] = '\0';
		n++;
		if (line[i] != ',')
			break;
		i++;
	}
	return n;
}

static void cell_loc(const struct rating_table *t, const struct row *r,
		     enum col c, struct diag_loc *l)
{
	l->file = t->file;
	l->line = r->line;
	l->col = r->col[c];
}

static int header(const char *const *cells, const unsigned *starts, int n,
		  int *map)
{
	int have_ref = 0;
	(void)starts;
	for (int i = 0; i < n; i++) {
		map[i] = -1;
		char name[32];
		snprintf(name, sizeof name, "%s", cells[i]);
		num_fold(name, strlen(name));
		for (int c = 0; c < NCOLS; c++)
			if (strcmp(name, col_name(c)) == 0) {
				map[i] = c;
				have_ref |= c == COL_REF;
			}
	}
	return have_ref;
}

/* A header column the table does not know is an error at it: a misspelled
 * "v_rate" would otherwise drop every rating in silence. Returns 0 when
 * one was reported. */
static int unknown_columns(struct diag_sink *d, struct diag_loc l, const char *const *cells,
			   const unsigned *starts, int n, const int *map)
{
	int ok = 1;
	char known[512];
	size_t k = 0;
	for (int c = 0; c < NCOLS && k < sizeof known; c++)
		k += (size_t)snprintf(known + k, sizeof known - k, "%s%s", c ? ", " : "", col_name(c));
	for (int i = 0; i < n; i++)
		if (map[i] < 0) {
			l.col = starts[i];
			diag_add(d, DIAG_ERROR, "parts", l, "unknown column '%s' (%s)", cells[i], known);
			ok = 0;
		}
	return ok;
}

/* The last row repeats an earlier row's ref (names compared without
 * case): which rating would hold is then a guess, so it is an error. */
static int duplicate_ref(const struct rating_table *t, struct diag_sink *d)
{
	const struct row *r = &t->rows[t->n - 1];
	const char *ref = r->cell[COL_REF];
	for (size_t i = 0; ref && *ref && i + 1 < t->n; i++) {
		const char *o = t->rows[i].cell[COL_REF];
		if (o && num_iequal(o, strlen(o), ref, strlen(ref))) {
			struct diag_loc l;
			cell_loc(t, r, COL_REF, &l);
			diag_add(d, DIAG_ERROR, "parts", l, "'%s' is already rated on line %u of this table",
				 ref, t->rows[i].line);
			return 1;
		}
	}
	return 0;
}

struct rating_table *rating_table_load(const char *path, struct arena *ar,
				       struct diag_sink *d)
{
	struct rating_table *t = arena_zalloc(ar, sizeof *t);
	FILE *f = infile_open(path);
	int err = errno;
	if (!t || !(t->path = arena_strdup(ar, path))) {
		if (f)
			fclose(f);
		return NULL;
	}
	t->file = diag_add_file(d, path);
	struct diag_loc l = {t->file, 0, 0};
	if (!f) {
		diag_add(d, DIAG_ERROR, "parts", l, "cannot read the parts table: %s",
			 infile_error_text(err));
		return NULL;
	}
	char line[4096], buf[4096];
	const char *cells[64];
	unsigned starts[64], lineno = 0;
	int map[64], nh = 0, ok = 1;
	size_t cap = 0;
	while (fgets(line, sizeof line, f)) {
		lineno++;
		/* a UTF-8 byte-order mark, as spreadsheets write it */
		if (lineno == 1 && strncmp(line, "\xef\xbb\xbf", 3) == 0)
			memmove(line, line + 3, strlen(line + 3) + 1);
		if (line[strspn(line, " \t\r\n")] == '\0')
			continue;
		int n = split_csv(line, buf, cells, starts, 64);
		l.line = lineno;
		l.col = 1;
		if (n < 0) {
			diag_add(d, DIAG_ERROR, "parts", l, "a quoted cell has no closing quote");
			ok = 0;
			continue;
		}
		if (nh == 0) {
			nh = n;
			if (!header(cells, starts, n, map)) {
				diag_add(d, DIAG_ERROR, "parts", l, "the header row has no 'ref' column");
				fclose(f);
				return NULL;
			}
			ok &= unknown_columns(d, l, cells, starts, n, map);
			continue;
		}
		if (t->n == cap) {
			size_t ncap = cap ? cap * 2 : 32;
			struct row *v = arena_alloc(ar, ncap * sizeof *v);
			if (!v) {
				fclose(f);
				return NULL;
			}
			if (t->n)
				memcpy(v, t->rows, t->n * sizeof *v);
			t->rows = v;
			cap = ncap;
		}
		struct row *r = &t->rows[t->n++];
		memset(r, 0, sizeof *r);
		r->line = lineno;
		for (int i = 0; i < n && i < nh; i++)
			if (map[i] >= 0) {
				r->cell[map[i]] = arena_strdup(ar, cells[i]);
				r->col[map[i]] = starts[i];
			}
		ok &= !duplicate_ref(t, d);
	}
	fclose(f);
	if (ok && !(t->used = arena_alloc(ar, (t->n + 1) * sizeof *t->used)))
		return NULL;
	for (size_t i = 0; ok && i < t->n; i++)
		atomic_init(&t->used[i], 0);
	return ok ? t : NULL;
}

size_t rating_table_rows(const struct rating_table *t)
{
	return t ? t->n : 0;
}

int rating_table_row(const struct rating_table *t, size_t k, const char **ref,
		     struct diag_loc *loc)
{
	const struct row *r = &t->rows[k];
	*ref = r->cell[COL_REF] ? r->cell[COL_REF] : "";
	cell_loc(t, r, COL_REF, loc);
	if (!loc->col)
		loc->col = 1;
	return atomic_load(&t->used[k]) != 0;
}

/* ---- values ---- */

static int parse_value(const char *s, int pct_allowed, double *out)
{
	size_t n = strlen(s);
	while (n && s[n - 1] == ' ')
		n--;
	int pct = n && s[n - 1] == '%';
	if (pct && !pct_allowed)
		return 0;
	if (!num_ok(num_parse(s, pct ? n - 1 : n, out, NULL)))
		return 0;
	if (pct)
		*out /= 100;
	return 1;
}

static int kind_fits(const struct nl_part *p, const char *kind)
{
	const char *const *list = p->kind == NL_C ? profile_cap_kinds
				: p->kind == NL_D ? profile_diode_kinds : NULL;
	for (int i = 0; list && list[i]; i++)
		if (strcmp(list[i], kind) == 0 && strcmp(kind, "default") != 0)
			return 1;
	return 0;
}

static const char *known_kind(const char *kind)
{
	for (int i = 0; profile_cap_kinds[i]; i++)
		if (strcmp(profile_cap_kinds[i], kind) == 0)
			return profile_cap_kinds[i];
	for (int i = 0; profile_diode_kinds[i]; i++)
		if (strcmp(profile_diode_kinds[i], kind) == 0)
			return profile_diode_kinds[i];
	return NULL;
}

struct source {
	const char *from;
	struct diag_loc loc;
	uint32_t table_file;   /* the parts table's id in d */
	struct diag_sink *d;
	struct arena *ar;
};

static void set_field(struct rating_field *f, const char *text, int pct,
		      const struct source *src, const char *what)
{
	double v;
	if (!text || !*text)
		return;
	if (!parse_value(text, pct, &v) || v < 0) {
		diag_add(src->d, DIAG_ERROR, "rating", src->loc,
			 "%s '%s' is not a non-negative value", what, text);
		return;
	}
	if (pct && v >= 1 && !strchr(text, '%')) {
		diag_add(src->d, DIAG_ERROR, "rating", src->loc,
			 "%s '%s': write a tolerance with %% (10%%) or as a fraction below 1", what, text);
		return;
	}
	if (v == 0 && strcmp(what, "surge_width") == 0) {
		diag_add(src->d, DIAG_ERROR, "rating", src->loc,
			 "surge_width '%s': a surge rating's pulse lasts longer than 0 s", text);
		return;
	}
	f->value = v;
	f->from = src->from;
}

/* A capacitance-against-bias curve (capbias.h), for capacitors. */
static void set_bias(struct rating *r, const struct nl_part *p, const char *text,
		     const struct source *src)
{
	if (!text || !*text)
		return;
	struct capbias *c = arena_alloc(src->ar, sizeof *c);
	size_t bad = 0;
	const char *msg = c ? capbias_parse(text, strlen(text), c, &bad) : NULL;
	if (!c)
		return; /* out of memory: the arena's owner reports it */
	if (msg) {
		struct diag_loc l = src->loc;
		diag_add(src->d, DIAG_ERROR, "rating", l, "c_bias '%s': %s (at character %zu)", text,
			 msg, bad + 1);
		return;
	}
	if (p->kind != NL_C) {
		diag_add(src->d, DIAG_WARNING, "rating", src->loc,
			 "c_bias is a capacitor's curve; ignored for %s", p->path);
		return;
	}
	r->c_bias = c;
	r->c_bias_from = src->from;
}

static void set_kind(struct rating *r, const struct nl_part *p, const char *text,
		     const struct source *src)
{
	if (!text || !*text)
		return;
	char k[32];
	snprintf(k, sizeof k, "%s", text);
	num_fold(k, strlen(k));
	const char *kind = known_kind(k);
	if (!kind || strcmp(k, "default") == 0) {
		diag_add(src->d, DIAG_ERROR, "rating", src->loc, "unknown part kind '%s'", text);
		return;
	}
	if (!kind_fits(p, kind)) {
		diag_add(src->d, DIAG_WARNING, "rating", src->loc,
			 "kind '%s' does not fit %s '%s'; ignored for it", kind,
			 nl_kind_name(p->kind), p->path);
		return;
	}
	r->kind = kind;
	r->kind_from = src->from;
}

static void from_model(struct rating *r, const struct nl_part *p)
{
	double bv = p->kind == NL_D ? dmodel_given(p->model, DM_BV) : NAN;
	if (!isnan(bv) && bv > 0) {
		r->v_rated.value = bv;
		r->v_rated.from = "model BV";
	}
	double tt = p->kind == NL_D ? dmodel_given(p->model, DM_TT) : NAN;
	if (!isnan(tt) && tt > 0) {
		r->trr.value = tt;
		r->trr.from = "model TT";
	}
}

static void from_row(struct rating *r, const struct nl_part *p,
		     const struct rating_table *t, const struct row *row,
		     struct source *src)
{
	char from[64];
	snprintf(from, sizeof from, "%s:%u", t->path, row->line);
	src->from = arena_strdup(src->ar, from);
	if (!src->from)
		return;
	for (size_t k = 0; k < NVALUES; k++) {
		cell_loc(t, row, (enum col)(COL_VALUE0 + k), &src->loc);
		src->loc.file = src->table_file;
		set_field(field_at(r, k), row->cell[COL_VALUE0 + k], value_cols[k].pct, src,
			  value_cols[k].name);
	}
	cell_loc(t, row, COL_KIND, &src->loc);
	src->loc.file = src->table_file;
	set_kind(r, p, row->cell[COL_KIND], src);
	if (row->cell[COL_NOTE] && *row->cell[COL_NOTE])
		r->note = row->cell[COL_NOTE];
	cell_loc(t, row, COL_CBIAS, &src->loc);
	src->loc.file = src->table_file;
	set_bias(r, p, row->cell[COL_CBIAS], src);
}

/* A BOM row's voltage and kind; problems are located in the BOM's cells. */
static void from_bom(struct rating *r, const struct nl_part *p, const struct bom_entry *e,
		     uint32_t bom_file, struct source *src)
{
	src->from = e->from;
	if (!isnan(e->v_rated)) {
		r->v_rated.value = e->v_rated;
		r->v_rated.from = e->from;
	}
	if (e->kind) {
		src->loc = e->kind_loc;
		src->loc.file = bom_file;
		set_kind(r, p, e->kind, src);
	}
	if (e->mpn && !r->note)
		r->note = e->mpn;
}

static void from_annot(struct rating *r, const struct nl_part *p,
		       const struct annot *a, struct source *src)
{
	src->loc = a->loc;
	for (size_t k = 0; k < NVALUES; k++) {
		const struct annot_kv *kv = annot_get(a, value_cols[k].name);
		if (kv)
			set_field(field_at(r, k), kv->text, value_cols[k].pct, src, value_cols[k].name);
	}
	const struct annot_kv *k = annot_get(a, "kind");
	if (k)
		set_kind(r, p, k->text, src);
	const struct annot_kv *note = annot_get(a, "note");
	if (note)
		r->note = note->text;
	const struct annot_kv *cb = annot_get(a, "c_bias");
	if (cb)
		set_bias(r, p, cb->text, src);
}

static void init(struct rating *r)
{
	memset(r, 0, sizeof *r);
	for (size_t k = 0; k < NVALUES; k++)
		field_at(r, k)->value = NAN;
}

struct rating *rating_resolve(const struct nl_circuit *c,
			      const struct rating_table *table, const struct bom *bom,
			      const struct annot *annots, uint32_t nannots,
			      struct arena *ar, struct diag_sink *d)
{
	size_t np = nl_part_count(c);
	struct rating *out = arena_alloc(ar, (np + 1) * sizeof *out);
	uint8_t *an_used = arena_zalloc(ar, nannots + 1);
	/* the table may be shared by many files, each with its own sink */
	uint32_t tfile = table ? diag_add_file(d, table->path) : 0;
	struct bom_use *bu = bom ? bom_use_begin(bom, ar, d) : NULL;
	if (!out || !an_used || (bom && !bu))
		return NULL;
	for (size_t i = 0; i < np; i++) {
		const struct nl_part *p = nl_part_at(c, i);
		const struct bom_entry *be = bu ? bom_use_part(bu, p) : NULL;
		init(&out[i]);
		if (p->kind != NL_C && p->kind != NL_D)
			continue;
		from_model(&out[i], p);
		struct source src = {NULL, {0, 0, 0}, tfile, d, ar};
		if (be)
			from_bom(&out[i], p, be, bom_use_file(bu), &src);
		for (size_t k = 0; table && k < table->n; k++)
			if (table->rows[k].cell[COL_REF] && annot_glob(table->rows[k].cell[COL_REF], p->path)) {
				from_row(&out[i], p, table, &table->rows[k], &src);
				atomic_store(&table->used[k], 1);
			}
		for (uint32_t k = 0; k < nannots; k++) {
			if (annots[k].kind != AN_PART || !annot_glob(annots[k].target, p->path))
				continue;
			char from[96];
			snprintf(from, sizeof from, "annotation %s:%u", diag_file_name(d, annots[k].loc.file),
				 annots[k].loc.line);
			src.from = arena_strdup(ar, from);
			from_annot(&out[i], p, &annots[k], &src);
			an_used[k] = 1;
		}
	}
	for (uint32_t k = 0; k < nannots; k++)
		if (annots[k].kind == AN_PART && !an_used[k])
			diag_add(d, DIAG_WARNING, "annotation", annots[k].loc,
				 "*@part names '%s', which matches no capacitor or diode", annots[k].target);
	if (bu)
		bom_use_end(bu);
	/* a row that matches nothing here may rate a part of another file:
	 * unmatched rows are judged once the whole run is checked */
	return out;
}

int rating_breakdown(const struct nl_part *p, const struct rating *r, double reverse_v)
{
	if (p->kind != NL_D || !isfinite(reverse_v))
		return 0;
	if (r->kind && strcmp(r->kind, "zener") == 0)
		return reverse_v >= 0.9 * r->v_rated.value || isnan(r->v_rated.value);
	double bv = dmodel_given(p->model, DM_BV);
	return r->v_rated.from && strcmp(r->v_rated.from, "model BV") == 0 && bv > 0 &&
	       reverse_v >= bv * RATING_BREAKDOWN_SHARE;
}

double rating_vf_at(const struct nl_part *d, const char *kind, double amps)
{
	const double vt = 0.025852; /* kT/q at 300.15 K */
	double is = dmodel_given(d->model, DM_IS), n = dmodel_given(d->model, DM_N);
	double rs = dmodel_given(d->model, DM_RS), area = d->value > 0 ? d->value : 1;
	if (!isnan(is) && is > 0) {
		if (isnan(n) || n <= 0)
			n = 1;
		return n * vt * log1p(amps / (is * area)) + (isnan(rs) ? 0 : rs / area * amps);
	}
	if (kind && strcmp(kind, "schottky") == 0)
		return amps > 1e-3 ? 0.4 : 0.3;
	return amps > 1e-3 ? 0.85 : 0.7;
}

double rating_vf(const struct nl_part *d, const char *kind)
{
	return rating_vf_at(d, kind, 1e-3);
}
