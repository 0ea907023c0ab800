/* wave.c: source waveform descriptions, per the ngspice manual's chapter on
 * independent sources: SIN(VO VA FREQ TD THETA PHASE), PULSE(V1 V2 TD TR TF
 * PW PER), PWL(t1 v1 ...) [r=] [td=], EXP(V1 V2 TD1 TAU1 TD2 TAU2),
 * SFFM(VO VA FC MDI FS). */
#include "wave.h"

#include <string.h>

#include "num.h"

#define WAVE_MAX_ARGS 200000u /* 100,000 time-value pairs */

struct wave_rd {
	const struct dev_scope *s;
	const struct deck_card *card;
	struct arena *ar;
	struct diag_sink *d;
	struct nl_source *src;
	uint32_t i;
};

static const char *const wave_names[] = {"dc", "sin", "pulse", "pwl", "exp",
					 "sffm", "am"};
_Static_assert(sizeof wave_names / sizeof wave_names[0] == NL_WAVE_COUNT,
	       "one name per waveform");

const char *wave_name(enum nl_wave w)
{
	return wave_names[w];
}

/* The names a waveform is written under: SPICE's, and the spellings
 * schematic exporters write ("sine(...)", as in the ngspice manual's
 * examples of exported decks, is SIN). */
static enum nl_wave wave_kind(const char *s, size_t n)
{
	for (int w = NL_WAVE_SIN; w < NL_WAVE_COUNT; w++)
		if (num_ieq(s, n, wave_names[w]))
			return (enum nl_wave)w;
	if (num_ieq(s, n, "sine"))
		return NL_WAVE_SIN;
	return NL_WAVE_NONE;
}

static int numeric(const struct deck_field *f)
{
	return f->kind == FIELD_EXPR ||
	       (f->kind == FIELD_ATOM && num_looks_numeric(f->text, f->len));
}

static enum dev_status err(struct wave_rd *r, const struct deck_field *f,
			   const char *msg)
{
	struct diag_loc l = {r->card->loc.file, f->line, f->col};
	diag_add(r->d, DIAG_ERROR, "source", l, "%s", msg);
	return DEV_ERROR;
}

static enum dev_status val(struct wave_rd *r, const struct deck_field *f,
			   double *out)
{
	enum dev_status st = devval_get(r->s, f, r->d, r->card->loc.file, out);
	if (st == DEV_STATE)
		return err(r, f, "a source value may not depend on circuit voltages, currents or time");
	return st;
}

/* Words that start a new part of a source description. */
static int is_keyword(const struct deck_field *f)
{
	static const char *const kw[] = {"dc", "ac", "distof1", "distof2",
					 "portnum", "z0", "pwr", "freq", NULL};
	if (f->kind != FIELD_ATOM)
		return 0;
	for (int i = 0; kw[i]; i++)
		if (num_ieq(f->text, f->len, kw[i]))
			return 1;
	return wave_kind(f->text, f->len) != NL_WAVE_NONE;
}

static uint32_t count_args(const struct deck_field *f, uint32_t n)
{
	uint32_t k = 0;
	for (uint32_t i = 0; i < n; i++)
		k += f[i].kind == FIELD_CALL ? count_args(f[i].args, f[i].nargs)
					     : f[i].kind != FIELD_ASSIGN;
	return k;
}

/* Values of f[0..n); parenthesised pairs "(t v)" are flattened. */
static enum dev_status take_args(struct wave_rd *r, const struct deck_field *f,
				 uint32_t n)
{
	for (uint32_t k = 0; k < n; k++) {
		enum dev_status st = DEV_OK;
		if (f[k].kind == FIELD_CALL && f[k].len == 0)
			st = take_args(r, f[k].args, f[k].nargs);
		else if (f[k].kind != FIELD_ASSIGN) /* r=, td=: the caller's */
			st = val(r, &f[k], &r->src->args[r->src->nargs++]);
		if (st != DEV_OK)
			return st;
	}
	return DEV_OK;
}

/* Stores the arguments of a waveform given as fields f[0..n). */
static enum dev_status set_wave(struct wave_rd *r, enum nl_wave w,
				const struct deck_field *f, uint32_t n,
				const struct deck_field *at)
{
	if (r->src->wave != NL_WAVE_NONE)
		return err(r, at, "a source takes one transient waveform, this is a second one");
	uint32_t lim = r->s->max_wave_values ? r->s->max_wave_values : WAVE_MAX_ARGS;
	if (count_args(f, n) > lim) {
		struct diag_loc l = {r->card->loc.file, at->line, at->col};
		diag_add(r->d, DIAG_ERROR, "source", l,
			 "waveform has more than %u values (%u points; see --max-pwl)",
			 lim, lim / 2);
		return DEV_ERROR;
	}
	r->src->wave = w;
	r->src->nargs = 0;
	uint32_t total = count_args(f, n);
	r->src->args = arena_alloc(r->ar, (total ? total : 1) * sizeof *r->src->args);
	if (!r->src->args)
		return DEV_OOM;
	enum dev_status st = take_args(r, f, n);
	if (st != DEV_OK)
		return st;
	if (r->src->nargs < 2)
		return err(r, at, "a waveform needs at least two values");
	if (w == NL_WAVE_PWL && r->src->nargs % 2 != 0)
		return err(r, at, "pwl needs time-value pairs: an odd number of values was given");
	return DEV_OK;
}

static enum dev_status pwl_option(struct wave_rd *r, const struct deck_field *f)
{
	if (num_ieq(f->text, f->len, "r"))
		return val(r, f->value, &r->src->pwl_repeat);
	if (num_ieq(f->text, f->len, "td"))
		return val(r, f->value, &r->src->pwl_delay);
	return DEV_ERROR;
}

/* Waveforms read for nothing but a warning. */
static int is_other_wave(const struct deck_field *f)
{
	static const char *const w[] = {"trnoise", "trrandom", "pat",
					"noise", NULL};
	for (int i = 0; w[i]; i++)
		if (deck_atom_is(f, w[i]))
			return 1;
	return 0;
}

static enum dev_status skip_other_wave(struct wave_rd *r,
				       const struct deck_field *f)
{
	struct diag_loc l = {r->card->loc.file, f->line, f->col};
	diag_add(r->d, DIAG_WARNING, "source", l,
		 "waveform '%s' is not understood: only its DC value is used", f->text);
	r->src->unknown = 1;
	r->i++;
	while (r->i < r->card->nfields && numeric(&r->card->fields[r->i]))
		r->i++;
	return DEV_OK;
}

/* ngspice's "file NAME [snd(...)]": samples read from a file (a sound
 * file) during the simulation. What they hold is not read here: the
 * source is an unknown waveform, like the ones above. */
static enum dev_status skip_file_wave(struct wave_rd *r, const struct deck_field *f)
{
	const struct deck_card *c = r->card;
	if (r->i + 1 >= c->nfields || c->fields[r->i + 1].kind != FIELD_ATOM)
		return err(r, f, "'file' needs the name of the file the samples come from");
	struct diag_loc l = {c->loc.file, f->line, f->col};
	diag_add(r->d, DIAG_WARNING, "source", l,
		 "samples read from file '%s' during the simulation are not known here: "
		 "only the DC value is used",
		 c->fields[r->i + 1].text);
	r->src->unknown = 1;
	r->i += 2;
	if (r->i < c->nfields && c->fields[r->i].kind == FIELD_CALL)
		r->i++;
	return DEV_OK;
}

static enum dev_status on_call(struct wave_rd *r, const struct deck_field *f)
{
	enum nl_wave w = wave_kind(f->text, f->len);
	if (w != NL_WAVE_NONE) {
		enum dev_status st = set_wave(r, w, f->args, f->nargs, f);
		for (uint32_t k = 0; st == DEV_OK && k < f->nargs; k++)
			if (f->args[k].kind == FIELD_ASSIGN &&
			    pwl_option(r, &f->args[k]) != DEV_OK)
				st = err(r, &f->args[k], "unexpected key in a waveform");
		return st;
	}
	struct diag_loc l = {r->card->loc.file, f->line, f->col};
	diag_add(r->d, DIAG_WARNING, "source", l,
		 "waveform '%s' is not understood: only its DC value is used", f->text);
	r->src->unknown = 1;
	return DEV_OK;
}

/* A waveform written without parentheses: its numbers follow the name. */
static enum dev_status on_bare_wave(struct wave_rd *r, enum nl_wave w)
{
	const struct deck_card *c = r->card;
	uint32_t first = r->i + 1, k = first;
	while (k < c->nfields && numeric(&c->fields[k]))
		k++;
	enum dev_status st = set_wave(r, w, &c->fields[first], k - first,
				      &c->fields[r->i]);
	r->i = k;
	return st;
}

/* Numbers following a keyword (dc, ac): up to max of them. */
static enum dev_status take_numbers(struct wave_rd *r, double *out,
				    uint32_t max, uint32_t need)
{
	const struct deck_card *c = r->card;
	const struct deck_field *kw = &c->fields[r->i];
	uint32_t got = 0;
	r->i++;
	while (got < max && r->i < c->nfields && numeric(&c->fields[r->i])) {
		enum dev_status st = val(r, &c->fields[r->i], &out[got]);
		if (st != DEV_OK)
			return st;
		got++;
		r->i++;
	}
	return got < need ? err(r, kw, "a number must follow this keyword")
			  : DEV_OK;
}

static enum dev_status on_assign(struct wave_rd *r, const struct deck_field *f)
{
	if (num_ieq(f->text, f->len, "dc")) {
		r->src->has_dc = 1;
		return val(r, f->value, &r->src->dc);
	}
	if (num_ieq(f->text, f->len, "ac"))
		return val(r, f->value, &r->src->ac_mag);
	if (pwl_option(r, f) == DEV_OK || num_ieq(f->text, f->len, "m"))
		return DEV_OK;
	return err(r, f, "unexpected key in a source card");
}

static enum dev_status step(struct wave_rd *r)
{
	const struct deck_field *f = &r->card->fields[r->i];
	enum nl_wave w;
	double two[2] = {0, 0};
	if (deck_atom_is(f, "dc")) {
		/* "dc" takes the value after it; alone it means 0 */
		r->src->has_dc = 1;
		r->i++;
		const struct deck_field *v = r->i < r->card->nfields ? &r->card->fields[r->i] : NULL;
		if (!v || is_keyword(v) || (v->kind != FIELD_ATOM && v->kind != FIELD_EXPR))
			return DEV_OK;
		r->i++;
		return val(r, v, &r->src->dc);
	}
	if (deck_atom_is(f, "portnum") || deck_atom_is(f, "z0") ||
	    deck_atom_is(f, "pwr") || deck_atom_is(f, "freq"))
		return take_numbers(r, two, 1, 1); /* RF port data, not a waveform */
	if (deck_atom_is(f, "ac")) {
		uint32_t before = r->i;
		two[0] = 1.0; /* "ac" alone means magnitude 1 */
		enum dev_status st = take_numbers(r, two, 2, 0);
		r->src->ac_mag = two[0];
		r->src->ac_phase = r->i - before > 2 ? two[1] : 0.0;
		return st;
	}
	if (deck_atom_is(f, "distof1") || deck_atom_is(f, "distof2"))
		return take_numbers(r, two, 2, 0);
	if (f->kind == FIELD_ATOM && (w = wave_kind(f->text, f->len)) != NL_WAVE_NONE)
		return on_bare_wave(r, w);
	if (is_other_wave(f))
		return skip_other_wave(r, f);
	if (deck_atom_is(f, "file"))
		return skip_file_wave(r, f);
	r->i++;
	if (f->kind == FIELD_CALL)
		return on_call(r, f);
	if (f->kind == FIELD_ASSIGN)
		return on_assign(r, f);
	if (numeric(f) && !r->src->has_dc) {
		r->src->has_dc = 1;
		return val(r, f, &r->src->dc);
	}
	return err(r, f, "unexpected word in a source card");
}

/* PULSE with a width of 0: SPICE3 takes a zero width as TSTOP (ngspice's
 * manual gives TSTOP as the default, and ngspice-39 replaces a zero by it:
 * checked by simulation), so the pulse stays at V2 from the end of its rise
 * to the end of its period and falls at once when the next period starts.
 * LTspice reads the zero as it is. Read as the deck's simulator reads it,
 * with a warning: a designer who wrote it meant a sawtooth or a triangle. */
static void pulse_zero_width(struct wave_rd *r)
{
	struct nl_source *src = r->src;
	if (src->wave != NL_WAVE_PULSE || src->nargs < 7 || src->args[5] != 0 ||
	    !(src->args[6] > 0) || r->s->dialect == DIALECT_LTSPICE)
		return;
	double tr = src->args[3] > 0 ? src->args[3] : 0;
	src->args[5] = src->args[6] > tr ? src->args[6] - tr : 0;
	diag_add(r->d, DIAG_WARNING, "source", r->card->loc,
		 "PULSE with a width of 0: SPICE3 and ngspice read it as TSTOP, so the pulse "
		 "holds its second level from the end of its rise to the end of its period and "
		 "drops at once, its fall time unused; headroom reads it so (LTspice reads 0 as "
		 "0). For a sawtooth or a triangle, give the width a small value");
}

enum dev_status wave_parse(const struct dev_scope *s,
			   const struct deck_card *card, uint32_t start,
			   struct arena *ar, struct diag_sink *d,
			   struct nl_source **out)
{
	struct wave_rd r = {s, card, ar, d, NULL, start};
	r.src = arena_zalloc(ar, sizeof *r.src);
	if (!r.src)
		return DEV_OOM;
	r.src->pwl_repeat = -1.0;
	while (r.i < card->nfields) {
		enum dev_status st = step(&r);
		if (st != DEV_OK)
			return st;
	}
	pulse_zero_width(&r);
	*out = r.src;
	return DEV_OK;
}
