/* bom.c: reading a bill of materials (bom.h). libcsv splits the records;
 * this file finds the header row and its columns by alias, reads each row
 * through bomval.c, keeps each row's problems with the row, and looks part
 * names up in the sorted designators. Precedence among rating sources is
 * left to rating.c. */
#include "bom.h"

#include <csv.h>
#include <errno.h>
#include <math.h>
#include <stdatomic.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>

#include "bomval.h"
#include "infile.h"
#include "num.h"

#define BOM_MAX_BYTES (64u << 20) /* a guard: a BOM is kilobytes */
#define BOM_MAX_CELLS 256
#define BOM_HEADER_SEARCH 20 /* rows that may stand above the header */

enum role { R_DES,
	    R_VALUE,
	    R_DESC,
	    R_VOLT,
	    R_KIND,
	    R_MPN,
	    R_QTY,
	    NROLES,
	    R_NONE };
static const char *const role_names[NROLES] = {"designator", "value", "description", "voltage",
					       "kind", "mpn", "quantity"};

/* Header names (folded, '_' '-' '.' read as spaces, a trailing "(V)" or
 * "[V]" dropped); docs/check.md lists them [bom-aliases]. */
static const struct {
	const char *name;
	enum role role;
} aliases[] = {
	{"designator", R_DES},
	{"designators", R_DES},
	{"reference", R_DES},
	{"references", R_DES},
	{"refdes", R_DES},
	{"ref des", R_DES},
	{"ref", R_DES},
	{"refs", R_DES},
	{"part reference", R_DES},
	{"reference designator", R_DES},
	{"reference designators", R_DES},
	{"part ref", R_DES},
	{"value", R_VALUE},
	{"values", R_VALUE},
	{"val", R_VALUE},
	{"comment", R_VALUE},
	{"part value", R_VALUE},
	{"description", R_DESC},
	{"desc", R_DESC},
	{"part description", R_DESC},
	{"voltage", R_VOLT},
	{"rated voltage", R_VOLT},
	{"voltage rating", R_VOLT},
	{"v", R_VOLT},
	{"v rated", R_VOLT},
	{"vrated", R_VOLT},
	{"rating", R_VOLT},
	{"max voltage", R_VOLT},
	{"working voltage", R_VOLT},
	{"wv", R_VOLT},
	{"vdc", R_VOLT},
	{"vr", R_VOLT},
	{"vrrm", R_VOLT},
	{"part kind", R_KIND},
	{"kind", R_KIND},
	{"type", R_KIND},
	{"part type", R_KIND},
	{"component type", R_KIND},
	{"dielectric", R_KIND},
	{"technology", R_KIND},
	{"tech", R_KIND},
	{"material", R_KIND},
	{"manufacturer part number", R_MPN},
	{"manufacturer part no", R_MPN},
	{"manufacturer pn", R_MPN},
	{"mfr part number", R_MPN},
	{"mfr part no", R_MPN},
	{"mfr pn", R_MPN},
	{"mfg part number", R_MPN},
	{"mfg pn", R_MPN},
	{"mpn", R_MPN},
	{"part number", R_MPN},
	{"part no", R_MPN},
	{"pn", R_MPN},
	{"p/n", R_MPN},
	{"quantity", R_QTY},
	{"qty", R_QTY},
	{"count", R_QTY},
};

struct issue {
	unsigned line, col;
	const char *msg;
};

struct row {
	struct bom_entry e;
	unsigned line, des_line, des_col;
	struct issue *issues;
	unsigned nissues, cap;
	const char *no_des; /* why no designator was read, or NULL */
	int rated;          /* gives (or tried to give) a voltage or kind */
};

struct des {
	const char *name, *key; /* as written; folded */
	uint32_t row;
	unsigned line, col;
	int dup; /* listed again: the first row rates it */
};

struct bom {
	const char *path;
	uint32_t file; /* in the load sink */
	struct row *rows;
	size_t nrows, rcap;
	struct des *des;
	size_t ndes, dcap;
	atomic_uchar *used; /* per designator */
	const char *columns;
	unsigned header_line;
};

struct cell {
	const char *text;
	size_t len;
	unsigned line, col;
	int quoted;
};

/* The reader's state while libcsv calls back. */
struct reader {
	struct bom *b;
	struct arena *ar;
	struct diag_sink *d;
	const char *buf;
	unsigned line, col;   /* of the byte being fed */
	size_t at;            /* its offset */
	unsigned fline, fcol; /* where the current field started */
	size_t fat;
	int need_start, row_end; /* a field starts at the next byte fed */
	size_t quotes;           /* '"' bytes in the field so far */
	struct cell cells[BOM_MAX_CELLS];
	int ncells, too_many;
	int map[BOM_MAX_CELLS]; /* header: the role of each column */
	int have[NROLES];       /* 1-based column of each role, 0: none */
	unsigned searched;      /* records read before the header */
	char delim;
	int oom;
};

/* ---- header ---- */

static void normalise(const char *s, size_t n, char *out, size_t size)
{
	size_t k = 0;
	for (size_t i = 0; i < n && k + 1 < size; i++) {
		char c = s[i];
		if (c == '(' || c == '[')
			break;
		if (c == '_' || c == '-' || c == '.' || c == '\t')
			c = ' ';
		if (c == ' ' && (k == 0 || out[k - 1] == ' '))
			continue;
		out[k++] = c;
	}
	while (k && out[k - 1] == ' ')
		k--;
	out[k] = '\0';
	num_fold(out, k);
}

static int role_of(const char *s, size_t n)
{
	char name[64];
	normalise(s, n, name, sizeof name);
	for (size_t i = 0; i < sizeof aliases / sizeof aliases[0]; i++)
		if (strcmp(name, aliases[i].name) == 0)
			return (int)aliases[i].role;
	return R_NONE;
}

/* The columns line: what each role reads and what is not used. */
static const char *columns_text(struct reader *r)
{
	char buf[2048];
	size_t k = (size_t)snprintf(buf, sizeof buf, "BOM %s: header on line %u, '%s' separated",
				    r->b->path, r->b->header_line, r->delim == '\t' ? "\\t" : (char[]){r->delim, 0});
	for (int role = 0; role < NROLES && k < sizeof buf; role++) {
		int c = r->have[role];
		if (c)
			k += (size_t)snprintf(buf + k, sizeof buf - k, "; %s: column %d '%.40s'%s",
					      role_names[role], c, r->cells[c - 1].text,
					      role == R_QTY ? " (not needed)" : "");
	}
	int first = 1;
	for (int i = 0; i < r->ncells && k < sizeof buf; i++)
		if (r->map[i] == R_NONE && r->cells[i].len) {
			k += (size_t)snprintf(buf + k, sizeof buf - k, "%s'%.40s' (column %d)",
					      first ? "; not used: " : ", ", r->cells[i].text, i + 1);
			first = 0;
		}
	if (!r->have[R_VOLT] && !r->have[R_KIND] && k < sizeof buf)
		snprintf(buf + k, sizeof buf - k, "; no voltage or kind column: ratings come from the value%s",
			 r->have[R_DESC] ? " and description texts" : " text");
	return arena_strdup(r->ar, buf);
}

/* A record that has a designator column becomes the header. */
static int try_header(struct reader *r)
{
	int des = 0;
	for (int i = 0; i < r->ncells; i++)
		des |= role_of(r->cells[i].text, r->cells[i].len) == R_DES;
	if (!des)
		return 0;
	for (int i = 0; i < r->ncells; i++) {
		int role = role_of(r->cells[i].text, r->cells[i].len);
		r->map[i] = role;
		if (role != R_NONE && r->have[role])
			r->map[i] = R_NONE; /* a second column for a role: the first is read */
		else if (role != R_NONE)
			r->have[role] = i + 1;
	}
	r->b->header_line = r->cells[0].line;
	r->b->columns = columns_text(r);
	if (!r->b->columns)
		r->oom = 1;
	return 1;
}

/* ---- rows ---- */

static struct row *new_row(struct reader *r)
{
	struct bom *b = r->b;
	if (b->nrows == b->rcap) {
		size_t ncap = b->rcap ? b->rcap * 2 : 64;
		struct row *v = arena_alloc(r->ar, ncap * sizeof *v);
		if (!v)
			return NULL;
		if (b->nrows)
			memcpy(v, b->rows, b->nrows * sizeof *v);
		b->rows = v;
		b->rcap = ncap;
	}
	struct row *w = &b->rows[b->nrows++];
	memset(w, 0, sizeof *w);
	w->e.v_rated = NAN;
	return w;
}

static void row_issue(struct reader *r, struct row *w, unsigned line, unsigned col, const char *fmt,
		      ...) DIAG_PRINTF(5, 6);

static void row_issue(struct reader *r, struct row *w, unsigned line, unsigned col, const char *fmt,
		      ...)
{
	char msg[512];
	va_list ap;
	va_start(ap, fmt);
	vsnprintf(msg, sizeof msg, fmt, ap);
	va_end(ap);
	if (w->nissues == w->cap) {
		unsigned ncap = w->cap ? w->cap * 2 : 4;
		struct issue *v = arena_alloc(r->ar, ncap * sizeof *v);
		if (!v) {
			r->oom = 1;
			return;
		}
		if (w->nissues)
			memcpy(v, w->issues, w->nissues * sizeof *v);
		w->issues = v;
		w->cap = ncap;
	}
	const char *m = arena_strdup(r->ar, msg);
	if (!m)
		r->oom = 1;
	else
		w->issues[w->nissues++] = (struct issue){line, col, m};
}

/* The column of byte off of a cell's text (a quoted cell starts one later). */
static unsigned at_col(const struct cell *c, size_t off)
{
	return c->col + (unsigned)c->quoted + (unsigned)off;
}

static void add_des(struct reader *r, struct row *w, const char *name, unsigned col)
{
	struct bom *b = r->b;
	if (b->ndes == b->dcap) {
		size_t ncap = b->dcap ? b->dcap * 2 : 128;
		struct des *v = arena_alloc(r->ar, ncap * sizeof *v);
		if (!v) {
			r->oom = 1;
			return;
		}
		if (b->ndes)
			memcpy(v, b->des, b->ndes * sizeof *v);
		b->des = v;
		b->dcap = ncap;
	}
	char *key = arena_strdup(r->ar, name);
	const char *nm = arena_strdup(r->ar, name);
	if (!key || !nm) {
		r->oom = 1;
		return;
	}
	num_fold(key, strlen(key));
	b->des[b->ndes++] = (struct des){nm, key, (uint32_t)(w - b->rows), w->line, col, 0};
}

static void read_designators(struct reader *r, struct row *w, const struct cell *c)
{
	size_t pos = 0, before = r->b->ndes;
	struct bomval_token t;
	const char *why = NULL, *first_bad = NULL;
	w->des_line = c->line;
	w->des_col = c->col;
	for (;;) {
		enum bomval_status st = bomval_designator(c->text, c->len, &pos, &t, &why);
		if (st == BOMVAL_NONE)
			break;
		if (st == BOMVAL_BAD) {
			row_issue(r, w, c->line, at_col(c, t.off), "designator '%.*s' cannot be read: %s",
				  (int)t.len, c->text + t.off, why);
			first_bad = first_bad ? first_bad : why;
			continue;
		}
		for (unsigned long k = 0; k <= t.hi - t.lo; k++) {
			char name[128];
			if (bomval_name(c->text, &t, k, name, sizeof name))
				add_des(r, w, name, at_col(c, t.off));
		}
	}
	if (r->b->ndes == before)
		w->no_des = first_bad ? first_bad : "the designator cell is empty";
}

static void read_voltage(struct reader *r, struct row *w, const struct cell *c)
{
	double v;
	const char *why = NULL;
	enum bomval_status st = bomval_voltage(c->text, c->len, 1, &v, &why);
	w->rated |= st != BOMVAL_NONE;
	if (st == BOMVAL_BAD)
		row_issue(r, w, c->line, at_col(c, 0), "voltage '%s' cannot be read: %s", c->text, why);
	if (st != BOMVAL_OK)
		return;
	w->e.v_rated = v;
	w->e.v_loc = (struct diag_loc){0, c->line, at_col(c, 0)};
}

/* A value, description or kind text: what it gives where the row has
 * nothing yet; a disagreement with what it has is an issue. */
static void read_text(struct reader *r, struct row *w, const struct cell *c, int kind_column,
		      const char *what)
{
	struct bomval_text t;
	bomval_scan(c->text, c->len, kind_column, &t);
	w->rated |= kind_column && c->len && t.nissues;
	for (unsigned i = 0; i < t.nissues; i++) {
		const struct bomval_item *it = &t.issue[i];
		if (it->len == c->len)
			row_issue(r, w, c->line, at_col(c, it->off), "%s '%s': %s", what, c->text, it->why);
		else
			row_issue(r, w, c->line, at_col(c, it->off), "%s '%.*s' in '%s': %s", what,
				  (int)it->len, c->text + it->off, c->text, it->why);
	}
	if (!isnan(t.v) && isnan(w->e.v_rated)) {
		w->e.v_rated = t.v;
		w->e.v_loc = (struct diag_loc){0, c->line, at_col(c, t.v_at.off)};
	} else if (!isnan(t.v) && t.v != w->e.v_rated) {
		row_issue(r, w, c->line, at_col(c, t.v_at.off),
			  "%s '%.*s' says %g V, the row already has %g V: %g V is used", what,
			  (int)t.v_at.len, c->text + t.v_at.off, t.v, w->e.v_rated, w->e.v_rated);
	}
	if (t.kind && w->e.kind && bomval_refines(w->e.kind, t.kind))
		w->e.kind = NULL; /* "ceramic" in one column, "X7R" in another */
	if (t.kind && w->e.kind && bomval_refines(t.kind, w->e.kind))
		t.kind = NULL;
	if (t.kind && !w->e.kind) {
		w->e.kind = t.kind;
		w->e.kind_loc = (struct diag_loc){0, c->line, at_col(c, t.kind_at.off)};
	} else if (t.kind && strcmp(t.kind, w->e.kind) != 0) {
		row_issue(r, w, c->line, at_col(c, t.kind_at.off),
			  "%s '%.*s' says %s, the row already has %s: %s is used", what,
			  (int)t.kind_at.len, c->text + t.kind_at.off, t.kind, w->e.kind, w->e.kind);
	}
}

static const struct cell *cell_of(const struct reader *r, enum role role)
{
	int c = r->have[role];
	return c && c <= r->ncells ? &r->cells[c - 1] : NULL;
}

static void read_row(struct reader *r)
{
	struct row *w = new_row(r);
	if (!w) {
		r->oom = 1;
		return;
	}
	w->line = r->cells[0].line;
	char from[512];
	snprintf(from, sizeof from, "BOM %s:%u", r->b->path, w->line);
	w->e.from = arena_strdup(r->ar, from);
	const struct cell *c;
	/* most explicit first: a voltage or kind column, then the value, then
	 * the description */
	if ((c = cell_of(r, R_VOLT)))
		read_voltage(r, w, c);
	if ((c = cell_of(r, R_KIND)))
		read_text(r, w, c, 1, "kind");
	if ((c = cell_of(r, R_VALUE)))
		read_text(r, w, c, 0, "value");
	if ((c = cell_of(r, R_DESC)))
		read_text(r, w, c, 0, "description");
	if ((c = cell_of(r, R_MPN)) && c->len)
		w->e.mpn = c->text;
	w->rated |= !isnan(w->e.v_rated) || w->e.kind;
	if ((c = cell_of(r, R_DES)))
		read_designators(r, w, c);
	else
		w->no_des = "the row has no designator cell";
	if (!w->e.from)
		r->oom = 1;
}

/* ---- libcsv callbacks ---- */

static void on_field(void *s, size_t len, void *data)
{
	struct reader *r = data;
	if (r->ncells == BOM_MAX_CELLS) {
		r->too_many = 1;
		return;
	}
	struct cell *c = &r->cells[r->ncells++];
	c->text = s ? arena_strndup(r->ar, s, len) : "";
	c->len = len;
	c->line = r->fline;
	c->col = r->fcol;
	size_t q = r->fat;
	while (r->buf[q] == ' ')
		q++;
	c->quoted = r->buf[q] == '"';
	c->col += (unsigned)(q - r->fat); /* libcsv drops the spaces before a cell */
	if (!c->text)
		r->oom = 1;
	r->need_start = 1;
}

static int blank_record(const struct reader *r)
{
	for (int i = 0; i < r->ncells; i++)
		for (size_t k = 0; k < r->cells[i].len; k++)
			if (r->cells[i].text[k] != ' ' && r->cells[i].text[k] != '\t')
				return 0;
	return 1;
}

static void on_record(int term, void *data)
{
	struct reader *r = data;
	(void)term;
	r->need_start = 1;
	r->row_end = 1;
	if (r->oom || blank_record(r)) {
		r->ncells = 0;
		return;
	}
	if (r->b->header_line == 0)
		r->searched++;
	if (r->b->header_line == 0 && try_header(r))
		; /* the header */
	else if (r->b->header_line)
		read_row(r);
	r->ncells = 0;
}

/* ---- the file ---- */

/* Reads the whole file into ar; NULL with the reason in d. */
static char *slurp(const char *path, struct bom *b, struct arena *ar, struct diag_sink *d,
		   size_t *n)
{
	struct diag_loc l = {b->file, 0, 0};
	FILE *f = infile_open(path);
	if (!f) {
		diag_add(d, DIAG_ERROR, "bom", l, "cannot read the BOM: %s", infile_error_text(errno));
		return NULL;
	}
	size_t cap = 1 << 16, k = 0, got;
	char *buf = arena_alloc(ar, cap + 1);
	while (buf && (got = fread(buf + k, 1, cap - k, f)) > 0) {
		k += got;
		if (k == cap && cap >= BOM_MAX_BYTES) {
			diag_add(d, DIAG_ERROR, "bom", l, "the BOM is larger than 64 MiB");
			buf = NULL;
		} else if (k == cap) {
			char *nb = arena_alloc(ar, cap * 2 + 1);
			if (nb)
				memcpy(nb, buf, k);
			buf = nb;
			cap *= 2;
		}
	}
	fclose(f);
	if (buf)
		buf[k] = '\0';
	*n = k;
	return buf;
}

/* The delimiter: "sep=X" on the first line (as spreadsheets write it),
 * else whichever of , ; and tab occurs most outside quotes in the first
 * lines (commas on ties). *skip: bytes of a sep= line. */
static char find_delim(const char *s, size_t n, size_t *skip)
{
	*skip = 0;
	if (n >= 5 && num_ieq(s, 4, "sep=") && (s[4] == ',' || s[4] == ';' || s[4] == '\t')) {
		*skip = strcspn(s, "\n");
		*skip += *skip < n;
		return s[4];
	}
	size_t count[3] = {0, 0, 0};
	int quoted = 0;
	unsigned lines = 0;
	for (size_t i = 0; i < n && lines < BOM_HEADER_SEARCH; i++) {
		if (s[i] == '"')
			quoted = !quoted;
		else if (!quoted && s[i] == '\n')
			lines++;
		else if (!quoted)
			count[0] += s[i] == ',', count[1] += s[i] == ';', count[2] += s[i] == '\t';
	}
	if (count[1] > count[0] && count[1] >= count[2])
		return ';';
	return count[2] > count[0] ? '\t' : ',';
}

/* Only tabs are spaces for a tab-separated file's cells; libcsv trims
 * spaces and tabs around unquoted cells otherwise. */
static int space_only(unsigned char c)
{
	return c == ' ';
}

/* Feeds the text to libcsv one byte at a time, so that each callback
 * knows the line and column of the field it closes. 0 on a fatal error. */
static int parse(struct reader *r, const char *s, size_t n, struct diag_loc l)
{
	struct csv_parser p;
	if (csv_init(&p, CSV_STRICT_FINI | CSV_APPEND_NULL) != 0)
		return r->oom = 1, 0;
	csv_set_delim(&p, (unsigned char)r->delim);
	if (r->delim == '\t')
		csv_set_space_func(&p, space_only);
	r->need_start = 1;
	for (size_t i = 0; i < n && !r->oom; i++) {
		char ch = s[i];
		if (r->need_start && !(r->row_end && (ch == '\r' || ch == '\n'))) {
			r->fline = r->line, r->fcol = r->col, r->fat = i;
			r->need_start = r->row_end = 0;
			r->quotes = 0;
		}
		r->quotes += ch == '"';
		r->at = i;
		if (csv_parse(&p, s + i, 1, on_field, on_record, r) != 1)
			r->oom = 1;
		r->col = ch == '\n' ? 1 : r->col + 1;
		r->line += ch == '\n';
	}
	/* libcsv reads an unclosed quote as a cell running to the end of the
	 * file; an odd count of quotes in a cell that starts with one is that */
	size_t q = r->fat;
	while (!r->need_start && q < n && s[q] == ' ')
		q++;
	int open = !r->need_start && q < n && s[q] == '"' && r->quotes % 2;
	int ok = !r->oom && !open && csv_fini(&p, on_field, on_record, r) == 0;
	if (!ok && !r->oom) {
		l.line = r->fline;
		l.col = r->fcol;
		diag_add(r->d, DIAG_ERROR, "bom", l, "a quoted cell opened here has no closing quote");
	}
	csv_free(&p);
	return ok;
}

static int des_cmp(const void *a, const void *b)
{
	const struct des *x = a, *y = b;
	int c = strcmp(x->key, y->key);
	return c ? c : (x->row > y->row) - (x->row < y->row);
}

/* Sorts the designators for lookup; a designator listed again is an issue
 * of its later row, and the first row keeps rating it. */
static void index_designators(struct reader *r)
{
	struct bom *b = r->b;
	if (b->ndes)
		qsort(b->des, b->ndes, sizeof *b->des, des_cmp);
	for (size_t i = 1; i < b->ndes; i++) {
		struct des *x = &b->des[i], *first = x - 1;
		if (strcmp(x->key, first->key) != 0)
			continue;
		while (first->dup)
			first--;
		x->dup = 1;
		row_issue(r, &b->rows[x->row], x->line, x->col,
			  "designator '%s' is already listed on line %u of this BOM: that row rates it",
			  x->name, first->line);
	}
}

static struct bom *loaded(struct reader *r, struct diag_loc l)
{
	struct bom *b = r->b;
	if (!r->oom && !b->header_line) {
		diag_add(r->d, DIAG_ERROR, "bom", l,
			 "no header row with a designator column (Designator, Reference, RefDes, Ref, "
			 "Part Reference...) in the first %u rows",
			 BOM_HEADER_SEARCH);
		return NULL;
	}
	if (r->too_many)
		diag_add(r->d, DIAG_WARNING, "bom", l, "rows with more than %d cells: the cells past it are not read",
			 BOM_MAX_CELLS);
	index_designators(r);
	b->used = r->oom ? NULL : arena_alloc(r->ar, (b->ndes + 1) * sizeof *b->used);
	for (size_t i = 0; b->used && i < b->ndes; i++)
		atomic_init(&b->used[i], 0);
	if (!b->used) {
		diag_add(r->d, DIAG_ERROR, "bom", l, "out of memory while reading the BOM");
		return NULL;
	}
	return b;
}

struct bom *bom_load(const char *path, struct arena *ar, struct diag_sink *d)
{
	struct bom *b = arena_zalloc(ar, sizeof *b);
	struct reader *r = arena_zalloc(ar, sizeof *r);
	size_t n = 0, skip;
	if (!b || !r || !(b->path = arena_strdup(ar, path)))
		return NULL;
	b->file = diag_add_file(d, path);
	struct diag_loc l = {b->file, 0, 0};
	char *s = slurp(path, b, ar, d, &n);
	if (!s)
		return NULL;
	if (n >= 2 && ((s[0] == '\xff' && s[1] == '\xfe') || (s[0] == '\xfe' && s[1] == '\xff'))) {
		diag_add(d, DIAG_ERROR, "bom", l, "the BOM is UTF-16 text: export it as UTF-8 CSV");
		return NULL;
	}
	if (n >= 3 && memcmp(s, "\xef\xbb\xbf", 3) == 0) { /* a UTF-8 byte-order mark */
		s += 3;
		n -= 3;
	}
	*r = (struct reader){.b = b, .ar = ar, .d = d, .line = 1, .col = 1};
	r->delim = find_delim(s, n, &skip);
	for (size_t i = 0; i < skip; i++)
		r->line += s[i] == '\n';
	r->buf = s + skip;
	if (!parse(r, s + skip, n - skip, l))
		return r->oom ? (diag_add(d, DIAG_ERROR, "bom", l, "out of memory while reading the BOM"), NULL)
			      : NULL;
	return loaded(r, l);
}

const char *bom_columns(const struct bom *b)
{
	return b->columns;
}

/* ---- use by the files of a run ---- */

struct bom_use {
	const struct bom *b;
	struct diag_sink *d;
	uint32_t file;
	uint8_t *present; /* per row: names a part of this file */
};

struct bom_use *bom_use_begin(const struct bom *b, struct arena *ar, struct diag_sink *d)
{
	struct bom_use *u = arena_zalloc(ar, sizeof *u);
	if (!u || !(u->present = arena_zalloc(ar, b->nrows + 1)))
		return NULL;
	u->b = b;
	u->d = d;
	u->file = diag_add_file(d, b->path);
	return u;
}

uint32_t bom_use_file(const struct bom_use *u)
{
	return u->file;
}

/* The first entry named name[0..n) (folded), or NULL; marks it and its
 * repeats used, and their rows present in this file. */
static const struct des *find(struct bom_use *u, const char *name, size_t n)
{
	const struct bom *b = u->b;
	char key[256];
	if (n == 0 || n >= sizeof key)
		return NULL;
	memcpy(key, name, n);
	key[n] = '\0';
	num_fold(key, n);
	size_t lo = 0, hi = b->ndes;
	while (lo < hi) {
		size_t mid = lo + (hi - lo) / 2;
		if (strcmp(b->des[mid].key, key) < 0)
			lo = mid + 1;
		else
			hi = mid;
	}
	if (lo == b->ndes || strcmp(b->des[lo].key, key) != 0)
		return NULL;
	for (size_t k = lo; k < b->ndes && strcmp(b->des[k].key, key) == 0; k++) {
		atomic_store(&b->used[k], 1);
		u->present[b->des[k].row] = 1;
	}
	return &b->des[lo];
}

const struct bom_entry *bom_use_part(struct bom_use *u, const struct nl_part *p)
{
	const char *path = p->path;
	size_t n = strlen(path), seg = strcspn(path, ".");
	const struct des *x = find(u, path, n);
	if (!x && n > 1 && (path[0] | 0x20) == p->letter)
		x = find(u, path + 1, n - 1);
	if (seg < n) { /* inside a subcircuit instance: the instance's designator */
		if (!find(u, path, seg) && seg > 1 && (path[0] | 0x20) == 'x')
			find(u, path + 1, seg - 1);
	}
	if (!x || (p->kind != NL_C && p->kind != NL_D))
		return NULL;
	return &u->b->rows[x->row].e;
}

void bom_use_end(struct bom_use *u)
{
	const struct bom *b = u->b;
	int any = 0;
	for (size_t i = 0; i < b->nrows; i++) {
		if (!u->present[i])
			continue;
		any = 1;
		for (unsigned k = 0; k < b->rows[i].nissues; k++) {
			const struct issue *is = &b->rows[i].issues[k];
			diag_add(u->d, DIAG_WARNING, "bom", (struct diag_loc){u->file, is->line, is->col},
				 "%s", is->msg);
		}
	}
	if (any)
		diag_add(u->d, DIAG_NOTE, "bom", (struct diag_loc){u->file, b->header_line, 1}, "%s",
			 b->columns);
}

/* ---- the run's end ---- */

size_t bom_unused_count(const struct bom *b)
{
	return b ? b->ndes + b->nrows : 0;
}

/* A capacitor or diode by the reference-designator letters: C or D and a
 * digit (common practice, no source). */
static int cd_letter(const char *name)
{
	return (name[0] == 'C' || name[0] == 'c' || name[0] == 'D' || name[0] == 'd') &&
	       name[1] >= '0' && name[1] <= '9';
}

int bom_unused(const struct bom *b, size_t k, char *msg, size_t size, const char **subject,
	       struct diag_loc *loc)
{
	*subject = NULL;
	if (k >= b->ndes) {
		const struct row *w = &b->rows[k - b->ndes];
		if (!w->no_des)
			return 0;
		*loc = (struct diag_loc){b->file, w->des_line ? w->des_line : w->line, w->des_col ? w->des_col : 1};
		snprintf(msg, size, "this BOM row has no designator that can be read (%s): it rates nothing",
			 w->no_des);
		return 1;
	}
	const struct des *x = &b->des[k];
	const struct row *w = &b->rows[x->row];
	if (x->dup || atomic_load(&b->used[k]) || !(w->rated || cd_letter(x->name)))
		return 0;
	*loc = (struct diag_loc){b->file, x->line, x->col};
	*subject = x->name;
	snprintf(msg, size, "BOM designator '%.80s' matches no part in any file checked: %s", x->name,
		 w->rated ? "its row's rating applies to nothing" : "this BOM row names a part the netlists lack");
	return 1;
}
