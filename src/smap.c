/* smap.c: open addressing with linear probing; grows at 50% load. */
#include "smap.h"

#include <stdint.h>
#include <string.h>

#include "num.h"

struct slot {
	const char *key;
	size_t len;
	unsigned long hash;
	void *value;
};

struct smap {
	struct hr_alloc hook;
	struct slot *slots;
	size_t cap, n;
};

unsigned long smap_hash(const char *s, size_t n)
{
	uint32_t h = 2166136261u;
	for (size_t i = 0; i < n; i++) {
		unsigned char c = (unsigned char)s[i];
		if (c >= 'A' && c <= 'Z')
			c = (unsigned char)(c - 'A' + 'a');
		h = (h ^ c) * 16777619u;
	}
	return h;
}

struct smap *smap_create(const struct hr_alloc *a)
{
	struct smap *m = hr_malloc(a, sizeof *m);
	if (!m)
		return NULL;
	m->hook = *a;
	m->cap = 16;
	m->n = 0;
	m->slots = hr_malloc(a, m->cap * sizeof *m->slots);
	if (!m->slots) {
		hr_free(a, m);
		return NULL;
	}
	memset(m->slots, 0, m->cap * sizeof *m->slots);
	return m;
}

void smap_destroy(struct smap *m)
{
	if (!m)
		return;
	struct hr_alloc a = m->hook;
	hr_free(&a, m->slots);
	hr_free(&a, m);
}

static int key_eq(const struct slot *s, const char *key, size_t n,
		  unsigned long h)
{
	if (s->hash != h || s->len != n)
		return 0;
	for (size_t i = 0; i < n; i++) {
		char a = s->key[i], b = key[i];
		if (a >= 'A' && a <= 'Z')
			a = (char)(a - 'A' + 'a');
		if (b >= 'A' && b <= 'Z')
			b = (char)(b - 'A' + 'a');
		if (a != b)
			return 0;
	}
	return 1;
}

static struct slot *find(const struct smap *m, const char *key, size_t n,
			 unsigned long h)
{
	size_t mask = m->cap - 1, i = h & mask;
	while (m->slots[i].key && !key_eq(&m->slots[i], key, n, h))
		i = (i + 1) & mask;
	return &m->slots[i];
}

void *smap_get(const struct smap *m, const char *key, size_t n)
{
	const struct slot *s = find(m, key, n, smap_hash(key, n));
	return s->key ? s->value : NULL;
}

static int grow(struct smap *m)
{
	size_t ncap = m->cap * 2;
	struct slot *ns = hr_malloc(&m->hook, ncap * sizeof *ns);
	if (!ns)
		return 0;
	memset(ns, 0, ncap * sizeof *ns);
	struct slot *old = m->slots;
	size_t ocap = m->cap;
	m->slots = ns;
	m->cap = ncap;
	for (size_t i = 0; i < ocap; i++)
		if (old[i].key)
			*find(m, old[i].key, old[i].len, old[i].hash) = old[i];
	hr_free(&m->hook, old);
	return 1;
}

int smap_put(struct smap *m, const char *key, size_t n, void *value)
{
	if ((m->n + 1) * 2 > m->cap && !grow(m))
		return 0;
	unsigned long h = smap_hash(key, n);
	struct slot *s = find(m, key, n, h);
	if (!s->key) {
		s->key = key;
		s->len = n;
		s->hash = h;
		m->n++;
	}
	s->value = value;
	return 1;
}

size_t smap_count(const struct smap *m)
{
	return m->n;
}

const char *smap_next(const struct smap *m, size_t *pos, void **value)
{
	for (; *pos < m->cap; (*pos)++) {
		const struct slot *s = &m->slots[*pos];
		if (s->key) {
			(*pos)++;
			if (value)
				*value = s->value;
			return s->key;
		}
	}
	return NULL;
}
