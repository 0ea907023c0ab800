/* elab_state.h: elaboration's private state, one job in two files: what
 * it keeps while it reads (struct elab), subcircuit definitions, and the
 * scopes that instances are expanded in (parameter lookup, node renaming
 * "X1.n5", model visibility, instance flattening). Shared by elab.c
 * (reading files) and scope.c (expanding); nothing else sees it. */
#ifndef HEADROOM_ELAB_STATE_H
#define HEADROOM_ELAB_STATE_H

#include <stddef.h>

#include "deck.h"
#include "device.h"
#include "dialect.h"
#include "elab.h"
#include "smap.h"
#include "thermal.h"

struct file_read;

struct subdef {
	const char *name;
	struct diag_loc loc;
	const char **ports;
	uint32_t nports;
	struct smap *portmap;        /* port name -> index + 1 */
	const struct deck_field *defaults; /* params: key=value, as written */
	uint32_t ndefaults;
	void **body;                 /* struct deck_card *: elements, .param, *@ */
	size_t nbody, capbody;
	struct smap *subckts;        /* nested definitions */
	struct smap *models;         /* local models */
	struct subdef *parent;       /* enclosing definition, NULL at top */
	int active;                  /* being expanded: recursion guard */
	/* subsize.c's memo: parts and nesting of one instance */
	size_t size_parts;
	unsigned size_levels;
	unsigned char size_state;    /* 0 not yet, 1 being counted, 2 counted */
	unsigned char size_unknown;  /* the count met a cycle */
};

struct scope {
	struct elab *el;
	const struct scope *caller;  /* instantiating scope; NULL at top */
	const struct subdef *def;    /* NULL at top */
	struct smap *params;
	const char *prefix;          /* "X1.X2." or "" */
	const uint32_t *actual;      /* port node ids */
	double mult;                 /* product of instance m= */
	unsigned depth;
	struct smap *pending;        /* .param assignments that named a
					parameter not yet defined (struct
					pending_param), or NULL */
	struct pending_param *pfirst, *plast; /* the same, in file order */
};

/* A parameter's value: a number, or what stands in for one that is not. */
enum param_kind { PARAM_NUMBER, PARAM_STRING, PARAM_STATE };
struct param_val {
	double v;
	enum param_kind kind;
};

#define ELAB_MAX_COND 64 /* default .if nesting */
#define ELAB_MAX_INCLUDES 10000 /* files read per netlist */

/* One open .if block. */
struct cond_frame {
	int outer;      /* the enclosing block is being read */
	int taking;     /* the current branch is being read */
	int taken;      /* some branch was already taken */
	int seen_else;
	struct diag_loc loc;
};

struct elab {
	struct elab_opts o;
	struct hr_alloc hook;
	struct nl_circuit *c;
	struct arena *ar;            /* the circuit's arena */
	struct arena *scratch;       /* the parser's per-card memory */
	struct diag_sink *d;
	struct subdef top;           /* global subcircuits and models */
	struct subdef *open;         /* innermost definition being read */
	unsigned skip_depth;         /* inside a malformed .subckt */
	struct scope global;
	struct smap *funcs;          /* .func */
	struct smap *globals;        /* .global node names */
	struct smap **maps;          /* every map made, freed at release */
	size_t nmaps, capmaps;
	void **deferred;             /* struct deck_card *: expanded at the end */
	size_t ndeferred, capdeferred;
	void **annots;               /* struct elab_annot * */
	size_t nannots, capannots;
	struct nl_model **pending;   /* models used before their .model */
	size_t npending, cappending;
	struct file_read *fr;
	unsigned include_depth;
	unsigned includes_read;   /* files opened by .include/.lib, in total */
	const char *title;
	size_t ncards;
	struct diag_loc root;        /* top-level card being expanded */
	struct cond_frame *cond;     /* open .if blocks, innermost last */
	size_t ncond, capcond;
	enum dialect dialect;        /* chosen, or from the file's ending */
	enum dialect seen;           /* from what the file holds (.options) */
	struct thermal_deck temp;    /* .temp, .options temp= tnom= */
	const struct deck_card *temp_card; /* the last .temp, read at the end */
	unsigned resolving;          /* nesting of pending parameters being
					resolved on lookup */
	int oom, stop;
};

/* The reading in force: the one chosen or named by the ending, else the
 * one the file's constructs showed, else DIALECT_AUTO. */
static inline enum dialect elab_dialect(const struct elab *el)
{
	return el->dialect != DIALECT_AUTO ? el->dialect : el->seen;
}

/* Lookups both expansion (scope.c) and sizing (subsize.c) need; inline so
 * that neither module calls the other's. */

/* The word that opens a subcircuit's or an instance's parameters. */
static inline int elab_is_params_kw(const struct deck_field *f)
{
	return deck_atom_is(f, "params:") || deck_atom_is(f, "params");
}

/* Position of an instance card's subcircuit name plus one: the name is the
 * last word before params: or the first name=value; 0 when there is none. */
static inline uint32_t elab_name_index(const struct deck_card *c)
{
	uint32_t k = 0;
	while (k < c->nfields && c->fields[k].kind == FIELD_ATOM &&
	       !elab_is_params_kw(&c->fields[k]))
		k++;
	return k;
}

/* The definition called name[0..n), looked up from definition `from`
 * outwards (lexically), then among the global ones; NULL when none. */
static inline const struct subdef *elab_find_subckt(const struct elab *el,
						    const struct subdef *from,
						    const char *name, size_t n)
{
	for (const struct subdef *d = from; d; d = d->parent) {
		const struct subdef *s = smap_get(d->subckts, name, n);
		if (s)
			return s;
	}
	return smap_get(el->top.subckts, name, n);
}

/* Sets up the global scope and tables. Returns 0 on out-of-memory. */
int scope_init(struct elab *el);
/* Frees every table made by this module (not the arena). */
void scope_release(struct elab *el);

/* A definition from a .subckt card (copied). NULL on error (reported). */
struct subdef *scope_def_create(struct elab *el, const struct deck_card *c);
/* Fills model m (type and parameters) from a .model card. */
void scope_fill_model(struct elab *el, struct nl_model *m,
		      const struct deck_card *c);

/* Builds an element card (X included) in scope sc. With first_pass, an
 * undefined parameter gives DEV_DEFER and an unknown model a placeholder. */
enum dev_status scope_build(struct elab *el, struct scope *sc,
			    const struct deck_card *c, int first_pass);
/* Evaluates a .param card into sc. An assignment that names a parameter
 * not yet defined is kept pending (the card must outlive the scope: a
 * top-level card is copied) and resolved when it is looked up or at
 * scope_settle. */
void scope_params(struct elab *el, struct scope *sc, const struct deck_card *c);
/* Resolves the pending assignments of sc; those still undefined are
 * reported. */
void scope_settle(struct elab *el, struct scope *sc);
/* Records a .func card. */
void scope_func(struct elab *el, const struct deck_card *c);
/* Reports models that were used but never defined. */
void scope_check_models(struct elab *el);
/* Resolves the inductors of K cards and controlling sources of F and H. */
void scope_link_controls(struct elab *el);

/* Evaluates e with global parameters; reports a failure at `at` and
 * returns 0. */
/* A field's number: a number, or an expression over global parameters;
 * NaN otherwise. */
double scope_number(struct elab *el, const struct deck_field *v);
int scope_eval_global(struct elab *el, const struct expr *e,
		      struct diag_loc at, double *v);

/* Appends p to an arena-grown pointer array (*arr, *n, *cap). Returns 0
 * (and sets el->oom) on out-of-memory. */
int scope_push(struct elab *el, void ***arr, size_t *n, size_t *cap, void *p);

/* Appends an annotation record. */
void scope_add_annot(struct elab *el, struct elab_annot *a);

/* A new map registered for release; NULL (and el->oom) on out-of-memory. */
struct smap *scope_map(struct elab *el);

#endif
