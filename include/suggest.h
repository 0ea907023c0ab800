/* suggest.h: "did you mean": of the names a caller offers, the one
 * closest to a misspelt word, for error messages about unknown options,
 * models, subcircuits, rules and the like. Plain functions on a small
 * struct the caller keeps: no allocation, no state elsewhere.
 *
 * The rule (docs/headroom.1, DIAGNOSTICS): distance is the number of
 * single-character insertions, deletions, substitutions and swaps of two
 * neighbours that turn one name into the other, ASCII case ignored. A
 * name is offered only when its distance is at most 2 and at most a third
 * of the word's length (so a word of 1 or 2 characters gets a guess only
 * for a difference of case, one of 3 to 5 characters for one edit); the
 * smallest distance wins, a tie goes to the name first in byte order. */
#ifndef HEADROOM_SUGGEST_H
#define HEADROOM_SUGGEST_H

#include <stddef.h>

/* Names longer than this are not compared (never close to anything a
 * user typed by mistake). */
#define SUGGEST_MAX_LEN 256

struct suggest {
	const char *word; /* borrowed */
	size_t len;
	const char *best; /* NULL, or the copy in keep */
	size_t dist;
	char keep[SUGGEST_MAX_LEN + 1];
};

/* Starts a search for names close to word[0..n). */
void suggest_init(struct suggest *s, const char *word, size_t n);

/* Considers name (NUL-terminated; copied when it is the closest yet, so
 * it may be a transient buffer). */
void suggest_offer(struct suggest *s, const char *name);

/* The closest name offered that is close enough (a copy living in s), or
 * NULL. */
const char *suggest_best(const struct suggest *s);

/* Writes "; did you mean 'NAME'?" into buf (at most n bytes) for the
 * closest name, or "" when there is none; returns buf, to end a message
 * with ("undefined model 'dx1'; did you mean 'dx'?"). */
#define SUGGEST_HINT_SIZE (SUGGEST_MAX_LEN + 24)
const char *suggest_hint(const struct suggest *s, char *buf, size_t n);

/* The edit distance of a[0..an) and b[0..bn) as defined above, or
 * SUGGEST_FAR when it exceeds 2 (or a name is too long). */
#define SUGGEST_FAR ((size_t)-1)
size_t suggest_distance(const char *a, size_t an, const char *b, size_t bn);

#endif
