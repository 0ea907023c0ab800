/* waiver.c: waivers and baselines (see waiver.h). The baseline reader is a
 * small JSON parser of its own (strict JSON, depth-limited, every error
 * with line:col), since only three fields of a known layout are needed. */
#include "waiver.h"
#include "infile.h"

#include <errno.h>

#include <ctype.h>
#include <math.h>
#include <stdatomic.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>

#include "num.h"
#include "suggest.h"

/* ---- waivers ---- */

/* Rules renamed since an earlier version: old id, new id. */
static const char *const renamed[][2] = {
	{"surge-current", "surge-derating"}, /* 0.3.0: too close to the quantity's name */
};

static const char *new_name(const char *id)
{
	for (size_t i = 0; i < sizeof renamed / sizeof renamed[0]; i++)
		if (strcmp(id, renamed[i][0]) == 0)
			return renamed[i][1];
	return NULL;
}

/* Reports waiver w, which names no rule. */
static void unknown_rule(const struct annot *w, struct diag_sink *d)
{
	struct diag_loc l = {w->loc.file, w->loc.line, w->rule_col};
	struct suggest s;
	char hint[SUGGEST_HINT_SIZE];
	if (new_name(w->rule)) {
		diag_add(d, DIAG_ERROR, "waiver", l, "the rule '%s' is now named '%s'", w->rule,
			 new_name(w->rule));
		return;
	}
	suggest_init(&s, w->rule, strlen(w->rule));
	for (size_t k = 0; k < rules_count; k++)
		suggest_offer(&s, rules_table[k].id);
	diag_add(d, DIAG_ERROR, "waiver", l, "no rule is named '%s'%s", w->rule,
		 suggest_best(&s) ? suggest_hint(&s, hint, sizeof hint) : " (headroom rules lists them)");
}

size_t waiver_check_rules(const struct annot *w, uint32_t n, struct diag_sink *d)
{
	size_t bad = 0;
	for (uint32_t i = 0; i < n; i++)
		if (w[i].kind == AN_WAIVE && w[i].rule && !rules_find(w[i].rule)) {
			unknown_rule(&w[i], d);
			bad++;
		}
	return bad;
}

struct waiver_file *waiver_load(const char *path, struct arena *ar,
				struct diag_sink *d)
{
	FILE *f = infile_open(path);
	int err = errno;
	uint32_t file = diag_add_file(d, path);
	struct diag_loc l = {file, 0, 0};
	if (!f) {
		diag_add(d, DIAG_ERROR, "waiver", l, "cannot read the waiver file: %s",
			 infile_error_text(err));
		return NULL;
	}
	struct elab_annot **lines = NULL;
	size_t n = 0, cap = 0;
	char buf[2048];
	unsigned lineno = 0;
	int ok = 1;
	while (fgets(buf, sizeof buf, f)) {
		lineno++;
		char *s = buf + strspn(buf, " \t");
		s[strcspn(s, "\r\n")] = '\0';
		if (!*s || (*s == '#' ) || (*s == '*' && s[1] != '@'))
			continue;
		l.line = lineno;
		l.col = (uint32_t)(s - buf) + 1;
		if (strncmp(s, "*@", 2) != 0) {
			diag_add(d, DIAG_ERROR, "waiver", l, "expected a *@waive line");
			ok = 0;
			continue;
		}
		if (n == cap) {
			cap = cap ? cap * 2 : 16;
			struct elab_annot **v = arena_alloc(ar, cap * sizeof *v);
			if (!v) {
				fclose(f);
				return NULL;
			}
			if (n)
				memcpy(v, lines, n * sizeof *v);
			lines = v;
		}
		struct elab_annot *a = arena_zalloc(ar, sizeof *a);
		if (!a || !(a->text = arena_strdup(ar, s + 2))) {
			fclose(f);
			return NULL;
		}
		a->prefix = "";
		a->loc = l;
		lines[n++] = a;
	}
	fclose(f);
	struct elab_result fake;
	memset(&fake, 0, sizeof fake);
	fake.annots = (void *const *)lines;
	fake.nannots = n;
	struct waiver_file *wf = arena_zalloc(ar, sizeof *wf);
	if (!wf || !annot_parse_all(&fake, ar, d, &wf->w, &wf->n))
		return NULL;
	wf->used = arena_alloc(ar, (wf->n + 1) * sizeof *wf->used);
	if (!wf->used)
		return NULL;
	for (uint32_t i = 0; i < wf->n; i++)
		atomic_init(&wf->used[i], 0);
	for (uint32_t i = 0; i < wf->n; i++)
		if (wf->w[i].kind != AN_WAIVE) {
			diag_add(d, DIAG_ERROR, "waiver", wf->w[i].loc, "a waiver file holds *@waive lines only");
			ok = 0;
		}
	if (waiver_check_rules(wf->w, wf->n, d))
		ok = 0;
	return ok && diag_errors(d, UINT32_MAX) == 0 ? wf : NULL;
}

static int matches(const struct annot *w, const struct finding *f)
{
	if (strcmp(w->rule, "*") != 0 && strcmp(w->rule, f->rule->id) != 0)
		return 0;
	return f->subject && annot_glob(w->target, f->subject);
}

/* A date "YYYY-MM-DD" before today (string order is date order). */
static int expired(const struct annot *w, const char *today)
{
	const struct annot_kv *u = annot_get(w, "until");
	return u && today && strcmp(u->text, today) < 0;
}

/* Returns 0 on out-of-memory. */
static int note_expired(struct arena *ar, const struct annot *w, struct rules_result *rr)
{
	struct finding *g = rules_add(rr, ar, RULE_WAIVER_EXPIRED);
	if (g) {
		g->loc = w->loc;
		g->subject = w->target;
		g->message = "a waiver has expired: the findings it covered are reported again";
		g->limits = annot_get(w, "until")->text;
	}
	return g != NULL;
}

/* Marks the findings w covers as waived (unless it has expired); returns
 * whether it covers any. external: w comes from a --waivers file. */
static int mark(const struct annot *w, const char *today, int external,
		struct rules_result *rr)
{
	const char *reason = annot_get(w, "reason") ? annot_get(w, "reason")->text : "";
	int used = 0;
	size_t n = rr->n;
	for (size_t i = 0; i < n; i++) {
		struct finding *f = &rr->f[i];
		if (!matches(w, f))
			continue;
		used = 1;
		if (!expired(w, today)) {
			f->waived = 1;
			f->waiver = reason;
			f->waiver_external = external;
		}
	}
	return used;
}

/* Returns 0 on out-of-memory. */
static int apply_one(struct arena *ar, const struct annot *w, const char *today,
		     struct rules_result *rr)
{
	int used = mark(w, today, 0, rr);
	if (expired(w, today) && used)
		return note_expired(ar, w, rr);
	if (used)
		return 1;
	struct finding *g = rules_add(rr, ar, RULE_WAIVER_UNUSED);
	if (g) {
		g->loc = w->loc;
		g->subject = w->target;
		g->message = "this waiver matches no finding: remove it or correct its rule and part";
	}
	return g != NULL;
}

/* A waiver from a file: matched findings are marked as for inline ones;
 * whether it was used anywhere is reported once, after the batch. */
static int apply_file_one(struct arena *ar, const struct waiver_file *wf,
			  uint32_t i, const char *today, struct rules_result *rr)
{
	const struct annot *w = &wf->w[i];
	if (!mark(w, today, 1, rr))
		return 1;
	atomic_store(&wf->used[i], 1);
	return !expired(w, today) || note_expired(ar, w, rr);
}

int waiver_apply(const struct audit *a, const struct waiver_file *wf,
		 const char *today, struct arena *ar, struct rules_result *rr)
{
	for (uint32_t i = 0; i < a->nannots; i++)
		if (a->annots[i].kind == AN_WAIVE && rules_find(a->annots[i].rule) &&
		    !apply_one(ar, &a->annots[i], today, rr))
			return 0; /* a waiver of no rule: an error of waiver_check_rules */
	for (uint32_t i = 0; wf && i < wf->n; i++)
		if (!apply_file_one(ar, wf, i, today, rr))
			return 0;
	return 1;
}

int waiver_unused(const struct waiver_file *wf, struct arena *ar,
		  struct rules_result *rr)
{
	for (uint32_t i = 0; wf && i < wf->n; i++) {
		if (atomic_load(&wf->used[i]))
			continue;
		struct finding *g = rules_add(rr, ar, RULE_WAIVER_UNUSED);
		if (!g)
			return 0;
		g->loc = wf->w[i].loc;
		g->subject = wf->w[i].target;
		g->message = "this waiver matched no finding in any file checked: remove it or "
			     "correct its rule and part";
	}
	return 1;
}

/* ---- baselines: a small strict JSON reader ---- */

#define JSON_MAX_DEPTH 64

struct key {
	const char *file, *rule, *part;
};

struct baseline {
	struct key *k;
	size_t n, cap;
	const char *paths_from;   /* the report's "paths_from", or NULL */
};

struct jr {
	const char *s;
	size_t i, n;
	unsigned line;
	size_t col0;
	int depth;
	struct arena *ar;
	struct diag_sink *d;
	uint32_t file;
	int bad;
	/* what the walk is inside of */
	const char *cur_file;
	struct baseline *b;
};

static void jerr(struct jr *j, const char *msg)
{
	if (j->bad)
		return;
	struct diag_loc l = {j->file, j->line, (uint32_t)(j->i - j->col0) + 1};
	diag_add(j->d, DIAG_ERROR, "baseline", l, "%s", msg);
	j->bad = 1;
}

static void ws(struct jr *j)
{
	while (j->i < j->n && j->s[j->i] && strchr(" \t\r\n", j->s[j->i])) {
		if (j->s[j->i] == '\n') {
			j->line++;
			j->col0 = j->i + 1;
		}
		j->i++;
	}
}

/* Four hex digits at j->i (advanced past them), or -1. */
static long hex4(struct jr *j)
{
	long v = 0;
	if (j->i + 4 > j->n)
		return -1;
	for (int k = 0; k < 4; k++) {
		char c = j->s[j->i + (size_t)k];
		if (!isxdigit((unsigned char)c))
			return -1;
		v = v * 16 + (isdigit((unsigned char)c) ? c - '0' : (c | 32) - 'a' + 10);
	}
	j->i += 4;
	return v;
}

/* The \u escape after "\u" (and the low half of a surrogate pair after
 * it) as UTF-8 into out: a report rewritten by a tool that escapes every
 * non-ASCII character (Python's json.dump does by default) must still
 * name the same files and parts. Returns the bytes written, 0 on an error
 * (reported). The UTF-8 is never longer than the escape. */
static size_t junicode(struct jr *j, char *out)
{
	size_t at = j->i - 2; /* the backslash: where an error points */
	long u = hex4(j);
	if (u >= 0xD800 && u < 0xDC00 && j->i + 6 <= j->n && j->s[j->i] == '\\' &&
	    j->s[j->i + 1] == 'u') {
		j->i += 2;
		long lo = hex4(j);
		u = lo >= 0xDC00 && lo < 0xE000 ? 0x10000 + ((u - 0xD800) << 10) + (lo - 0xDC00) : -2;
	}
	if (u == -1 || u == 0 || (u >= 0xD800 && u < 0xE000) || u == -2) {
		j->i = at;
		jerr(j, u == -1 ? "\\u needs four hex digits"
			: u == 0 ? "\\u0000 in a string"
				 : "\\u escape names half of a surrogate pair");
		return 0;
	}
	unsigned long c = (unsigned long)u;
	if (c < 0x80) {
		out[0] = (char)c;
		return 1;
	}
	if (c < 0x800) {
		out[0] = (char)(0xC0 | (c >> 6));
		out[1] = (char)(0x80 | (c & 0x3F));
		return 2;
	}
	if (c < 0x10000) {
		out[0] = (char)(0xE0 | (c >> 12));
		out[1] = (char)(0x80 | ((c >> 6) & 0x3F));
		out[2] = (char)(0x80 | (c & 0x3F));
		return 3;
	}
	out[0] = (char)(0xF0 | (c >> 18));
	out[1] = (char)(0x80 | ((c >> 12) & 0x3F));
	out[2] = (char)(0x80 | ((c >> 6) & 0x3F));
	out[3] = (char)(0x80 | (c & 0x3F));
	return 4;
}

/* A string: returns an arena copy (escapes decoded, \u to UTF-8). */
static const char *jstring(struct jr *j)
{
	if (j->i >= j->n || j->s[j->i] != '"') {
		jerr(j, "expected a string");
		return NULL;
	}
	size_t start = ++j->i, k = 0, end = start;
	/* the decoded text is never longer than the raw text up to the
	 * closing quote (an escaped quote does not end it) */
	while (end < j->n && j->s[end] != '"')
		end += j->s[end] == '\\' ? 2 : 1;
	char *out = arena_alloc(j->ar, (end < j->n ? end : j->n) - start + 1);
	if (!out) {
		j->bad = 1;
		return NULL;
	}
	while (j->i < j->n && j->s[j->i] != '"') {
		char c = j->s[j->i++];
		if ((unsigned char)c < 0x20) {
			jerr(j, "control character in a string");
			return NULL;
		}
		if (c == '\\' && j->i < j->n) {
			char e = j->s[j->i++];
			c = e == 'n' ? '\n' : e == 't' ? '\t' : e == 'r' ? '\r' : e == 'b' ? '\b' : e == 'f' ? '\f' : e;
			if (e == 'u') {
				size_t w = junicode(j, out + k);
				if (!w)
					return NULL;
				k += w;
				continue;
			}
		}
		out[k++] = c;
	}
	if (j->i >= j->n) {
		jerr(j, "unterminated string");
		return NULL;
	}
	j->i++;
	out[k] = '\0';
	return out;
}

static void jvalue(struct jr *j, const char *key, int in_findings, struct key *fk);

static void add_key(struct jr *j, const struct key *k)
{
	struct baseline *b = j->b;
	if (!k->rule || !j->cur_file)
		return;
	if (b->n == b->cap) {
		size_t ncap = b->cap ? b->cap * 2 : 64;
		struct key *v = arena_alloc(j->ar, ncap * sizeof *v);
		if (!v) {
			j->bad = 1;
			return;
		}
		if (b->n)
			memcpy(v, b->k, b->n * sizeof *v);
		b->k = v;
		b->cap = ncap;
	}
	b->k[b->n] = *k;
	b->k[b->n++].file = j->cur_file;
}

static void jobject(struct jr *j, const char *parent, int in_findings)
{
	struct key fk = {NULL, NULL, NULL};
	j->i++;
	ws(j);
	if (j->i < j->n && j->s[j->i] == '}') {
		j->i++;
		return;
	}
	while (!j->bad) {
		ws(j);
		const char *k = jstring(j);
		ws(j);
		if (j->bad || j->i >= j->n || j->s[j->i] != ':') {
			jerr(j, "expected ':'");
			return;
		}
		j->i++;
		ws(j);
		if (k && strcmp(k, "path") == 0 && parent && strcmp(parent, "files") == 0 &&
		    j->i < j->n && j->s[j->i] == '"') {
			j->cur_file = jstring(j);
		} else if (k && strcmp(k, "paths_from") == 0 && j->depth == 1 &&
			   j->i < j->n && j->s[j->i] == '"') {
			j->b->paths_from = jstring(j);
		} else if (in_findings && k && (strcmp(k, "rule") == 0 || strcmp(k, "part") == 0) &&
			   j->i < j->n && j->s[j->i] == '"') {
			const char *v = jstring(j);
			if (strcmp(k, "rule") == 0)
				fk.rule = v;
			else
				fk.part = v;
		} else {
			jvalue(j, k, 0, NULL);
		}
		ws(j);
		if (j->i < j->n && j->s[j->i] == ',') {
			j->i++;
			continue;
		}
		if (j->i < j->n && j->s[j->i] == '}') {
			j->i++;
			break;
		}
		jerr(j, "expected ',' or '}'");
		return;
	}
	if (in_findings)
		add_key(j, &fk);
}

static void jarray(struct jr *j, const char *key)
{
	int findings = key && strcmp(key, "findings") == 0;
	j->i++;
	ws(j);
	if (j->i < j->n && j->s[j->i] == ']') {
		j->i++;
		return;
	}
	while (!j->bad) {
		ws(j);
		if (j->i < j->n && j->s[j->i] == '{') {
			if (++j->depth > JSON_MAX_DEPTH) {
				jerr(j, "nested too deeply");
				return;
			}
			jobject(j, key, findings);
			j->depth--;
		} else {
			jvalue(j, NULL, 0, NULL);
		}
		ws(j);
		if (j->i < j->n && j->s[j->i] == ',') {
			j->i++;
			continue;
		}
		if (j->i < j->n && j->s[j->i] == ']') {
			j->i++;
			return;
		}
		jerr(j, "expected ',' or ']'");
		return;
	}
}

static void jvalue(struct jr *j, const char *key, int in_findings, struct key *fk)
{
	(void)in_findings;
	(void)fk;
	ws(j);
	if (j->i >= j->n) {
		jerr(j, "unexpected end of the file");
		return;
	}
	char c = j->s[j->i];
	if (++j->depth > JSON_MAX_DEPTH) {
		jerr(j, "nested too deeply");
		return;
	}
	if (c == '{')
		jobject(j, key, 0);
	else if (c == '[')
		jarray(j, key);
	else if (c == '"')
		jstring(j);
	else if (strncmp(j->s + j->i, "true", 4) == 0 || strncmp(j->s + j->i, "null", 4) == 0)
		j->i += 4;
	else if (strncmp(j->s + j->i, "false", 5) == 0)
		j->i += 5;
	else if (c == '-' || (c >= '0' && c <= '9')) {
		char *end;
		strtod(j->s + j->i, &end);
		if (end == j->s + j->i)
			jerr(j, "bad number");
		j->i = (size_t)(end - j->s);
	} else {
		jerr(j, "expected a JSON value");
	}
	j->depth--;
}

/* ---- baselines: paths ---- */

/* p made absolute and canonical: its real path, or for a file that does not
 * exist the real path of its folder and its name, or as joined. Relative p
 * is taken from dir (NULL: the current directory). In ar; NULL on
 * out-of-memory. */
static const char *real_path(struct arena *ar, const char *dir, const char *p)
{
	char joined[4096], *r;
	if (p[0] == '/' || !dir)
		snprintf(joined, sizeof joined, "%s", p);
	else
		snprintf(joined, sizeof joined, "%s/%s", dir, p);
	if ((r = realpath(joined, NULL))) {
		const char *out = arena_strdup(ar, r);
		free(r);
		return out;
	}
	char *slash = strrchr(joined, '/');
	const char *name = slash ? slash + 1 : joined;
	if (slash && slash != joined) {
		*slash = '\0';
		r = realpath(joined, NULL);
		*slash = '/';
	} else {
		r = realpath(slash ? "/" : ".", NULL);
	}
	if (!r)
		return arena_strdup(ar, joined);
	size_t n = strlen(r) + strlen(name) + 2;
	char *out = arena_alloc(ar, n);
	if (out)
		snprintf(out, n, "%s%s%s", r, strcmp(r, "/") ? "/" : "", name);
	free(r);
	return out;
}

/* Every key's file as a real path. A baseline written with
 * --write-baseline says where its paths start ("paths_from", relative to
 * the baseline's folder); other JSON reports are taken from the current
 * directory, as the check that wrote them most likely ran there. */
static int baseline_paths(struct baseline *b, const char *path, struct arena *ar)
{
	const char *dir = NULL, *raw = NULL, *real = NULL;
	if (b->paths_from) {
		const char *slash = strrchr(path, '/');
		char base[4096];
		if (b->paths_from[0] == '/')
			snprintf(base, sizeof base, "%s", b->paths_from);
		else if (!slash)
			snprintf(base, sizeof base, "./%s", b->paths_from);
		else
			snprintf(base, sizeof base, "%.*s/%s", (int)(slash - path), path, b->paths_from);
		if (!(dir = arena_strdup(ar, base)))
			return 0;
	}
	for (size_t i = 0; i < b->n; i++) {
		if (b->k[i].file != raw) { /* keys of one file share the pointer */
			raw = b->k[i].file;
			if (!(real = real_path(ar, dir, raw)))
				return 0;
		}
		b->k[i].file = real;
	}
	return 1;
}

/* The relative path from folder from to folder to, both real paths. */
static int rel_path(const char *from, const char *to, char *out, size_t n)
{
	size_t c = 0, k = 0; /* c: the end of the common leading folders */
	for (size_t i = 0;; i++) {
		if ((from[i] == '/' || !from[i]) && (to[i] == '/' || !to[i]))
			c = i;
		if (!from[i] || !to[i] || from[i] != to[i])
			break;
	}
	out[0] = '\0';
	for (const char *p = from + c; *p; p++)
		if (*p == '/' && p[1])
			k += (size_t)snprintf(out + k, k < n ? n - k : 0, "%s..", k ? "/" : "");
	const char *rest = to + c + (to[c] == '/');
	if (*rest)
		k += (size_t)snprintf(out + k, k < n ? n - k : 0, "%s%s", k ? "/" : "", rest);
	if (k == 0)
		k = (size_t)snprintf(out, n, ".");
	return k < n;
}

int baseline_paths_from(const char *baseline_path, char *out, size_t n)
{
	const char *slash = strrchr(baseline_path, '/');
	char dir[4096];
	if (!slash)
		snprintf(dir, sizeof dir, ".");
	else if (slash == baseline_path)
		snprintf(dir, sizeof dir, "/");
	else
		snprintf(dir, sizeof dir, "%.*s", (int)(slash - baseline_path), baseline_path);
	char *from = realpath(dir, NULL), *to = realpath(".", NULL);
	int ok = from && to && rel_path(from, to, out, n);
	free(from);
	free(to);
	return ok;
}

struct baseline *baseline_load(const char *path, struct arena *ar,
			       struct diag_sink *d)
{
	uint32_t file = diag_add_file(d, path);
	struct diag_loc l = {file, 0, 0};
	FILE *f = infile_open(path);
	if (!f) {
		diag_add(d, DIAG_ERROR, "baseline", l, "cannot read the baseline: %s",
			 infile_error_text(errno));
		return NULL;
	}
	char *buf = NULL;
	size_t n = 0, cap = 0;
	for (;;) {
		if (n + 65536 + 1 > cap) {
			if (cap > (size_t)256 << 20) {
				diag_add(d, DIAG_ERROR, "baseline", l, "the baseline is larger than 256 MB");
				free(buf);
				fclose(f);
				return NULL;
			}
			cap = cap ? cap * 2 : 131072;
			char *nb = realloc(buf, cap);
			if (!nb) {
				free(buf);
				fclose(f);
				return NULL;
			}
			buf = nb;
		}
		size_t k = fread(buf + n, 1, 65536, f);
		n += k;
		if (k == 0)
			break;
	}
	fclose(f);
	struct baseline *b = arena_zalloc(ar, sizeof *b);
	struct jr j = {buf, 0, n, 1, 0, 0, ar, d, file, 0, NULL, b};
	if (b && buf) {
		jvalue(&j, NULL, 0, NULL);
		ws(&j);
		if (!j.bad && j.i != j.n)
			jerr(&j, "text after the JSON document");
	}
	free(buf);
	if (!b || j.bad || !baseline_paths(b, path, ar))
		return NULL;
	return b;
}

size_t baseline_filter(const struct baseline *b, const char *path,
		       struct rules_result *rr, struct arena *ar)
{
	size_t k = 0;
	const char *real = real_path(ar, NULL, path);
	if (!real)
		real = path;
	for (size_t i = 0; i < rr->n; i++) {
		const struct finding *f = &rr->f[i];
		int old = 0;
		for (size_t m = 0; m < b->n && !old; m++)
			old = strcmp(b->k[m].file, real) == 0 && strcmp(b->k[m].rule, f->rule->id) == 0 &&
			      ((b->k[m].part == NULL) == (f->subject == NULL)) &&
			      (!f->subject || strcmp(b->k[m].part, f->subject) == 0);
		if (!old)
			rr->f[k++] = *f;
	}
	size_t hidden = rr->n - k;
	rr->n = k;
	return hidden;
}
