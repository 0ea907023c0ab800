/* suggest.c: the closest known name to a misspelt one (suggest.h). The
 * distance is the optimal-string-alignment form of Damerau's edit
 * distance (insert, delete, substitute, swap neighbours; Damerau, CACM 7(3),
 * 1964 - from memory), cut off past 2 since nothing farther is offered. */
#include "suggest.h"

#include <stdio.h>
#include <string.h>

#define FAR_LIMIT 2

static unsigned char fold(char c)
{
	return (unsigned char)(c >= 'A' && c <= 'Z' ? c - 'A' + 'a' : c);
}

static size_t min3(size_t a, size_t b, size_t c)
{
	size_t m = a < b ? a : b;
	return m < c ? m : c;
}

/* One row of the table: row i of a against every prefix of b. */
static size_t fill_row(const char *a, size_t i, const char *b, size_t bn,
		       const size_t *pp, const size_t *p, size_t *cur)
{
	size_t best = cur[0] = i;
	for (size_t j = 1; j <= bn; j++) {
		size_t cost = fold(a[i - 1]) != fold(b[j - 1]);
		cur[j] = min3(p[j] + 1, cur[j - 1] + 1, p[j - 1] + cost);
		if (i > 1 && j > 1 && fold(a[i - 1]) == fold(b[j - 2]) &&
		    fold(a[i - 2]) == fold(b[j - 1]) && pp[j - 2] + 1 < cur[j])
			cur[j] = pp[j - 2] + 1;
		best = cur[j] < best ? cur[j] : best;
	}
	return best;
}

size_t suggest_distance(const char *a, size_t an, const char *b, size_t bn)
{
	size_t rows[3][SUGGEST_MAX_LEN + 1];
	if (an > SUGGEST_MAX_LEN || bn > SUGGEST_MAX_LEN ||
	    (an > bn ? an - bn : bn - an) > FAR_LIMIT)
		return SUGGEST_FAR;
	for (size_t j = 0; j <= bn; j++)
		rows[1][j] = j;
	for (size_t i = 1; i <= an; i++) {
		size_t *pp = rows[(i + 2) % 3], *p = rows[i % 3], *cur = rows[(i + 1) % 3];
		if (fill_row(a, i, b, bn, pp, p, cur) > FAR_LIMIT)
			return SUGGEST_FAR; /* every later row is at least this */
	}
	size_t d = rows[(an + 1) % 3][bn];
	return d > FAR_LIMIT ? SUGGEST_FAR : d;
}

void suggest_init(struct suggest *s, const char *word, size_t n)
{
	s->word = word;
	s->len = n;
	s->best = NULL;
	s->dist = SUGGEST_FAR;
}

void suggest_offer(struct suggest *s, const char *name)
{
	size_t n = strlen(name);
	if (n == s->len && memcmp(name, s->word, n) == 0)
		return; /* the word itself is not a suggestion */
	size_t d = suggest_distance(s->word, s->len, name, n);
	if (d == SUGGEST_FAR || 3 * d > s->len)
		return;
	if (!s->best || d < s->dist || (d == s->dist && strcmp(name, s->best) < 0)) {
		memcpy(s->keep, name, n + 1); /* n <= SUGGEST_MAX_LEN: distance said so */
		s->best = s->keep;
		s->dist = d;
	}
}

const char *suggest_best(const struct suggest *s)
{
	return s->best;
}

const char *suggest_hint(const struct suggest *s, char *buf, size_t n)
{
	if (n == 0)
		return buf;
	if (s->best)
		snprintf(buf, n, "; did you mean '%s'?", s->best);
	else
		buf[0] = '\0';
	return buf;
}
