/* scope.c: subcircuit definitions and their expansion. Parameters are
 * looked up along the chain of instantiating scopes and then the global
 * .param table; nodes inside an instance are renamed "X1.n5" unless they are
 * ports, ground or .global; models are looked up from the definition the
 * card sits in outwards (lexically). */
#include "elab_state.h"

#include <math.h>
#include <string.h>

#include "num.h"
#include "parse.h"
#include "subsize.h"
#include "suggest.h"

/* What device callbacks need: the scope, and whether this is the first
 * (streaming) pass at top level. */
struct cb {
	struct elab *el;
	const struct scope *sc;
	int first_pass;
	struct diag_loc at;
};

struct smap *scope_map(struct elab *el)
{
	struct smap *m = smap_create(&el->hook);
	if (!m) {
		el->oom = 1;
		return NULL;
	}
	if (el->nmaps == el->capmaps) {
		size_t ncap = el->capmaps ? el->capmaps * 2 : 32;
		struct smap **a = hr_realloc(&el->hook, el->maps, ncap * sizeof *a);
		if (!a) {
			smap_destroy(m);
			el->oom = 1;
			return NULL;
		}
		el->maps = a;
		el->capmaps = ncap;
	}
	el->maps[el->nmaps++] = m;
	return m;
}

int scope_init(struct elab *el)
{
	el->top.name = "";
	el->top.subckts = scope_map(el);
	el->top.models = scope_map(el);
	el->funcs = scope_map(el);
	el->globals = scope_map(el);
	el->global.el = el;
	el->global.params = scope_map(el);
	el->global.prefix = "";
	el->global.mult = 1.0;
	return !el->oom;
}

void scope_release(struct elab *el)
{
	for (size_t i = 0; i < el->nmaps; i++)
		smap_destroy(el->maps[i]);
	hr_free(&el->hook, el->maps);
	el->maps = NULL;
	el->nmaps = el->capmaps = 0;
}

/* ---- lookups ---- */

/* A .param assignment waiting for a parameter defined after it. */
struct pending_param {
	const struct deck_card *card; /* outlives the scope */
	uint32_t field;
	struct scope *sc;
	int state; /* 0 waiting, 1 being resolved, 2 settled */
	struct pending_param *next, *prev;
};

static enum expr_status param_assign(struct elab *el, struct scope *sc,
				     const struct deck_card *c, uint32_t i, int report);
static void define_func(struct elab *el, const struct deck_field *head, const struct expr *body);

/* A pending assignment of name in sc is resolved now: ngspice and PSpice
 * read .param cards in the order of their dependences, not of the file.
 * A cycle, or a chain deeper than 200, stays undefined. */
static void resolve_pending(struct elab *el, const struct scope *sc, const char *name, size_t n)
{
	struct pending_param *p = sc->pending ? smap_get(sc->pending, name, n) : NULL;
	if (!p || p->state != 0 || el->resolving >= 200)
		return;
	p->state = 1;
	el->resolving++;
	if (param_assign(el, p->sc, p->card, p->field, 0) == EXPR_UNDEFINED)
		p->state = 0;
	else
		p->state = 2;
	el->resolving--;
}

static int param_of(const struct cb *cb, const struct scope *s, const char *name, size_t n,
		    double *v)
{
	const struct param_val *p = smap_get(s->params, name, n);
	if (!p && s->pending) {
		resolve_pending(cb->el, s, name, n);
		p = smap_get(s->params, name, n);
	}
	if (!p)
		return 0;
	*v = p->v;
	return p->kind == PARAM_STRING  ? EXPR_VAR_STRING
	       : p->kind == PARAM_STATE ? EXPR_VAR_STATE
					: 1;
}

static int lookup_var(void *ud, const char *name, double *v)
{
	const struct cb *cb = ud;
	size_t n = strlen(name);
	int global = 0;
	for (const struct scope *s = cb->sc; s; s = s->caller) {
		int k = param_of(cb, s, name, n, v);
		if (k)
			return k;
		global |= s == &cb->el->global;
	}
	int k = global ? 0 : param_of(cb, &cb->el->global, name, n, v);
	return k ? k : dialect_constant(elab_dialect(cb->el), name, v);
}

static const struct expr_func *lookup_func(void *ud, const char *name)
{
	const struct cb *cb = ud;
	return smap_get(cb->el->funcs, name, strlen(name));
}

static enum expr_status cb_eval(void *ud, const struct expr *e, double *out,
				struct expr_error *err)
{
	const struct cb *cb = ud;
	struct expr_env env = {lookup_var, lookup_func, ud, cb->el->o.max_expr_depth};
	return expr_eval(e, &env, out, err);
}

static uint32_t cb_node(void *ud, const char *name, size_t n)
{
	const struct cb *cb = ud;
	const struct scope *sc = cb->sc;
	struct nl_circuit *c = cb->el->c;
	if (!sc->def || nl_node_find(c, name, n) == NL_GROUND ||
	    smap_get(cb->el->globals, name, n))
		return nl_node_intern(c, name, n);
	uintptr_t port = (uintptr_t)smap_get(sc->def->portmap, name, n);
	if (port)
		return sc->actual[port - 1];
	size_t pl = strlen(sc->prefix);
	char buf[512];
	char *full = pl + n < sizeof buf ? buf : arena_alloc(cb->el->scratch, pl + n + 1);
	if (!full)
		return NL_NONE;
	memcpy(full, sc->prefix, pl);
	memcpy(full + pl, name, n);
	full[pl + n] = '\0';
	return nl_node_intern(c, full, pl + n);
}

static const struct nl_model *placeholder(struct cb *cb, const char *name,
					  size_t n, struct diag_loc at)
{
	struct elab *el = cb->el;
	struct nl_model *m = arena_zalloc(el->ar, sizeof *m);
	char *key = m ? arena_strndup(el->ar, name, n) : NULL;
	if (!key || !smap_put(el->top.models, key, n, m)) {
		el->oom = 1;
		return NULL;
	}
	m->name = key;
	m->loc = at;
	struct nl_model **a = el->pending;
	if (el->npending == el->cappending) {
		size_t ncap = el->cappending ? el->cappending * 2 : 16;
		a = arena_alloc(el->ar, ncap * sizeof *a);
		if (!a) {
			el->oom = 1;
			return NULL;
		}
		if (el->npending)
			memcpy(a, el->pending, el->npending * sizeof *a);
		el->pending = a;
		el->cappending = ncap;
	}
	el->pending[el->npending++] = m;
	return m;
}

static const struct nl_model *cb_model(void *ud, const struct deck_field *f)
{
	struct cb *cb = ud;
	const char *name = f->text;
	size_t n = f->len;
	for (const struct subdef *d = cb->sc->def; d; d = d->parent) {
		const struct nl_model *m = smap_get(d->models, name, n);
		if (m)
			return m;
	}
	const struct nl_model *m = smap_get(cb->el->top.models, name, n);
	if (m && (m->type || cb->first_pass))
		return m;
	if (!m && cb->first_pass)
		return placeholder(cb, name, n,
				   (struct diag_loc){cb->at.file, f->line, f->col});
	return NULL;
}

/* Offers the keys of m (with models, only those a .model defined). */
static void offer_keys(struct suggest *s, const struct smap *m, int models)
{
	size_t pos = 0;
	void *v;
	const char *k;
	while ((k = smap_next(m, &pos, &v)))
		if (!models || ((const struct nl_model *)v)->type)
			suggest_offer(s, k);
}

static void cb_model_hint(void *ud, const struct deck_field *f, char *buf, size_t n)
{
	const struct cb *cb = ud;
	struct suggest s;
	suggest_init(&s, f->text, f->len);
	for (const struct subdef *d = cb->sc->def; d; d = d->parent)
		offer_keys(&s, d->models, 1);
	offer_keys(&s, cb->el->top.models, 1);
	suggest_hint(&s, buf, n);
}

int scope_eval_global(struct elab *el, const struct expr *e,
		      struct diag_loc at, double *v)
{
	struct cb cb = {el, &el->global, 0, at};
	struct expr_error err = {0};
	if (cb_eval(&cb, e, v, &err) == EXPR_OK)
		return 1;
	char msg[200];
	expr_error_text(&err, msg, sizeof msg);
	if (err.line) {
		at.line = err.line;
		at.col = err.col;
	}
	diag_add(el->d, DIAG_ERROR, "expression", at, "%s", msg);
	return 0;
}

/* ---- definitions ---- */

struct subdef *scope_def_create(struct elab *el, const struct deck_card *c)
{
	const struct deck_card *k = deck_card_clone(el->ar, c);
	struct subdef *d = k ? arena_zalloc(el->ar, sizeof *d) : NULL;
	if (!d) {
		el->oom = 1;
		return NULL;
	}
	d->name = k->fields[0].text;
	d->loc = k->loc;
	d->subckts = scope_map(el);
	d->models = scope_map(el);
	d->portmap = scope_map(el);
	d->ports = arena_alloc(el->ar, k->nfields * sizeof *d->ports);
	if (!d->subckts || !d->models || !d->portmap || !d->ports) {
		el->oom = 1;
		return NULL;
	}
	uint32_t i = 1;
	for (; i < k->nfields && k->fields[i].kind == FIELD_ATOM &&
	       !elab_is_params_kw(&k->fields[i]);
	     i++) {
		const struct deck_field *f = &k->fields[i];
		if (smap_get(d->portmap, f->text, f->len))
			diag_add(el->d, DIAG_ERROR, "subckt",
				 (struct diag_loc){c->loc.file, f->line, f->col},
				 "port '%s' is listed twice", f->text);
		d->ports[d->nports++] = f->text;
		if (!smap_put(d->portmap, f->text, f->len,
			      (void *)(uintptr_t)d->nports))
			el->oom = 1;
	}
	if (i < k->nfields && elab_is_params_kw(&k->fields[i]))
		i++;
	d->defaults = k->fields + i;
	d->ndefaults = k->nfields - i;
	for (uint32_t j = 0; j < d->ndefaults; j++)
		if (d->defaults[j].kind != FIELD_ASSIGN)
			diag_add(el->d, DIAG_ERROR, "subckt",
				 (struct diag_loc){c->loc.file, d->defaults[j].line,
						   d->defaults[j].col},
				 "expected name=value after the ports of .subckt '%s'",
				 d->name);
	return d;
}

/* A model parameter value: a number, an expression over global parameters,
 * or NaN for words (version strings and the like). */
static double model_value(struct elab *el, const struct deck_field *v)
{
	double x = NAN;
	if (v && v->kind == FIELD_ATOM)
		num_parse(v->text, v->len, &x, NULL);
	if (v && v->kind == FIELD_EXPR) {
		struct cb cb = {el, &el->global, 0, {0, 0, 0}};
		struct expr_error e;
		if (cb_eval(&cb, v->expr, &x, &e) != EXPR_OK)
			x = NAN;
	}
	return x;
}

double scope_number(struct elab *el, const struct deck_field *v)
{
	return model_value(el, v);
}

/* A flag word of a model card (VDMOS's pchan and nchan): kept as a
 * parameter of value 1. */
static int is_flag(const struct deck_field *f)
{
	return f->kind == FIELD_ATOM &&
	       (num_ieq(f->text, f->len, "pchan") || num_ieq(f->text, f->len, "nchan"));
}

static void model_params(struct elab *el, struct nl_model *m,
			 const struct deck_field *f, uint32_t n)
{
	for (uint32_t i = 0; i < n; i++) {
		if (f[i].kind == FIELD_CALL && f[i].len == 0) {
			model_params(el, m, f[i].args, f[i].nargs);
			continue;
		}
		if (is_flag(&f[i])) {
			char *flag = arena_strndup(el->ar, f[i].text, f[i].len);
			if (!flag) {
				el->oom = 1;
				return;
			}
			num_fold(flag, f[i].len);
			m->keys[m->nparams] = flag;
			m->values[m->nparams++] = 1;
			continue;
		}
		if (f[i].kind != FIELD_ASSIGN)
			continue;
		char *key = arena_strndup(el->ar, f[i].text, f[i].len);
		if (!key) {
			el->oom = 1;
			return;
		}
		num_fold(key, f[i].len);
		m->keys[m->nparams] = key;
		m->values[m->nparams++] = model_value(el, f[i].value);
	}
}

static uint32_t count_assigns(const struct deck_field *f, uint32_t n)
{
	uint32_t k = 0;
	for (uint32_t i = 0; i < n; i++)
		k += f[i].kind == FIELD_ASSIGN || is_flag(&f[i]) ? 1
		     : f[i].kind == FIELD_CALL                   ? count_assigns(f[i].args, f[i].nargs)
								 : 0;
	return k;
}

void scope_fill_model(struct elab *el, struct nl_model *m,
		      const struct deck_card *c)
{
	const struct deck_field *t = &c->fields[1];
	char *type = arena_strndup(el->ar, t->text, t->len);
	uint32_t n = count_assigns(c->fields + 1, c->nfields - 1);
	m->keys = arena_alloc(el->ar, (n ? n : 1) * sizeof *m->keys);
	m->values = arena_alloc(el->ar, (n ? n : 1) * sizeof *m->values);
	if (!type || !m->keys || !m->values) {
		el->oom = 1;
		return;
	}
	num_fold(type, t->len);
	m->type = type;
	m->loc = c->loc;
	m->nparams = 0;
	if (t->kind == FIELD_CALL)
		model_params(el, m, t->args, t->nargs);
	model_params(el, m, c->fields + 2, c->nfields - 2);
}

void scope_check_models(struct elab *el)
{
	for (size_t i = 0; i < el->npending; i++) {
		const struct nl_model *m = el->pending[i];
		if (m->type)
			continue;
		struct suggest s;
		char hint[SUGGEST_HINT_SIZE];
		suggest_init(&s, m->name, strlen(m->name));
		offer_keys(&s, el->top.models, 1);
		diag_add(el->d, DIAG_ERROR, "model", m->loc, "undefined model '%s'%s", m->name,
			 suggest_hint(&s, hint, sizeof hint));
	}
}

/* ---- parameters and functions ---- */

static void set_param(struct elab *el, struct scope *sc, const char *key,
		      size_t n, double v, enum param_kind kind)
{
	struct param_val *p = smap_get(sc->params, key, n);
	if (!p) {
		p = arena_alloc(el->ar, sizeof *p);
		char *k = p ? arena_strndup(el->ar, key, n) : NULL;
		if (!k || !smap_put(sc->params, k, n, p)) {
			el->oom = 1;
			return;
		}
	}
	p->v = v;
	p->kind = kind;
}

/* Field i of .param card c into sc. A string or a value of the circuit's
 * state is kept as such (it is an error only where a number is used);
 * an undefined name is reported only with report. */
static enum expr_status param_assign(struct elab *el, struct scope *sc,
				     const struct deck_card *c, uint32_t i, int report)
{
	const struct deck_field *f = &c->fields[i];
	double v = NAN;
	struct cb cb = {el, sc, 0, c->loc};
	struct expr_error e = {0};
	enum expr_status st = cb_eval(&cb, f->value->expr, &v, &e);
	enum param_kind kind = st == EXPR_STRING ? PARAM_STRING : PARAM_STATE;
	if (st == EXPR_OK || st == EXPR_STRING || st == EXPR_STATE) {
		set_param(el, sc, f->text, f->len, v, st == EXPR_OK ? PARAM_NUMBER : kind);
		return st;
	}
	if (st == EXPR_UNDEFINED && !report)
		return st;
	char msg[200];
	expr_error_text(&e, msg, sizeof msg);
	struct diag_loc l = {c->loc.file, e.line, e.col};
	diag_add(el->d, DIAG_ERROR, "expression", l, "%s", msg);
	return st;
}

static void add_pending(struct elab *el, struct scope *sc, const struct deck_card **c,
			int copy, uint32_t i)
{
	if (copy && !(*c = deck_card_clone(el->ar, *c))) {
		el->oom = 1;
		return;
	}
	struct pending_param *p = arena_zalloc(el->ar, sizeof *p);
	if (!sc->pending && !(sc->pending = sc == &el->global ? scope_map(el) : smap_create(&el->hook)))
		el->oom = 1;
	if (!p || el->oom) {
		el->oom = 1;
		return;
	}
	*p = (struct pending_param){*c, i, sc, 0, NULL, sc->plast};
	const struct deck_field *f = &(*c)->fields[i];
	if (!smap_put(sc->pending, f->text, f->len, p))
		el->oom = 1;
	if (sc->plast)
		sc->plast->next = p;
	else
		sc->pfirst = p;
	sc->plast = p;
}

void scope_params(struct elab *el, struct scope *sc, const struct deck_card *c)
{
	/* a top-level card lives in the parser's scratch memory: a pending
	 * assignment keeps a copy */
	int copy = sc == &el->global;
	for (uint32_t i = 0; i < c->nfields && !el->oom; i++)
		if (c->fields[i].nargs)
			define_func(el, &c->fields[i], c->fields[i].value->expr);
		else if (param_assign(el, sc, c, i, 0) == EXPR_UNDEFINED) {
			add_pending(el, sc, &c, copy, i);
			copy = 0;
		}
}

void scope_settle(struct elab *el, struct scope *sc)
{
	/* last first: a chain of forward references (each naming the next)
	 * then resolves one link at a time, never deeper than one */
	for (struct pending_param *p = sc->plast; p; p = p->prev) {
		const struct deck_field *f = &p->card->fields[p->field];
		resolve_pending(el, sc, f->text, f->len);
	}
	for (struct pending_param *p = sc->pfirst; p; p = p->next) {
		if (p->state != 2) {
			p->state = 2;
			param_assign(el, sc, p->card, p->field, 1);
		}
	}
}

void scope_func(struct elab *el, const struct deck_card *c)
{
	define_func(el, &c->fields[0], c->fields[1].expr);
}

/* A function: head is name(params...), from .func or HSPICE's .param. */
static void define_func(struct elab *el, const struct deck_field *head, const struct expr *body)
{
	struct expr_func *fn = arena_zalloc(el->ar, sizeof *fn);
	if (fn) {
		fn->name = arena_strndup(el->ar, head->text, head->len);
		fn->params = arena_alloc(el->ar, (head->nargs + 1) * sizeof *fn->params);
		fn->body = expr_clone(el->ar, body);
	}
	if (!fn || !fn->name || !fn->params || !fn->body) {
		el->oom = 1;
		return;
	}
	for (uint32_t i = 0; i < head->nargs; i++)
		if (!(fn->params[fn->nparams++] = arena_strdup(el->ar, head->args[i].text)))
			el->oom = 1;
	if (!smap_put(el->funcs, fn->name, head->len, fn))
		el->oom = 1;
}

/* ---- expansion ---- */

static struct expr *cb_atom_expr(void *ud, const struct deck_field *f,
				 int *oom)
{
	const struct cb *cb = ud;
	struct diag_loc at = {cb->at.file, f->line, f->col};
	return parse_expr_text(f->text, f->len, at, cb->el->scratch, cb->el->d,
			       oom);
}

static struct dev_scope dev_scope_of(struct cb *cb)
{
	struct dev_scope ds;
	ds.ud = cb;
	ds.eval = cb_eval;
	ds.node = cb_node;
	ds.model = cb_model;
	ds.model_hint = cb_model_hint;
	ds.atom_expr = cb_atom_expr;
	ds.prefix = cb->sc->prefix;
	ds.defer_undefined = cb->first_pass;
	ds.mult = cb->sc->mult;
	ds.max_wave_values = 2 * cb->el->o.max_pwl_points;
	ds.dialect = elab_dialect(cb->el);
	ds.strings_ok = 0;
	return ds;
}

static struct diag_loc at_field(const struct deck_card *c,
				const struct deck_field *f)
{
	struct diag_loc l = {c->loc.file, f->line, f->col};
	return l;
}

static enum param_kind kind_of(enum dev_status st)
{
	if (st == DEV_STRING)
		return PARAM_STRING;
	return st == DEV_STATE ? PARAM_STATE : PARAM_NUMBER;
}

/* Instance parameters, evaluated in the caller's scope; m= multiplies. */
static int instance_params(struct elab *el, struct scope *ns,
			   const struct scope *caller,
			   const struct deck_card *c, uint32_t from)
{
	struct cb cb = {el, caller, 0, c->loc};
	struct dev_scope ds = dev_scope_of(&cb);
	ds.strings_ok = 1;
	for (uint32_t i = from; i < c->nfields; i++) {
		const struct deck_field *f = &c->fields[i];
		double v;
		if (elab_is_params_kw(f))
			continue;
		if (f->kind != FIELD_ASSIGN) {
			diag_add(el->d, DIAG_ERROR, "instance", at_field(c, f),
				 "expected name=value after the subcircuit name");
			return 0;
		}
		enum dev_status st = devval_get(&ds, f->value, el->d, c->loc.file, &v);
		if (st != DEV_OK && st != DEV_STRING && st != DEV_STATE)
			return 0;
		int declared = 0;
		for (uint32_t j = 0; j < ns->def->ndefaults; j++)
			declared |= num_iequal(ns->def->defaults[j].text,
					       ns->def->defaults[j].len, f->text, f->len);
		if (!declared && num_ieq(f->text, f->len, "m") && st == DEV_OK)
			ns->mult *= v;
		else
			set_param(el, ns, f->text, f->len, v, kind_of(st));
	}
	return 1;
}

/* Defaults of the definition that the instance did not override. */
static int default_params(struct elab *el, struct scope *ns,
			  const struct deck_card *c)
{
	struct cb cb = {el, ns, 0, c->loc};
	struct dev_scope ds = dev_scope_of(&cb);
	ds.strings_ok = 1;
	for (uint32_t j = 0; j < ns->def->ndefaults; j++) {
		const struct deck_field *f = &ns->def->defaults[j];
		double v;
		if (f->kind != FIELD_ASSIGN || smap_get(ns->params, f->text, f->len))
			continue;
		enum dev_status st = devval_get(&ds, f->value, el->d, ns->def->loc.file, &v);
		if (st != DEV_OK && st != DEV_STRING && st != DEV_STATE)
			return 0;
		set_param(el, ns, f->text, f->len, v, kind_of(st));
	}
	return 1;
}

/* .param and .func cards first (parameters are read in the order of their
 * dependences), then the elements and annotations in order. */
static void body_params(struct elab *el, struct scope *ns)
{
	for (size_t i = 0; i < ns->def->nbody && !el->oom; i++) {
		const struct deck_card *b = (const struct deck_card *)ns->def->body[i];
		if (b->kind == CARD_PARAM)
			scope_params(el, ns, b);
		else if (b->kind == CARD_FUNC)
			scope_func(el, b);
	}
	scope_settle(el, ns);
}

static void expand_body(struct elab *el, struct scope *ns)
{
	body_params(el, ns);
	/* past the error cap the file is given up, as when reading it */
	for (size_t i = 0; i < ns->def->nbody && !el->oom && !el->stop && !diag_full(el->d); i++) {
		const struct deck_card *b = (const struct deck_card *)ns->def->body[i];
		if (b->kind == CARD_ELEMENT)
			scope_build(el, ns, b, 0);
		else if (b->kind == CARD_ANNOT) {
			struct elab_annot *a = arena_alloc(el->ar, sizeof *a);
			if (!a) {
				el->oom = 1;
				return;
			}
			a->text = b->head;
			a->prefix = ns->prefix;
			a->loc = b->loc;
			scope_add_annot(el, a);
		}
	}
}

static const struct subdef *check_instance(struct elab *el,
					   const struct scope *sc,
					   const struct deck_card *c,
					   uint32_t k)
{
	if (k == 0) {
		diag_add(el->d, DIAG_ERROR, "instance", c->loc,
			 "instance needs its nodes and a subcircuit name");
		return NULL;
	}
	const struct deck_field *nf = &c->fields[k - 1];
	const struct subdef *def = elab_find_subckt(el, sc->def, nf->text, nf->len);
	if (!def) {
		struct suggest s;
		char hint[SUGGEST_HINT_SIZE];
		suggest_init(&s, nf->text, nf->len);
		for (const struct subdef *d = sc->def; d; d = d->parent)
			offer_keys(&s, d->subckts, 0);
		offer_keys(&s, el->top.subckts, 0);
		diag_add(el->d, DIAG_ERROR, "instance", at_field(c, nf),
			 "undefined subcircuit '%s'%s", nf->text, suggest_hint(&s, hint, sizeof hint));
		return NULL;
	}
	if (def->nports != k - 1) {
		diag_add(el->d, DIAG_ERROR, "instance", at_field(c, nf),
			 "subcircuit '%s' has %u ports but the instance connects %u nodes",
			 def->name, def->nports, k - 1);
		return NULL;
	}
	if (def->active) {
		diag_add(el->d, DIAG_ERROR, "instance", c->loc,
			 "subcircuit '%s' instantiates itself", def->name);
		return NULL;
	}
	if (sc->depth + 1 > el->o.max_inst_depth) {
		diag_add(el->d, DIAG_ERROR, "instance", c->loc,
			 "subcircuits nest deeper than %u levels (--max-depth)", el->o.max_inst_depth);
		return NULL;
	}
	return def;
}

static char *instance_prefix(struct elab *el, const struct scope *sc,
			     const struct deck_card *c)
{
	size_t pl = strlen(sc->prefix);
	char *p = arena_alloc(el->ar, pl + c->headlen + 2);
	if (!p)
		return NULL;
	memcpy(p, sc->prefix, pl);
	memcpy(p + pl, c->head, c->headlen);
	p[pl + c->headlen] = '.';
	p[pl + c->headlen + 1] = '\0';
	return p;
}

/* A top-level instance whose size, counted from the definitions, would
 * take the circuit past --max-parts is refused before it is expanded: a
 * nest of 40 definitions that each hold two instances of the one before
 * asks for 2^40 parts, and expanding up to the cap would take seconds and
 * gigabytes first. When the size cannot be known (a definition that
 * instantiates itself) or the nesting is too deep, the expansion reports. */
static int too_big(struct elab *el, const struct scope *sc, const struct deck_card *c,
		   struct subdef *def)
{
	struct subsize z;
	if (sc->depth != 0 || !subsize_of(el, def, &z))
		return 0;
	size_t have = nl_part_count(el->c);
	if (!z.known || z.levels > el->o.max_inst_depth || z.parts <= el->o.max_parts - have)
		return 0;
	if (z.parts == SIZE_MAX)
		diag_add(el->d, DIAG_ERROR, "expansion", c->loc,
			 "%s expands to more than %zu parts, past the limit of %zu (see --max-parts)",
			 c->head, SIZE_MAX - 1, el->o.max_parts);
	else if (z.parts > el->o.max_parts)
		diag_add(el->d, DIAG_ERROR, "expansion", c->loc,
			 "%s expands to %zu parts, past the limit of %zu (see --max-parts)",
			 c->head, z.parts, el->o.max_parts);
	else
		diag_add(el->d, DIAG_ERROR, "expansion", c->loc,
			 "%s expands to %zu parts; with the %zu already in the circuit that "
			 "passes the limit of %zu (see --max-parts)",
			 c->head, z.parts, have, el->o.max_parts);
	el->stop = 1;
	return 1;
}

static enum dev_status expand(struct elab *el, struct scope *sc,
			      const struct deck_card *c)
{
	uint32_t k = elab_name_index(c);
	struct subdef *def = (struct subdef *)check_instance(el, sc, c, k);
	if (!def || too_big(el, sc, c, def))
		return el->oom ? DEV_OOM : DEV_ERROR;
	uint32_t *actual = arena_alloc(el->ar, (k ? k : 1) * sizeof *actual);
	struct scope ns = {el, sc, def, smap_create(&el->hook),
			   instance_prefix(el, sc, c), actual, sc->mult,
			   sc->depth + 1, NULL, NULL, NULL};
	if (!actual || !ns.params || !ns.prefix) {
		smap_destroy(ns.params);
		el->oom = 1;
		return DEV_OOM;
	}
	struct cb cb = {el, sc, 0, c->loc};
	for (uint32_t i = 0; i + 1 < k; i++)
		if ((actual[i] = cb_node(&cb, c->fields[i].text, c->fields[i].len)) == NL_NONE)
			el->oom = 1;
	if (!el->oom && instance_params(el, &ns, sc, c, k) &&
	    default_params(el, &ns, c)) {
		def->active = 1;
		expand_body(el, &ns);
		def->active = 0;
	}
	smap_destroy(ns.params);
	smap_destroy(ns.pending);
	return el->oom ? DEV_OOM : DEV_OK;
}

enum dev_status scope_build(struct elab *el, struct scope *sc,
			    const struct deck_card *c, int first_pass)
{
	if (sc->depth == 0)
		el->root = c->loc;
	if (nl_part_count(el->c) >= el->o.max_parts) {
		diag_add(el->d, DIAG_ERROR, "expansion", el->root,
			 "the circuit grows past %zu parts (the limit; see --max-parts)",
			 el->o.max_parts);
		el->stop = 1;
		return DEV_ERROR;
	}
	if ((c->head[0] | 32) == 'x')
		return expand(el, sc, c);
	struct cb cb = {el, sc, first_pass, c->loc};
	struct dev_scope ds = dev_scope_of(&cb);
	enum dev_status st = dev_build(&ds, c, el->c, el->d);
	if (st == DEV_OOM)
		el->oom = 1;
	if (nl_node_count(el->c) > el->o.max_nodes) {
		diag_add(el->d, DIAG_ERROR, "expansion", el->root,
			 "the circuit grows past %zu nodes (the limit; see --max-nodes)",
			 el->o.max_nodes);
		el->stop = 1;
		return DEV_ERROR;
	}
	return st;
}

/* ---- K, F, H: names of other parts ---- */

static uint32_t find_part(struct elab *el, struct smap *paths,
			  const char *path, const char *name)
{
	const char *dot = strrchr(path, '.');
	size_t pl = dot ? (size_t)(dot - path) + 1 : 0, nl = strlen(name);
	char buf[1024];
	if (pl + nl >= sizeof buf)
		return NL_NONE;
	memcpy(buf, path, pl);
	memcpy(buf + pl, name, nl + 1);
	(void)el;
	uintptr_t v = (uintptr_t)smap_get(paths, buf, pl + nl);
	return v ? (uint32_t)(v - 1) : NL_NONE;
}

/* The names a part gives of others: K its inductors, F and H their
 * controlling source. A behavioural K (more inductors, a core) has its
 * names checked but is not linked: the analysis knows pairs only. */
static void link_part(struct elab *el, struct smap *paths, struct nl_part *p)
{
	int k = p->kind == NL_K;
	uint32_t n = k ? 2 : 1;
	if (k && p->ext->coupled)
		n = p->ext->ncoupled;
	enum nl_kind want = k ? NL_L : NL_V;
	uint32_t *all = k && p->ext->coupled ? arena_alloc(nl_arena(el->c), n * sizeof *all) : NULL;
	if (k && p->ext->coupled && !all)
		el->oom = 1;
	p->ext->coupled_part = all;
	for (uint32_t i = 0; i < n; i++) {
		if (all)
			all[i] = NL_NONE;
		const char *name = k && p->ext->coupled ? p->ext->coupled[i] : p->ext->ctrl[i];
		uint32_t q = find_part(el, paths, p->path, name);
		if (q == NL_NONE || nl_part_at(el->c, q)->kind != want) {
			diag_add(el->d, DIAG_ERROR, "element", nl_part_loc(p),
				 "'%s' names '%s', which is not %s in the same circuit",
				 p->path, name, want == NL_L ? "an inductor" : "a voltage source");
			continue;
		}
		if (all)
			all[i] = q;
		if (i < 2 && !p->ext->behavioural)
			p->ext->ctrl_part[i] = q;
	}
}

void scope_link_controls(struct elab *el)
{
	size_t n = nl_part_count(el->c), need = 0;
	for (size_t i = 0; i < n; i++) {
		const struct nl_part *p = nl_part_at(el->c, i);
		need += p->ext && p->ext->ctrl[0];
	}
	if (!need || el->oom)
		return;
	struct smap *paths = scope_map(el);
	for (size_t i = 0; paths && i < n; i++) {
		const struct nl_part *p = nl_part_at(el->c, i);
		if ((p->kind == NL_L || p->kind == NL_V) &&
		    !smap_put(paths, p->path, strlen(p->path), (void *)(uintptr_t)(i + 1)))
			el->oom = 1;
	}
	for (size_t i = 0; paths && !el->oom && i < n; i++) {
		struct nl_part *p = nl_part_mut(el->c, i);
		if (p->ext && p->ext->ctrl[0] && (!p->ext->behavioural || p->kind == NL_K))
			link_part(el, paths, p);
	}
}

int scope_push(struct elab *el, void ***arr, size_t *n, size_t *cap,
		    void *p)
{
	if (*n == *cap) {
		size_t ncap = *cap ? *cap * 2 : 16;
		void **a = arena_alloc(el->ar, ncap * sizeof *a);
		if (!a) {
			el->oom = 1;
			return 0;
		}
		if (*n)
			memcpy(a, *arr, *n * sizeof *a);
		*arr = a;
		*cap = ncap;
	}
	(*arr)[(*n)++] = p;
	return 1;
}

void scope_add_annot(struct elab *el, struct elab_annot *a)
{
	scope_push(el, &el->annots, &el->nannots, &el->capannots, a);
}
