/* annot.c: *@ directive lines. Grammar of a line (after "*@"):
 *   directive target [key=value ...]     (part, source, expect)
 *   waive RULE target key=value ...      (reason= mandatory)
 *   profile NAME
 * Values may be quoted ("...") and carry units and suffixes (250V, 35ns,
 * 20%). Keys are checked against the directive's list. */
#include "annot.h"

#include <ctype.h>
#include <math.h>
#include <string.h>

#include "num.h"

struct directive {
	const char *name;
	enum annot_kind kind;
	int words;             /* positional words after the name */
	const char *keys;      /* space-separated allowed keys */
};

static const struct directive directives[] = {
	/* the values are rating.c's columns [rating-fields] */
	{"part", AN_PART, 1, "v_rated kind tol i_surge i_avg i_peak p_rated trr i_ripple ripple_freq "
			     "ripple_temp esr life_h life_temp rth_ca surge_width i2t c_bias note"},
	{"source", AN_SOURCE, 1, "tol min max"},
	{"waive", AN_WAIVE, 2, "reason until"},
	{"expect", AN_EXPECT, 1, "min max"},
	{"profile", AN_PROFILE, 1, ""},
};

struct lexer {
	const char *s;
	size_t i;
	const struct elab_annot *a;
	struct diag_sink *d;
};

static void err(struct lexer *l, const char *msg, const char *arg)
{
	/* +2: the column of the text after "*@" */
	struct diag_loc at = {l->a->loc.file, l->a->loc.line,
			      l->a->loc.col + 2 + (uint32_t)l->i};
	diag_add(l->d, DIAG_ERROR, "annotation", at, msg, arg);
}

static void skip_blanks(struct lexer *l)
{
	while (l->s[l->i] == ' ' || l->s[l->i] == '\t' || l->s[l->i] == '\r')
		l->i++;
}

/* A word up to a blank or '='; *n its length. */
static const char *word(struct lexer *l, size_t *n)
{
	skip_blanks(l);
	size_t start = l->i;
	while (l->s[l->i] && !isspace((unsigned char)l->s[l->i]) && l->s[l->i] != '=')
		l->i++;
	*n = l->i - start;
	return l->s + start;
}

static const struct directive *find_directive(const char *w, size_t n)
{
	for (size_t i = 0; i < sizeof directives / sizeof directives[0]; i++)
		if (num_ieq(w, n, directives[i].name))
			return &directives[i];
	return NULL;
}

static int key_allowed(const struct directive *dv, const char *k, size_t n)
{
	const char *p = dv->keys;
	while (*p) {
		size_t m = strcspn(p, " ");
		if (m == n && strncmp(p, k, n) == 0)
			return 1;
		p += m + (p[m] == ' ');
	}
	return 0;
}

static char *lower_copy(struct arena *ar, const char *s, size_t n)
{
	char *c = arena_strndup(ar, s, n);
	if (c)
		num_fold(c, n);
	return c;
}

/* A value: quoted text or a word; number with units parsed when possible. */
static int value(struct lexer *l, struct arena *ar, struct annot_kv *kv)
{
	size_t n;
	const char *v;
	if (l->s[l->i] == '"') {
		size_t start = ++l->i;
		while (l->s[l->i] && l->s[l->i] != '"')
			l->i++;
		if (!l->s[l->i]) {
			err(l, "the quoted value has no closing quote%s", "");
			return 0;
		}
		v = l->s + start;
		n = l->i++ - start;
	} else {
		v = word(l, &n);
	}
	kv->text = arena_strndup(ar, v, n);
	kv->num = NAN;
	kv->percent = n > 0 && v[n - 1] == '%';
	double x;
	if (num_ok(num_parse(v, kv->percent ? n - 1 : n, &x, NULL)))
		kv->num = kv->percent ? x / 100 : x;
	return kv->text != NULL;
}

static int pairs(struct lexer *l, struct arena *ar, const struct directive *dv,
		 struct annot *out)
{
	struct annot_kv tmp[16];
	out->nkv = 0;
	for (;;) {
		skip_blanks(l);
		if (!l->s[l->i])
			break;
		size_t n;
		size_t at = l->i;
		const char *k = word(l, &n);
		if (l->s[l->i] != '=' || n == 0) {
			l->i = at;
			err(l, "expected key=value here%s", "");
			return 0;
		}
		char key[32];
		snprintf(key, sizeof key, "%.*s", (int)n, k);
		num_fold(key, strlen(key));
		if (!key_allowed(dv, key, strlen(key))) {
			l->i = at;
			err(l, "'%s' is not a key of this directive", key);
			return 0;
		}
		l->i++;
		if (out->nkv == 16) {
			err(l, "too many keys%s", "");
			return 0;
		}
		struct annot_kv *kv = &tmp[out->nkv++];
		kv->key = lower_copy(ar, key, strlen(key));
		if (!kv->key || !value(l, ar, kv))
			return 0;
	}
	out->kv = arena_alloc(ar, (out->nkv ? out->nkv : 1) * sizeof *out->kv);
	if (!out->kv)
		return 0;
	memcpy(out->kv, tmp, out->nkv * sizeof *tmp);
	return 1;
}

static char *prefixed(struct arena *ar, const char *prefix, const char *w,
		      size_t n)
{
	size_t pl = strlen(prefix);
	char *t = arena_alloc(ar, pl + n + 1);
	if (t) {
		memcpy(t, prefix, pl);
		memcpy(t + pl, w, n);
		t[pl + n] = '\0';
	}
	return t;
}

/* A waiver names one rule, gives a reason with words in it, and expires on
 * a real ISO 8601 date, or it is an error: a waiver that waives more, for
 * longer or for less reason than it says is worse than none. */
static int waiver_ok(struct lexer *l, const struct annot *w)
{
	const struct annot_kv *r = annot_get(w, "reason"), *u = annot_get(w, "until");
	if (!r) {
		err(l, "a waiver needs reason=\"...\"%s", "");
		return 0;
	}
	if (!r->text[strspn(r->text, " \t")]) {
		err(l, "a waiver's reason is empty: say why the finding is accepted%s", "");
		return 0;
	}
	if (u && !num_iso_date(u->text)) {
		err(l, "until='%s' is not a date: write it YYYY-MM-DD", u->text);
		return 0;
	}
	if (strcmp(w->rule, "*") == 0) {
		err(l, "a waiver must name the rule it waives: '*' would waive every rule%s", "");
		return 0;
	}
	return 1;
}

/* Parses one line; 1 on success, 0 when reported, -1 on out-of-memory. */
static int parse_one(const struct elab_annot *a, struct arena *ar,
		     struct diag_sink *d, struct annot *out)
{
	struct lexer l = {a->text, 0, a, d};
	size_t n;
	const char *w = word(&l, &n);
	const struct directive *dv = find_directive(w, n);
	if (!dv) {
		l.i -= n;
		err(&l, "unknown directive '%s' (part, source, waive, expect, profile)",
		    n ? arena_strndup(ar, w, n) : "");
		return 0;
	}
	memset(out, 0, sizeof *out);
	out->kind = dv->kind;
	out->loc = a->loc;
	if (dv->kind == AN_WAIVE) {
		w = word(&l, &n);
		if (!n) {
			err(&l, "waive needs a rule id and a part%s", "");
			return 0;
		}
		out->rule = lower_copy(ar, w, n);
		out->rule_col = a->loc.col + (uint32_t)(w - a->text) + 2; /* after "*@" */
	}
	w = word(&l, &n);
	if (!n || l.s[l.i] == '=') {
		err(&l, dv->kind == AN_PROFILE ? "expected a profile's name or file here (*@profile NAME)%s"
					       : "expected the name of a part or source here%s", "");
		return 0;
	}
	out->target = dv->kind == AN_PROFILE ? arena_strndup(ar, w, n)
					      : prefixed(ar, a->prefix, w, n);
	if (!out->target || (dv->kind == AN_WAIVE && !out->rule))
		return -1;
	if (!pairs(&l, ar, dv, out))
		return d && diag_oom(d) ? -1 : 0;
	if (dv->kind == AN_WAIVE && !waiver_ok(&l, out))
		return 0;
	return 1;
}

int annot_parse_all(const struct elab_result *r, struct arena *ar,
		    struct diag_sink *d, struct annot **out, uint32_t *n)
{
	*n = 0;
	*out = arena_alloc(ar, (r->nannots ? r->nannots : 1) * sizeof **out);
	if (!*out)
		return 0;
	for (size_t i = 0; i < r->nannots; i++) {
		int st = parse_one(elab_annot_at(r, i), ar, d, &(*out)[*n]);
		if (st < 0)
			return 0;
		*n += (uint32_t)st;
	}
	return 1;
}

const struct annot_kv *annot_get(const struct annot *a, const char *key)
{
	for (uint32_t i = 0; i < a->nkv; i++)
		if (strcmp(a->kv[i].key, key) == 0)
			return &a->kv[i];
	return NULL;
}

int annot_glob(const char *pat, const char *s)
{
	const char *star = NULL, *back = NULL;
	while (*s) {
		char p = (char)tolower((unsigned char)*pat), c = (char)tolower((unsigned char)*s);
		if (*pat == '*') {
			star = pat++;
			back = s;
		} else if (*pat == '?' || (p == c && *pat)) {
			pat++;
			s++;
		} else if (star) {
			pat = star + 1;
			s = ++back;
		} else {
			return 0;
		}
	}
	while (*pat == '*')
		pat++;
	return *pat == '\0';
}
