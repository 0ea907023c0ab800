/* profile.c: the profile reader. Grammar, one entry per line:
 *   key = value [# source]
 * value: a number with optional unit (0.8, 80%, 60V, 2s); key: name,
 * description (free text), or a known numeric key. Blank and '#' lines are
 * skipped. */
#include "profile.h"
#include "infile.h"

#include <errno.h>

#include <math.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>
#include <unistd.h>

#include "num.h"
#include "suggest.h"

const char *const profile_shipped[] = {"basic", "industrial", "flight", NULL};

/* Both lists also appear in docs/profiles.md [kinds-list]. */
const char *const profile_cap_kinds[] = {
	"ceramic-c0g", "ceramic-x7r", "ceramic", "film", "mica", "glass",
	"alu-electrolytic", "tantalum", "polymer", "supercap", "default", NULL};
const char *const profile_diode_kinds[] = {
	"rectifier", "fast-recovery", "schottky", "zener", "hv-stack", "signal",
	"default", NULL};

static const char *const top_keys[] = {"source_tol", "hazard_voltage", "hazard_charge",
	"discharge_time", "droop_limit", "recovery_fraction", "ambient", "life_required", NULL};
/* The per-kind fields; docs/profiles.md's key table lists the same. */
static const char *const cap_fields[] = {"voltage", "reverse_v", "reverse_fraction",
					 "ripple_current", "derate_from", "derate_to",
					 "voltage_at_max", NULL};
static const char *const diode_fields[] = {"voltage", "surge", "avg_current", "peak_current",
					   "power", NULL};

int profile_polarised(const char *kind)
{
	static const char *const pol[] = {"alu-electrolytic", "tantalum", "polymer", "supercap", NULL};
	for (int i = 0; kind && pol[i]; i++)
		if (strcmp(kind, pol[i]) == 0)
			return 1;
	return 0;
}

static int in_list(const char *const *list, const char *s, size_t n)
{
	for (int i = 0; list[i]; i++)
		if (strlen(list[i]) == n && strncmp(list[i], s, n) == 0)
			return 1;
	return 0;
}

/* cap.<kind>.<field>, diode.<kind>.<field>, or a top-level key. */
static int key_known(const char *k)
{
	const char *d1 = strchr(k, '.'), *d2 = d1 ? strchr(d1 + 1, '.') : NULL;
	if (!d1)
		return in_list(top_keys, k, strlen(k));
	if (!d2)
		return 0;
	size_t cl = (size_t)(d1 - k), kl = (size_t)(d2 - d1 - 1);
	if (cl == 3 && strncmp(k, "cap", 3) == 0)
		return in_list(profile_cap_kinds, d1 + 1, kl) &&
		       in_list(cap_fields, d2 + 1, strlen(d2 + 1));
	if (cl == 5 && strncmp(k, "diode", 5) == 0)
		return in_list(profile_diode_kinds, d1 + 1, kl) &&
		       in_list(diode_fields, d2 + 1, strlen(d2 + 1));
	return 0;
}

/* Offers every key of the form prefix.<kind>.<field>. */
static void offer_class(struct suggest *s, const char *prefix, const char *const *kinds,
			const char *const *fields)
{
	char k[96];
	for (int i = 0; kinds[i]; i++)
		for (int j = 0; fields[j]; j++) {
			snprintf(k, sizeof k, "%s.%s.%s", prefix, kinds[i], fields[j]);
			suggest_offer(s, k);
		}
}

/* "; did you mean '...'?" for the known key closest to key, or "". */
static const char *near_key(const char *key, char *buf, size_t n)
{
	struct suggest s;
	suggest_init(&s, key, strlen(key));
	suggest_offer(&s, "name");
	suggest_offer(&s, "description");
	for (int i = 0; top_keys[i]; i++)
		suggest_offer(&s, top_keys[i]);
	offer_class(&s, "cap", profile_cap_kinds, cap_fields);
	offer_class(&s, "diode", profile_diode_kinds, diode_fields);
	return suggest_hint(&s, buf, n);
}

static void trim(char *s)
{
	size_t n = strlen(s);
	while (n && (s[n - 1] == ' ' || s[n - 1] == '\t' || s[n - 1] == '\r' || s[n - 1] == '\n'))
		s[--n] = '\0';
	size_t k = strspn(s, " \t");
	memmove(s, s + k, strlen(s + k) + 1);
}

struct reader {
	struct diag_sink *d;
	uint32_t file;
	unsigned line;
	struct profile *p;
	int bad;
};

static void fail(struct reader *r, const char *line, const char *at,
		 const char *msg, const char *arg)
{
	struct diag_loc l = {r->file, r->line, (uint32_t)(at - line) + 1};
	diag_add(r->d, DIAG_ERROR, "profile", l, msg, arg);
	r->bad = 1;
}

/* Copies src into dst of size n, cut to fit. */
static void copy_cut(char *dst, size_t n, const char *src)
{
	size_t k = strlen(src);
	if (k >= n)
		k = n - 1;
	memcpy(dst, src, k);
	dst[k] = '\0';
}

/* Keys whose value is a share (0..1): factors, tolerances, limits. */
static int is_fraction(const char *key)
{
	const char *dot = strrchr(key, '.');
	const char *f = dot ? dot + 1 : key;
	static const char *const shares[] = {"voltage", "surge", "reverse_fraction", "avg_current",
					     "peak_current", "ripple_current", "power",
					     "voltage_at_max", NULL};
	return (dot && in_list(shares, f, strlen(f))) || strcmp(key, "source_tol") == 0 ||
	       strcmp(key, "droop_limit") == 0 || strcmp(key, "recovery_fraction") == 0;
}

/* Keys whose value is a temperature in degC. */
static int is_temperature(const char *key)
{
	const char *dot = strrchr(key, '.');
	const char *f = dot ? dot + 1 : key;
	return strcmp(key, "ambient") == 0 || strcmp(f, "derate_from") == 0 ||
	       strcmp(f, "derate_to") == 0;
}

const char *profile_key_unit(const char *key)
{
	if (is_fraction(key))
		return "fraction";
	if (strcmp(key, "hazard_charge") == 0)
		return "C";
	if (is_temperature(key))
		return "degC";
	if (strcmp(key, "life_required") == 0)
		return "h";
	return strcmp(key, "discharge_time") == 0 ? "s" : "V";
}

static int number(const char *v, double *out)
{
	size_t n = strlen(v);
	int pct = n && v[n - 1] == '%';
	if (!num_ok(num_parse(v, pct ? n - 1 : n, out, NULL)))
		return 0;
	if (pct)
		*out /= 100;
	return 1;
}

static void entry(struct reader *r, char *line)
{
	char *hash = strchr(line, '#'), *eq = strchr(line, '=');
	char note[160] = "";
	if (hash) {
		copy_cut(note, sizeof note, hash + 1);
		trim(note);
		*hash = '\0';
	}
	if (!eq) {
		fail(r, line, line + strspn(line, " \t"), "expected key = value%s", "");
		return;
	}
	char key[64], val[192];
	size_t kl = (size_t)(eq - line) < sizeof key - 1 ? (size_t)(eq - line) : sizeof key - 1;
	memcpy(key, line, kl);
	key[kl] = '\0';
	copy_cut(val, sizeof val, eq + 1);
	trim(key);
	trim(val);
	num_fold(key, strlen(key));
	if (strcmp(key, "name") == 0 || strcmp(key, "description") == 0) {
		if (strcmp(key, "name") == 0)
			copy_cut(r->p->name, sizeof r->p->name, val);
		else
			copy_cut(r->p->description, sizeof r->p->description, val);
		return;
	}
	const char *vat = eq + 1 + strspn(eq + 1, " \t");
	double v;
	if (!key_known(key)) {
		char msg[sizeof key + SUGGEST_HINT_SIZE + 32], hint[SUGGEST_HINT_SIZE];
		snprintf(msg, sizeof msg, "unknown key '%s' (see docs/profiles.md)%s", key,
			 near_key(key, hint, sizeof hint));
		fail(r, line, line + strspn(line, " \t"), "%s", msg);
	} else if (!number(val, &v) || (v < 0 && !is_temperature(key))) {
		fail(r, line, vat, "'%s' is not a non-negative number", val);
	} else if (is_fraction(key) && v > 1) {
		fail(r, line, vat, "'%s' is a share of the rating: at most 100%%", val);
	} else if (!isnan(profile_value(r->p, key, NULL))) {
		fail(r, line, line + strspn(line, " \t"), "'%s' is given twice", key);
	} else if (r->p->n == PROFILE_MAX_ENTRIES) {
		fail(r, line, line, "too many entries%s", "");
	} else {
		struct profile_entry *e = &r->p->e[r->p->n++];
		copy_cut(e->key, sizeof e->key, key);
		copy_cut(e->note, sizeof e->note, note);
		e->value = v;
		e->line = r->line;
	}
}

int profile_load(const char *path, struct diag_sink *d, struct profile *p)
{
	struct reader r = {d, diag_add_file(d, path), 0, p, 0};
	memset(p, 0, sizeof *p);
	copy_cut(p->path, sizeof p->path, path);
	FILE *f = infile_open(path);
	if (!f) {
		struct diag_loc l = {r.file, 0, 0};
		diag_add(d, DIAG_ERROR, "profile", l, "cannot read the profile: %s",
			 infile_error_text(errno));
		return 0;
	}
	char line[512];
	while (fgets(line, sizeof line, f)) {
		r.line++;
		char *s = line + strspn(line, " \t");
		if (*s == '#' || *s == '\n' || *s == '\r' || *s == '\0')
			continue;
		entry(&r, line);
	}
	fclose(f);
	if (!r.bad && !p->name[0]) {
		struct diag_loc l = {r.file, 1, 1};
		diag_add(d, DIAG_ERROR, "profile", l, "the profile has no name = line");
		r.bad = 1;
	}
	return !r.bad;
}

static int readable(const char *path)
{
	return access(path, R_OK) == 0;
}

int profile_find(const char *name, const char *argv0, char *out, size_t n)
{
	if (strchr(name, '/') || strstr(name, ".profile")) {
		snprintf(out, n, "%s", name);
		return readable(out);
	}
	const char *env = getenv("HEADROOM_RULES");
	if (env) {
		snprintf(out, n, "%s/%s.profile", env, name);
		if (readable(out))
			return 1;
	}
	char dir[512];
	ssize_t k = readlink("/proc/self/exe", dir, sizeof dir - 1);
	if (k > 0)
		dir[k] = '\0'; /* the program's own path, also when found on PATH */
	else
		snprintf(dir, sizeof dir, "%s", argv0 ? argv0 : "");
	char *slash = strrchr(dir, '/');
	if (slash)
		*slash = '\0';
	else
		snprintf(dir, sizeof dir, ".");
	static const char *const rel[] = {"../rules", "../share/headroom/rules", "rules"};
	for (size_t i = 0; i < sizeof rel / sizeof rel[0]; i++) {
		snprintf(out, n, "%s/%s/%s.profile", dir, rel[i], name);
		if (readable(out))
			return 1;
	}
	snprintf(out, n, "rules/%s.profile", name);
	return readable(out);
}

double profile_value(const struct profile *p, const char *key, const char **note)
{
	for (size_t i = 0; i < p->n; i++)
		if (strcmp(p->e[i].key, key) == 0) {
			if (note)
				*note = p->e[i].note;
			return p->e[i].value;
		}
	if (note)
		*note = "";
	return NAN;
}

double profile_kind(const struct profile *p, const char *cls, const char *kind,
		    const char *field, const char **note)
{
	return profile_kind_key(p, cls, kind, field, note, NULL);
}

double profile_kind_key(const struct profile *p, const char *cls,
			const char *kind, const char *field, const char **note,
			const char **key_used)
{
	char key[64];
	snprintf(key, sizeof key, "%s.%s.%s", cls, kind && kind[0] ? kind : "default", field);
	for (int pass = 0; pass < 2; pass++) {
		for (size_t i = 0; i < p->n; i++)
			if (strcmp(p->e[i].key, key) == 0) {
				if (note)
					*note = p->e[i].note;
				if (key_used)
					*key_used = p->e[i].key;
				return p->e[i].value;
			}
		snprintf(key, sizeof key, "%s.default.%s", cls, field);
	}
	if (note)
		*note = "";
	if (key_used)
		*key_used = "";
	return NAN;
}

int profile_note_from_memory(const char *note)
{
	for (const char *s = note; *s; s++) {
		if (num_iequal(s, strlen(s) < 11 ? strlen(s) : 11, "from memory", 11))
			return 1;
		/* the mark M: after '(' or ", ", before ')' or ':' */
		int after = (s > note && s[-1] == '(') || (s > note + 1 && s[-1] == ' ' && s[-2] == ',');
		if (*s == 'M' && after && (s[1] == ')' || s[1] == ':'))
			return 1;
	}
	return 0;
}

int profile_draft(const struct profile *p, struct profile_status *st)
{
	memset(st, 0, sizeof *st);
	st->values = p->n;
	for (size_t i = 0; i < p->n; i++) {
		const struct profile_entry *e = &p->e[i];
		int memory = profile_note_from_memory(e->note), none = !e->note[0];
		st->from_memory += (size_t)memory;
		st->unsourced += (size_t)none;
		if ((memory || none) && !st->first) {
			st->first = e->key;
			st->first_line = e->line;
		}
	}
	return st->first != NULL;
}

double profile_hazard(const struct profile *p)
{
	double v = profile_value(p, "hazard_voltage", NULL);
	return isnan(v) ? 60.0 : v;
}

int profile_set(struct profile *p, const char *key, double value, const char *note)
{
	size_t k = 0;
	while (k < p->n && strcmp(p->e[k].key, key) != 0)
		k++;
	if (k == p->n) {
		if (p->n == PROFILE_MAX_ENTRIES)
			return 0;
		p->n++;
		copy_cut(p->e[k].key, sizeof p->e[k].key, key);
		p->e[k].line = 0;
	}
	p->e[k].value = value;
	copy_cut(p->e[k].note, sizeof p->e[k].note, note);
	return 1;
}

double profile_ambient(const struct profile *p, double override_c)
{
	if (isfinite(override_c))
		return override_c;
	double t = profile_value(p, "ambient", NULL);
	return isnan(t) ? PROFILE_AMBIENT_DEFAULT : t;
}

/* The share of the voltage factor left at t degC for one capacitor kind:
 * 1 up to derate_from, falling in a straight line to voltage_at_max at
 * derate_to and held there; 1 when the kind sets none of the three. */
static double temp_share(const struct profile *p, const char *kind, double t)
{
	double from = profile_kind(p, "cap", kind, "derate_from", NULL);
	double to = profile_kind(p, "cap", kind, "derate_to", NULL);
	double at = profile_kind(p, "cap", kind, "voltage_at_max", NULL);
	if (isnan(from) || isnan(to) || isnan(at) || !(to > from) || !(t > from))
		return 1;
	return 1 - (1 - at) * fmin((t - from) / (to - from), 1);
}

int profile_at_ambient(struct profile *p, double ambient_c)
{
	char key[64], note[160];
	for (int i = 0; profile_cap_kinds[i]; i++) {
		const char *kind = profile_cap_kinds[i], *n0;
		double share = temp_share(p, kind, ambient_c);
		double f = profile_kind(p, "cap", kind, "voltage", &n0);
		if (!(share < 1) || isnan(f))
			continue;
		snprintf(key, sizeof key, "cap.%s.voltage", kind);
		snprintf(note, sizeof note, "x%.0f%% at %.0f C, cap.%s.derate_*; %s", share * 100,
			 ambient_c, kind, n0);
		if (!profile_set(p, key, f * share, note))
			return 0;
	}
	return 1;
}
