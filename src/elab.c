/* elab.c: reads files card by card and builds the flat circuit. Top-level
 * elements are built as they stream past, so a flat deck is never held in
 * memory; subcircuit bodies, instances and model-dependent elements are kept
 * and expanded once the whole top file is read (definitions may come after
 * their use). Scoping of parameters and nodes inside instances: scope.c. */
#include "elab.h"
#include "infile.h"

#include <errno.h>
#include <math.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>
#include <sys/stat.h>

#include "device.h"
#include "num.h"
#include "parse.h"
#include "elab_state.h"

/* Reading state of one file (a stack follows .include). */
struct file_read {
	const char *path;          /* as reported: includer's folder + given */
	uint32_t file;
	const char *want;          /* .lib section wanted, or NULL */
	int section;               /* 0 outside, 1 in the wanted one, 2 skipping */
	int found;
	struct diag_loc section_loc;  /* the .lib card that asked for it */
	struct diag_loc open_loc;     /* the .lib card that opened a section */
	struct file_read *outer;
};

static void oom(struct elab *el)
{
	el->oom = 1;
}

static struct diag_loc loc0(uint32_t file)
{
	struct diag_loc l = {file, 0, 0};
	return l;
}

static void add_annot(struct elab *el, const char *text, const char *prefix,
		      struct diag_loc loc)
{
	struct elab_annot *a = arena_alloc(el->ar, sizeof *a);
	if (!a || !(a->text = arena_strdup(el->ar, text))) {
		oom(el);
		return;
	}
	a->prefix = prefix;
	a->loc = loc;
	scope_add_annot(el, a);
}

/* ---- definitions: .subckt / .ends / .model ---- */

static void begin_subckt(struct elab *el, const struct deck_card *c)
{
	if (c->nfields == 0 || c->fields[0].kind != FIELD_ATOM) {
		diag_add(el->d, DIAG_ERROR, "subckt", c->loc,
			 ".subckt needs a name and its port nodes");
		el->skip_depth++;
		return;
	}
	struct subdef *def = scope_def_create(el, c);
	if (!def)
		return;
	struct smap *owner = el->open ? el->open->subckts : el->top.subckts;
	if (smap_get(owner, def->name, strlen(def->name)))
		diag_add(el->d, DIAG_WARNING, "subckt", c->loc,
			 "subcircuit '%s' is defined again; the later one is used",
			 def->name);
	if (!smap_put(owner, def->name, strlen(def->name), def)) {
		oom(el);
		return;
	}
	def->parent = el->open;
	el->open = def;
}

static void end_subckt(struct elab *el, const struct deck_card *c)
{
	if (el->skip_depth) {
		el->skip_depth--;
		return;
	}
	if (!el->open) {
		diag_add(el->d, DIAG_ERROR, "subckt", c->loc,
			 ".ends with no open .subckt");
		return;
	}
	if (c->nfields > 0 && c->fields[0].kind == FIELD_ATOM &&
	    !num_iequal(c->fields[0].text, c->fields[0].len, el->open->name,
			strlen(el->open->name)))
		diag_add(el->d, DIAG_WARNING, "subckt", c->loc,
			 ".ends names '%s' but closes '%s'", c->fields[0].text,
			 el->open->name);
	el->open = el->open->parent;
}

/* .model NAME TYPE [(] key=value ... [)] */
static void define_model(struct elab *el, const struct deck_card *c)
{
	if (c->nfields < 2 || c->fields[0].kind != FIELD_ATOM ||
	    (c->fields[1].kind != FIELD_ATOM && c->fields[1].kind != FIELD_CALL)) {
		diag_add(el->d, DIAG_ERROR, "model", c->loc,
			 ".model needs a name and a type");
		return;
	}
	struct smap *tab = el->open ? el->open->models : el->top.models;
	struct nl_model *m = smap_get(tab, c->fields[0].text, c->fields[0].len);
	if (m && m->type)
		diag_add(el->d, DIAG_WARNING, "model", c->loc,
			 "model '%s' is defined again; the later one is used",
			 c->fields[0].text);
	if (!m) {
		m = arena_zalloc(el->ar, sizeof *m);
		char *name = m ? arena_strdup(el->ar, c->fields[0].text) : NULL;
		if (!name || !smap_put(tab, name, strlen(name), m)) {
			oom(el);
			return;
		}
		m->name = name;
	}
	scope_fill_model(el, m, c);
}

/* ---- files ---- */

static int on_card(void *ud, const struct deck_card *c);

static FILE *open_input(struct elab *el, const char *path)
{
	if (el->o.open)
		return el->o.open(el->o.open_ud, path);
	return infile_open(path);
}

/* A ".sim" file in gnucap's or VACASK's own language is a located error;
 * otherwise the stream is put back at its start. Returns 1 for the error. */
static int foreign_text(FILE *in, const char *path, uint32_t file, struct diag_sink *d)
{
	char head[4096];
	unsigned line = 0;
	if (!strstr(path, ".sim"))
		return 0;
	size_t n = fread(head, 1, sizeof head, in);
	const char *lang = dialect_foreign_text(path, head, n, &line);
	if (lang) {
		struct diag_loc at = {file, line, 1};
		diag_add(d, DIAG_ERROR, "language",
			 at, "a netlist in %s, not SPICE: headroom reads SPICE "
			     "netlists only", lang);
		return 1;
	}
	rewind(in);
	return 0;
}

/* Path of an included file: relative paths are taken from the folder of
 * the including file. */
static char *include_path_as_given(struct elab *el, const char *given)
{
	if (given[0] == '/' || !el->fr)
		return arena_strdup(el->ar, given);
	const char *slash = strrchr(el->fr->path, '/');
	size_t dl = slash ? (size_t)(slash - el->fr->path) + 1 : 0;
	size_t gl = strlen(given);
	char *p = arena_alloc(el->ar, dl + gl + 1);
	if (!p)
		return NULL;
	memcpy(p, el->fr->path, dl);
	memcpy(p + dl, given, gl + 1);
	return p;
}

static char *include_path(struct elab *el, const char *given)
{
	char *p = include_path_as_given(el, given);
	/* a PSpice deck written on Windows names its includes ".\\x.lib":
	 * the separator is the folder separator there */
	if (p && elab_dialect(el) == DIALECT_PSPICE)
		for (char *q = p; *q; q++)
			if (*q == '\\')
				*q = '/';
	return p;
}

/* A file may include another section of itself; the same file and
 * section twice in the chain is a cycle. */
static int in_chain(const struct elab *el, const char *canon,
		    const char *section)
{
	for (const struct file_read *f = el->fr; f; f = f->outer) {
		if ((f->want == NULL) != (section == NULL) ||
		    (section && strcmp(f->want, section) != 0))
			continue;
		char *c = el->o.open ? strdup(f->path) : realpath(f->path, NULL);
		int same = c && strcmp(c, canon) == 0;
		free(c);
		if (same)
			return 1;
	}
	return 0;
}

static int changed(const struct stat *a, const struct stat *b)
{
	return a->st_size != b->st_size || a->st_ino != b->st_ino ||
	       a->st_mtim.tv_sec != b->st_mtim.tv_sec ||
	       a->st_mtim.tv_nsec != b->st_mtim.tv_nsec;
}

static void read_stream(struct elab *el, FILE *in, struct file_read *fr,
			int title)
{
	fr->outer = el->fr;
	el->fr = fr;
	struct parse_opts po = {fr->file, title, el->o.max_line_len, el->o.max_token_len,
				dialect_caret_is_xor(elab_dialect(el))};
	struct stat before, after;
	int fd = fileno(in), known = fd >= 0 && fstat(fd, &before) == 0;
	enum parse_status st = parse_stream(in, &po, el->scratch, el->d,
					    on_card, el);
	if (st == PARSE_OOM)
		oom(el);
	if (known && fstat(fd, &after) == 0 && changed(&before, &after)) {
		struct diag_loc at = {fr->file, 0, 0};
		diag_add(el->d, DIAG_ERROR, "io", at,
			 "the file changed while it was read (%lld bytes, now %lld): "
			 "check it again once it is complete",
			 (long long)before.st_size, (long long)after.st_size);
	}
	if (fr->want && !fr->found && !el->oom)
		diag_add(el->d, DIAG_ERROR, "lib", fr->section_loc,
			 "section '%s' not found in '%s'", fr->want, fr->path);
	if (fr->section)
		diag_add(el->d, DIAG_ERROR, "lib", fr->open_loc,
			 ".lib section has no .endl before the end of the file");
	el->fr = fr->outer;
}

static void include_file(struct elab *el, const struct deck_card *c,
			 const char *given, const char *section)
{
	char *path = include_path(el, given);
	if (!path) {
		oom(el);
		return;
	}
	if (el->include_depth >= el->o.max_include_depth) {
		diag_add(el->d, DIAG_ERROR, "include", c->loc,
			 "includes nest deeper than %u levels (--max-include-depth)", el->o.max_include_depth);
		return;
	}
	/* files read through the open hook have no real path: their names
	 * are their identity */
	char *canon = el->o.open ? strdup(path) : realpath(path, NULL);
	int cycle = canon && in_chain(el, canon, section);
	free(canon);
	if (cycle) {
		diag_add(el->d, DIAG_ERROR, "include", c->loc,
			 "include cycle: '%s' is already being read", given);
		return;
	}
	/* includes that repeat without a cycle (each file reading the next
	 * twice) would grow exponentially with depth */
	if (el->includes_read >= el->o.max_includes) {
		diag_add(el->d, DIAG_ERROR, "include", c->loc,
			 "more than %u files read by .include and .lib for one netlist",
			 el->o.max_includes);
		return;
	}
	FILE *in = open_input(el, path);
	if (!in) {
		diag_add(el->d, DIAG_ERROR, "include", c->loc,
			 "cannot read '%s': %s", given, infile_error_text(errno));
		return;
	}
	el->includes_read++;
	struct file_read fr = {path, diag_add_file(el->d, path), section, 0, 0,
			       c->loc, c->loc, NULL};
	el->include_depth++;
	read_stream(el, in, &fr, 0);
	el->include_depth--;
	fclose(in);
}

static void on_include(struct elab *el, const struct deck_card *c)
{
	if (c->nfields != 1) {
		diag_add(el->d, DIAG_ERROR, "include", c->loc,
			 ".include takes exactly one file name");
		return;
	}
	include_file(el, c, c->fields[0].text, NULL);
}

/* .lib with one word: PSpice reads the whole file it names, ngspice, HSPICE
 * and Xyce open a section of that name. Undecided files take PSpice's
 * reading when a file of that name is there and no section is being read. */
static int lib_is_file(struct elab *el, const struct deck_card *c)
{
	enum dialect d = elab_dialect(el);
	if (d == DIALECT_PSPICE)
		return 1;
	if (d != DIALECT_AUTO || el->fr->want || el->fr->section)
		return 0;
	char *path = include_path(el, c->fields[0].text);
	FILE *in = path ? open_input(el, path) : NULL;
	if (!path)
		oom(el);
	if (in)
		fclose(in);
	return in != NULL;
}

/* .lib FILE SECTION includes a section; .lib SECTION opens one. Returns 1
 * when the card was consumed by section bookkeeping. */
static int on_lib(struct elab *el, const struct deck_card *c)
{
	struct file_read *fr = el->fr;
	if (c->kind == CARD_ENDL) {
		if (!fr->section)
			diag_add(el->d, DIAG_ERROR, "lib", c->loc,
				 ".endl with no open .lib section");
		fr->section = 0;
		return 1;
	}
	if (c->kind != CARD_LIB)
		return 0;
	if (c->nfields == 2) {
		if (fr->section != 2)
			include_file(el, c, c->fields[0].text, c->fields[1].text);
		return 1;
	}
	if (c->nfields != 1) {
		diag_add(el->d, DIAG_ERROR, "lib", c->loc,
			 ".lib takes a file and a section, or one section name");
		return 1;
	}
	if (lib_is_file(el, c)) {
		if (fr->section != 2)
			include_file(el, c, c->fields[0].text, NULL);
		return 1;
	}
	if (fr->section) {
		diag_add(el->d, DIAG_ERROR, "lib", c->loc,
			 ".lib section opened inside another one");
		return 1;
	}
	int wanted = fr->want && num_iequal(c->fields[0].text, c->fields[0].len,
					    fr->want, strlen(fr->want));
	/* Outside a requested read, a section is a definition kept for
	 * later .lib references, not content: it is skipped. */
	fr->section = wanted ? 1 : 2;
	fr->open_loc = c->loc;
	fr->found |= wanted;
	return 1;
}

/* ---- .if / .elseif / .else / .endif ---- */

/* Evaluates the condition of a .if or .elseif card: its words joined are
 * one expression over global parameters. */
static int condition(struct elab *el, const struct deck_card *c)
{
	char buf[1024];
	size_t k = 0;
	for (uint32_t i = 0; i < c->nfields && k < sizeof buf - 8; i++) {
		if (i)
			buf[k++] = ' ';
		for (const char *p = c->fields[i].text; *p && k < sizeof buf - 8; p++) {
			/* a lone '=' compares, as in HSPICE conditions */
			int lone = *p == '=' && p[1] != '=' &&
				   (p == c->fields[i].text || !strchr("=<>!", p[-1]));
			buf[k++] = *p;
			if (lone)
				buf[k++] = '=';
		}
	}
	buf[k] = '\0';
	if (c->nfields == 0) {
		diag_add(el->d, DIAG_ERROR, "condition", c->loc, "%s needs a condition", c->head);
		return 0;
	}
	struct diag_loc at = {c->loc.file, c->fields[0].line, c->fields[0].col};
	int bad = 0;
	const struct expr *e = parse_expr_text(buf, k, at, el->scratch, el->d, &bad);
	double v = 0;
	if (bad)
		oom(el);
	if (e && !scope_eval_global(el, e, at, &v))
		v = 0;
	return v != 0;
}

static int taking(const struct elab *el)
{
	return el->ncond == 0 || el->cond[el->ncond - 1].taking;
}

static int grow_cond(struct elab *el)
{
	if (el->ncond < el->capcond)
		return 1;
	size_t ncap = el->capcond ? el->capcond * 2 : 8;
	struct cond_frame *a = arena_alloc(el->ar, ncap * sizeof *a);
	if (!a) {
		oom(el);
		return 0;
	}
	if (el->ncond)
		memcpy(a, el->cond, el->ncond * sizeof *a);
	el->cond = a;
	el->capcond = ncap;
	return 1;
}

/* Conditional blocks are decided as they are read, with global parameters. */
static void on_cond(struct elab *el, const struct deck_card *c)
{
	const char *w = c->head + 1;
	size_t n = c->headlen - 1;
	struct cond_frame *top = el->ncond ? &el->cond[el->ncond - 1] : NULL;
	if (num_ieq(w, n, "if")) {
		if (el->ncond == el->o.max_cond_depth) {
			diag_add(el->d, DIAG_ERROR, "condition", c->loc,
				 ".if blocks nest deeper than %u levels (--max-if-depth)",
				 el->o.max_cond_depth);
			el->stop = 1;
			return;
		}
		if (!grow_cond(el))
			return;
		int outer = taking(el);
		int v = outer && condition(el, c);
		el->cond[el->ncond++] = (struct cond_frame){outer, v, v, 0, c->loc};
		return;
	}
	if (!top) {
		diag_add(el->d, DIAG_ERROR, "condition", c->loc, "%s with no open .if", c->head);
		return;
	}
	if (num_ieq(w, n, "endif")) {
		el->ncond--;
		return;
	}
	if (top->seen_else) {
		diag_add(el->d, DIAG_ERROR, "condition", c->loc, "%s after .else", c->head);
		return;
	}
	int is_else = num_ieq(w, n, "else");
	top->seen_else = is_else;
	top->taking = top->outer && !top->taken &&
		      (is_else || condition(el, c));
	top->taken |= top->taking;
}

/* ---- cards ---- */

static void defer(struct elab *el, const struct deck_card *c)
{
	struct deck_card *k = deck_card_clone(el->ar, c);
	if (!k) {
		oom(el);
		return;
	}
	scope_push(el, &el->deferred, &el->ndeferred, &el->capdeferred, k);
}

static void top_element(struct elab *el, const struct deck_card *c)
{
	char letter = (char)(c->head[0] | 32);
	if (letter == 'x' || dev_needs_models(letter)) {
		defer(el, c);
		return;
	}
	enum dev_status st = scope_build(el, &el->global, c, 1);
	if (st == DEV_DEFER)
		defer(el, c);
}

static void on_global(struct elab *el, const struct deck_card *c)
{
	for (uint32_t i = 0; i < c->nfields; i++) {
		const struct deck_field *f = &c->fields[i];
		char *name = f->kind == FIELD_ATOM ? arena_strdup(el->ar, f->text) : NULL;
		if (f->kind != FIELD_ATOM)
			continue;
		if (!name || !smap_put(el->globals, name, f->len, name))
			oom(el);
	}
}

/* Xyce groups its options by package (.options TIMEINT reltol=...); no
 * other simulator writes these words there (from memory), so an undecided
 * file that does is read as Xyce's. */
/* A dot card's word as a number: a number, a {expression} or 'expression'
 * over global parameters, or a parameter's name; NaN otherwise. */
static double word_value(struct elab *el, const struct deck_field *f, struct diag_loc at)
{
	double v = scope_number(el, f);
	if (isfinite(v) || f->kind != FIELD_ATOM || f->len == 0)
		return v;
	const char *t = f->text;
	size_t n = f->len;
	if (n >= 2 && ((t[0] == '{' && t[n - 1] == '}') || (t[0] == '\'' && t[n - 1] == '\''))) {
		t++;
		n -= 2;
	}
	int bad = 0;
	const struct expr *e = parse_expr_text(t, n, at, el->scratch, el->d, &bad);
	if (bad)
		oom(el);
	if (!e || !scope_eval_global(el, e, at, &v))
		return NAN;
	return v;
}

static void set_temp(struct elab *el, const struct deck_field *f, struct diag_loc at)
{
	double v = word_value(el, f, at);
	if (isfinite(v) && v > -273.15) {
		el->temp.temp = v;
		el->temp.at = at;
		if (v < -100 || v > 400)
			diag_add(el->d, DIAG_WARNING, "temperature", at,
				 "%g degC is outside the range semiconductor models are made for "
				 "(-100..400 degC): the moved models are extrapolated", v);
	} else {
		diag_add(el->d, DIAG_ERROR, "temperature", at,
			 "a temperature is a number of degrees Celsius above -273.15");
	}
}

/* .temp T: one temperature, evaluated at the end (its parameters may come
 * later). A list (SPICE2's several runs) takes its first, with a warning. */
static void on_temp(struct elab *el, const struct deck_card *c)
{
	if (c->nfields == 0) {
		diag_add(el->d, DIAG_ERROR, "temperature", c->loc, ".temp needs a temperature");
		return;
	}
	if (!(el->temp_card = deck_card_clone(el->ar, c)))
		oom(el);
	if (c->nfields > 1)
		diag_add(el->d, DIAG_WARNING, "temperature", c->loc,
			 ".temp lists %u temperatures: headroom takes the first; check each "
			 "with its own .temp", c->nfields);
}

static void eval_temp(struct elab *el)
{
	const struct deck_card *c = el->temp_card;
	if (c)
		set_temp(el, &c->fields[0], (struct diag_loc){c->loc.file, c->fields[0].line,
							       c->fields[0].col});
}

/* key=value in a dot card read as words: "temp=60", or "temp", "=", "60".
 * 1 with *v set (NaN when the value is no number), 0 for another key. */
static int option_value(const struct deck_card *c, uint32_t *i, const char *key, double *v)
{
	const struct deck_field *f = &c->fields[*i];
	size_t k = strlen(key);
	if (f->kind != FIELD_ATOM || f->len < k || !num_ieq(f->text, k, key))
		return 0;
	const char *p = f->text + k;
	size_t n = f->len - k;
	*v = NAN;
	if (n > 0 && *p == '=') {
		if (n > 1 && num_parse(p + 1, n - 1, v, NULL) != NUM_OK)
			*v = NAN;
		return 1;
	}
	if (n == 0 && *i + 1 < c->nfields && c->fields[*i + 1].kind == FIELD_ATOM &&
	    c->fields[*i + 1].len == 1 && c->fields[*i + 1].text[0] == '=') {
		*i += 1;
		if (*i + 1 < c->nfields) {
			*i += 1;
			if (num_parse(c->fields[*i].text, c->fields[*i].len, v, NULL) != NUM_OK)
				*v = NAN;
		}
		return 1;
	}
	return 0;
}

static void option_temp(struct elab *el, const struct deck_card *c)
{
	for (uint32_t i = 0; i < c->nfields; i++) {
		struct diag_loc at = {c->loc.file, c->fields[i].line, c->fields[i].col};
		double v;
		int temp = option_value(c, &i, "temp", &v), tnom = !temp && option_value(c, &i, "tnom", &v);
		if ((temp || tnom) && !(isfinite(v) && v > -273.15)) {
			diag_add(el->d, DIAG_ERROR, "temperature", at,
				 "a temperature is a number of degrees Celsius above -273.15");
		} else if (temp) {
			el->temp.temp = v;
			el->temp.at = at;
		} else if (tnom) {
			el->temp.tnom = v;
		}
	}
}

static void on_option(struct elab *el, const struct deck_card *c)
{
	static const char *const xyce[] = {"device", "timeint", "nonlin", "nonlin-tran",
					   "linsol", "output", "restart", "hbint", "measure",
					   "parser", "sensitivity", NULL};
	option_temp(el, c);
	if (c->nfields == 0 || c->fields[0].kind != FIELD_ATOM)
		return;
	for (int i = 0; xyce[i]; i++)
		if (num_ieq(c->fields[0].text, c->fields[0].len, xyce[i]) && el->seen == DIALECT_AUTO)
			el->seen = DIALECT_XYCE;
}

/* Cards inside a .subckt body are kept for expansion. */
static void body_card(struct elab *el, const struct deck_card *c)
{
	struct subdef *def = el->open;
	switch (c->kind) {
	case CARD_MODEL:
		define_model(el, c);
		return;
	case CARD_INCLUDE:
		on_include(el, c);
		return;
	case CARD_GLOBAL:
		on_global(el, c);
		return;
	case CARD_OPTION:
		on_option(el, c);
		return;
	case CARD_END:
		diag_add(el->d, DIAG_ERROR, "subckt", c->loc,
			 ".end inside .subckt '%s'", def->name);
		return;
	case CARD_ELEMENT:
	case CARD_PARAM:
	case CARD_ANNOT:
	case CARD_FUNC:
		break;
	default:
		return;
	}
	struct deck_card *k = deck_card_clone(el->ar, c);
	if (!k || !scope_push(el, &def->body, &def->nbody,
			    &def->capbody, k))
		oom(el);
}

static void top_card(struct elab *el, const struct deck_card *c)
{
	switch (c->kind) {
	case CARD_ELEMENT: top_element(el, c); break;
	case CARD_PARAM: scope_params(el, &el->global, c); break;
	case CARD_FUNC: scope_func(el, c); break;
	case CARD_MODEL: define_model(el, c); break;
	case CARD_GLOBAL: on_global(el, c); break;
	case CARD_INCLUDE: on_include(el, c); break;
	case CARD_OPTION: on_option(el, c); break;
	case CARD_TEMP: on_temp(el, c); break;
	case CARD_ANNOT: add_annot(el, c->head, "", c->loc); break;
	case CARD_TITLE:
		if (!el->title && !(el->title = arena_strdup(el->ar, c->head)))
			oom(el);
		break;
	default:
		break;
	}
}

static int on_card(void *ud, const struct deck_card *c)
{
	struct elab *el = ud;
	el->ncards++;
	if (on_lib(el, c))
		return el->oom || el->stop;
	if (el->fr->section == 2 || (el->fr->want && el->fr->section != 1))
		return 0;
	if (c->kind == CARD_COND)
		on_cond(el, c);
	else if (!taking(el))
		;
	else if (c->kind == CARD_SUBCKT)
		begin_subckt(el, c);
	else if (c->kind == CARD_ENDS)
		end_subckt(el, c);
	else if (el->skip_depth)
		;
	else if (el->open)
		body_card(el, c);
	else
		top_card(el, c);
	return el->oom || el->stop || diag_full(el->d);
}

/* ---- the whole file ---- */

static void finish_top(struct elab *el)
{
	for (size_t i = el->stop ? 0 : el->ncond; i > 0; i--)
		diag_add(el->d, DIAG_ERROR, "condition", el->cond[i - 1].loc,
			 ".if has no .endif");
	el->ncond = 0;
	for (struct subdef *d = el->open; d; d = d->parent)
		diag_add(el->d, DIAG_ERROR, "subckt", d->loc,
			 ".subckt '%s' has no .ends", d->name);
	el->open = NULL;
	scope_settle(el, &el->global);
	for (size_t i = 0; i < el->ndeferred && !el->oom && !el->stop && !diag_full(el->d); i++)
		scope_build(el, &el->global, (const struct deck_card *)el->deferred[i], 0);
	scope_check_models(el);
	scope_link_controls(el);
	if (!el->oom && !nl_finish(el->c))
		oom(el);
	eval_temp(el);
	if (!el->oom && !thermal_apply(el->c, &el->temp, el->d))
		oom(el);
}

static int elab_init(struct elab *el, const struct elab_opts *opts,
		     const struct hr_alloc *hook, struct diag_sink *d)
{
	memset(el, 0, sizeof *el);
	if (opts)
		el->o = *opts;
	if (!el->o.max_parts)
		el->o.max_parts = 10000000;
	if (!el->o.max_includes)
		el->o.max_includes = ELAB_MAX_INCLUDES;
	if (!el->o.max_include_depth)
		el->o.max_include_depth = 32;
	if (!el->o.max_inst_depth)
		el->o.max_inst_depth = 256;
	if (!el->o.max_cond_depth)
		el->o.max_cond_depth = ELAB_MAX_COND;
	if (!el->o.max_nodes)
		el->o.max_nodes = 10000000;
	el->hook = *hook;
	el->d = d;
	el->temp.temp = el->temp.tnom = NAN;
	el->c = nl_create(hook);
	el->scratch = arena_create(hook);
	if (!el->c || !el->scratch)
		return 0;
	el->ar = nl_arena(el->c);
	return scope_init(el);
}

static void elab_release(struct elab *el)
{
	scope_release(el);
	arena_destroy(el->scratch);
}

enum elab_status elab_file(const char *path, const struct elab_opts *opts,
			   const struct hr_alloc *hook, struct diag_sink *d,
			   struct elab_result *out)
{
	struct elab el;
	memset(out, 0, sizeof *out);
	uint32_t file = diag_add_file(d, path);
	diag_set_unit(d, file);
	if (!elab_init(&el, opts, hook, d) || file == UINT32_MAX) {
		elab_release(&el);
		nl_destroy(el.c);
		return ELAB_OOM;
	}
	size_t errors0 = diag_errors(d, file);
	el.dialect = el.o.dialect != DIALECT_AUTO ? el.o.dialect : dialect_of_path(path);
	const char *foreign = dialect_foreign_language(path);
	FILE *in = foreign ? NULL : open_input(&el, path);
	if (foreign) {
		struct diag_loc at = {file, 1, 1};
		diag_add(d, DIAG_ERROR, "language", at,
			 "a %s netlist by its name: headroom reads SPICE netlists only", foreign);
	} else if (!in) {
		diag_add(d, DIAG_ERROR, "io", loc0(file), "cannot read: %s",
			 infile_error_text(errno));
	} else if (foreign_text(in, path, file, d)) {
		fclose(in);
	} else {
		struct file_read fr = {path, file, NULL, 0, 0, loc0(file), loc0(file), NULL};
		read_stream(&el, in, &fr, 1);
		fclose(in);
		if (!el.oom)
			finish_top(&el);
	}
	elab_release(&el);
	if (el.oom) {
		nl_destroy(el.c);
		return ELAB_OOM;
	}
	out->circuit = el.c;
	out->title = el.title ? el.title : "";
	out->annots = el.annots;
	out->nannots = el.nannots;
	out->ncards = el.ncards;
	return diag_errors(d, file) > errors0 ? ELAB_ERRORS : ELAB_OK;
}

const struct elab_annot *elab_annot_at(const struct elab_result *r, size_t i)
{
	return (const struct elab_annot *)r->annots[i];
}
